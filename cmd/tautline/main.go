// Command tautline fits gravitational-wave background models (a cosmic-string
// loop network, a population of supermassive black-hole binaries, or both)
// to the free spectra that pulsar timing arrays publish, compares them with
// Bayes factors, and turns the chains into tables and figures.
//
// Usage:
//
//	tautline COMMAND [options]
//
// Run `tautline --help` for the list of commands and `tautline COMMAND
// --help` for each command's options. This package only wires flags,
// configuration, progress and exit codes; the physics and statistics live in
// the packages it imports.
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"syscall"

	"tautline/cmd/tautline/internal/cli"
	"tautline/internal/budget"
	"tautline/models/registry"
)

// command is one subcommand of tautline.
type command struct {
	name    string
	summary string
	run     func(ctx context.Context, env *env, args []string) error
}

// env is what a command may touch of the outside world; tests replace it.
type env struct {
	stdout io.Writer
	stderr io.Writer
	// isTerminal reports whether stderr is an interactive terminal (for
	// progress bars).
	isTerminal bool
}

func commands() []command {
	return []command{
		{"fit", "sample a model's posterior on a free-spectrum data set", runFit},
		{"inspect", "check a free-spectrum data set and print its bins", runInspect},
		{"simulate", "make a synthetic free-spectrum data set from a model and an invented array", runSimulate},
		{"compare", "compute evidences and Bayes factors of several models by thermodynamic integration", runCompare},
		{"merge", "combine the partial results of compare tasks run apart", runMerge},
		{"spectrum", "print a model's Omega_GW, h_c, S(f) and log10 rho at chosen frequencies", runSpectrum},
		{"convert", "convert a string tension Gmu to mu, the symmetry-breaking scale and lensing angles", runConvert},
		{"report", "turn a fit or compare run folder into tables and figures for a paper", runReport},
		{"import", "turn a published free spectrum (samples matrix, density grid, summary table) into a data set", runImport},
		{"calibrate", "check a model's inference by simulation-based calibration on simulated data sets", runCalibrate},
	}
}

// errUsage marks errors that come from a malformed command line; main prints
// them with a hint to --help and exits with status 2.
var errUsage = cli.ErrUsage

// errSilent is returned when a command has already reported the problem
// (for example flag parsing, which prints its own message).
var errSilent = cli.ErrSilent

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	e := &env{stdout: os.Stdout, stderr: os.Stderr, isTerminal: isTerminal(os.Stderr)}
	os.Exit(run(ctx, e, os.Args[1:]))
}

// run executes the command line args and returns the process exit status:
// 0 on success, 1 when the work failed, 2 for a malformed command line.
func run(ctx context.Context, e *env, args []string) int {
	if len(args) == 0 {
		usage(e.stderr)
		return 2
	}
	switch args[0] {
	case "-h", "-help", "--help", "help":
		if len(args) > 1 && args[0] == "help" {
			return run(ctx, e, []string{args[1], "--help"})
		}
		usage(e.stdout)
		return 0
	case "-version", "--version", "version":
		fmt.Fprintln(e.stdout, "tautline", versionString())
		return 0
	}
	for _, c := range commands() {
		if c.name != args[0] {
			continue
		}
		err := c.run(ctx, e, args[1:])
		switch {
		case err == nil:
			return 0
		case errors.Is(err, flag.ErrHelp):
			return 0
		case errors.Is(err, errSilent):
			return 2
		case errors.Is(err, errUsage), errors.Is(err, registry.ErrUsage), errors.Is(err, budget.ErrTooLarge):
			msg := strings.TrimPrefix(err.Error(), errUsage.Error()+": ")
			fmt.Fprintf(e.stderr, "tautline %s: %s\nRun 'tautline %s --help' for the options.\n", c.name, msg, c.name)
			return 2
		default:
			fmt.Fprintf(e.stderr, "tautline %s: %v\n", c.name, err)
			return 1
		}
	}
	fmt.Fprintf(e.stderr, "tautline: unknown command %q\nRun 'tautline --help' for the list of commands.\n", args[0])
	return 2
}

func usage(w io.Writer) {
	fmt.Fprintf(w, `tautline %s: Bayesian inference on gravitational-wave backgrounds
from pulsar-timing-array free spectra.

Usage:
  tautline COMMAND [options]

Commands:
`, versionString())
	for _, c := range commands() {
		fmt.Fprintf(w, "  %-10s %s\n", c.name, c.summary)
	}
	fmt.Fprint(w, `
Options:
  --help      show this help (and 'tautline COMMAND --help' for a command)
  --version   print the version and exit

With no data set named, commands use the embedded demo data sets, which are
simulated (an invented array of invented pulsars).
Exit status: 0 on success, 1 when the work failed, 2 for a bad command line.
`)
}

func isTerminal(f *os.File) bool {
	fi, err := f.Stat()
	if err != nil {
		return false
	}
	return fi.Mode()&os.ModeCharDevice != 0
}
