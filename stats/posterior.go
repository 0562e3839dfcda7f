package stats

import (
	"fmt"
)

// Credible masses of the 2-D "1 sigma" and "2 sigma" regions of a bivariate
// normal: 1 - exp(-k^2/2) for k = 1, 2.
const (
	Mass1Sigma2D = 0.3934693402873666 // 1 - exp(-1/2)
	Mass2Sigma2D = 0.8646647167633873 // 1 - exp(-2)
)

// A Param is one parameter's posterior samples and description.
type Param struct {
	// Name identifies the parameter in file names and tables, e.g.
	// "log10_Gmu"; Label is its LaTeX label without dollar signs; Unit
	// its unit (empty when dimensionless).
	Name, Label, Unit string
	// Bounds is the prior support; use ±Inf for an open end.
	Bounds [2]float64
	// Samples holds the posterior samples, one per retained draw; all
	// parameters of a Posterior have the same number, drawn jointly.
	Samples []float64
}

// Options controls Analyze.
type Options struct {
	One Options1D
	Two Options2D
	// Masses are the credible masses of the 2-D contours (default Mass68,
	// Mass95; use Mass1Sigma2D, Mass2Sigma2D for the 2-D sigma regions).
	Masses []float64
	// SmoothedMass selects Density2D.Levels (mass of the smoothed
	// density) over the default Density2D.SampleLevels (mass of the
	// samples, free of smoothing bias).
	SmoothedMass bool
}

// A Pair is the 2-D marginal of parameters I < J (x = I, y = J) with its
// density levels for the Posterior's Masses.
type Pair struct {
	I, J    int
	Density Density2D
	Levels  []float64
}

// A Posterior holds every 1-D and 2-D marginal of a set of parameters.
type Posterior struct {
	Params    []Param
	Marginals []Marginal1D
	// Pairs lists the pairs (i, j), i < j, in row order of the corner
	// figure's lower triangle; Pair(i, j) finds one.
	Pairs  []Pair
	Masses []float64
}

// Pair returns the 2-D marginal of parameters i and j (either order; x is
// the lower index), or nil.
func (p *Posterior) Pair(i, j int) *Pair {
	if i > j {
		i, j = j, i
	}
	for k := range p.Pairs {
		if p.Pairs[k].I == i && p.Pairs[k].J == j {
			return &p.Pairs[k]
		}
	}
	return nil
}

// Summaries returns the summary of every parameter, with names, labels and
// units filled in.
func (p *Posterior) Summaries() []Summary {
	out := make([]Summary, len(p.Marginals))
	for i, m := range p.Marginals {
		out[i] = m.Summary
	}
	return out
}

// Analyze computes every 1-D marginal and every pairwise 2-D marginal.
// progress, when not nil, is called after each marginal with the number
// done and the total, n + n(n-1)/2.
func Analyze(ps []Param, o Options, progress func(done, total int)) (*Posterior, error) {
	if len(ps) == 0 {
		return nil, fmt.Errorf("stats: no parameters")
	}
	n := len(ps[0].Samples)
	for i, q := range ps {
		if len(q.Samples) != n {
			return nil, fmt.Errorf("stats: parameter %q has %d samples, %q has %d", q.Name, len(q.Samples), ps[0].Name, n)
		}
		if q.Name == "" {
			return nil, fmt.Errorf("stats: parameter %d has no name", i)
		}
	}
	masses := o.Masses
	if len(masses) == 0 {
		masses = []float64{Mass68, Mass95}
	}
	for _, m := range masses {
		if !(m > 0 && m < 1) {
			return nil, fmt.Errorf("stats: credible %w, got %g", errMass, m)
		}
	}
	total := len(ps) + len(ps)*(len(ps)-1)/2
	done := 0
	step := func() {
		done++
		if progress != nil {
			progress(done, total)
		}
	}
	post := &Posterior{Params: ps, Masses: masses}
	for _, q := range ps {
		m, err := Marginalize(q.Name, q.Samples, q.Bounds, o.One)
		if err != nil {
			return nil, fmt.Errorf("stats: parameter %q: %w", q.Name, err)
		}
		m.Summary.Label, m.Summary.Unit = q.Label, q.Unit
		post.Marginals = append(post.Marginals, m)
		step()
	}
	for j := 1; j < len(ps); j++ {
		for i := 0; i < j; i++ {
			d, err := KDE2D(ps[i].Samples, ps[j].Samples, ps[i].Bounds, ps[j].Bounds, o.Two)
			if err != nil {
				return nil, fmt.Errorf("stats: parameters %q, %q: %w", ps[i].Name, ps[j].Name, err)
			}
			levels := d.SampleLevels
			if o.SmoothedMass {
				levels = d.Levels
			}
			lv, err := levels(masses)
			if err != nil {
				return nil, err
			}
			post.Pairs = append(post.Pairs, Pair{I: i, J: j, Density: d, Levels: lv})
			step()
		}
	}
	return post, nil
}
