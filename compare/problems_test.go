package compare

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"

	"tautline/likelihood"
	"tautline/models/gw"
	"tautline/models/registry"
)

// Cosmology and string settings of a default run (the values the command
// uses by default).
var testCosmology = registry.Cosmology{H0: 67.4, OmegaM: 0.315, TCMB: 2.7255, Neff: 3.046}

var testStrings = registry.Strings{Q: 4.0 / 3, Gamma: 50, F: 0.1, CEff: "vos", Kappa: 1, Modes: 100000, DOF: "standard-model"}

// Demo data sets, simulated (their provenance lines say so).
const (
	demoSMBHB   = "../cmd/tautline/demo/smbhb/smbhb.yaml"
	demoStrings = "../cmd/tautline/demo/strings/strings.yaml"
)

// posteriorFor builds model on ds with the given priors (NAME -> spec) and
// an above-range penalty (0: exact).
func posteriorFor(t testing.TB, ds *likelihood.Dataset, model string, pri map[string]string, penalty float64) *likelihood.Posterior {
	t.Helper()
	fs, err := likelihood.NewFreeSpectrum(ds, likelihood.Options{Penalty: penalty})
	if err != nil {
		t.Fatal(err)
	}
	m, err := registry.Build(registry.Settings{Name: model, Strings: testStrings, Cosmology: testCosmology}, nil)
	if err != nil {
		t.Fatal(err)
	}
	ps, err := registry.ResolvePriors(m, pri)
	if err != nil {
		t.Fatal(err)
	}
	post, err := likelihood.NewPosterior(m, ps, ds, fs, gw.H0SI(testCosmology.H0))
	if err != nil {
		t.Fatal(err)
	}
	return post
}

func loadData(t testing.TB, path string) *likelihood.Dataset {
	t.Helper()
	ds, err := likelihood.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	return ds
}

// gaussData is a 30-bin free spectrum of Gaussian summaries: the means
// follow an SMBHB power law (log10_A = -14.6, gamma = 13/3) at the span of
// the demos, rising to a noise floor, with sd 0.25 dex below it. The prior
// range [-10, -5.5] is low enough that loud models exceed it in the lowest
// bins, so the exact construction's prior mass matters.
func gaussData() *likelihood.Dataset {
	const span = 4.73364e+08
	ds := &likelihood.Dataset{Name: "gauss", Span: span, PriorMin: -10, PriorMax: -5.5}
	h0 := gw.H0SI(testCosmology.H0)
	const fyr = 1 / gw.JulianYear
	for i := 1; i <= 30; i++ {
		f := float64(i) / span
		hc := math.Pow(10, -14.6) * math.Pow(f/fyr, (3-13.0/3)/2)
		lnO := math.Log(2 * math.Pi * math.Pi * f * f * hc * hc / (3 * h0 * h0))
		x := lnO/(2*math.Ln10) + gw.Log10RhoOffset(f, h0, span)
		mean, sd := math.Max(x, -8.2), 0.25
		if x < -8.2 {
			sd = 0.6
		}
		ds.Freqs = append(ds.Freqs, f)
		ds.Bins = append(ds.Bins, likelihood.Bin{Kind: likelihood.Gaussian, Mean: mean, SD: sd})
	}
	return ds
}

// quadSetup is a nested Gauss-Legendre quadrature over a prior box: every
// axis is split into panels and each panel gets an n-point rule, n doubled
// until two values agree within tol.
type quadSetup struct {
	panels []int
	tol    float64
	nMax   int
}

// quadLnZ returns ln Z = ln ∫ L π over the prior box of post's free
// parameters with gonum's quad.Fixed (an independent general-purpose
// library; docs/physics.md section 7), L = exp(LogLikeExact): zero where the
// model lies above the data's range, so the integral covers exactly the
// region where the likelihood is finite.
func quadLnZ(t testing.TB, post *likelihood.Posterior, q quadSetup) float64 {
	t.Helper()
	params := post.FreeParams()
	if len(params) != len(q.panels) {
		t.Fatalf("quadrature: %d free parameters, %d panel counts", len(params), len(q.panels))
	}
	box := make([][2]float64, len(params))
	for i, p := range params {
		lo, hi := p.Prior.Bounds()
		box[i] = [2]float64{lo, hi}
	}
	integrate := func(n int) float64 {
		x := make([]float64, len(box))
		var level func(d int) float64
		level = func(d int) float64 {
			w := (box[d][1] - box[d][0]) / float64(q.panels[d])
			s := 0.0
			for p := range q.panels[d] {
				s += quad.Fixed(func(v float64) float64 {
					x[d] = v
					if d == 0 {
						return math.Exp(post.LogLikeExact(x) + post.LogPrior(x))
					}
					return level(d - 1)
				}, box[d][0]+float64(p)*w, box[d][0]+float64(p+1)*w, n, quad.Legendre{}, 0)
			}
			return s
		}
		return math.Log(level(len(box) - 1))
	}
	prev := integrate(2)
	for n := 4; n <= q.nMax; n *= 2 {
		cur := integrate(n)
		if math.IsNaN(cur) || math.IsInf(cur, 0) {
			t.Fatalf("quadrature: ln Z = %g at n = %d", cur, n)
		}
		if math.Abs(cur-prev) < q.tol {
			return cur
		}
		prev = cur
	}
	t.Fatalf("quadrature: not converged to %g by n = %d (last ln Z %g)", q.tol, q.nMax, prev)
	return 0
}
