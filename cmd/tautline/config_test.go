package main

import (
	"strings"
	"testing"
)

// TestParseUntil covers the --until syntax.
func TestParseUntil(t *testing.T) {
	cases := []struct {
		in   string
		want untilCriteria
		err  string
	}{
		{"", untilCriteria{}, ""},
		{"ess=5000", untilCriteria{ESS: 5000}, ""},
		{"ess=5000, tau=50 ,rhat=1.01", untilCriteria{ESS: 5000, TauMultiple: 50, Rhat: 1.01}, ""},
		{"rhat=0.9", untilCriteria{}, "rhat must be above 1"},
		{"ess", untilCriteria{}, "is not KEY=VALUE"},
		{"steps=10", untilCriteria{}, `unknown criterion "steps"`},
		{"ess=-3", untilCriteria{}, "must be a positive number"},
	}
	for _, c := range cases {
		got, err := parseUntil(c.in)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("parseUntil(%q) error %v, want %q", c.in, err, c.err)
			}
			continue
		}
		if err != nil || got != c.want {
			t.Errorf("parseUntil(%q) = %+v, %v; want %+v", c.in, got, err, c.want)
		}
	}
}

func TestParseMoves(t *testing.T) {
	for _, c := range []struct {
		in   string
		n    int
		fail bool
	}{{"stretch", 0, false}, {"de", 1, false}, {"stretch:0.8,de:0.2", 2, false}, {"walk", 0, true}, {"de:-1", 0, true}} {
		m, err := parseMoves(c.in, 3)
		if (err != nil) != c.fail || len(m) != c.n {
			t.Errorf("parseMoves(%q) = %d moves, %v", c.in, len(m), err)
		}
	}
}
