package evidence

import (
	"math"
	"strings"
	"testing"
)

func okRung(beta float64) Rung {
	lnL := make([]float64, minSteps*2)
	for i := range lnL {
		lnL[i] = -float64(i%7) - 10*beta
	}
	return Rung{Beta: beta, LnL: lnL, Steps: minSteps, Walkers: 2}
}

func TestValidate(t *testing.T) {
	mod := func(f func(r []Rung) []Rung) []Rung {
		return f([]Rung{okRung(0), okRung(0.5), okRung(1)})
	}
	tests := []struct {
		name  string
		rungs []Rung
		opt   Options
		want  string // substring of the error; "" for success
	}{
		{"ok", mod(func(r []Rung) []Rung { return r }), Options{}, ""},
		{"one rung", []Rung{okRung(0)}, Options{}, "at least 2 rungs, got 1"},
		{"no zero", mod(func(r []Rung) []Rung { r[0].Beta = 0.1; return r }), Options{}, "start at beta = 0"},
		{"cold first", []Rung{okRung(1), okRung(0.5), okRung(0)}, Options{}, "got 1 and 0 (a cold-first ladder must be reversed)"},
		{"no one", mod(func(r []Rung) []Rung { r[2].Beta = 0.9; return r }), Options{}, "end at beta = 1"},
		{"unsorted", mod(func(r []Rung) []Rung { r[1], r[2] = r[2], r[1]; r[2].Beta = 1; r[1].Beta = 1; return r }), Options{}, "rung 2: betas must increase strictly"},
		{"nan beta", mod(func(r []Rung) []Rung { r[1].Beta = math.NaN(); return r }), Options{}, "rung 1: beta must be in [0, 1]"},
		{"few steps", mod(func(r []Rung) []Rung { r[1].Steps = 5; return r }), Options{}, "rung 1 (beta 0.5): need at least 20 steps, got 5"},
		{"no walkers", mod(func(r []Rung) []Rung { r[1].Walkers = 0; return r }), Options{}, "need at least 1 walker"},
		{"length", mod(func(r []Rung) []Rung { r[2].LnL = r[2].LnL[:7]; return r }), Options{}, "rung 2 (beta 1): len(LnL) = 7, want steps*walkers = 20*2"},
		{"nan lnL", mod(func(r []Rung) []Rung { r[1].LnL[13] = math.NaN(); return r }), Options{}, "LnL[13] (step 6, walker 1) is NaN"},
		{"inf lnL", mod(func(r []Rung) []Rung { r[0].LnL[0] = math.Inf(-1); return r }), Options{}, "rung 0 (beta 0): LnL[0] (step 0, walker 0) is -Inf"},
		{"huge lnL", mod(func(r []Rung) []Rung {
			for i := range r[0].LnL {
				r[0].LnL[i] = -1e308
			}
			return r
		}), Options{}, "too large to average"},
		{"sync steps", mod(func(r []Rung) []Rung {
			r[1].Steps, r[1].Walkers = minSteps*2, 1
			return r
		}), Options{Synchronous: true}, "synchronous rungs need equal steps, got 40 and 20"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Integrate(tc.rungs, tc.opt)
			switch {
			case tc.want == "" && err != nil:
				t.Errorf("unexpected error %v", err)
			case tc.want != "" && err == nil:
				t.Errorf("no error, want %q", tc.want)
			case tc.want != "" && !strings.Contains(err.Error(), tc.want):
				t.Errorf("error %q lacks %q", err, tc.want)
			case err != nil && !strings.HasPrefix(err.Error(), "evidence: "):
				t.Errorf("error %q lacks the package prefix", err)
			}
		})
	}
}
