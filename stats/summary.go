package stats

import (
	"fmt"
	"math"
)

// An Edge names the prior edges a posterior rails against.
type Edge int

// Edge values.
const (
	EdgeNone  Edge = iota // constrained away from both edges
	EdgeLower             // rails against the lower edge: quote an upper limit
	EdgeUpper             // rails against the upper edge: quote a lower limit
	EdgeBoth              // rails against both: unconstrained by the data
)

// String returns "none", "lower", "upper" or "both".
func (e Edge) String() string {
	switch e {
	case EdgeLower:
		return "lower"
	case EdgeUpper:
		return "upper"
	case EdgeBoth:
		return "both"
	}
	return "none"
}

// A Summary condenses one parameter's 1-D marginal.
type Summary struct {
	Name, Label, Unit string
	// N is the number of samples used.
	N int
	// Median, Mean and Std are the sample median, mean and standard
	// deviation; Mode is the peak of the smoothed density.
	Median, Mean, Std, Mode float64
	// ET68 and ET95 are the equal-tailed "68 %" and "95 %" intervals
	// (Central68, Central95); HDI68 and HDI95 the shortest intervals of
	// the same masses, Mass68 and Mass95 (see HDI).
	ET68, ET95, HDI68, HDI95 Interval
	// EdgeRatio holds the smoothed density at the lower and upper prior
	// edge divided by its peak; NaN where the grid does not reach the edge
	// (the posterior lies farther than four bandwidths from it).
	EdgeRatio [2]float64
	// Rails reports the edges where EdgeRatio reaches the rail fraction
	// (Options1D.RailFraction, 0.5 by default).
	Rails Edge
	// Limit is the one-sided limit of mass LimitMass: the LimitMass quantile
	// (an upper limit) when Rails is EdgeLower, the 1-LimitMass quantile
	// (a lower limit) when Rails is EdgeUpper, NaN otherwise.
	Limit, LimitMass float64
}

// A Marginal1D is a parameter's smoothed density and its summary.
type Marginal1D struct {
	Density Density1D
	Summary Summary
}

// Marginalize computes the 1-D marginal of samples x with prior support
// bounds. The posterior rails against an edge when the reflected density at
// that edge is at least RailFraction of its peak: a posterior that is flat
// or rising towards the edge, as for a parameter only bounded from above by
// the data. Then a one-sided limit replaces the two-sided intervals in
// tables (the intervals are still reported).
func Marginalize(name string, x []float64, bounds [2]float64, o Options1D) (Marginal1D, error) {
	o = o.withDefaults()
	if bounds[0] > bounds[1] {
		return Marginal1D{}, fmt.Errorf("stats: prior bounds [%g, %g] are reversed", bounds[0], bounds[1])
	}
	in, dropped := inBounds(x, bounds)
	if len(in) < 2 {
		return Marginal1D{}, fmt.Errorf("%w: %d of %d samples usable", errNoSamples, len(in), len(x))
	}
	s := sortedFinite(in)
	d := kdeSorted(s, dropped, bounds, o)
	sm := Summary{Name: name, N: len(s), Median: Quantile(s, 0.5), LimitMass: o.LimitMass, Limit: math.NaN()}
	sm.Mean, sm.Std = meanStd(s)
	var pk float64
	sm.Mode, pk = d.Peak()
	sm.ET68, sm.ET95 = Central68(s), Central95(s)
	sm.HDI68, _ = HDI(s, Mass68)
	sm.HDI95, _ = HDI(s, Mass95)
	sm.EdgeRatio = [2]float64{math.NaN(), math.NaN()}
	lo := d.Reflect[0] && d.P[0] >= o.RailFraction*pk
	hi := d.Reflect[1] && d.P[len(d.P)-1] >= o.RailFraction*pk
	if d.Reflect[0] {
		sm.EdgeRatio[0] = d.P[0] / pk
	}
	if d.Reflect[1] {
		sm.EdgeRatio[1] = d.P[len(d.P)-1] / pk
	}
	switch {
	case lo && hi:
		sm.Rails = EdgeBoth
	case lo:
		sm.Rails = EdgeLower
		sm.Limit = Quantile(s, o.LimitMass)
	case hi:
		sm.Rails = EdgeUpper
		sm.Limit = Quantile(s, 1-o.LimitMass)
	}
	return Marginal1D{Density: d, Summary: sm}, nil
}

// LimitKind returns "upper", "lower" or "" for the one-sided limit of s.
func (s Summary) LimitKind() string {
	switch s.Rails {
	case EdgeLower:
		return "upper"
	case EdgeUpper:
		return "lower"
	}
	return ""
}
