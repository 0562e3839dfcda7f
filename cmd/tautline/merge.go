package main

import (
	"context"
	"fmt"
	"os"

	"tautline/cmd/tautline/internal/cli"
	"tautline/compare"
)

const mergeHelp = `
Combines the partial results of 'tautline compare --task I --tasks N' runs
(each folder holds parts/*/part.json) into one comparison in --out, exactly
as a single 'tautline compare' with the same options and seed would have
written it. It refuses parts that belong to different comparisons (data,
models, reference or seed) and says which models have no parts yet.`

func runMerge(_ context.Context, e *env, args []string) error {
	fs := newFlagSet(e, "merge", "--out DIR PARTDIR...", mergeHelp)
	out := fs.String("out", "", "output folder for the merged comparison (required)")
	if err := cli.Parse(fs, args); err != nil {
		return err
	}
	if *out == "" || fs.NArg() == 0 {
		return fmt.Errorf("%w: want --out DIR and at least one folder of parts", errUsage)
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return err
	}
	res, err := compare.Merge(*out, fs.Args(), version)
	if err != nil {
		return err
	}
	compare.WriteTable(e.stdout, res, *out)
	return nil
}
