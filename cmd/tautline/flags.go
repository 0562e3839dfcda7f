package main

import (
	"flag"
	"fmt"
	"io"
	"runtime/debug"
	"sort"
	"strings"
)

// version is the release this source tree describes; the VCS revision is
// appended when the binary was built from a git checkout.
const version = "0.1.0"

func versionString() string {
	v := version
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

// newFlagSet returns a flag set for command name whose --help output shows
// the synopsis, the description and every option with its default.
func newFlagSet(e *env, name, synopsis, description string) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(e.stderr)
	fs.Usage = func() {
		w := e.stdout
		fmt.Fprintf(w, "Usage: tautline %s %s\n\n%s\n\nOptions:\n", name, synopsis, strings.TrimSpace(description))
		printDefaults(w, fs)
	}
	return fs
}

// printDefaults lists options as "--name value" with their usage text and
// default, in alphabetical order, wrapped for an 80-column terminal.
func printDefaults(w io.Writer, fs *flag.FlagSet) {
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
		for _, line := range wrap(text, 72) {
			fmt.Fprintln(w, "      "+line)
		}
	}
}

func wrap(s string, width int) []string {
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

// parseFlags parses args and turns flag-package errors into errSilent (the
// flag package has already printed them) while passing --help through.
func parseFlags(fs *flag.FlagSet, args []string) error {
	if !asksHelp(args) {
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
		return errSilent
	}
	return nil
}

// multiFlag collects a repeatable string option.
type multiFlag []string

func (m *multiFlag) String() string { return strings.Join(*m, ",") }

func (m *multiFlag) Set(s string) error {
	*m = append(*m, s)
	return nil
}

// asksHelp reports whether args ask for help before the first non-flag.
func asksHelp(args []string) bool {
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
