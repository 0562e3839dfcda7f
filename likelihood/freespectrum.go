package likelihood

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"sort"
	"sync"

	"gonum.org/v1/gonum/stat"
)

// Defaults of Options.
const (
	// DefaultTableSize is the number of table points per bin spanning the
	// prior range (spacing 6/2047 = 0.003 dex for a 6-dex range).
	DefaultTableSize = 2048
	// DensityFloor bounds a tabulated density from below, relative to the
	// bin's peak: ln p_i >= ln max p_i + ln DensityFloor (about -27.6). It
	// keeps zero grid densities and the far tails of a kernel estimate
	// finite. Gaussian summaries are exact and not floored.
	DensityFloor = 1e-12
	// maxAbove caps the distance above the prior range entering the
	// penalty, so that the result stays finite for any input.
	maxAbove = 1e6
	// maxTableCells caps bins x table points (8 bytes each: 1 GiB).
	maxTableCells = 1 << 27
)

// Bandwidth rules for samples.
const (
	Scott     = "scott"
	Silverman = "silverman"
)

// Options configure NewFreeSpectrum. The zero value selects the defaults.
type Options struct {
	// Bandwidth is the kernel bandwidth rule for samples: "scott"
	// (default) or "silverman".
	Bandwidth string
	// TableSize is the number of table points per bin, at least 16;
	// 0 means DefaultTableSize.
	TableSize int
	// Penalty, when > 0, replaces the exact ln p_i(x) = -Inf above the
	// prior range by the finite stand-in
	// ln p_i(x) = ln p_i(hi) - Penalty*(1 + min(x - hi, 1e6)), for callers
	// that need a finite value everywhere (an optimiser started outside the
	// range). It changes LogLike only: LogLikeExact, which evidence
	// calculations use, ignores it. 0 (the default) is the exact rule.
	Penalty float64
}

// FreeSpectrum is the free-spectrum log-likelihood of a data set: per bin a
// table of ln p_i(log10 rho) on a uniform grid spanning the prior range. It
// is immutable and safe for concurrent use.
type FreeSpectrum struct {
	lo, hi  float64
	inv     float64 // 1 / table spacing
	m       int     // points per bin
	nbin    int
	table   []float64 // nbin*m, bin-major
	penalty float64
	rule    string
	bw      []float64
	method  []string
}

