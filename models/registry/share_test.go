package registry

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"tautline/models"
	"tautline/models/gw"
)

// TestSharePriors: each model gets the priors of the parameters it has, and
// a prior no model has is a usage error naming it.
func TestSharePriors(t *testing.T) {
	plain, err := Build(defaults("smbhb"), nil)
	if err != nil {
		t.Fatal(err)
	}
	s := defaults("smbhb")
	s.Binaries.Turnover = "fit"
	bent, err := Build(s, nil)
	if err != nil {
		t.Fatal(err)
	}
	built := []models.Model{plain, bent}
	shares, err := SharePriors([]string{"a", "b"}, built, map[string]string{"gamma": "fixed(3)", "kappa": "uniform(1, 5)"})
	if err != nil {
		t.Fatal(err)
	}
	if len(shares[0]) != 1 || shares[0]["gamma"] != "fixed(3)" || len(shares[1]) != 2 || shares[1]["kappa"] != "uniform(1, 5)" {
		t.Errorf("shares %v", shares)
	}
	_, err = SharePriors([]string{"a", "b"}, built, map[string]string{"log10_Gmu": "fixed(-10)"})
	if !errors.Is(err, ErrUsage) || !strings.Contains(err.Error(), `prior for "log10_Gmu": none of the models a, b has that parameter`) {
		t.Errorf("unused prior: %v", err)
	}
}

// TestParseAssignments covers the NAME=VALUE syntax and its refusals.
func TestParseAssignments(t *testing.T) {
	got, err := ParseAssignments([]string{"gamma=13/3", " log10_A = -15 "})
	if err != nil || got["gamma"] != 13.0/3 || got["log10_A"] != -15 {
		t.Errorf("got %v, %v", got, err)
	}
	for in, want := range map[string]string{"gamma": `"gamma": want NAME=VALUE`, "=1": `"=1": want NAME=VALUE`, "gamma=x": "gamma: "} {
		if _, err := ParseAssignments([]string{in}); err == nil || !strings.HasPrefix(err.Error(), want) {
			t.Errorf("ParseAssignments(%q): %v, want prefix %q", in, err, want)
		}
	}
}

// TestParseSpecs covers the NAME=SPEC syntax: trimming, a later pair
// replacing an earlier one, an empty SPEC kept for ResolvePriors to
// refuse, and the refusal of a pair without a name or '='.
func TestParseSpecs(t *testing.T) {
	got, err := ParseSpecs([]string{" log10_A = uniform(-16,-13) ", "gamma=fixed(1)", "gamma=fixed(13/3)", "x="})
	want := map[string]string{"log10_A": "uniform(-16,-13)", "gamma": "fixed(13/3)", "x": ""}
	if err != nil || len(got) != len(want) {
		t.Fatalf("got %v, %v; want %v", got, err, want)
	}
	for k, v := range want {
		if got[k] != v {
			t.Errorf("%s: got %q, want %q", k, got[k], v)
		}
	}
	for _, in := range []string{"gamma", "=uniform(0,1)", " =x"} {
		if _, err := ParseSpecs([]string{in}); err == nil || err.Error() != fmt.Sprintf("%q: want NAME=SPEC", in) {
			t.Errorf("ParseSpecs(%q): %v", in, err)
		}
	}
}

// FuzzParseSpecs checks that NAME=SPEC lists (entries separated by ';'
// here) never panic and give only non-empty, trimmed names.
func FuzzParseSpecs(f *testing.F) {
	for _, s := range []string{"log10_A=uniform(-16,-13)", "a=1;b=2", "=1", "a=", "a", " a = b "} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got, err := ParseSpecs(strings.Split(s, ";"))
		if err != nil {
			return
		}
		for k := range got {
			if k == "" || k != strings.TrimSpace(k) {
				t.Fatalf("%q gave name %q", s, k)
			}
		}
	})
}

// FuzzParseAssignments checks that NAME=VALUE lists (entries separated by
// ';' here) never panic and give only named, finite values.
func FuzzParseAssignments(f *testing.F) {
	for _, s := range []string{"log10_A=-14.6", "gamma=13/3", "a=1;b=2", "=1", "a=", "a", "a=1/0", "a=nan", "a==1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got, err := ParseAssignments(strings.Split(s, ";"))
		if err != nil {
			return
		}
		for k, v := range got {
			if k == "" || math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("%q gave %q = %v", s, k, v)
			}
		}
	})
}

// TestEvaluate: the SMBHB power law at f_yr with log10_A = -15 is
// Omega = 2 pi^2 A^2 f_yr^2 / (3 H0^2) (h_c = A there; the relation of
// models/gw), to 1e-12 relative (rounding only); an unknown parameter is a
// usage error.
func TestEvaluate(t *testing.T) {
	m, err := Build(defaults("smbhb"), nil)
	if err != nil {
		t.Fatal(err)
	}
	theta, ln, err := Evaluate(m, []string{"log10_A=-15"}, []float64{gw.FYear})
	if err != nil {
		t.Fatal(err)
	}
	h0 := gw.H0SI(67.4)
	want := 2 * math.Pi * math.Pi * 1e-30 * gw.FYear * gw.FYear / (3 * h0 * h0)
	if theta[0] != -15 || math.Abs(math.Exp(ln[0])/want-1) > 1e-12 {
		t.Errorf("theta %v, Omega %g, want %g", theta, math.Exp(ln[0]), want)
	}
	if pm := ParamMap(m, theta); len(pm) != 2 || pm["log10_A"] != -15 || pm["gamma"] != 13.0/3 {
		t.Errorf("ParamMap = %v", pm)
	}
	if _, _, err := Evaluate(m, []string{"log10_Gmu=-10"}, []float64{gw.FYear}); !errors.Is(err, ErrUsage) {
		t.Errorf("unknown parameter: %v", err)
	}
}
