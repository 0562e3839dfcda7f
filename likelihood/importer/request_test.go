package importer

import (
	"errors"
	"strings"
	"testing"
)

// TestRequestRefusals: a request that misstates its options is refused
// before any file is read, with an error that wraps ErrRequest (the
// caller's fault) and names the option.
func TestRequestRefusals(t *testing.T) {
	good := func() Request {
		return Request{Shape: "samples", File: "missing.npy", Out: t.TempDir(), Name: "x", SpanYears: 12, Harmonics: 5,
			Prior: "-10,-4", Unit: string(Log10RhoS), Thin: 1, Level: Level68, LimitLevel: 0.95,
			Set: map[string]bool{"span-years": true, "harmonics": true}}
	}
	cases := []struct {
		name string
		edit func(*Request)
		want string
	}{
		{"shape", func(r *Request) { r.Shape = "matrix" }, `shape "matrix": want samples, grid or summary`},
		{"option of another shape", func(r *Request) { r.Set["level"] = true }, "--level applies to summary imports, not samples"},
		{"no name", func(r *Request) { r.Name = "" }, "--name is required"},
		{"two spans", func(r *Request) { r.Set["span-seconds"] = true }, "exactly one of --span-years and --span-seconds"},
		{"prior order", func(r *Request) { r.Prior = "-4,-10" }, "--prior -4,-10: want LO < HI"},
		{"prior count", func(r *Request) { r.Prior = "-4" }, `--prior "-4": want 2 comma-separated numbers`},
		{"unit", func(r *Request) { r.Unit = "dex" }, `--unit "dex": want one of`},
		{"no out", func(r *Request) { r.Out = "" }, "--out is required"},
		{"columns", func(r *Request) { r.Columns = "1,x" }, `--columns: "x" is not a 0-based column number`},
		{"burn-in", func(r *Request) { r.BurnIn = 1 }, "--burn-in 1: want a fraction in [0, 1)"},
		{"thin", func(r *Request) { r.Thin = 0 }, "--thin 0: want 1 or more"},
	}
	for _, c := range cases {
		r := good()
		c.edit(&r)
		_, err := Run(r)
		if !errors.Is(err, ErrRequest) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want ErrRequest and %q", c.name, err, c.want)
		}
	}
	// A well-formed request fails on the file, not as a request.
	if _, err := Run(good()); err == nil || errors.Is(err, ErrRequest) {
		t.Errorf("missing file: error %v, want a file error", err)
	}
}
