package main

import (
	"flag"

	"tautline/cmd/tautline/internal/cli"
)

// newFlagSet returns a flag set for command name whose --help output shows
// the synopsis, the description and every option with its default.
func newFlagSet(e *env, name, synopsis, description string) *flag.FlagSet {
	return cli.NewFlagSet(e.stdout, e.stderr, name, synopsis, description)
}
