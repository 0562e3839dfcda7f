package cosmicstrings

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// referenceLnOmega is the metastable table lookup written plainly, the
// way the model first evaluated it: the (log10 Gmu, t_s) position with
// every constant taken from its logarithm on the spot, the 16 rows of the
// stencil added into one row over v one row at a time, a 4-point Lagrange
// interpolation in v at each frequency and the edge term ln(1 - f_*/f) by
// referenceLog1mx. lnOmega must agree with it to 1e-12 relative.
func referenceLnOmega(t *MetastableTable, lg, sk float64, lnf, invF, out, buf []float64) error {
	if !(lg >= tableGLo && lg <= tableGHi && sk >= 0 && sk < math.Inf(1)) {
		return ErrOutsideMetastableTable
	}
	lts := 0.5*(math.Log(2*math.Pi)-lg*math.Ln10) + 0.5*math.Pi*sk*sk + math.Log(PlanckTime)
	none := lts <= t.lnTLo
	var y, lfs float64
	if !none {
		lts = math.Min(lts, t.lnTHi)
		y, lfs = lts/math.Ln10, t.lnCutoff(lts)
	}
	shift := -t.s.Kappa * math.Log(t.s.P)
	ax := t.g.axes
	vMin, vMax := math.Inf(1), math.Inf(-1)
	for _, l := range lnf {
		if v := l - lfs; v > 0 {
			vMin = math.Min(vMin, v)
			vMax = math.Max(vMax, v)
		}
	}
	if none || y < metaYLo || !(vMax > 0) {
		if !none && vMax > 0 {
			return ErrOutsideMetastableTable
		}
		for i := range out[:len(lnf)] {
			out[i] = math.Inf(-1)
		}
		return nil
	}
	ig, wg := ax[0].index(lg)
	iy, wy := ax[1].index(y)
	jLo, _ := ax[2].index(vMin)
	jHi, _ := ax[2].index(vMax)
	jHi += 4
	nY, m := int(ax[1].N), int(ax[2].N)
	row := buf[jLo:jHi]
	clear(row)
	for a := range 4 {
		for b := range 4 {
			w := wg[a] * wy[b]
			base := ((ig+a)*nY+iy+b)*m + jLo
			for j := range row {
				row[j] += w * float64(t.g.data[base+j])
			}
		}
	}
	fs := math.Exp(lfs)
	for i, l := range lnf {
		v := l - lfs
		if !(v > 0) {
			out[i] = math.Inf(-1)
			continue
		}
		iv, w := ax[2].index(v)
		lag := w[0]*buf[iv] + w[1]*buf[iv+1] + w[2]*buf[iv+2] + w[3]*buf[iv+3]
		out[i] = lag + referenceLog1mx(fs*invF[i]) + shift
	}
	return nil
}

// referenceLog1mx is ln(1 - x) by its Taylor series to x^8 below x = 0.05
// and by math.Log1p above.
func referenceLog1mx(x float64) float64 {
	if x < 0.05 {
		return -x * (1 + x*(1.0/2+x*(1.0/3+x*(1.0/4+x*(1.0/5+x*(1.0/6+x*(1.0/7+x*(1.0/8))))))))
	}
	return math.Log1p(-x)
}

// metaFreqSets returns frequency sets in the tables' band [1e-11, 1e-5] Hz
// of the kinds a likelihood hands the model: free-spectrum bins i/T for
// spans from 3 to 30 years (sorted, evenly spaced in f), log-uniform draws
// (sorted and shuffled), a set with repeated frequencies and the band's
// two ends.
func metaFreqSets(rng *rand.Rand) [][]float64 {
	var sets [][]float64
	for _, years := range []float64{3, 10, 15, 30} {
		for _, n := range []int{1, 5, 30, 100} {
			f := make([]float64, n)
			for i := range f {
				f[i] = float64(i+1) / (years * 365.25 * 86400)
			}
			sets = append(sets, f)
		}
	}
	for range 12 {
		f := make([]float64, 1+rng.IntN(60))
		for i := range f {
			f[i] = tableFLo * math.Pow(tableFHi/tableFLo, rng.Float64())
		}
		slices.Sort(f)
		sets = append(sets, f)
		g := slices.Clone(f)
		rng.Shuffle(len(g), func(i, j int) { g[i], g[j] = g[j], g[i] })
		sets = append(sets, g)
	}
	sets = append(sets, []float64{3e-9, 1e-9, 3e-9, 1e-9, 2e-8}, []float64{tableFLo, tableFHi})
	return sets
}

