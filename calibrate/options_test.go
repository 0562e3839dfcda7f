package calibrate

import (
	"slices"
	"strings"
	"testing"

	"tautline/likelihood/simulate"
)

// TestParseFormats checks the figure-format list: "none" and empty
// entries add nothing, and the result is never nil (nil asks for both).
func TestParseFormats(t *testing.T) {
	for in, want := range map[string][]string{"png,svg": {"png", "svg"}, " svg ": {"svg"}, "none": {}, "": {}} {
		got, err := ParseFormats(in)
		if err != nil || got == nil || !slices.Equal(got, want) {
			t.Errorf("ParseFormats(%q) = %v, %v; want %v", in, got, err, want)
		}
	}
	if _, err := ParseFormats("png,pdf"); err == nil || err.Error() != `--formats "png,pdf": want png, svg or none` {
		t.Errorf("pdf: %v", err)
	}
}

// TestCheckOptions checks that each refusal names the option at fault.
func TestCheckOptions(t *testing.T) {
	p := Problem{Array: simulate.Array{Pulsars: 40, Span: 4.7e8, Cadence: 1.2e6, Sigma: 5e-7, Bins: 15},
		Grid: simulate.GridOptions{Min: -12, Max: 0, Points: 1201}}
	s := Settings{Replicates: 100, Draws: 99, Walkers: 16, Steps: 2000, Burn: -1, Level: 0.01}
	if err := CheckOptions(p, s); err != nil {
		t.Fatal(err)
	}
	for want, edit := range map[string]func(*Problem, *Settings){
		"--replicates must be >= 1":                 func(_ *Problem, s *Settings) { s.Replicates = 0 },
		"--draws must be >= 1":                      func(_ *Problem, s *Settings) { s.Draws = 0 },
		"need --steps >= 1 and --burn -1":           func(_ *Problem, s *Settings) { s.Burn = s.Steps },
		"--thin must be >= 0":                       func(_ *Problem, s *Settings) { s.Thin = -1 },
		"--level must be in (0, 1)":                 func(_ *Problem, s *Settings) { s.Level = 0 },
		"--rank-bins must divide --draws + 1 = 100": func(_ *Problem, s *Settings) { s.RankBins = 3 },
		"5 replicates are too few":                  func(_ *Problem, s *Settings) { s.Replicates = 5 },
		"need --pulsars >= 1":                       func(p *Problem, _ *Settings) { p.Array.Sigma = -1 },
		"need --log10-rho-min < --log10-rho-max":    func(p *Problem, _ *Settings) { p.Grid.Points = 1 },
	} {
		pp, ss := p, s
		edit(&pp, &ss)
		if err := CheckOptions(pp, ss); err == nil || !strings.HasPrefix(err.Error(), want) {
			t.Errorf("got %v, want %q", err, want)
		}
	}
}
