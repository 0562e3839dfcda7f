package stats

import (
	"fmt"
	"math"
)

// Bandwidth rules recorded in Density1D.Rule and Density2D.Rule.
const (
	RuleSilverman = "silverman-1986-eq3.31"
	RuleScott2D   = "scott-1992-eq6.42-full-covariance"
	RuleFallback  = "fallback-zero-spread"
)

// kernelCut is the kernel truncation radius in bandwidths; the Gaussian tail
// beyond 5 sigma holds 6e-7 of the mass.
const kernelCut = 5.0

// Options1D controls a 1-D marginal. Zero values select the defaults.
type Options1D struct {
	// GridPoints is the number of density grid nodes (default 256).
	GridPoints int
	// HistBins is the number of histogram bins over the grid (default 40).
	HistBins int
	// BandwidthFactor multiplies the rule-of-thumb bandwidth (default 1).
	BandwidthFactor float64
	// RailFraction is the density at a prior edge, relative to the peak,
	// above which the posterior is said to rail against that edge
	// (default 0.5).
	RailFraction float64
	// LimitMass is the mass of a one-sided limit (default 0.95).
	LimitMass float64
}

func (o Options1D) withDefaults() Options1D {
	if o.GridPoints < 8 {
		o.GridPoints = 256
	}
	if o.HistBins < 1 {
		o.HistBins = 40
	}
	if !(o.BandwidthFactor > 0) {
		o.BandwidthFactor = 1
	}
	if !(o.RailFraction > 0 && o.RailFraction <= 1) {
		o.RailFraction = 0.5
	}
	if !(o.LimitMass > 0 && o.LimitMass < 1) {
		o.LimitMass = 0.95
	}
	return o
}

// A Density1D is a smoothed 1-D marginal on an equally spaced grid, together
// with a histogram of the same samples.
type Density1D struct {
	// X holds the grid nodes, increasing and equally spaced.
	X []float64
	// P holds the density at X, normalised so that its trapezoid integral
	// over X is 1.
	P []float64
	// Bandwidth is the kernel standard deviation and Rule the rule that
	// chose it.
	Bandwidth float64
	Rule      string
	// Reflect reports whether the grid ends at the lower (0) or upper (1)
	// prior bound, where samples were reflected.
	Reflect [2]bool
	// Edges holds len(Hist)+1 histogram bin edges; Hist the histogram
	// normalised as a density.
	Edges, Hist []float64
	// N is the number of samples used; Dropped the number outside the
	// prior bounds or not finite.
	N, Dropped int
}

// At returns the density at x by linear interpolation, 0 outside the grid.
func (d *Density1D) At(x float64) float64 {
	n := len(d.X)
	if n < 2 || !(x >= d.X[0] && x <= d.X[n-1]) {
		return 0
	}
	u := (x - d.X[0]) / (d.X[1] - d.X[0])
	j := int(u)
	if j >= n-1 {
		return d.P[n-1]
	}
	w := u - float64(j)
	return (1-w)*d.P[j] + w*d.P[j+1]
}

// Peak returns the grid node of highest density and the density there.
func (d *Density1D) Peak() (x, p float64) {
	bi := 0
	for i, v := range d.P {
		if v > d.P[bi] {
			bi = i
		}
	}
	if len(d.P) == 0 {
		return math.NaN(), math.NaN()
	}
	return d.X[bi], d.P[bi]
}

// inBounds returns the finite samples inside the closed bounds b (either
// end may be infinite or NaN for none) and the number dropped.
func inBounds(x []float64, b [2]float64) ([]float64, int) {
	out := make([]float64, 0, len(x))
	for _, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) || v < b[0] || v > b[1] {
			continue
		}
		out = append(out, v)
	}
	return out, len(x) - len(out)
}

// meanStd returns the sample mean and standard deviation (n-1 divisor).
func meanStd(x []float64) (m, s float64) {
	for _, v := range x {
		m += v
	}
	m /= float64(len(x))
	for _, v := range x {
		s += (v - m) * (v - m)
	}
	if len(x) > 1 {
		s = math.Sqrt(s / float64(len(x)-1))
	}
	return m, s
}

// silverman returns Silverman's rule-of-thumb bandwidth for sorted s.
func silverman(s []float64) (float64, string) {
	_, sd := meanStd(s)
	iqr := (Quantile(s, 0.75) - Quantile(s, 0.25)) / 1.34
	a := sd
	if iqr > 0 && iqr < a {
		a = iqr
	}
	h := 0.9 * a * math.Pow(float64(len(s)), -0.2)
	// A spread at rounding level means the samples are all equal.
	if scale := math.Max(math.Abs(s[0]), math.Abs(s[len(s)-1])); h > 1e-12*scale && h > 0 {
		return h, RuleSilverman
	}
	return 1e-3 * math.Max(math.Abs(s[0]), 1), RuleFallback
}