// metaTestPoints returns parameter points: uniform over a box wider than
// the default prior in sqrt(kappa) (from t_s before the network to t_s
// after today), the box's corners and the nodes of the table's axes, where
// the Lagrange weights are exactly 0 and 1.
func metaTestPoints(t *MetastableTable, rng *rand.Rand, n int) [][2]float64 {
	var pts [][2]float64
	for range n {
		pts = append(pts, [2]float64{tableGLo + (tableGHi-tableGLo)*rng.Float64(), 5 + 6*rng.Float64()})
	}
	for _, lg := range []float64{tableGLo, -10, tableGHi} {
		for _, sk := range []float64{0, DefaultSqrtKappaLo, 8, DefaultSqrtKappaHi, 20} {
			pts = append(pts, [2]float64{lg, sk})
		}
	}
	ax := t.g.axes
	for i := 1; i < int(ax[0].N)-1; i += 3 {
		lg := ax[0].Lo + float64(i)*ax[0].Step
		for j := 2; j < int(ax[1].N); j += 7 {
			lts := (ax[1].Lo + float64(j)*ax[1].Step) * math.Ln10
			pts = append(pts, [2]float64{lg, sqrtKappaOf(math.Pow(10, lg), lts)})
		}
	}
	return pts
}

// TestMetastableLnOmegaMatchesReference compares lnOmega with
// referenceLnOmega (the same interpolation written plainly) over random
// parameter points and frequency sets: the results agree to 1e-12
// relative, -Inf where the spectrum vanishes in both, and both fail alike
// outside the domain.
func TestMetastableLnOmegaMatchesReference(t *testing.T) {
	tab := loadMeta(t)
	for _, kp := range [][2]float64{{1, 1}, {0.6, 0.25}} {
		tk := *tab
		tk.s.Kappa, tk.s.P = kp[0], kp[1]
		tk.prepare()
		rng := rand.New(rand.NewPCG(11, uint64(1000*kp[1])))
		pts := metaTestPoints(&tk, rng, 400)
		var compared, finite int
		for _, f := range metaFreqSets(rng) {
			sp, err := NewMetastableModel(&tk).At(f)
			if err != nil {
				t.Fatal(err)
			}
			lnf, invF := make([]float64, len(f)), make([]float64, len(f))
			for i, v := range f {
				lnf[i], invF[i] = math.Log(v), 1/v
			}
			got, want := make([]float64, len(f)), make([]float64, len(f))
			buf := make([]float64, tk.g.axes[2].N)
			for _, p := range pts {
				errGot := sp.LnOmega(p[:], got)
				errWant := referenceLnOmega(&tk, p[0], p[1], lnf, invF, want, buf)
				if !errors.Is(errGot, errWant) || (errWant == nil) != (errGot == nil) {
					t.Fatalf("kappa=%g P=%g log10 Gmu=%g sqrt(kappa)=%g: error %v, reference %v", kp[0], kp[1], p[0], p[1], errGot, errWant)
				}
				if errWant != nil {
					continue
				}
				for i := range f {
					compared++
					if math.IsInf(want[i], -1) {
						if !math.IsInf(got[i], -1) {
							t.Errorf("log10 Gmu=%g sqrt(kappa)=%g f=%g: %g, reference -Inf", p[0], p[1], f[i], got[i])
						}
						continue
					}
					finite++
					if !(math.Abs(got[i]-want[i]) <= 1e-12*math.Abs(want[i])) {
						t.Errorf("kappa=%g P=%g log10 Gmu=%g sqrt(kappa)=%g f=%g: %.17g, reference %.17g (rel %.2g)",
							kp[0], kp[1], p[0], p[1], f[i], got[i], want[i], math.Abs(got[i]/want[i]-1))
					}
				}
			}
		}
		t.Logf("kappa=%g P=%g: %d values compared, %d finite", kp[0], kp[1], compared, finite)
		if finite < compared/4 {
			t.Errorf("only %d of %d values finite: the points miss the spectrum", finite, compared)
		}
	}
}

// TestMetastableTableLnOmegaOnePoint: the exported one-point lookup is the
// model's arithmetic at a single frequency.
func TestMetastableTableLnOmegaOnePoint(t *testing.T) {
	tab := loadMeta(t)
	rng := rand.New(rand.NewPCG(12, 0))
	buf := make([]float64, tab.g.axes[2].N)
	for range 200 {
		lg, sk := tableGLo+(tableGHi-tableGLo)*rng.Float64(), 7+2.5*rng.Float64()
		f := tableFLo * math.Pow(tableFHi/tableFLo, rng.Float64())
		got, err := tab.LnOmega(lg, sk, f)
		var want [1]float64
		errRef := referenceLnOmega(tab, lg, sk, []float64{math.Log(f)}, []float64{1 / f}, want[:], buf)
		if err != errRef {
			t.Fatalf("log10 Gmu=%g sqrt(kappa)=%g f=%g: error %v, reference %v", lg, sk, f, err, errRef)
		}
		if err == nil && !(got == want[0] || math.Abs(got-want[0]) <= 1e-12*math.Abs(want[0])) {
			t.Errorf("log10 Gmu=%g sqrt(kappa)=%g f=%g: %.17g, reference %.17g", lg, sk, f, got, want[0])
		}
	}
}

