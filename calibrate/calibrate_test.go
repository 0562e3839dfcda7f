package calibrate

import (
	"bytes"
	"context"
	"errors"
	"math"
	"math/big"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"tautline/likelihood/simulate"
	"tautline/models/binaries"
	"tautline/models/gw"
	"tautline/priors"
)

// exactBinomialCDF returns P(X <= k) for X ~ Binomial(n, 1/b), summed
// exactly in rationals from the definition C(n, j) p^j (1-p)^(n-j): an
// evaluation independent of gonum's regularised incomplete beta.
func exactBinomialCDF(n, b, k int) float64 {
	p := big.NewRat(1, int64(b))
	q := big.NewRat(int64(b-1), int64(b))
	sum := new(big.Rat)
	for j := 0; j <= k; j++ {
		c := new(big.Rat).SetInt(new(big.Int).Binomial(int64(n), int64(j)))
		pj := new(big.Rat).SetInt64(1)
		for range j {
			pj.Mul(pj, p)
		}
		for range n - j {
			pj.Mul(pj, q)
		}
		sum.Add(sum, c.Mul(c, pj))
	}
	f, _ := sum.Float64()
	return f
}

// TestHistogramBand checks the band's ends against the definition of a
// quantile (smallest k with CDF(k) >= level) evaluated with exact
// rational binomial sums.
func TestHistogramBand(t *testing.T) {
	for _, tc := range []struct{ n, bins int }{{20, 2}, {40, 4}, {100, 10}, {100, 20}, {400, 20}, {57, 5}} {
		band, err := HistogramBand(tc.n, tc.bins, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		a := 0.05 / (2 * float64(tc.bins))
		for _, end := range []struct {
			name  string
			k     int
			level float64
		}{{"lower", band.Lo, a}, {"upper", band.Hi, 1 - a}} {
			// CDF(k) >= level > CDF(k-1); 1e-12 absorbs the float
			// rounding of gonum's CDF near the level, not a wrong k (the
			// CDF jumps by at least 1e-20 between neighbours here, but
			// a k one off would move it by a whole pmf term, >1e-6).
			if c := exactBinomialCDF(tc.n, tc.bins, end.k); c < end.level-1e-12 {
				t.Errorf("n=%d bins=%d: %s end %d has CDF %.6g < %.6g", tc.n, tc.bins, end.name, end.k, c, end.level)
			}
			if end.k > 0 {
				if c := exactBinomialCDF(tc.n, tc.bins, end.k-1); c >= end.level+1e-12 {
					t.Errorf("n=%d bins=%d: %s end %d is not the smallest: CDF(%d) = %.6g >= %.6g", tc.n, tc.bins, end.name, end.k, end.k-1, c, end.level)
				}
			}
		}
		if e := float64(tc.n) / float64(tc.bins); !(float64(band.Lo) < e && e < float64(band.Hi)) {
			t.Errorf("n=%d bins=%d: band [%d, %d] misses the expected count %.1f", tc.n, tc.bins, band.Lo, band.Hi, e)
		}
	}
	for _, bad := range []struct {
		n, bins int
		mass    float64
	}{{0, 10, 0.95}, {10, 1, 0.95}, {10, 5, 1}, {10, 5, math.NaN()}} {
		if _, err := HistogramBand(bad.n, bad.bins, bad.mass); err == nil {
			t.Errorf("HistogramBand(%d, %d, %g) accepted", bad.n, bad.bins, bad.mass)
		}
	}
}

// TestBandSimultaneous checks by Monte Carlo that uniform ranks keep every
// bin inside the band at once in at least 95 % of histograms (the union
// bound promises >= 95 %; it is conservative, so the fraction should lie
// between 95 % and 100 %).
func TestBandSimultaneous(t *testing.T) {
	const n, draws, bins, trials = 100, 99, 10, 4000
	band, err := HistogramBand(n, bins, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	r := rand.New(rand.NewPCG(3, 4))
	inside := 0
	ranks := make([]int, n)
	for range trials {
		for i := range ranks {
			ranks[i] = r.IntN(draws + 1)
		}
		u, err := TestUniform(ranks, draws, bins, 0.01, band)
		if err != nil {
			t.Fatal(err)
		}
		if len(u.OutsideBand) == 0 {
			inside++
		}
	}
	frac := float64(inside) / trials
	// Binomial sd of the fraction at 0.95 is 0.0034 for 4000 trials; allow
	// 4 sd below 95 %.
	if frac < 0.95-4*math.Sqrt(0.95*0.05/trials) {
		t.Errorf("uniform ranks stayed inside the simultaneous band in %.4f of histograms, want >= 0.95", frac)
	}
	t.Logf("simultaneous coverage of the band [%d, %d]: %.4f", band.Lo, band.Hi, frac)
}

// TestUniformPValue checks the chi-squared p-value against closed forms:
// with 3 bins (2 degrees of freedom) the survival function is exp(-x/2);
// with 2 bins (1 degree of freedom) it is erfc(sqrt(x/2)) (Abramowitz &
// Stegun 26.4.4 and 26.4.5 for nu = 2 and 1).
func TestUniformPValue(t *testing.T) {
	band := Band{Lo: 0, Hi: 1 << 30}
	for _, tc := range []struct {
		name   string
		counts []int
		draws  int
		want   func(x float64) float64
	}{
		{"3 bins", []int{10, 25, 16}, 2, func(x float64) float64 { return math.Exp(-x / 2) }},
		{"2 bins", []int{30, 12}, 1, func(x float64) float64 { return math.Erfc(math.Sqrt(x / 2)) }},
	} {
		var ranks []int
		per := (tc.draws + 1) / len(tc.counts)
		for b, c := range tc.counts {
			for range c {
				ranks = append(ranks, b*per)
			}
		}
		u, err := TestUniform(ranks, tc.draws, len(tc.counts), 0.05, band)
		if err != nil {
			t.Fatal(err)
		}
		e := float64(len(ranks)) / float64(len(tc.counts))
		x2 := 0.0
		for _, c := range tc.counts {
			x2 += (float64(c) - e) * (float64(c) - e) / e
		}
		// 1e-12: both are the same statistic; the p-values differ only by
		// the rounding of gonum's incomplete gamma.
		if math.Abs(u.ChiSquare-x2) > 1e-12*x2 || math.Abs(u.P-tc.want(x2)) > 1e-12 {
			t.Errorf("%s: chi2 %.6g p %.6g, want %.6g and %.6g", tc.name, u.ChiSquare, u.P, x2, tc.want(x2))
		}
		if !reflect.DeepEqual(u.Counts, tc.counts) {
			t.Errorf("%s: counts %v, want %v", tc.name, u.Counts, tc.counts)
		}
	}
}

func TestRankAndHistogram(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	draws := []float64{0.1, 0.5, 0.5, 0.9}
	for _, tc := range []struct {
		truth  float64
		lo, hi int
	}{{0, 0, 0}, {0.3, 1, 1}, {1, 4, 4}, {0.5, 1, 3}} {
		seen := map[int]bool{}
		for range 200 {
			k := Rank(tc.truth, draws, r)
			if k < tc.lo || k > tc.hi {
				t.Fatalf("Rank(%g) = %d, want %d..%d", tc.truth, k, tc.lo, tc.hi)
			}
			seen[k] = true
		}
		// Ties are broken at random: every rank in the range turns up.
		if len(seen) != tc.hi-tc.lo+1 {
			t.Errorf("Rank(%g) took values %v, want all of %d..%d", tc.truth, seen, tc.lo, tc.hi)
		}
	}
	if _, err := Histogram([]int{0, 1}, 99, 7); err == nil {
		t.Error("7 bins for 100 rank values accepted")
	}
	if _, err := Histogram([]int{100}, 99, 10); err == nil {
		t.Error("rank above draws accepted")
	}
	for _, tc := range []struct{ n, draws, want int }{{100, 99, 10}, {1000, 99, 20}, {40, 39, 4}, {19, 99, 0}} {
		if b := AutoBins(tc.n, tc.draws); b != tc.want {
			t.Errorf("AutoBins(%d, %d) = %d, want %d", tc.n, tc.draws, b, tc.want)
		}
	}
}

// smallProblem is a fast calibration: the SMBHB power law with gamma fixed
// (one sampled parameter) on a 10-bin invented array.
func smallProblem(t testing.TB, sim, fit string) Problem {
	t.Helper()
	m, err := binaries.New(binaries.Options{FixGamma: true, H0: gw.H0SI(67.4)})
	if err != nil {
		t.Fatal(err)
	}
	p := Problem{
		Model: m,
		Array: simulate.Array{Pulsars: 20, Span: 12 * gw.JulianYear, Cadence: 14 * 86400, Sigma: 300e-9, Bins: 10},
		H0:    gw.H0SI(67.4),
		Grid:  simulate.GridOptions{Min: -11, Max: -3, Points: 800},
	}
	parse := func(s string) []priors.Prior {
		if s == "" {
			return nil
		}
		pr, err := priors.Parse(s)
		if err != nil {
			t.Fatal(err)
		}
		out := make([]priors.Prior, len(m.Params())) // log10_A first; gamma keeps its fixed default
		out[0] = pr
		return out
	}
	p.Simulate, p.Fit = parse(sim), parse(fit)
	return p
}

func smallSettings(out string) Settings {
	return Settings{Replicates: 40, Draws: 39, Walkers: 8, Steps: 300, Burn: 100, Seed: 5, Workers: 2, Out: out, FigureFormats: []string{}}
}

// TestCalibrated runs a correct calibration (truths and fits under the same
// prior) and a deliberately mis-specified one (fits under a prior a
// quarter as wide, shifted off the truths' centre).
//
// Statistical rationale: with a correct posterior the ranks are uniform,
// so the chi-squared p-value is uniform on (0, 1) and the test at level
// 0.01 flags a calibrated setup with probability 0.01. The seed is fixed
// (chosen once, not searched), so the outcome is deterministic; if it
// failed, the chance of that under calibration would be 1 %, and a
// failure is much more likely a real bias (a wrong noise level, a sampler
// not yet converged after its burn-in). Under the narrow prior the
// posterior cannot reach most truths, whose ranks go to 0 or L: with 40
// replicates of which about three quarters fall outside the fit prior, the
// chi-squared statistic is of order a hundred, far beyond the 0.01
// critical value of 11.3 for 3 degrees of freedom (4 bins), so the flag
// cannot be missed.
func TestCalibrated(t *testing.T) {
	if testing.Short() {
		t.Skip("runs 80 fits")
	}
	dir := t.TempDir()
	good, err := Run(context.Background(), smallProblem(t, "uniform(-15.5,-13.5)", ""), smallSettings(filepath.Join(dir, "good")))
	if err != nil {
		t.Fatal(err)
	}
	u := good.Params[0].Uniformity
	t.Logf("calibrated: p = %.3g, counts %v, coverage %+v, warnings %v", u.P, u.Counts, good.Params[0].Coverage, good.Warnings)
	if u.Flagged {
		t.Errorf("correct setup flagged: chi2 %.2f, p %.3g, counts %v", u.ChiSquare, u.P, u.Counts)
	}
	for _, c := range good.Params[0].Coverage {
		// 4 expected standard errors: a calibrated posterior's coverage
		// is Binomial(N, mass)/N.
		if math.Abs(c.Fraction-c.Nominal) > 4*c.Expected {
			t.Errorf("coverage of the %.0f %% interval %.3f, want %.3f +- %.3f", 100*c.Mass, c.Fraction, c.Nominal, 4*c.Expected)
		}
	}
	bad, err := Run(context.Background(), smallProblem(t, "uniform(-15.5,-13.5)", "uniform(-15,-14.5)"), smallSettings(filepath.Join(dir, "bad")))
	if err != nil {
		t.Fatal(err)
	}
	ub := bad.Params[0].Uniformity
	t.Logf("mis-specified: p = %.3g, counts %v", ub.P, ub.Counts)
	if !ub.Flagged || len(ub.OutsideBand) == 0 {
		t.Errorf("mis-specified prior not flagged: chi2 %.2f, p %.3g, counts %v, bins outside the band %v", ub.ChiSquare, ub.P, ub.Counts, ub.OutsideBand)
	}
	if c := bad.Params[0].Coverage[2]; c.Fraction > 0.6 {
		t.Errorf("95 %% coverage under the mis-specified prior %.2f, want far below 0.95", c.Fraction)
	}
}

// readAll returns every regular file under dir by relative path.
func readAll(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	err := filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		b, err := os.ReadFile(p)
		out[rel] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// TestResume interrupts a run after k replicates, resumes it with another
// number of workers and compares every file with an uninterrupted run.
func TestResume(t *testing.T) {
	dir := t.TempDir()
	p := smallProblem(t, "uniform(-15.5,-13.5)", "")
	s := smallSettings(filepath.Join(dir, "whole"))
	s.Replicates, s.Steps, s.Burn, s.FigureFormats = 20, 200, 50, []string{"png", "svg"}
	if _, err := Run(context.Background(), p, s); err != nil {
		t.Fatal(err)
	}
	const k = 5
	ctx, cancel := context.WithCancel(context.Background())
	part := s
	part.Out, part.Workers = filepath.Join(dir, "part"), 1
	part.Progress = func(pr Progress) {
		if pr.Done >= k {
			cancel()
		}
	}
	_, err := Run(ctx, p, part)
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("interrupted run returned %v, want a cancellation", err)
	}
	reps, _ := filepath.Glob(filepath.Join(part.Out, "replicates", "rep-*.json"))
	if len(reps) != k {
		t.Fatalf("%d replicate files after interrupting at %d", len(reps), k)
	}
	if _, err := os.Stat(filepath.Join(part.Out, "ranks.csv")); err == nil {
		t.Error("an interrupted run wrote ranks.csv")
	}
	// Without resume the folder is refused.
	part.Progress = nil
	if _, err := Run(context.Background(), p, part); err == nil || !strings.Contains(err.Error(), "resume") {
		t.Fatalf("rerun without resume: %v, want a refusal naming resume", err)
	}
	// Another seed is another calibration: refused even with resume.
	other := part
	other.Resume, other.Seed = true, 6
	if _, err := Run(context.Background(), p, other); err == nil || !strings.Contains(err.Error(), `"seed"`) {
		t.Fatalf("resume with another seed: %v, want a refusal naming the seed", err)
	}
	part.Resume, part.Workers = true, 2
	resumed := -1
	part.Progress = func(pr Progress) {
		if pr.Replicate == -1 {
			resumed = pr.Resumed
		}
	}
	if _, err := Run(context.Background(), p, part); err != nil {
		t.Fatal(err)
	}
	if resumed != k {
		t.Errorf("resume reported %d replicates found, want %d", resumed, k)
	}
	a, b := readAll(t, s.Out), readAll(t, part.Out)
	if len(a) != len(b) {
		t.Errorf("%d files in the whole run, %d in the resumed one", len(a), len(b))
	}
	for name, want := range a {
		if !bytes.Equal(b[name], want) {
			t.Errorf("%s differs between the whole and the resumed run", name)
		}
	}
}

func TestRunErrors(t *testing.T) {
	p := smallProblem(t, "uniform(-15.5,-13.5)", "")
	dir := t.TempDir()
	for _, tc := range []struct {
		edit func(*Settings)
		want string
	}{
		{func(s *Settings) { s.Replicates = 0 }, "replicates must be >= 1"},
		{func(s *Settings) { s.Burn = 300 }, "burn must be -1 or in 0..steps-1"},
		{func(s *Settings) { s.RankBins = 7 }, "divide draws+1 = 40"},
		{func(s *Settings) { s.Replicates = 19 }, "allow no rank histogram"},
		{func(s *Settings) { s.Steps, s.Burn = 110, 108 }, "give more steps"},
		{func(s *Settings) { s.Walkers = 3 }, "Walkers must be even"},
	} {
		s := smallSettings(filepath.Join(dir, strings.ReplaceAll(tc.want, " ", "_")))
		tc.edit(&s)
		if _, err := Run(context.Background(), p, s); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("error %v, want one containing %q", err, tc.want)
		}
	}
}

// TestCentralRanks checks that the rank set of each central interval is
// the order-statistic interval it claims (by direct comparison on random
// draws) and is symmetric with the stated size.
func TestCentralRanks(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 9))
	for _, tc := range []struct {
		m       float64
		draws   int
		lo, cnt int // expected: ranks lo..lo+cnt-1
	}{
		{0.5, 99, 25, 50}, {0.68, 99, 16, 68}, {0.95, 99, 2, 96},
		{0.5, 39, 10, 20}, {0.68, 39, 6, 28}, {0.95, 39, 1, 38},
	} {
		lo, hi, err := CentralRanks(tc.m, tc.draws)
		if err != nil {
			t.Fatal(err)
		}
		if lo != tc.lo || hi-lo+1 != tc.cnt || lo != tc.draws-hi {
			t.Errorf("CentralRanks(%g, %d) = %d..%d, want %d..%d", tc.m, tc.draws, lo, hi, tc.lo, tc.lo+tc.cnt-1)
		}
		for range 200 {
			d := make([]float64, tc.draws)
			for i := range d {
				d[i] = r.NormFloat64()
			}
			truth := r.NormFloat64()
			k := Rank(truth, d, r)
			s := append([]float64(nil), d...)
			slices.Sort(s)
			// 1-based x_(lo) is s[lo-1]; x_(hi+1) is s[hi].
			in := (lo == 0 || truth > s[lo-1]) && (hi == tc.draws || truth < s[hi])
			if in != (k >= lo && k <= hi) {
				t.Fatalf("m=%g L=%d: rank %d, inside [x_(%d), x_(%d)] = %v", tc.m, tc.draws, k, lo, hi+1, in)
			}
		}
	}
}
