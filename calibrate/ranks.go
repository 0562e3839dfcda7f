package calibrate

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/stat/distuv"
)

// Rank returns the rank of truth among draws: the number of draws below
// it, with ties (draws equal to truth, which a walker stuck at the true
// value can produce) broken uniformly at random with r, as Talts et al.
// (2018, section 4.1) prescribe for discrete or repeated draws. The result
// lies in 0..len(draws).
func Rank(truth float64, draws []float64, r *rand.Rand) int {
	below, equal := 0, 0
	for _, d := range draws {
		switch {
		case d < truth:
			below++
		case d == truth:
			equal++
		}
	}
	if equal > 0 {
		below += r.IntN(equal + 1)
	}
	return below
}

// Histogram counts ranks in 0..draws into bins equal bins; bins must
// divide draws+1 so that every bin holds the same number of rank values.
func Histogram(ranks []int, draws, bins int) ([]int, error) {
	if err := checkBins(draws, bins); err != nil {
		return nil, err
	}
	per := (draws + 1) / bins
	h := make([]int, bins)
	for _, r := range ranks {
		if r < 0 || r > draws {
			return nil, fmt.Errorf("calibrate: rank %d outside 0..%d", r, draws)
		}
		h[r/per]++
	}
	return h, nil
}

func checkBins(draws, bins int) error {
	if draws < 1 {
		return fmt.Errorf("calibrate: draws must be >= 1, got %d", draws)
	}
	if bins < 2 || (draws+1)%bins != 0 {
		return fmt.Errorf("calibrate: rank bins must be at least 2 and divide draws+1 = %d, got %d", draws+1, bins)
	}
	return nil
}

// AutoBins chooses the number of rank-histogram bins for n replicates of
// draws posterior draws: the largest divisor of draws+1 that leaves at
// least 10 expected counts per bin (twice the usual minimum of 5 for the
// chi-squared approximation, common practice, so that the simultaneous
// band's lower end stays above zero and a hole in the histogram can show)
// and is at most 20 (Talts et al. 2018 suggest about 20 bins for large
// runs). It returns 0 when no divisor of at least 2 qualifies.
func AutoBins(n, draws int) int {
	best := 0
	for b := 2; b <= 20 && b <= draws+1; b++ {
		if (draws+1)%b == 0 && n >= 10*b {
			best = b
		}
	}
	return best
}

// A Band is the range of bin counts a rank histogram of N replicates in
// Bins bins keeps with probability at least Mass in every bin at once when
// the ranks are uniform.
type Band struct {
	N, Bins int
	Mass    float64
	// Lo and Hi are the least and largest count inside the band.
	Lo, Hi int
}

// HistogramBand returns the simultaneous band of a rank histogram: under
// uniform ranks each bin's count is Binomial(n, 1/bins); the band is that
// binomial's central interval of mass 1 - (1-mass)/bins, whose ends are the
// quantiles at (1-mass)/(2 bins) and 1 - (1-mass)/(2 bins). By the union
// bound (Bonferroni) the chance that any bin leaves its interval is at most
// 1 - mass, whatever the bins' dependence, so the band is simultaneous and
// conservative. Quantiles are the smallest counts k whose gonum
// distuv.Binomial CDF reaches the level.
func HistogramBand(n, bins int, mass float64) (Band, error) {
	if n < 1 || bins < 2 || !(mass > 0 && mass < 1) {
		return Band{}, fmt.Errorf("calibrate: band needs n >= 1, bins >= 2 and 0 < mass < 1, got %d, %d, %g", n, bins, mass)
	}
	a := (1 - mass) / (2 * float64(bins))
	b := distuv.Binomial{N: float64(n), P: 1 / float64(bins)}
	return Band{N: n, Bins: bins, Mass: mass, Lo: binomialQuantile(b, n, a), Hi: binomialQuantile(b, n, 1-a)}, nil
}

// binomialQuantile returns the smallest k in 0..n with CDF(k) >= p.
func binomialQuantile(b distuv.Binomial, n int, p float64) int {
	lo, hi := 0, n
	for lo < hi {
		mid := (lo + hi) / 2
		if b.CDF(float64(mid)) >= p {
			hi = mid
		} else {
			lo = mid + 1
		}
	}
	return lo
}

// Uniformity is the chi-squared test of a rank histogram against uniform
// ranks.
type Uniformity struct {
	// Counts is the rank histogram.
	Counts []int
	// ChiSquare is sum (c - e)^2 / e over bins, e = N/Bins.
	ChiSquare float64
	// DOF is Bins - 1.
	DOF int
	// P is the upper-tail probability of ChiSquare under chi-squared with
	// DOF degrees of freedom (gonum distuv.ChiSquared).
	P float64
	// Level is the test level; Flagged says P < Level.
	Level   float64
	Flagged bool
	// OutsideBand lists the bins whose count leaves the simultaneous band.
	OutsideBand []int
}

