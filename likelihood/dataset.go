package likelihood

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"

	"tautline/internal/numeric"
	"tautline/models/gw"
)

// MinSamples is the fewest posterior samples a bin in the samples
// representation may have: fewer cannot support a density estimate.
const MinSamples = 50

// MaxPriorDecades is the widest prior range of log10 rho accepted, in
// decades (hi - lo). Free-spectrum posteriors are made under priors a few
// decades wide (the demos use 4 to 6); the tables of the likelihood span
// the range with a fixed number of points, so a range of thousands of
// decades leaves no resolution where the data are, and a range near the
// float limit overflows hi - lo.
const MaxPriorDecades = 1000.0

// MinSpreadFraction is the smallest spread (largest minus smallest) of a
// bin's samples accepted, as a fraction of the prior range: below it the
// samples fall within a few thousandths of one table spacing of the
// default table and the kernel density estimate cannot resolve them.
const MinSpreadFraction = 1e-6

// The range of time spans T accepted, in s. Shorter than a day puts the
// lowest bin 1/T above 1e-5 Hz, outside the nanohertz band of pulsar
// timing; longer than a millennium exceeds any timing record. A span
// outside it is almost surely a unit mistake (years given as seconds, or
// seconds as years).
const (
	MinSpan = 86400.0
	MaxSpan = 1000 * gw.JulianYear
)

// FreqTolerance is the relative tolerance within which listed frequencies must
// equal i/T unless the data set declares them irregular.
const FreqTolerance = 1e-6

// A Representation says how one bin's posterior of log10 rho is given.
type Representation int

// The per-bin representations.
const (
	// Samples are draws from the bin's posterior of log10 rho.
	Samples Representation = iota
	// Grid is a density of log10 rho tabulated on a strictly increasing grid.
	Grid
	// Gaussian is a normal summary (mean, standard deviation) of log10 rho.
	Gaussian
)

// String returns "samples", "grid" or "gaussian".
func (r Representation) String() string {
	switch r {
	case Samples:
		return "samples"
	case Grid:
		return "grid"
	case Gaussian:
		return "gaussian"
	}
	return fmt.Sprintf("Representation(%d)", int(r))
}

// A Dataset is a free spectrum: per frequency bin, the marginal posterior of
// log10 rho (rho in s) obtained under a uniform prior on log10 rho in
// [PriorMin, PriorMax].
type Dataset struct {
	// Name identifies the data set in run metadata and reports.
	Name string
	// Provenance is a free-text line saying where the data come from.
	Provenance string
	// Span is the time span T of the observations, in s.
	Span float64
	// Freqs are the bin frequencies in Hz, increasing; f_i = i/T unless
	// Irregular.
	Freqs []float64
	// Irregular is true when Freqs are not the harmonics i/T.
	Irregular bool
	// PriorMin and PriorMax bound the uniform prior on log10 rho under which
	// the per-bin posteriors were made.
	PriorMin, PriorMax float64
	// Bins holds one posterior per frequency.
	Bins []Bin
	// SHA256 is the hex SHA-256 digest of the description file's bytes
	// followed by those of the samples, grid and gaussian tables (those
	// present, in that order). Load sets it; it is empty for data sets built
	// in memory.
	SHA256 string
	// Path is the description file the data set was loaded from.
	Path string
	// Warnings name the doubtful inputs Load accepted (a grid bin of only
	// two points, say), each with its file and line, for the caller to
	// show; nil when there were none.
	Warnings []string
}

// A Bin is the posterior of log10 rho in one frequency bin. Only the fields
// of its Kind are used.
type Bin struct {
	Kind Representation
	// Samples are posterior draws of log10 rho (Kind Samples).
	Samples []float64
	// Grid holds strictly increasing log10 rho values and Density the
	// (not necessarily normalised) posterior density at them (Kind Grid).
	Grid, Density []float64
	// Mean and SD summarise the posterior as a normal (Kind Gaussian).
	Mean, SD float64
}

// A BinSummary is the median and central 68 % interval of log10 rho in one bin.
type BinSummary struct {
	// Index is the bin's position in Dataset.Bins (0-based).
	Index int
	// Freq is the bin frequency in Hz.
	Freq float64
	// Median, Lo68 and Hi68 are the 0.5, Phi(-1) and Phi(1) quantiles of
	// log10 rho (the "68 %" interval of docs/physics.md section 8).
	Median, Lo68, Hi68 float64
	Kind               Representation
}

// Summary returns the median and central 68 % interval of log10 rho for each
// bin, computed from its representation: empirical quantiles (linear
// interpolation between order statistics) for samples, the exact quantiles of
// the piecewise-linear density for grids, and the quantiles of the normal
// truncated to the prior range for Gaussian summaries (the density the
// likelihood uses).
func (ds *Dataset) Summary() []BinSummary {
	out := make([]BinSummary, len(ds.Bins))
	q := make([]float64, 3)
	for i := range ds.Bins {
		b := &ds.Bins[i]
		b.Quantiles(ds.PriorMin, ds.PriorMax, []float64{0.5, numeric.P68Lo, numeric.P68Hi}, q)
		f := math.NaN()
		if i < len(ds.Freqs) {
			f = ds.Freqs[i]
		}
		out[i] = BinSummary{Index: i, Freq: f, Median: q[0], Lo68: q[1], Hi68: q[2], Kind: b.Kind}
	}
	return out
}