// NewFreeSpectrum tabulates the per-bin log densities of ds.
//
// Samples: Gaussian kernel density estimate with reflection at both prior
// edges,
//
//	p(x) = 1/(n h) sum_j [K((x-s_j)/h) + K((x-2lo+s_j)/h) + K((x-2hi+s_j)/h)],
//
// K the standard normal density, which has unit mass on [lo, hi] for
// samples inside it. The bandwidth is raised to the table spacing if the
// rule gives less. The sum is exact (kernels cut at 10 h, a relative
// contribution below 2e-22; the kernel values along the table come from
// an exact exponential every 64 nodes and a two-multiplication recurrence
// in between, relative error below 3e-13) unless it would cost more than
// 4e6 kernel evaluations per bin with the kernel spanning at least 10
// table spacings;
// then the samples are linearly binned onto the table first (Wand & Jones
// 1995, appendix D), with relative error of order (spacing/h)^2/12, below
// 1e-3.
//
// Grids: ln density interpolated linearly between grid points, constant
// beyond the grid's ends within the prior range, renormalised to unit mass
// over [lo, hi] (trapezoid rule on the table). Zero densities are floored at
// DensityFloor times the bin's peak before taking the logarithm.
//
// Gaussian summaries: the exact normal log density renormalised over
// [lo, hi].
//
// Outside the prior range (docs/physics.md section 5): below lo the posterior is
// flat (the noise floor), so ln p_i(x) = ln p_i(lo); above hi the data's
// posterior, made under a prior that is zero there, is zero, so
// ln p_i(x) = -Inf (or the finite Options.Penalty stand-in, if asked for).
// NaN inputs count as above the range.
func NewFreeSpectrum(ds *Dataset, opt Options) (*FreeSpectrum, error) {
	if ds == nil {
		return nil, errors.New("likelihood: nil data set")
	}
	if err := ds.Validate(); err != nil {
		return nil, err
	}
	if opt.Bandwidth == "" {
		opt.Bandwidth = Scott
	}
	if opt.Bandwidth != Scott && opt.Bandwidth != Silverman {
		return nil, fmt.Errorf("likelihood: bandwidth rule %q: must be %q or %q", opt.Bandwidth, Scott, Silverman)
	}
	if opt.TableSize == 0 {
		opt.TableSize = DefaultTableSize
	}
	if opt.TableSize < 16 || opt.TableSize > 1<<22 {
		return nil, fmt.Errorf("likelihood: table size: must be in [16, %d], got %d", 1<<22, opt.TableSize)
	}
	// Every size below derives from the input: refuse before allocating
	// one that cannot fit (the parser caps bins at 65536, which with the
	// default table size is exactly maxTableCells).
	if n := len(ds.Bins); n > maxTableCells/opt.TableSize {
		return nil, fmt.Errorf("likelihood: %d bins of %d table points is more than the %d table cells supported", n, opt.TableSize, maxTableCells)
	}
	if !(opt.Penalty >= 0) || math.IsInf(opt.Penalty, 0) {
		return nil, fmt.Errorf("likelihood: penalty: must be finite and >= 0 (0: exact), got %g", opt.Penalty)
	}
	m := opt.TableSize
	n := len(ds.Bins)
	f := &FreeSpectrum{
		lo: ds.PriorMin, hi: ds.PriorMax, m: m, nbin: n,
		inv:     float64(m-1) / (ds.PriorMax - ds.PriorMin),
		table:   make([]float64, n*m),
		penalty: opt.Penalty,
		rule:    opt.Bandwidth,
		bw:      make([]float64, n),
		method:  make([]string, n),
	}
	x := make([]float64, m)
	for k := range x {
		x[k] = f.node(k)
	}
	// Bins are independent: build their tables side by side, bin i by
	// goroutine i mod P, each writing only its own row, bandwidth and
	// method (the same bytes for any P).
	build := func(i int) {
		b := &ds.Bins[i]
		row := f.table[i*m : (i+1)*m]
		switch b.Kind {
		case Samples:
			h := bandwidth(b.Samples, opt.Bandwidth)
			h = math.Max(h, 1/f.inv)
			f.bw[i] = h
			f.method[i] = kde(row, x, b.Samples, h, f.lo, f.hi)
		case Grid:
			gridTable(row, x, b.Grid, b.Density)
			f.method[i] = "grid"
		case Gaussian:
			gaussTable(row, x, b.Mean, b.SD, f.lo, f.hi)
			f.method[i] = "gaussian"
		}
	}
	par := max(1, min(runtime.GOMAXPROCS(0), n))
	var wg sync.WaitGroup
	for g := range par {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := g; i < n; i += par {
				build(i)
			}
		}()
	}
	wg.Wait()
	return f, nil
}

// node returns the k-th table abscissa.
func (f *FreeSpectrum) node(k int) float64 {
	if k == f.m-1 {
		return f.hi
	}
	return f.lo + float64(k)/f.inv
}

// LogLike returns sum_i ln p_i(log10rho[i]): -Inf if any bin lies above
// the prior range (or that bin's Options.Penalty stand-in, when set).
// log10rho must have one entry per bin; otherwise LogLike returns -Inf. It
// does not allocate.
func (f *FreeSpectrum) LogLike(log10rho []float64) float64 {
	return f.logLike(log10rho, f.penalty)
}

// LogLikeExact is LogLike with the exact rule above the prior range
// (-Inf), whatever Options.Penalty says: the likelihood evidence
// calculations must use (docs/physics.md section 7).
func (f *FreeSpectrum) LogLikeExact(log10rho []float64) float64 {
	return f.logLike(log10rho, 0)
}

func (f *FreeSpectrum) logLike(log10rho []float64, penalty float64) float64 {
	if len(log10rho) != f.nbin {
		return math.Inf(-1)
	}
	// The in-range case of lnp, inlined: the same arithmetic, without a
	// call and a row slice per bin.
	lo, hi, inv, m, t := f.lo, f.hi, f.inv, f.m, f.table
	s := 0.0
	for i, x := range log10rho {
		off := i * m
		if x > lo && x <= hi {
			u := (x - lo) * inv
			k := int(u)
			if k >= m-1 {
				k = m - 2
			}
			w := u - float64(k)
			r := t[off+k : off+k+2 : off+k+2]
			s += r[0] + w*(r[1]-r[0])
			continue
		}
		if x <= lo {
			s += t[off]
			continue
		}
		if penalty == 0 {
			return math.Inf(-1)
		}
		s += f.lnp(t[off:off+m], x, penalty)
	}
	return s
}