// TestUniform bins ranks (0..draws) into bins bins and applies Pearson's
// chi-squared test of equal bin probabilities, flagging P < level.
func TestUniform(ranks []int, draws, bins int, level float64, band Band) (Uniformity, error) {
	if !(level > 0 && level < 1) {
		return Uniformity{}, fmt.Errorf("calibrate: test level must be in (0, 1), got %g", level)
	}
	h, err := Histogram(ranks, draws, bins)
	if err != nil {
		return Uniformity{}, err
	}
	if len(ranks) == 0 {
		return Uniformity{}, errors.New("calibrate: no ranks")
	}
	e := float64(len(ranks)) / float64(bins)
	x2 := 0.0
	u := Uniformity{Counts: h, DOF: bins - 1, Level: level, OutsideBand: []int{}}
	for i, c := range h {
		d := float64(c) - e
		x2 += d * d / e
		if c < band.Lo || c > band.Hi {
			u.OutsideBand = append(u.OutsideBand, i)
		}
	}
	u.ChiSquare = x2
	u.P = distuv.ChiSquared{K: float64(bins - 1)}.Survival(x2)
	u.Flagged = u.P < level
	return u, nil
}

// Coverage is how often a central posterior interval covered the truth.
type Coverage struct {
	// Mass is the interval's requested probability, e.g. 0.68.
	Mass float64
	// Lo and Hi are the 1-based order statistics of the L draws bounding
	// the interval [x_(Lo), x_(Hi)] (CentralRanks).
	Lo, Hi int
	// Nominal is the interval's exact probability of holding the truth
	// when the posterior is calibrated, (Hi - Lo)/(L + 1): Mass rounded to
	// what L draws can resolve.
	Nominal float64
	// Covered and N count the replicates whose interval held the truth
	// and all replicates.
	Covered, N int
	// Fraction is Covered/N; StdErr its binomial standard error
	// sqrt(f (1 - f) / N); Expected is sqrt(Nominal (1 - Nominal) / N), the
	// standard error a calibrated posterior would give.
	Fraction, StdErr, Expected float64
}

// Masses returns the central-interval probabilities of the coverage table.
func Masses() []float64 { return []float64{0.50, 0.68, 0.95} }

// CentralRanks returns the central interval of mass m among draws
// posterior draws as the ranks it accepts: the truth lies in
// [x_(lo), x_(hi+1)] (1-based order statistics of the draws) exactly when
// its rank r (draws below it) satisfies lo <= r <= hi. With uniform ranks
// on 0..draws the interval holds the truth with probability
// (hi - lo + 1)/(draws + 1); the count hi - lo + 1 is the integer closest
// to m (draws + 1) that leaves the same number of ranks outside on each
// side (the larger on a tie). Quantile intervals interpolated between
// draws would instead cover less than m for small L (for L = 39 the
// interpolated 95 % interval covers 90 %).
func CentralRanks(m float64, draws int) (lo, hi int, err error) {
	if !(m > 0 && m < 1) || draws < 1 {
		return 0, 0, fmt.Errorf("calibrate: central interval needs 0 < mass < 1 and draws >= 1, got %g and %d", m, draws)
	}
	n := draws + 1
	want := m * float64(n)
	best := -1
	for c := n % 2; c <= n; c += 2 { // counts with n - c even
		if c == 0 {
			continue
		}
		if best < 0 || math.Abs(float64(c)-want) <= math.Abs(float64(best)-want) {
			best = c
		}
	}
	lo = (n - best) / 2
	return lo, lo + best - 1, nil
}

// CoverageOf tallies the ranks (0..draws) inside the central interval of
// mass m.
func CoverageOf(m float64, ranks []int, draws int) (Coverage, error) {
	lo, hi, err := CentralRanks(m, draws)
	if err != nil {
		return Coverage{}, err
	}
	c := Coverage{Mass: m, Lo: lo, Hi: hi + 1, Nominal: float64(hi-lo+1) / float64(draws+1), N: len(ranks)}
	for _, r := range ranks {
		if r >= lo && r <= hi {
			c.Covered++
		}
	}
	if c.N > 0 {
		n := float64(c.N)
		c.Fraction = float64(c.Covered) / n
		c.StdErr = math.Sqrt(c.Fraction * (1 - c.Fraction) / n)
		c.Expected = math.Sqrt(c.Nominal * (1 - c.Nominal) / n)
	}
	return c, nil
}