// gridRange chooses grid ends: a finite prior bound closer to the data than
// the kernel reach becomes the grid end (and a reflection edge); otherwise
// the grid extends the reach beyond the data.
func gridRange(lo, hi float64, b [2]float64, reach float64) (a, z float64, refl [2]bool) {
	a, z = lo-reach, hi+reach
	if !math.IsNaN(b[0]) && !math.IsInf(b[0], 0) && a <= b[0] {
		a, refl[0] = b[0], true
	}
	if !math.IsNaN(b[1]) && !math.IsInf(b[1], 0) && z >= b[1] {
		z, refl[1] = b[1], true
	}
	return a, z, refl
}

// linearBin spreads unit weights of x onto n nodes starting at a with step
// dx (Wand 1994), adding to c.
func linearBin(c []float64, x []float64, a, dx float64) {
	n := len(c)
	for _, v := range x {
		u := (v - a) / dx
		j := int(math.Floor(u))
		switch {
		case j < 0:
			c[0]++
		case j >= n-1:
			c[n-1]++
		default:
			w := u - float64(j)
			c[j] += 1 - w
			c[j+1] += w
		}
	}
}

// KDE1D estimates the marginal density of samples x whose prior support is
// bounds (use ±Inf for an open end). Samples outside bounds are dropped.
func KDE1D(x []float64, bounds [2]float64, o Options1D) (Density1D, error) {
	o = o.withDefaults()
	if bounds[0] > bounds[1] {
		return Density1D{}, fmt.Errorf("stats: prior bounds [%g, %g] are reversed", bounds[0], bounds[1])
	}
	in, dropped := inBounds(x, bounds)
	if len(in) < 2 {
		return Density1D{}, fmt.Errorf("%w: %d of %d samples usable", errNoSamples, len(in), len(x))
	}
	return kdeSorted(sortedFinite(in), dropped, bounds, o), nil
}

// kdeSorted is KDE1D for at least two sorted samples inside the bounds,
// with options already defaulted.
func kdeSorted(s []float64, dropped int, bounds [2]float64, o Options1D) Density1D {
	h, rule := silverman(s)
	h *= o.BandwidthFactor
	a, z, refl := gridRange(s[0], s[len(s)-1], bounds, 4*h)
	if !(z > a) {
		a, z = a-h, z+h
		refl = [2]bool{}
	}
	g := o.GridPoints
	dx := (z - a) / float64(g-1)
	c := make([]float64, g)
	linearBin(c, s, a, dx)

	// Convolve on a grid padded by the kernel reach, then fold the padding
	// back about the reflecting edges: with node 0 on the edge, the image
	// of node j seen from node k is node -k, so f_k = g_k + g_-k.
	pad := int(math.Ceil(kernelCut * h / dx))
	if pad > 4*g {
		pad = 4 * g
	}
	kw := make([]float64, pad+1)
	norm := 1 / (float64(len(s)) * h * math.Sqrt(2*math.Pi))
	for m := range kw {
		t := float64(m) * dx / h
		kw[m] = norm * math.Exp(-0.5*t*t)
	}
	gp := make([]float64, g+2*pad)
	for j, cj := range c {
		if cj == 0 {
			continue
		}
		for m := -pad; m <= pad; m++ {
			gp[j+m+pad] += cj * kw[abs(m)]
		}
	}
	p := make([]float64, g)
	copy(p, gp[pad:pad+g])
	if refl[0] {
		for k := 0; k <= pad && k < g; k++ {
			p[k] += gp[pad-k]
		}
	}
	if refl[1] {
		for k := 0; k <= pad && k < g; k++ {
			p[g-1-k] += gp[pad+g-1+k]
		}
	}
	xs := make([]float64, g)
	for i := range xs {
		xs[i] = a + float64(i)*dx
	}
	xs[g-1] = z
	normalise(p, dx)

	nb := o.HistBins
	edges := make([]float64, nb+1)
	for i := range edges {
		edges[i] = a + (z-a)*float64(i)/float64(nb)
	}
	hist := make([]float64, nb)
	bw := (z - a) / float64(nb)
	for _, v := range s {
		j := int((v - a) / bw)
		if j >= nb {
			j = nb - 1
		}
		if j < 0 {
			j = 0
		}
		hist[j]++
	}
	for i := range hist {
		hist[i] /= float64(len(s)) * bw
	}
	return Density1D{X: xs, P: p, Bandwidth: h, Rule: rule, Reflect: refl,
		Edges: edges, Hist: hist, N: len(s), Dropped: dropped}
}

// normalise scales p so that its trapezoid integral with step dx is 1.
func normalise(p []float64, dx float64) {
	var t float64
	for i, v := range p {
		if i == 0 || i == len(p)-1 {
			t += v / 2
		} else {
			t += v
		}
	}
	t *= dx
	if t > 0 {
		for i := range p {
			p[i] /= t
		}
	}
}

func abs(m int) int {
	if m < 0 {
		return -m
	}
	return m
}