// LnDensity returns ln p_i(x) for bin i (0-based) with the out-of-range
// rules of LogLike; NaN if i is out of range.
func (f *FreeSpectrum) LnDensity(i int, x float64) float64 {
	if i < 0 || i >= f.nbin {
		return math.NaN()
	}
	return f.lnp(f.table[i*f.m:(i+1)*f.m], x, f.penalty)
}

// lnp is ln p_i(x) for the table row of bin i; above the range it is -Inf
// when penalty is 0, else the penalty stand-in.
func (f *FreeSpectrum) lnp(row []float64, x, penalty float64) float64 {
	switch {
	case x <= f.lo:
		return row[0]
	case x > f.hi || x != x:
		if penalty == 0 {
			return math.Inf(-1)
		}
		d := x - f.hi
		if !(d <= maxAbove) { // also NaN
			d = maxAbove
		}
		return row[f.m-1] - penalty*(1+d)
	}
	u := (x - f.lo) * f.inv
	k := int(u)
	if k >= f.m-1 {
		k = f.m - 2
	}
	t := u - float64(k)
	return row[k] + t*(row[k+1]-row[k])
}

// NumBins returns the number of bins.
func (f *FreeSpectrum) NumBins() int { return f.nbin }

// Range returns the prior range [lo, hi] of log10 rho the tables span.
func (f *FreeSpectrum) Range() (lo, hi float64) { return f.lo, f.hi }

// Penalty returns the above-range penalty per dex of LogLike; 0 means the
// exact rule (ln L = -Inf above the prior range).
func (f *FreeSpectrum) Penalty() float64 { return f.penalty }

// BandwidthRule returns the kernel bandwidth rule, "scott" or "silverman".
func (f *FreeSpectrum) BandwidthRule() string { return f.rule }

// Bandwidths returns the kernel bandwidth (dex) used in each bin; 0 for bins
// not given as samples.
func (f *FreeSpectrum) Bandwidths() []float64 { return slices.Clone(f.bw) }

// Methods returns, per bin, how its table was made: "kde-exact",
// "kde-binned", "grid" or "gaussian".
func (f *FreeSpectrum) Methods() []string { return slices.Clone(f.method) }

// bandwidth applies the named rule to the samples s.
func bandwidth(s []float64, rule string) float64 {
	n := float64(len(s))
	sd := stat.StdDev(s, nil)
	if rule == Silverman {
		c := slices.Clone(s)
		sort.Float64s(c)
		iqr := stat.Quantile(0.75, stat.LinInterp, c, nil) - stat.Quantile(0.25, stat.LinInterp, c, nil)
		a := sd
		if iqr > 0 {
			a = math.Min(sd, iqr/1.34)
		}
		return 0.9 * a * math.Pow(n, -0.2)
	}
	return math.Pow(4/(3*n), 0.2) * sd
}

const (
	kernelCut   = 10.0 // kernels are cut at this many bandwidths
	exactBudget = 4e6  // kernel evaluations per bin allowed for the exact sum
	lnSqrt2Pi   = 0.91893853320467274178
)

// kde writes ln of the reflected kernel density estimate at the abscissae x
// (uniform, x[0] = lo, x[m-1] = hi) into row and names the method used.
func kde(row, x, s []float64, h, lo, hi float64) string {
	m := len(x)
	step := (hi - lo) / float64(m-1)
	dens := make([]float64, m)
	width := kernelCut * h / step
	norm := 1 / (float64(len(s)) * h)
	if float64(len(s))*(2*width+1) <= exactBudget || h < 10*step {
		b := step / h
		decay := math.Exp(-b * b)
		add := func(c float64) {
			a := int(math.Ceil((c - kernelCut*h - lo) / step))
			e := int(math.Floor((c + kernelCut*h - lo) / step))
			a = max(a, 0)
			e = min(e, m-1)
			if a <= e {
				gaussRun(dens[a:e+1], (x[a]-c)/h, b, decay)
			}
		}
		for _, c := range s {
			add(c)
			if c-lo < kernelCut*h {
				add(2*lo - c)
			}
			if hi-c < kernelCut*h {
				add(2*hi - c)
			}
		}
		for k := range dens {
			dens[k] *= norm / math.Sqrt(2*math.Pi)
		}
		toLog(row, dens)
		return "kde-exact"
	}
	// Linear binning onto the table nodes; a node at index k reflects to
	// -k about lo and 2(m-1)-k about hi, both nodes again.
	w := make([]float64, m)
	for _, c := range s {
		u := (c - lo) / step
		k := int(u)
		if k >= m-1 {
			k = m - 2
		}
		t := u - float64(k)
		w[k] += 1 - t
		w[k+1] += t
	}
	L := int(math.Ceil(width))
	kv := make([]float64, L+1)
	for d := range kv {
		u := float64(d) * step / h
		kv[d] = math.Exp(-0.5 * u * u)
	}
	for j, wj := range w {
		if wj == 0 {
			continue
		}
		for _, c := range [3]int{j, -j, 2*(m-1) - j} {
			a := max(c-L, 0)
			b := min(c+L, m-1)
			for k := a; k <= b; k++ {
				d := k - c
				if d < 0 {
					d = -d
				}
				dens[k] += wj * kv[d]
			}
		}
	}
	for k := range dens {
		dens[k] *= norm / math.Sqrt(2*math.Pi)
	}
	toLog(row, dens)
	return "kde-binned"
}