// log1mx is the edge term ln(1 - x) as lnOmega takes it: log1mxSeries
// below 2^-10, vec.LogTable.Run above.
func log1mx(t *MetastableTable, x float64) float64 {
	var d [1]float64
	if t.logTab.Run(d[:], []float64{1}, x) == 0 {
		return log1mxSeries(x)
	}
	return d[0]
}

// TestLog1mx checks the edge term ln(1 - x) against the standard library's
// math.Log1p (accurate to about one ulp) from x = 1e-300 to the last
// float64 below 1, within 4 ulp (relative 2^-50) or 2^-54 absolute: the
// table reduction above 2^-10 rounds a few times, the series below leaves
// out less than x^(n+1)/(n (1 - x)) after n terms, under 2^-54 at each
// cut (2^-18: x^6, 2^-27: x^3, below: x^2).
func TestLog1mx(t *testing.T) {
	tab := loadMeta(t)
	rng := rand.New(rand.NewPCG(13, 0))
	xs := []float64{0, 1e-300, 1e-20, 1e-8, math.Nextafter(0x1p-27, 0), 0x1p-27, math.Nextafter(0x1p-18, 0), 0x1p-18, math.Nextafter(0x1p-10, 0), 0x1p-10, 0.05, 0.25, 0.5, 0.75, 0.999, 1 - 1e-12, math.Nextafter(1, 0)}
	for range 100000 {
		xs = append(xs, rng.Float64(), math.Pow(10, -16*rng.Float64()), 1-math.Pow(10, -16*rng.Float64()))
	}
	var worstAbs, worstRel float64
	for _, x := range xs {
		got, want := log1mx(tab, x), math.Log1p(-x)
		e := math.Abs(got - want)
		if want != 0 {
			worstAbs, worstRel = math.Max(worstAbs, e), math.Max(worstRel, e/math.Abs(want))
		}
		if !(e <= 0x1p-50*math.Abs(want) || e <= 0x1p-54) {
			t.Errorf("log1mx(%.17g) = %.17g, math.Log1p(-x) = %.17g", x, got, want)
		}
	}
	t.Logf("worst absolute error %.3g, worst relative %.3g over %d points", worstAbs, worstRel, len(xs))
	for _, x := range []float64{1, 1.5, math.Inf(1)} {
		if got := log1mx(tab, x); !math.IsInf(got, -1) {
			t.Errorf("log1mx(%g) = %g, want -Inf", x, got)
		}
	}
}

// TestMetastableLnOmegaNoAlloc: the model's evaluation does not allocate
// anywhere in the prior box.
func TestMetastableLnOmegaNoAlloc(t *testing.T) {
	sp, err := NewMetastableModel(loadMeta(t)).At(freqs30())
	if err != nil {
		t.Fatal(err)
	}
	out := make([]float64, 30)
	for _, theta := range [][]float64{{-10, 7}, {-10, 7.5}, {-13, 8.2}, {-7, 9.4}} {
		if a := testing.AllocsPerRun(50, func() { sp.LnOmega(theta, out) }); a != 0 {
			t.Errorf("theta %v: %g allocations", theta, a)
		}
	}
}

// priorDraws returns n points drawn from the model's default prior.
func priorDraws(n int) [][]float64 {
	rng := rand.New(rand.NewPCG(1, 2))
	pts := make([][]float64, n)
	for i := range pts {
		pts[i] = []float64{tableGLo + (tableGHi-tableGLo)*rng.Float64(), DefaultSqrtKappaLo + (DefaultSqrtKappaHi-DefaultSqrtKappaLo)*rng.Float64()}
	}
	return pts
}

