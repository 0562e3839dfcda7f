package sampler

import (
	"strings"
	"testing"
)

// TestParseCriteria covers the criteria syntax and each refusal.
func TestParseCriteria(t *testing.T) {
	cases := []struct {
		in   string
		want Criteria
		err  string
	}{
		{"", Criteria{}, ""},
		{"ess=5000", Criteria{ESS: 5000}, ""},
		{"ess=5000, tau=50 ,rhat=1.01", Criteria{ESS: 5000, TauMultiple: 50, Rhat: 1.01}, ""},
		{"rhat=0.9", Criteria{}, "rhat must be above 1, got 0.9"},
		{"ess", Criteria{}, `"ess" is not KEY=VALUE (keys: ess, tau, rhat)`},
		{"steps=10", Criteria{}, `unknown criterion "steps"`},
		{"ess=-3", Criteria{}, `ess must be a positive number, got "-3"`},
		{"ess=nan", Criteria{}, `ess must be a positive number, got "nan"`},
		{"tau=+Inf", Criteria{}, `tau must be a positive number, got "+Inf"`},
		{"rhat=NaN", Criteria{}, `rhat must be a positive number, got "NaN"`},
	}
	for _, c := range cases {
		got, err := ParseCriteria(c.in)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("ParseCriteria(%q) error %v, want %q", c.in, err, c.err)
			}
			continue
		}
		if err != nil || got != c.want {
			t.Errorf("ParseCriteria(%q) = %+v, %v; want %+v", c.in, got, err, c.want)
		}
	}
}

// TestParseMoves covers the move names, weights and refusals.
func TestParseMoves(t *testing.T) {
	for _, c := range []struct {
		in      string
		n       int
		weights []float64
		err     string
	}{
		{"stretch", 0, nil, ""},
		{"de", 1, []float64{1}, ""},
		{"stretch:0.8,de:0.2", 2, []float64{0.8, 0.2}, ""},
		{"walk", 0, nil, `unknown move "walk"; want stretch or de`},
		{"de:-1", 0, nil, `weight of de must be a positive number, got "-1"`},
	} {
		m, err := ParseMoves(c.in, 3)
		if c.err != "" {
			if err == nil || err.Error() != c.err {
				t.Errorf("ParseMoves(%q) error %v, want %q", c.in, err, c.err)
			}
			continue
		}
		if err != nil || len(m) != c.n {
			t.Fatalf("ParseMoves(%q) = %d moves, %v", c.in, len(m), err)
		}
		for i, w := range c.weights {
			if m[i].Weight != w {
				t.Errorf("ParseMoves(%q)[%d].Weight = %g, want %g", c.in, i, m[i].Weight, w)
			}
		}
	}
}
