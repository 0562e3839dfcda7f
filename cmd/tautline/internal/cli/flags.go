// Package cli is the presentation layer of the tautline command: flag sets
// whose --help lists every option wrapped for an 80-column terminal, flag
// errors reported once, repeatable options, the version string, the logger
// and progress reporting (a redrawn bar on a terminal, log lines
// elsewhere).
package cli

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"runtime/debug"
	"sort"
	"strings"
)

// ErrUsage marks errors that come from a malformed command line; the
// command prints them with a hint to --help and exits with status 2.
var ErrUsage = errors.New("usage")

// Require returns a usage error with the message when ok is false.
func Require(ok bool, format string, args ...any) error {
	if ok {
		return nil
	}
	return fmt.Errorf("%w: %s", ErrUsage, fmt.Sprintf(format, args...))
}

// First returns the first error that is not nil.
func First(errs ...error) error {
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// ErrSilent is returned when the problem has already been reported (flag
// parsing prints its own message).
var ErrSilent = errors.New("silent")

// Version returns release with the VCS revision appended (and "+dirty"
// for a modified tree) when the binary was built from a git checkout.
func Version(release string) string {
	v := release
	if bi, ok := debug.ReadBuildInfo(); ok {
		var rev, dirty string
		for _, s := range bi.Settings {
			switch s.Key {
			case "vcs.revision":
				rev = s.Value
			case "vcs.modified":
				if s.Value == "true" {
					dirty = "+dirty"
				}
			}
		}
		if len(rev) > 12 {
			rev = rev[:12]
		}
		if rev != "" {
			v += " (" + rev + dirty + ")"
		}
	}
	return v
}

// NewFlagSet returns a flag set for command name whose --help output, on
// stdout, shows the synopsis, the description and every option with its
// default; parse errors go to stderr.
func NewFlagSet(stdout, stderr io.Writer, name, synopsis, description string) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		w := stdout
		fmt.Fprintf(w, "Usage: tautline %s %s\n\n%s\n\nOptions:\n", name, synopsis, strings.TrimSpace(description))
		PrintDefaults(w, fs)
	}
	return fs
}

// PrintDefaults lists options as "--name value" with their usage text and
// default, in alphabetical order, wrapped for an 80-column terminal.
func PrintDefaults(w io.Writer, fs *flag.FlagSet) {
	var all []*flag.Flag
	fs.VisitAll(func(f *flag.Flag) { all = append(all, f) })
	sort.Slice(all, func(i, j int) bool { return all[i].Name < all[j].Name })
	for _, f := range all {
		kind, usage := flag.UnquoteUsage(f)
		head := "  --" + f.Name
		if kind != "" {
			head += " " + kind
		}
		fmt.Fprintln(w, head)
		text := usage
		if d := f.DefValue; d != "" && d != "false" && d != "0" && d != "[]" {
			text += fmt.Sprintf(" (default %s)", d)
		}
		for _, line := range Wrap(text, 72) {
			fmt.Fprintln(w, "      "+line)
		}
	}
}

// Wrap splits s into lines of at most width bytes at spaces (a longer
// word keeps a line of its own).
func Wrap(s string, width int) []string {
	var lines []string
	var cur string
	for _, word := range strings.Fields(s) {
		if cur != "" && len(cur)+1+len(word) > width {
			lines = append(lines, cur)
			cur = word
			continue
		}
		if cur != "" {
			cur += " "
		}
		cur += word
	}
	if cur != "" {
		lines = append(lines, cur)
	}
	return lines
}

// Parse parses args and turns flag-package errors into ErrSilent (the
// flag package has already printed them) while passing flag.ErrHelp
// through.
func Parse(fs *flag.FlagSet, args []string) error {
	if !AsksHelp(args) {
		// A bad option gets its one-line message and a pointer to --help,
		// not the whole option list.
		full := fs.Usage
		fs.Usage = func() { fmt.Fprintf(fs.Output(), "Run 'tautline %s --help' for the options.\n", fs.Name()) }
		defer func() { fs.Usage = full }()
	}
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return err
		}
		return ErrSilent
	}
	return nil
}

// ParseInterspersed parses args as Parse does, but lets options come
// before, between and after the positional arguments, which it returns in
// order. A "--" ends the options for the argument after it only, as the
// flag package does.
func ParseInterspersed(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := Parse(fs, args); err != nil {
			return nil, err
		}
		if fs.NArg() == 0 {
			return pos, nil
		}
		pos = append(pos, fs.Arg(0))
		args = fs.Args()[1:]
	}
}

// Multi collects a repeatable string option.
type Multi []string

// String joins the values with commas.
func (m *Multi) String() string { return strings.Join(*m, ",") }

// Set appends one value.
func (m *Multi) Set(s string) error {
	*m = append(*m, s)
	return nil
}

// AsksHelp reports whether args ask for help before the first "--".
func AsksHelp(args []string) bool {
	for _, a := range args {
		switch a {
		case "-h", "-help", "--help", "--h":
			return true
		case "--":
			return false
		}
	}
	return false
}

// SplitList returns the non-empty comma-separated items of s, trimmed.
func SplitList(s string) []string {
	var out []string
	for _, p := range strings.Split(s, ",") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}