// BenchmarkMetastablePrior30 evaluates the model at the 30 frequencies of
// freqs30 over draws from the default prior, side by side with
// referenceLnOmega on the same draws.
func BenchmarkMetastablePrior30(b *testing.B) {
	tab := loadMeta(b)
	sp, err := NewMetastableModel(tab).At(freqs30())
	if err != nil {
		b.Fatal(err)
	}
	f := freqs30()
	lnf, invF := make([]float64, len(f)), make([]float64, len(f))
	for i, v := range f {
		lnf[i], invF[i] = math.Log(v), 1/v
	}
	pts := priorDraws(256)
	out := make([]float64, 30)
	b.Run("model", func(b *testing.B) {
		b.ReportAllocs()
		for i := 0; b.Loop(); i++ {
			_ = sp.LnOmega(pts[i%len(pts)], out)
		}
	})
	b.Run("reference", func(b *testing.B) {
		b.ReportAllocs()
		buf := make([]float64, tab.g.axes[2].N)
		for i := 0; b.Loop(); i++ {
			p := pts[i%len(pts)]
			_ = referenceLnOmega(tab, p[0], p[1], lnf, invF, out, buf)
		}
	})
}

// TestMetastableCertificateReproduced re-runs the embedded table's
// certification (same seed, same points, the direct quadrature path as
// the reference) through the current lookup: the maximum and the 99th
// percentile of |d ln Omega| agree with the recorded certificate to 1e-9,
// so the lookup's reorganisation leaves the accuracy certificate as it is.
func TestMetastableCertificateReproduced(t *testing.T) {
	if testing.Short() {
		t.Skip("re-certification takes about 15 s on two cores")
	}
	tab := loadMeta(t)
	rec := tab.Certificate()
	proto, err := NewMetastableDirect(DefaultMetastableSettings())
	if err != nil {
		t.Fatal(err)
	}
	got, err := tab.certify(proto, BuildOptions{Workers: 2, Seed: rec.Seed})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("recorded: %v\nnow:      %v", rec, got)
	if got.Points != rec.Points || math.Abs(got.MaxErr-rec.MaxErr) > 1e-9 || math.Abs(got.P99Err-rec.P99Err) > 1e-9 {
		t.Errorf("certificate changed: recorded %+v, now %+v", rec, got)
	}
}

// TestMetaExp checks expTable.exp against the standard library's math.Exp
// (documented within 1 ulp) from z = -700 to 700, where exp takes the
// table, and at the points where k = round(64 z/ln 2) changes (r near
// +-ln2/128): within 2 ulp (relative 2^-51). Beyond, exp is math.Exp.
func TestMetaExp(t *testing.T) {
	tab := loadMeta(t)
	rng := rand.New(rand.NewPCG(14, 0))
	zs := []float64{0, -0.0, 1, -1, 700, -700, 1e-300, -1e-300, math.Ln2 / 128, -math.Ln2 / 128}
	for range 200000 {
		zs = append(zs, -700+1400*rng.Float64(), -60+50*rng.Float64())
	}
	for k := -64 * 40; k <= 64*40; k += 7 {
		mid := (float64(k) + 0.5) * math.Ln2 / 64
		zs = append(zs, mid, math.Nextafter(mid, 0), math.Nextafter(mid, math.Inf(1)))
	}
	var worst float64
	for _, z := range zs {
		got, want := tab.expTab.exp(z), math.Exp(z)
		rel := math.Abs(got-want) / want
		worst = math.Max(worst, rel)
		if !(rel <= 0x1p-51) {
			t.Errorf("exp(%.17g) = %.17g, math.Exp = %.17g (rel %.3g)", z, got, want, rel)
		}
	}
	t.Logf("worst relative difference from math.Exp %.3g over %d points", worst, len(zs))
	for _, z := range []float64{-800, 800, math.Inf(-1), math.Inf(1)} {
		if got, want := tab.expTab.exp(z), math.Exp(z); got != want {
			t.Errorf("exp(%g) = %g, math.Exp = %g", z, got, want)
		}
	}
	if got := tab.expTab.exp(math.NaN()); !math.IsNaN(got) {
		t.Errorf("exp(NaN) = %g", got)
	}
}

// TestMetaLnAMatchesBackground: the inlined interpolation of ln a gives
// exactly the background's LnAHT (cosmology package, the same Hermite
// operations on the same nodes) over the whole ln t range and at its
// nodes.
func TestMetaLnAMatchesBackground(t *testing.T) {
	tab := loadMeta(t)
	rng := rand.New(rand.NewPCG(15, 0))
	lo, hi := tab.bg.LnTimeRange()
	lts := []float64{lo, hi, lo - 1, hi + 1}
	for i := range 2000 {
		lts = append(lts, lo+(hi-lo)*rng.Float64(), tab.lnAT0+float64(i)*tab.lnAStep)
	}
	for _, l := range lts {
		want, _ := tab.bg.LnAHT(l)
		if got := tab.lnA(l); got != want {
			t.Errorf("ln t = %.17g: lnA %.17g, LnAHT %.17g", l, got, want)
		}
	}
}
