package cli

import (
	"bytes"
	"errors"
	"flag"
	"io"
	"strings"
	"testing"
)

// TestWrap: lines stay within the width and keep every word in order.
func TestWrap(t *testing.T) {
	for _, c := range []struct {
		in    string
		width int
		want  []string
	}{
		{"", 10, nil},
		{"a bb ccc dddd", 6, []string{"a bb", "ccc", "dddd"}},
		{"averyverylongword x", 5, []string{"averyverylongword", "x"}},
	} {
		got := Wrap(c.in, c.width)
		if strings.Join(got, "|") != strings.Join(c.want, "|") {
			t.Errorf("Wrap(%q, %d) = %q, want %q", c.in, c.width, got, c.want)
		}
	}
}

// TestParse: a bad option is reported once with a pointer to --help and
// returns ErrSilent; --help prints the full usage and returns flag.ErrHelp.
func TestParse(t *testing.T) {
	var out, errs bytes.Buffer
	fs := NewFlagSet(&out, &errs, "demo", "[options]", "Does a thing.")
	var m Multi
	fs.Var(&m, "item", "an item; repeatable")
	fs.Int("n", 3, "how many")
	if err := Parse(fs, []string{"--bogus"}); !errors.Is(err, ErrSilent) {
		t.Errorf("bad flag: %v", err)
	}
	if !strings.Contains(errs.String(), "Run 'tautline demo --help' for the options.") || out.Len() != 0 {
		t.Errorf("bad flag output: stdout %q stderr %q", out.String(), errs.String())
	}
	if err := Parse(fs, []string{"--help"}); !errors.Is(err, flag.ErrHelp) {
		t.Errorf("--help: %v", err)
	}
	want := "Usage: tautline demo [options]\n\nDoes a thing.\n\nOptions:\n  --item value\n      an item; repeatable\n  --n int\n      how many (default 3)\n"
	if out.String() != want {
		t.Errorf("help:\n%s\nwant:\n%s", out.String(), want)
	}
	if err := Parse(fs, []string{"--item", "a", "--item", "b"}); err != nil || m.String() != "a,b" {
		t.Errorf("repeated option: %v, %q", err, m.String())
	}
}

// TestAsksHelp: help is asked for only before "--".
func TestAsksHelp(t *testing.T) {
	if !AsksHelp([]string{"x", "-h"}) || AsksHelp([]string{"--", "--help"}) || AsksHelp(nil) {
		t.Error("AsksHelp")
	}
}

// TestNewLogger refuses unknown levels and formats as usage errors.
func TestNewLogger(t *testing.T) {
	var b bytes.Buffer
	if _, err := NewLogger(&b, "loud", "text"); !errors.Is(err, ErrUsage) {
		t.Errorf("level: %v", err)
	}
	if _, err := NewLogger(&b, "info", "xml"); !errors.Is(err, ErrUsage) {
		t.Errorf("format: %v", err)
	}
	lg, err := NewLogger(&b, "warn", "json")
	if err != nil {
		t.Fatal(err)
	}
	lg.Info("hidden")
	lg.Warn("shown")
	if s := b.String(); strings.Contains(s, "hidden") || !strings.Contains(s, `"msg":"shown"`) {
		t.Errorf("log output %q", s)
	}
}

// TestSplitList drops empty items and trims the rest.
func TestSplitList(t *testing.T) {
	if got := SplitList(" a, ,b ,"); strings.Join(got, "|") != "a|b" {
		t.Errorf("SplitList = %q", got)
	}
}

// TestRequireFirst: Require makes a usage error only when its condition
// fails, and First returns the first failure of a list.
func TestRequireFirst(t *testing.T) {
	if err := Require(true, "x"); err != nil {
		t.Errorf("Require(true) = %v", err)
	}
	err := First(nil, Require(1 > 2, "--n %d is wrong", 3), Require(false, "second"))
	if !errors.Is(err, ErrUsage) || err.Error() != "usage: --n 3 is wrong" {
		t.Errorf("First = %v", err)
	}
	if First(nil, nil) != nil {
		t.Error("First of nils is not nil")
	}
}

// TestParseInterspersed checks that options are read before, between and
// after the positional arguments, which come back in order.
func TestParseInterspersed(t *testing.T) {
	fs := flag.NewFlagSet("t", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	n := fs.Int("n", 0, "")
	v := fs.Bool("v", false, "")
	pos, err := ParseInterspersed(fs, []string{"-n", "3", "a", "-v", "b", "--", "-c", "-n", "4"})
	if err != nil || *n != 4 || !*v || strings.Join(pos, " ") != "a b -c" {
		t.Errorf("got %q, n %d, v %v, %v", pos, *n, *v, err)
	}
	if _, err := ParseInterspersed(fs, []string{"a", "-x"}); !errors.Is(err, ErrSilent) {
		t.Errorf("unknown option: %v, want ErrSilent", err)
	}
}