// Quantiles writes into dst the quantiles of log10 rho at the probabilities ps
// (each in [0, 1]) and returns dst, allocating it when it is too short. lo
// and hi are the prior range, used to truncate a Gaussian summary. Quantiles
// are NaN when the bin holds no usable data.
func (b *Bin) Quantiles(lo, hi float64, ps, dst []float64) []float64 {
	if len(dst) < len(ps) {
		dst = make([]float64, len(ps))
	}
	dst = dst[:len(ps)]
	switch b.Kind {
	case Samples:
		s := slices.Clone(b.Samples)
		sort.Float64s(s)
		for k, p := range ps {
			dst[k] = numeric.Quantile(s, p)
		}
	case Grid:
		cdf := gridCDF(b.Grid, b.Density)
		for k, p := range ps {
			dst[k] = gridQuantile(b.Grid, b.Density, cdf, p)
		}
	case Gaussian:
		a := numeric.NormCDF((lo - b.Mean) / b.SD)
		c := numeric.NormCDF((hi - b.Mean) / b.SD)
		for k, p := range ps {
			dst[k] = b.Mean + b.SD*numeric.NormQuantile(a+p*(c-a))
		}
	default:
		for k := range ps {
			dst[k] = math.NaN()
		}
	}
	return dst
}

// gridCDF returns the cumulative mass of the piecewise-linear density d on
// grid x at each grid point, normalised to end at 1. It returns nil when the
// total mass is not positive.
func gridCDF(x, d []float64) []float64 {
	if len(x) < 2 || len(x) != len(d) {
		return nil
	}
	c := make([]float64, len(x))
	for k := 1; k < len(x); k++ {
		c[k] = c[k-1] + 0.5*(d[k]+d[k-1])*(x[k]-x[k-1])
	}
	tot := c[len(c)-1]
	if !(tot > 0) || math.IsInf(tot, 0) {
		return nil
	}
	for k := range c {
		c[k] /= tot
	}
	return c
}

// gridQuantile inverts the cumulative mass of the piecewise-linear density
// exactly: within a segment the mass is quadratic in the position.
func gridQuantile(x, d, cdf []float64, p float64) float64 {
	if cdf == nil || math.IsNaN(p) {
		return math.NaN()
	}
	n := len(x)
	if p <= 0 {
		return x[0]
	}
	if p >= 1 {
		return x[n-1]
	}
	k := sort.SearchFloat64s(cdf, p) // cdf[k-1] < p <= cdf[k]
	if k == 0 {
		return x[0]
	}
	if k >= n {
		return x[n-1]
	}
	tot := cdf[k] - cdf[k-1]
	if tot <= 0 {
		return x[k]
	}
	// Mass within the segment from x[k-1] to x[k-1]+t*w, as a fraction of
	// the segment's mass, is (d0 t + (d1-d0) t^2/2) / ((d0+d1)/2).
	d0, d1 := d[k-1], d[k]
	m := (p - cdf[k-1]) / tot * 0.5 * (d0 + d1)
	a := 0.5 * (d1 - d0)
	var t float64
	if math.Abs(a) < 1e-12*math.Max(d0, d1) {
		t = m / d0
	} else {
		// a t^2 + d0 t - m = 0, stable root.
		disc := math.Max(d0*d0+4*a*m, 0)
		t = 2 * m / (d0 + math.Sqrt(disc))
	}
	t = math.Min(math.Max(t, 0), 1)
	return x[k-1] + t*(x[k]-x[k-1])
}

// normCDF is the name freespectrum.go calls numeric.NormCDF by.
func normCDF(z float64) float64 { return numeric.NormCDF(z) }

// Validate checks a data set built in memory (Load performs the same checks
// with file and line information). It returns the first problem found.
func (ds *Dataset) Validate() error {
	name := ds.Name
	fail := func(format string, a ...any) error {
		return fmt.Errorf("likelihood: data set %q: "+format, append([]any{name}, a...)...)
	}
	if !numeric.Finite(ds.Span) || ds.Span <= 0 {
		return fail("span: must be a finite number of seconds > 0, got %g", ds.Span)
	}
	if ds.Span < MinSpan || ds.Span > MaxSpan {
		return fail("span: %g s is outside the supported range [%g s (1 day), %g s (1000 yr)]", ds.Span, MinSpan, MaxSpan)
	}
	if !numeric.Finite(ds.PriorMin) || !numeric.Finite(ds.PriorMax) || ds.PriorMin >= ds.PriorMax {
		return fail("prior range: need finite lo < hi, got [%g, %g]", ds.PriorMin, ds.PriorMax)
	}
	if msg := checkPriorWidth(ds.PriorMin, ds.PriorMax); msg != "" {
		return fail("prior range: %s", msg)
	}
	if len(ds.Freqs) == 0 {
		return fail("no frequency bins")
	}
	if len(ds.Bins) != len(ds.Freqs) {
		return fail("%d bins for %d frequencies", len(ds.Bins), len(ds.Freqs))
	}
	for i := range ds.Freqs {
		if err := checkFreq(ds.Freqs, i, ds.Span, ds.Irregular); err != "" {
			return fail("bin %d: frequency: %s", i+1, err)
		}
	}
	for i := range ds.Bins {
		if err := ds.Bins[i].check(ds.PriorMin, ds.PriorMax); err != nil {
			return fail("bin %d (%s): %v", i+1, ds.Bins[i].Kind, err)
		}
	}
	return nil
}

