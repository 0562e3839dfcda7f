package evidence

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat"
)

// ar1 returns a stationary AR(1) series x_t = phi x_{t-1} + e_t with unit
// marginal variance (innovation variance 1 - phi^2).
func ar1(r *rand.Rand, n int, phi float64) []float64 {
	x := make([]float64, n)
	x[0] = r.NormFloat64()
	c := math.Sqrt(1 - phi*phi)
	for i := 1; i < n; i++ {
		x[i] = phi*x[i-1] + c*r.NormFloat64()
	}
	return x
}

// TestAutocorrTimeAR1 checks Sokal's windowed estimate against the AR(1)
// closed form tau = (1 + phi)/(1 - phi) (docs/physics.md section 6; Sokal 1997).
func TestAutocorrTimeAR1(t *testing.T) {
	const n = 200000
	for i, phi := range []float64{0, 0.5, 0.9, -0.3} {
		x := ar1(rand.New(rand.NewPCG(7, uint64(i))), n, phi)
		want := (1 + phi) / (1 - phi)
		got, ok := autocorrTime(x)
		// The estimator's relative sd is about sqrt(2(2M+1)/n) with window
		// M ~ 5 tau: 4.4 % for tau = 19 at n = 2e5; 15 % is over 3 sd.
		if !ok || math.Abs(got-want) > 0.15*want {
			t.Errorf("phi %g: tau = %.3f (window closed %v), want %.3f", phi, got, ok, want)
		}
	}
	if tau, _ := autocorrTime(make([]float64, 50)); tau != 1 {
		t.Errorf("constant series: tau = %g, want 1", tau)
	}
}

// TestOBM checks overlapping batch means against the exact variance of the
// mean of a stationary AR(1) series,
//
//	Var(xbar) = (1/n) [1 + 2 sum_{t=1}^{n-1} (1 - t/n) phi^t],
//
// and, for batch length 1, against gonum's sample variance divided by n.
func TestOBM(t *testing.T) {
	const n = 100000
	for i, phi := range []float64{0, 0.5, 0.9} {
		x := ar1(rand.New(rand.NewPCG(8, uint64(i))), n, phi)
		var s float64
		p := 1.0
		for k := 1; k < n; k++ {
			p *= phi
			s += (1 - float64(k)/n) * p
		}
		want := (1 + 2*s) / n
		got := varOfMean(x, 10)
		// OBM's relative sd is sqrt(4b/(3n)) (Meketon & Schmeiser 1984,
		// from memory): 5 % at b = 190; its bias with b = 10 tau is about
		// -5 %. 20 % covers both.
		if math.Abs(got.varMean-want) > 0.2*want {
			t.Errorf("phi %g: OBM var %.4g (batch %d, tau %.3g), want %.4g", phi, got.varMean, got.batch, got.tau, want)
		}
		if got.short {
			t.Errorf("phi %g: flagged short at n = %d", phi, n)
		}
	}
	x := ar1(rand.New(rand.NewPCG(9, 0)), 1000, 0)
	want := stat.Variance(x, nil) / float64(len(x))
	if got := obmVarOfMean(x, 1); math.Abs(got-want) > 1e-12*want {
		t.Errorf("b = 1: %g, want sample variance / n = %g", got, want)
	}
	// Too short for ten batches of ten autocorrelation times: flagged.
	if got := varOfMean(ar1(rand.New(rand.NewPCG(9, 1)), 200, 0.95), 10); !got.short {
		t.Errorf("200 steps with tau ~ 39 not flagged short (batch %d, tau %.3g)", got.batch, got.tau)
	}
}

func BenchmarkACF(b *testing.B) {
	x := ar1(rand.New(rand.NewPCG(1, 1)), 2000, 0.9)
	a := newACF(len(x))
	b.ReportAllocs()
	for b.Loop() {
		a.tau(x)
	}
}

func BenchmarkVarOfMean(b *testing.B) {
	x := ar1(rand.New(rand.NewPCG(1, 1)), 2000, 0.9)
	b.ReportAllocs()
	for b.Loop() {
		varOfMean(x, 10)
	}
}

// TestACFMatchesDirect checks the FFT autocorrelation time against the
// lag-by-lag sum (an independent implementation of the same estimator).
func TestACFMatchesDirect(t *testing.T) {
	a := newACF(3000)
	for i, tc := range []struct {
		n   int
		phi float64
	}{{3000, 0.9}, {2999, 0.5}, {100, 0}, {40, 0.99}, {1, 0}} {
		x := ar1(rand.New(rand.NewPCG(10, uint64(i))), tc.n, tc.phi)
		want, wok := autocorrTime(x)
		got, gok := a.tau(x)
		// Both sum the same products; FFT rounding is ~1e-15 of c0 per lag.
		if gok != wok || math.Abs(got-want) > 1e-9*want {
			t.Errorf("n %d phi %g: FFT tau %.12g (%v), direct %.12g (%v)", tc.n, tc.phi, got, gok, want, wok)
		}
	}
}

// varOfMean estimates the variance of the mean of g with overlapping batch
// means of length ceil(factor * tau), tau being g's own autocorrelation
// time, as the influence series are treated.
func varOfMean(g []float64, factor float64) seriesVar {
	tau, ok := autocorrTime(g)
	b, short := batchLen(tau, ok, len(g), factor)
	return seriesVar{varMean: obmVarOfMean(g, b), tau: tau, batch: b, short: short}
}

// autocorrTime returns the integrated autocorrelation time
//
//	tau = 1 + 2 sum_{t=1}^{M} rho(t)
//
// of g with Sokal's automatic window, and whether the window closed before
// lag len(g)/2 (if not, tau is a lower bound). A constant series has tau = 1.
// Autocovariances are computed lag by lag, O(len(g) M) with M a few tau:
// the reference the FFT version (acf.tau) is checked against.
func autocorrTime(g []float64) (tau float64, ok bool) {
	n := len(g)
	if n < 2 {
		return 1, false
	}
	var mean float64
	for _, v := range g {
		mean += v
	}
	mean /= float64(n)
	var c0 float64
	for _, v := range g {
		d := v - mean
		c0 += d * d
	}
	if c0 == 0 || math.IsNaN(c0) {
		return 1, true
	}
	tau = 1
	for t := 1; t < n/2; t++ {
		var ct float64
		for i := 0; i+t < n; i++ {
			ct += (g[i] - mean) * (g[i+t] - mean)
		}
		tau += 2 * ct / c0
		if float64(t) >= sokalWindow*tau {
			if tau < 1/float64(n) {
				// Strongly anticorrelated series: keep the error positive.
				tau = 1 / float64(n)
			}
			return tau, true
		}
	}
	return math.Max(tau, 1/float64(n)), false
}
