package evidence

import "math"

// A workspace holds the per-step influence series of one rung, reused from
// rung to rung so that the per-rung pass allocates nothing.
type workspace struct {
	y   []float64 // walker mean of ln L
	q   []float64 // walker mean of (ln L - E)^2
	e   []float64 // walker mean of exp(h (ln L - max)) / r - 1
	g   []float64 // a linear combination of the three
	acf *acf
}

func newWorkspace(steps int) *workspace {
	buf := make([]float64, 4*steps)
	return &workspace{
		y: buf[:steps], q: buf[steps : 2*steps], e: buf[2*steps : 3*steps], g: buf[3*steps:],
		acf: newACF(steps),
	}
}

// rungStats are the sample summaries of one rung.
type rungStats struct {
	mean, variance float64
	lnRatio        float64 // ln mean exp(delta ln L), 0 if delta = 0
	weightESS      float64 // (sum wt)^2 / sum wt^2 of the stepping-stone weights
}

// fill computes the summaries of r and its per-step influence series, with
// delta the gap to the next rung (0 for the last).
func (ws *workspace) fill(r Rung, delta float64) rungStats {
	nw := r.Walkers
	nTot := float64(len(r.LnL))
	var mean float64
	top := math.Inf(-1)
	for _, v := range r.LnL {
		mean += v
		top = math.Max(top, v)
	}
	mean /= nTot
	var sq, wsum, wsq float64
	for s := 0; s < r.Steps; s++ {
		row := r.LnL[s*nw : (s+1)*nw]
		var ys, qs, es float64
		for _, v := range row {
			d := v - mean
			ys += v
			qs += d * d
			wt := math.Exp(delta * (v - top))
			es += wt
			wsq += wt * wt
		}
		sq += qs
		wsum += es
		ws.y[s] = ys / float64(nw)
		ws.q[s] = qs / float64(nw)
		ws.e[s] = es / float64(nw)
	}
	ratio := wsum / nTot
	for s := 0; s < r.Steps; s++ {
		ws.e[s] = ws.e[s]/ratio - 1
	}
	st := rungStats{mean: mean, variance: sq / math.Max(nTot-1, 1)}
	if delta != 0 {
		st.lnRatio = delta*top + math.Log(ratio)
	}
	st.weightESS = wsum * wsum / wsq
	return st
}

// combine returns a y + b q + c e over the first steps entries, in ws.g.
func (ws *workspace) combine(steps int, coef [3]float64) []float64 {
	g := ws.g[:steps]
	a, b, c := coef[0], coef[1], coef[2]
	for s := range g {
		g[s] = a*ws.y[s] + b*ws.q[s] + c*ws.e[s]
	}
	return g
}
