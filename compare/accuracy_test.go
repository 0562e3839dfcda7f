package compare

import (
	"context"
	"math"
	"testing"
	"time"

	"tautline/likelihood"
	"tautline/rundir"
)

// Quadrature setups (nested Gauss-Legendre, gonum quad.Fixed). The SMBHB
// posteriors are about 0.06 wide in log10_A and 0.15 in gamma on a 7 x 7
// box: 56 panels of 0.125 per axis put 2-4 nodes per posterior width
// already at n = 2..4. With alpha and P fixed, the string likelihood in
// log10_Gmu is only piecewise smooth (interpolated tables), so the 1-D rule
// uses 1024 panels, where ln Z settles to 1e-5 (measured when the
// quadrature tests of the command were written). Quadrature errors are
// below 1e-4, negligible beside the 0.05 asked of the evidence.
var (
	quadSMBHB2   = quadSetup{panels: []int{56, 56}, tol: 1e-4, nMax: 32}
	quadStrings1 = quadSetup{panels: []int{1024}, tol: 1e-4, nMax: 64}
)

// fixedAlphaP holds the string loop size and reconnection probability at the
// values demo:strings was simulated with, leaving log10_Gmu free.
var fixedAlphaP = map[string]string{"log10_alpha": "fixed(-1)", "log10_P": "fixed(0)"}

// runOne runs compare with settings s on one model and returns its row.
func runOne(t *testing.T, name string, post *likelihood.Posterior, s Settings) rundir.Row {
	t.Helper()
	s.Out = t.TempDir()
	p := Problem{DataName: name, DataSHA256: "0", Reference: name, ID: name,
		Models: []Model{{Name: name, Target: post, Params: post.FreeNames(), Priors: post.FreeNames(), Fingerprint: name}}}
	start := time.Now()
	res, err := Run(context.Background(), p, s)
	if err != nil {
		t.Fatal(err)
	}
	r := res.Rows[0]
	t.Logf("%s: %d rungs x %d steps x %d walkers: TI %.4f (MC %.4f, disc %.4f, prior mass %.4f, total %.4f), SS %.4f ± %.4f, ln P(R) %.4f; %.1f s",
		name, r.Rungs, r.Steps, r.Walkers, r.TI.LnZ, r.TI.MCErr, r.TI.DiscErr, r.TI.PriorMassErr, r.TI.Total, r.SS.LnZ, r.SS.Total,
		lnPriorMass(r), time.Since(start).Seconds())
	return r
}

// TestDefaultAccuracy holds compare with DefaultSettings (the default
// ladder, steps and walkers, nothing overridden) to direct quadrature of the
// same likelihood over the prior box (gonum quad.Fixed, an independent
// library; docs/physics.md section 7) on the three reference problems: every
// ln Z must lie within its stated total error of the quadrature value, and
// every stated total must be at most 0.05, the accuracy the defaults
// promise.
func TestDefaultAccuracy(t *testing.T) {
	if testing.Short() {
		t.Skip("three default comparisons and their quadratures")
	}
	cases := []struct {
		name  string
		data  func(testing.TB) *likelihood.Dataset
		model string
		pri   map[string]string
		q     quadSetup
	}{
		{"smbhb on demo:smbhb", func(t testing.TB) *likelihood.Dataset { return loadData(t, demoSMBHB) }, "smbhb", nil, quadSMBHB2},
		{"strings (alpha, P fixed) on demo:strings", func(t testing.TB) *likelihood.Dataset { return loadData(t, demoStrings) }, "strings", fixedAlphaP, quadStrings1},
		{"smbhb on Gaussian bins", func(testing.TB) *likelihood.Dataset { return gaussData() }, "smbhb", nil, quadSMBHB2},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			post := posteriorFor(t, c.data(t), c.model, c.pri, 0)
			want := quadLnZ(t, post, c.q)
			r := runOne(t, c.model, post, DefaultSettings())
			d := r.TI.LnZ - want
			t.Logf("quadrature %.4f, deviation %+.4f", want, d)
			if r.TI.Total > 0.05 {
				t.Errorf("stated total error %.4f > 0.05 with the defaults", r.TI.Total)
			}
			if math.Abs(d) > r.TI.Total {
				t.Errorf("TI ln Z %.4f, quadrature %.4f: |deviation| %.4f > stated total %.4f", r.TI.LnZ, want, math.Abs(d), r.TI.Total)
			}
			// Stepping-stone, the cross-check: within 3 of its stated errors
			// or 0.05.
			if ds := math.Abs(r.SS.LnZ - want); ds > max(0.05, 3*r.SS.Total) {
				t.Errorf("SS ln Z %.4f, quadrature %.4f: |deviation| %.4f", r.SS.LnZ, want, ds)
			}
		})
	}
}

// TestPenaltyIndependence checks on the Gaussian-bin data set, where about a
// third of the prior puts the model above the data's range, that ln Z does
// not depend on the above-range penalty: the exact likelihood and
// penalties of 10 and 1e5 (10^4 times apart) give ln Z within the stated
// error of each other (identical, since compare integrates the exact
// likelihood) and of direct quadrature over the region where the
// likelihood is non-zero (gonum quad.Fixed); and that the coarse ladder of
// the former defaults (16 rungs), where the discretisation error
// dominates, still states a total that covers the quadrature value: the
// discretisation estimate validated where it matters.
func TestPenaltyIndependence(t *testing.T) {
	if testing.Short() {
		t.Skip("several comparisons and a quadrature")
	}
	ds := gaussData()
	exact := posteriorFor(t, ds, "smbhb", nil, 0)
	want := quadLnZ(t, exact, quadSMBHB2)
	ref := runOne(t, "exact", exact, DefaultSettings())
	for _, pen := range []float64{10, 1e5} {
		r := runOne(t, "penalty", posteriorFor(t, ds, "smbhb", nil, pen), DefaultSettings())
		if d := math.Abs(r.TI.LnZ - ref.TI.LnZ); d > min(r.TI.Total, ref.TI.Total) {
			t.Errorf("penalty %g: ln Z %.4f, exact %.4f: moved by %.4f, more than the stated error", pen, r.TI.LnZ, ref.TI.LnZ, d)
		}
		if d := math.Abs(r.TI.LnZ - want); d > r.TI.Total {
			t.Errorf("penalty %g: ln Z %.4f, quadrature %.4f: |deviation| %.4f > stated %.4f", pen, r.TI.LnZ, want, d, r.TI.Total)
		}
	}
	coarse := DefaultSettings()
	coarse.Rungs = 16
	r := runOne(t, "coarse", exact, coarse)
	if d := math.Abs(r.TI.LnZ - want); d > r.TI.Total {
		t.Errorf("16 rungs: ln Z %.4f, quadrature %.4f: |deviation| %.4f > stated %.4f", r.TI.LnZ, want, d, r.TI.Total)
	}
	if !(r.TI.DiscErr > r.TI.MCErr) {
		t.Logf("16 rungs: discretisation %.4f does not dominate Monte-Carlo %.4f", r.TI.DiscErr, r.TI.MCErr)
	}
}
