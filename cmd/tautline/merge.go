package main

import (
	"context"
	"encoding/csv"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"text/tabwriter"

	"tautline/chains"
	"tautline/sampler/evidence"
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
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *out == "" || fs.NArg() == 0 {
		return fmt.Errorf("%w: want --out DIR and at least one folder of parts", errUsage)
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return err
	}
	res, err := finalize(*out, fs.Args())
	if err != nil {
		return err
	}
	printCompare(e, res, *out)
	return nil
}

// copyPart copies one unit's part folder into the output folder (nothing
// to do when they are the same).
func copyPart(src, dst string) error {
	a, _ := filepath.Abs(src)
	b, _ := filepath.Abs(dst)
	if a == b {
		return nil
	}
	if err := os.MkdirAll(dst, 0o755); err != nil {
		return err
	}
	ents, err := os.ReadDir(src)
	if err != nil {
		return err
	}
	for _, en := range ents {
		if en.Type().IsRegular() {
			if err := copyFile(filepath.Join(src, en.Name()), filepath.Join(dst, en.Name())); err != nil {
				return err
			}
		}
	}
	return nil
}

func copyFile(src, dst string) error {
	a, _ := filepath.Abs(src)
	b, _ := filepath.Abs(dst)
	if a == b {
		return nil
	}
	in, err := os.Open(src)
	if err != nil {
		return err
	}
	defer in.Close()
	return chains.WriteFileAtomic(dst, func(w io.Writer) error {
		_, err := io.Copy(w, in)
		return err
	})
}

func writeCompareCSV(path string, res *compareResult) error {
	return chains.WriteFileAtomic(path, func(w io.Writer) error {
		cw := csv.NewWriter(w)
		_ = cw.Write([]string{"model", "ln_z_ti", "ti_mc_err", "ti_disc_err", "ti_total_err", "ln_z_ss", "ss_mc_err", "ss_disc_err", "ss_total_err", "ln_b", "ln_b_err", "kass_raftery"})
		for _, r := range res.Rows {
			_ = cw.Write([]string{r.Model, g(r.TI.LnZ), g(r.TI.MCErr), g(r.TI.DiscErr), g(r.TI.Total),
				g(r.SS.LnZ), g(r.SS.MCErr), g(r.SS.DiscErr), g(r.SS.Total), g(r.LnB), g(r.LnBErr), r.Reading})
		}
		cw.Flush()
		return cw.Error()
	})
}

func writeCurveCSV(path string, ev evidence.Result) error {
	return chains.WriteFileAtomic(path, func(w io.Writer) error {
		cw := csv.NewWriter(w)
		_ = cw.Write([]string{"beta", "mean_ln_like", "mean_err", "var_ln_like", "tau_steps", "ess"})
		for _, c := range ev.Curve {
			_ = cw.Write([]string{g(c.Beta), g(c.Mean), g(c.MeanErr), g(c.Var), g(c.Tau), g(c.ESS)})
		}
		cw.Flush()
		return cw.Error()
	})
}

func printCompare(e *env, res *compareResult, out string) {
	fmt.Fprintf(e.stdout, "\nEvidence of each model given data set %s (reference %s; errors: Monte-Carlo + discretisation = total)\n\n", res.Data, res.Reference)
	tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "model\tln Z (TI)\t± MC\t± disc\t± total\tln Z (SS)\t± total\tln B\t± err\treading")
	for _, r := range res.Rows {
		lnb, lnbErr := strconv.FormatFloat(r.LnB, 'f', 2, 64), strconv.FormatFloat(r.LnBErr, 'f', 2, 64)
		if r.Reading == "reference" {
			lnb, lnbErr = "0", "-"
		}
		fmt.Fprintf(tw, "%s\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%s\t%s\t%s\n", r.Model, r.TI.LnZ, r.TI.MCErr, r.TI.DiscErr, r.TI.Total,
			r.SS.LnZ, r.SS.Total, lnb, lnbErr, r.Reading)
	}
	_ = tw.Flush()
	for _, r := range res.Rows {
		if r.Accuracy != "" {
			fmt.Fprintf(e.stdout, "%s: evidence accuracy: %s\n", r.Model, r.Accuracy)
		}
	}
	for _, r := range res.Rows {
		if r.Disagree {
			fmt.Fprintf(e.stdout, "warning: %s: thermodynamic integration and stepping-stone disagree beyond their errors; run longer or with more rungs\n", r.Model)
		}
		for _, w := range r.Warnings {
			fmt.Fprintf(e.stdout, "warning: %s: %s\n", r.Model, w)
		}
	}
	fmt.Fprintf(e.stdout, "\nln B > 0 favours the model over %s. Files in %s: compare.json, compare.csv, models/*/ (evidence.json, lnl_beta.csv, posterior.npy), parts/\n", res.Reference, out)
}
