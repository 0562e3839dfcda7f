package likelihood

import (
	"strings"
	"testing"

	"tautline/models"
	"tautline/models/cosmicstrings"
	"tautline/priors"
)

// The optional interfaces NewPosterior looks for are the exported ones, and
// the project's bounded model and point-mass prior implement them.
var (
	_ models.Bounded   = boxedPowerLaw{}
	_ models.Bounded   = (*cosmicstrings.Model)(nil)
	_ priors.PointMass = fixed(0)
	_ priors.PointMass = priors.Fixed{}
)

// boxedPowerLaw is the test power law with a declared domain, gamma in
// [0, 7], as a tabulated model would declare its table's box.
type boxedPowerLaw struct{ powerLaw }

func (boxedPowerLaw) Domain() [][2]float64 { return [][2]float64{{-20, -10}, {0, 7}} }

// TestPosteriorDomain: priors inside the model's domain are accepted;
// one reaching outside it (which would silently truncate the posterior
// and misnormalise the evidence) is refused with a message naming it.
func TestPosteriorDomain(t *testing.T) {
	ds := gaussData(5)
	fs, err := NewFreeSpectrum(ds, Options{})
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		pri  []priors.Prior
		want string
	}{
		{[]priors.Prior{uniform{-18, -12}, uniform{0, 7}}, ""},
		{[]priors.Prior{uniform{-18, -12}, fixed(13.0 / 3)}, ""},
		{[]priors.Prior{uniform{-18, -12}, uniform{0, 8}}, "prior uniform(0, 8) of gamma reaches outside the model's domain [0, 7]"},
		{[]priors.Prior{uniform{-22, -12}, uniform{0, 7}}, "of log10_A reaches outside"},
		{[]priors.Prior{uniform{-18, -12}, fixed(7.5)}, "prior fixed(7.5) of gamma"},
	}
	for _, c := range cases {
		m := boxedPowerLaw{powerLaw{pri: c.pri}}
		_, err := NewPosterior(m, nil, ds, fs, testH0)
		switch {
		case c.want == "" && err != nil:
			t.Errorf("%v: unexpected error %v", c.pri, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("%v: error %v, want it to contain %q", c.pri, err, c.want)
		}
	}
}