// anchorEvery is the number of kernel values gaussRun derives from one
// exact exponential by recurrence: each step multiplies by two rounded
// factors, so the relative error after j steps is below j^2 eps/2 (plus
// the anchor's), under 2.3e-13 for j < 64.
const anchorEvery = 64

// gaussRun adds exp(-u_i^2/2), u_i = u0 + i b, to d[i] for every i, with
// decay = exp(-b^2). Between exact anchors every anchorEvery points it
// uses the recurrence g_{i+1} = g_i q_i, q_{i+1} = q_i decay, where
// q_i = exp(-u_i b - b^2/2) is the ratio of neighbouring values; runs of
// four blocks are interleaved so that their multiplications overlap.
func gaussRun(d []float64, u0, b, decay float64) {
	const A = anchorEvery
	anchor := func(i int) (g, q float64) {
		u := u0 + float64(i)*b
		return math.Exp(-0.5 * u * u), math.Exp(-u*b - 0.5*b*b)
	}
	i := 0
	for ; i+4*A <= len(d); i += 4 * A {
		g0, q0 := anchor(i)
		g1, q1 := anchor(i + A)
		g2, q2 := anchor(i + 2*A)
		g3, q3 := anchor(i + 3*A)
		d0, d1, d2, d3 := d[i:i+A], d[i+A:i+2*A], d[i+2*A:i+3*A], d[i+3*A:i+4*A]
		for j := range A {
			d0[j] += g0
			d1[j] += g1
			d2[j] += g2
			d3[j] += g3
			g0, g1, g2, g3 = g0*q0, g1*q1, g2*q2, g3*q3
			q0, q1, q2, q3 = q0*decay, q1*decay, q2*decay, q3*decay
		}
	}
	for ; i < len(d); i += A {
		g, q := anchor(i)
		for j, end := i, min(i+A, len(d)); j < end; j++ {
			d[j] += g
			g *= q
			q *= decay
		}
	}
}

// toLog writes ln d into row, floored at DensityFloor times the peak.
func toLog(row, d []float64) {
	peak := slices.Max(d)
	fl := peak * DensityFloor
	for k, v := range d {
		row[k] = math.Log(math.Max(v, fl))
	}
}

// gridTable interpolates ln density linearly onto x and renormalises.
func gridTable(row, x, g, d []float64) {
	peak := slices.Max(d)
	ld := make([]float64, len(d))
	for k, v := range d {
		ld[k] = math.Log(math.Max(v, peak*DensityFloor))
	}
	j := 0
	for k, xk := range x {
		switch {
		case xk <= g[0]:
			row[k] = ld[0]
		case xk >= g[len(g)-1]:
			row[k] = ld[len(g)-1]
		default:
			for g[j+1] < xk {
				j++
			}
			t := (xk - g[j]) / (g[j+1] - g[j])
			row[k] = ld[j] + t*(ld[j+1]-ld[j])
		}
	}
	normalise(row, x)
}

// normalise shifts the log table so its trapezoid-rule mass is 1.
func normalise(row, x []float64) {
	top := slices.Max(row)
	mass := 0.0
	for k := 1; k < len(row); k++ {
		mass += 0.5 * (math.Exp(row[k]-top) + math.Exp(row[k-1]-top)) * (x[k] - x[k-1])
	}
	c := top + math.Log(mass)
	for k := range row {
		row[k] -= c
	}
}

// gaussTable writes the normal log density truncated to [lo, hi].
func gaussTable(row, x []float64, mu, sd, lo, hi float64) {
	z := normCDF((hi-mu)/sd) - normCDF((lo-mu)/sd)
	c := -math.Log(sd) - lnSqrt2Pi - math.Log(z)
	for k, xk := range x {
		u := (xk - mu) / sd
		row[k] = c - 0.5*u*u
	}
}