// checkFreq returns a description of what is wrong with f[i], or "".
func checkFreq(f []float64, i int, span float64, irregular bool) string {
	v := f[i]
	switch {
	case !numeric.Finite(v):
		return fmt.Sprintf("must be finite, got %g", v)
	case v <= 0:
		return fmt.Sprintf("must be > 0, got %g", v)
	case i > 0 && v <= f[i-1]:
		return fmt.Sprintf("must exceed the previous bin's %g Hz (frequencies must be strictly increasing), got %g", f[i-1], v)
	}
	if !irregular {
		want := float64(i+1) / span
		if math.Abs(v-want) > FreqTolerance*want {
			return fmt.Sprintf("%g Hz differs from %d/T = %g Hz by more than the relative tolerance %g (declare irregular frequencies if they are not harmonics of 1/T)", v, i+1, want, FreqTolerance)
		}
	}
	return ""
}

// checkPriorWidth returns what is wrong with the prior range [lo, hi]
// (lo < hi, both finite) beyond its order, or "".
func checkPriorWidth(lo, hi float64) string {
	if w := hi - lo; !(w <= MaxPriorDecades) {
		return fmt.Sprintf("[%g, %g] is more than %g decades wide; the prior of log10 rho under which free spectra are made spans a few decades, e.g. [-9, -5]", lo, hi, MaxPriorDecades)
	}
	return ""
}

// checkSpread returns what is wrong with samples (not all equal) that
// spread over too small a part of the prior range [lo, hi], or "".
func checkSpread(s []float64, lo, hi float64) string {
	if d := spread(s); d < MinSpreadFraction*(hi-lo) {
		return fmt.Sprintf("the samples spread over %.3g dex, less than %g of the prior range [%g, %g]; no density table over that range can resolve them: narrow the prior", d, MinSpreadFraction, lo, hi)
	}
	return ""
}

var errNoData = errors.New("no data")

// check validates one bin's data against the prior range.
func (b *Bin) check(lo, hi float64) error {
	in := func(x float64) bool { return x >= lo && x <= hi }
	switch b.Kind {
	case Samples:
		if len(b.Samples) < MinSamples {
			return fmt.Errorf("%d samples, need at least %d", len(b.Samples), MinSamples)
		}
		for k, x := range b.Samples {
			if !numeric.Finite(x) {
				return fmt.Errorf("sample %d: must be finite, got %g", k, x)
			}
			if !in(x) {
				return fmt.Errorf("sample %d: %g lies outside the prior range [%g, %g]", k, x, lo, hi)
			}
		}
		if spread(b.Samples) <= 0 {
			return fmt.Errorf("all samples are equal; no density can be estimated")
		}
		if msg := checkSpread(b.Samples, lo, hi); msg != "" {
			return errors.New(msg)
		}
	case Grid:
		if len(b.Grid) < 2 || len(b.Grid) != len(b.Density) {
			return fmt.Errorf("need at least 2 grid points with one density each, got %d points and %d densities", len(b.Grid), len(b.Density))
		}
		for k, x := range b.Grid {
			if !numeric.Finite(x) {
				return fmt.Errorf("grid point %d: must be finite, got %g", k, x)
			}
			if !in(x) {
				return fmt.Errorf("grid point %d: %g lies outside the prior range [%g, %g]", k, x, lo, hi)
			}
			if k > 0 && x <= b.Grid[k-1] {
				return fmt.Errorf("grid point %d: grid must be strictly increasing, got %g after %g", k, x, b.Grid[k-1])
			}
			d := b.Density[k]
			if !numeric.Finite(d) {
				return fmt.Errorf("density %d: must be finite, got %g", k, d)
			}
			if d < 0 {
				return fmt.Errorf("density %d: must be >= 0, got %g", k, d)
			}
		}
		if gridCDF(b.Grid, b.Density) == nil {
			return fmt.Errorf("density has no positive mass")
		}
	case Gaussian:
		if !numeric.Finite(b.Mean) || !in(b.Mean) {
			return fmt.Errorf("mean: must be finite and inside the prior range [%g, %g], got %g", lo, hi, b.Mean)
		}
		if !numeric.Finite(b.SD) || b.SD <= 0 {
			return fmt.Errorf("sd: must be finite and > 0, got %g", b.SD)
		}
	default:
		return fmt.Errorf("unknown representation %d: %w", int(b.Kind), errNoData)
	}
	return nil
}

func spread(s []float64) float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, x := range s {
		lo = math.Min(lo, x)
		hi = math.Max(hi, x)
	}
	return hi - lo
}
