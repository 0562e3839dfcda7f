package evidence

import (
	"errors"
	"fmt"
	"math"

	"tautline/internal/numeric"
)

// A Rung holds the ln L values recorded on one power posterior after
// burn-in, as a Steps x Walkers matrix in row-major order:
// LnL[s*Walkers+w] is walker w at step s.
type Rung struct {
	Beta    float64   `json:"beta"`
	LnL     []float64 `json:"lnL"`
	Steps   int       `json:"steps"`
	Walkers int       `json:"walkers"`
}

// Options tune Integrate. The zero value is ready to use.
type Options struct {
	// BatchFactor is the batch length of the batch-means error in units of
	// the integrated autocorrelation time; 0 means 10 (batches ten
	// autocorrelation times long bias the variance low by about 5 %).
	BatchFactor float64
	// Synchronous says that step s of every rung was recorded at the same
	// sampler step (parallel tempering with swaps). All rungs must then have
	// the same Steps, and the Monte-Carlo errors include the cross-rung
	// covariances swaps introduce.
	Synchronous bool
	// DisagreeAt is the number of combined standard errors beyond which
	// thermodynamic integration and stepping-stone are flagged as
	// disagreeing; 0 means 3.
	DisagreeAt float64
	// PriorMass, when set, is the prior probability of the region where the
	// likelihood is non-zero, the rungs having sampled the prior restricted
	// to it: its ln p is added to every ln Z and its error to every error
	// budget (Estimate.PriorMassErr).
	PriorMass *PriorMass
}

// An Estimate is one evidence estimate with its error budget.
type Estimate struct {
	LnZ     float64 `json:"lnZ"`
	MCErr   float64 `json:"mcErr"`   // Monte-Carlo standard error
	DiscErr float64 `json:"discErr"` // discretisation error (bias for stepping-stone)
	// PriorMassErr is the standard error of ln P_prior(R) when the estimate
	// includes it (Options.PriorMass), else 0.
	PriorMassErr float64 `json:"priorMassErr"`
	Total        float64 `json:"total"` // MCErr + DiscErr + PriorMassErr
	// DiscNoise is the Monte-Carlo standard error of DiscErr itself: a
	// discretisation error not well above it is mostly sampling noise, which
	// more steps, not more rungs, will reduce.
	DiscNoise float64 `json:"discNoise"`
}

// A CurvePoint is one rung of the ln L-versus-beta curve.
type CurvePoint struct {
	Beta    float64 `json:"beta"`
	Mean    float64 `json:"mean"`    // E_beta[ln L]
	MeanErr float64 `json:"meanErr"` // its Monte-Carlo standard error
	Var     float64 `json:"var"`     // Var_beta[ln L] = dE/dbeta
	Tau     float64 `json:"tau"`     // autocorrelation time of the walker-averaged ln L, steps
	ESS     float64 `json:"ess"`     // Steps / Tau
}

// An Interval is one gap of the ladder and what each rule makes of it.
type Interval struct {
	Lo         float64 `json:"lo"`
	Hi         float64 `json:"hi"`
	Trapezoid  float64 `json:"trapezoid"`  // h (E_lo + E_hi) / 2
	Correction float64 `json:"correction"` // -h^2 (V_hi - V_lo) / 12
	Stepping   float64 `json:"stepping"`   // ln E_lo[exp(h ln L)]
	SteppingSE float64 `json:"steppingSE"` // its Monte-Carlo standard error
	// DiscShare is this interval's part of TIHigher.DiscErr (the shares add
	// up to it); see discShares.
	DiscShare float64 `json:"discShare"`
}

// A Result is the outcome of Integrate.
type Result struct {
	TI       Estimate `json:"ti"`       // trapezoidal thermodynamic integration
	TIHigher Estimate `json:"tiHigher"` // derivative-corrected trapezoid (recommended)
	SS       Estimate `json:"ss"`       // stepping-stone
	// Disagree reports whether |TIHigher - SS| exceeds Options.DisagreeAt
	// times DisagreeErr; DisagreeSigma is the ratio.
	Disagree      bool    `json:"disagree"`
	DisagreeSigma float64 `json:"disagreeSigma"`
	// DisagreeErr is the standard error of TIHigher - SS: the Monte-Carlo
	// error of the difference (paired, since both use the same samples)
	// and both discretisation errors, added in quadrature.
	DisagreeErr float64      `json:"disagreeErr"`
	Curve       []CurvePoint `json:"curve"`
	// PriorMass is Options.PriorMass, already included in the estimates.
	PriorMass *PriorMass `json:"priorMass,omitempty"`
	Intervals []Interval `json:"intervals"`
	// Warnings name rungs whose errors are less trustworthy than reported.
	Warnings []string `json:"warnings,omitempty"`
}

var (
	errFewRungs = errors.New("evidence: need at least 2 rungs")
	errEnds     = errors.New("evidence: ladder must start at beta = 0 and end at beta = 1")
)

// minSteps is the least number of recorded steps per rung: below it neither
// an autocorrelation time nor a batch-means variance can be estimated.
const minSteps = 2 * minBatches

func validate(rungs []Rung, opt Options) error {
	if len(rungs) < 2 {
		return fmt.Errorf("%w, got %d", errFewRungs, len(rungs))
	}
	if rungs[0].Beta != 0 || rungs[len(rungs)-1].Beta != 1 {
		hint := ""
		if rungs[0].Beta == 1 {
			hint = " (a cold-first ladder must be reversed)"
		}
		return fmt.Errorf("%w, got %g and %g%s", errEnds, rungs[0].Beta, rungs[len(rungs)-1].Beta, hint)
	}
	for k, r := range rungs {
		if math.IsNaN(r.Beta) || r.Beta < 0 || r.Beta > 1 {
			return fmt.Errorf("evidence: rung %d: beta must be in [0, 1], got %g", k, r.Beta)
		}
		if k > 0 && !(r.Beta > rungs[k-1].Beta) {
			return fmt.Errorf("evidence: rung %d: betas must increase strictly, got %g after %g", k, r.Beta, rungs[k-1].Beta)
		}
		if r.Steps < minSteps {
			return fmt.Errorf("evidence: rung %d (beta %g): need at least %d steps, got %d", k, r.Beta, minSteps, r.Steps)
		}
		if r.Walkers < 1 {
			return fmt.Errorf("evidence: rung %d (beta %g): need at least 1 walker, got %d", k, r.Beta, r.Walkers)
		}
		if r.Steps > math.MaxInt/r.Walkers || len(r.LnL) != r.Steps*r.Walkers {
			return fmt.Errorf("evidence: rung %d (beta %g): len(LnL) = %d, want steps*walkers = %d*%d", k, r.Beta, len(r.LnL), r.Steps, r.Walkers)
		}
		for i, v := range r.LnL {
			if !numeric.Finite(v) {
				return fmt.Errorf("evidence: rung %d (beta %g): LnL[%d] (step %d, walker %d) is %g", k, r.Beta, i, i/r.Walkers, i%r.Walkers, v)
			}
		}
		if opt.Synchronous && r.Steps != rungs[0].Steps {
			return fmt.Errorf("evidence: rung %d (beta %g): synchronous rungs need equal steps, got %d and %d", k, r.Beta, r.Steps, rungs[0].Steps)
		}
	}
	return nil
}

// Estimators whose Monte-Carlo errors are tracked, as rows of coefficient
// on the three per-step influence series (ln L, (ln L - E)^2, SS weight).
const (
	estTI = iota
	estTIHigher
	estSS
	estDiff       // TIHigher - SS
	estTrapVsCorr // T - C
	estTrapVsSub  // T - T'
	estCorrVsSub  // C - C'
	numEst
)

// Integrate computes the thermodynamic-integration and stepping-stone
// estimates of ln Z from the rungs, which must be sorted by increasing beta
// with beta = 0 first and beta = 1 last. See the package documentation for
// the formulas and error budgets.
func Integrate(rungs []Rung, opt Options) (Result, error) {
	if err := validate(rungs, opt); err != nil {
		return Result{}, err
	}
	if opt.BatchFactor <= 0 || math.IsNaN(opt.BatchFactor) {
		opt.BatchFactor = 10
	}
	if opt.DisagreeAt <= 0 || math.IsNaN(opt.DisagreeAt) {
		opt.DisagreeAt = 3
	}
	n := len(rungs)
	betas := make([]float64, n)
	for k, r := range rungs {
		betas[k] = r.Beta
	}
	w := make([]float64, n)
	u := make([]float64, n)
	trapezoidWeights(betas, w)
	correctionWeights(betas, u)
	// Weights of the every-other-rung sub-ladder, zero on dropped rungs.
	sub := subLadder(n)
	ws2, us2 := make([]float64, len(sub)), make([]float64, len(sub))
	sb := make([]float64, len(sub))
	for i, k := range sub {
		sb[i] = betas[k]
	}
	trapezoidWeights(sb, ws2)
	correctionWeights(sb, us2)
	wh, uh := make([]float64, n), make([]float64, n)
	for i, k := range sub {
		wh[k], uh[k] = ws2[i], us2[i]
	}

	maxSteps := 0
	for _, r := range rungs {
		maxSteps = max(maxSteps, r.Steps)
	}
	ws := newWorkspace(maxSteps)
	var sync [numEst][]float64
	if opt.Synchronous {
		for e := range sync {
			sync[e] = make([]float64, maxSteps)
		}
	}

	res := Result{Curve: make([]CurvePoint, n), Intervals: make([]Interval, n-1)}
	E := make([]float64, n)
	V := make([]float64, n)
	var mcVar [numEst]float64
	var ssLnZ, ssVar float64
	syncBatch := 1
	for k, r := range rungs {
		delta := 0.0
		if k+1 < n {
			delta = betas[k+1] - r.Beta
		}
		st := ws.fill(r, delta)
		if !numeric.Finite(st.mean) || !numeric.Finite(st.variance) || !numeric.Finite(st.lnRatio) {
			return Result{}, fmt.Errorf("evidence: rung %d (beta %g): ln L values too large to average (mean %g, variance %g)", k, r.Beta, st.mean, st.variance)
		}
		E[k], V[k] = st.mean, st.variance
		// One batch length per rung, from the slowest of its three influence
		// series: every estimator's series is a combination of them.
		tauY, okY := ws.acf.tau(ws.y[:r.Steps])
		tauQ, okQ := ws.acf.tau(ws.q[:r.Steps])
		tau, ok := math.Max(tauY, tauQ), okY && okQ
		if k+1 < n {
			tauE, okE := ws.acf.tau(ws.e[:r.Steps])
			tau, ok = math.Max(tau, tauE), ok && okE
		}
		b, short := batchLen(tau, ok, r.Steps, opt.BatchFactor)
		syncBatch = max(syncBatch, b)
		res.Curve[k] = CurvePoint{
			Beta: r.Beta, Mean: st.mean, MeanErr: math.Sqrt(obmVarOfMean(ws.y[:r.Steps], b)), Var: st.variance,
			Tau: tauY, ESS: float64(r.Steps) / tauY,
		}
		if short {
			res.Warnings = append(res.Warnings, fmt.Sprintf(
				"evidence: rung %d (beta %g): %d steps hold fewer than %d batches of %g autocorrelation times (tau = %.3g); its errors are underestimated",
				k, r.Beta, r.Steps, minBatches, opt.BatchFactor, tau))
		}
		coef := [numEst][3]float64{
			estTI:       {w[k], 0, 0},
			estTIHigher: {w[k], u[k], 0},
		}
		if k+1 < n {
			coef[estSS] = [3]float64{0, 0, 1}
			coef[estDiff] = [3]float64{w[k], u[k], -1}
			ssLnZ += st.lnRatio
		} else {
			coef[estDiff] = [3]float64{w[k], u[k], 0}
		}
		coef[estTrapVsCorr] = [3]float64{0, -u[k], 0}
		coef[estTrapVsSub] = [3]float64{w[k] - wh[k], 0, 0}
		coef[estCorrVsSub] = [3]float64{w[k] - wh[k], u[k] - uh[k], 0}
		for e := range coef {
			g := ws.combine(r.Steps, coef[e])
			if opt.Synchronous {
				for s, v := range g {
					sync[e][s] += v
				}
			}
			if opt.Synchronous && e != estSS {
				continue
			}
			v := obmVarOfMean(g, b)
			if e == estSS && k+1 < n {
				ssVar += v / 2
				res.Intervals[k].SteppingSE = math.Sqrt(v)
			}
			if !opt.Synchronous {
				mcVar[e] += v
			}
		}
		if k+1 < n {
			res.Intervals[k].Lo, res.Intervals[k].Hi = r.Beta, betas[k+1]
			res.Intervals[k].Stepping = st.lnRatio
			if st.weightESS < minWeightESS {
				res.Warnings = append(res.Warnings, fmt.Sprintf(
					"evidence: rung %d (beta %g): stepping-stone weights to beta %g have only %.3g effective samples; its error is unreliable",
					k, r.Beta, betas[k+1], st.weightESS))
			}
		}
	}
	if opt.Synchronous {
		for e := range sync {
			g := sync[e][:rungs[0].Steps]
			// Batches long enough for the summed series and for every rung.
			tau, ok := ws.acf.tau(g)
			b, _ := batchLen(tau, ok, len(g), opt.BatchFactor)
			b = max(b, min(syncBatch, len(g)/minBatches))
			mcVar[e] = obmVarOfMean(g, b)
		}
	}

	for k := 0; k+1 < n; k++ {
		h := betas[k+1] - betas[k]
		res.Intervals[k].Trapezoid = h * (E[k] + E[k+1]) / 2
		res.Intervals[k].Correction = -h * h * (V[k+1] - V[k]) / 12
	}
	t := dot(w, E)
	c := t + dot(u, V)
	th := dot(wh, E)
	ch := th + dot(uh, V)
	res.TI = newEstimate(t, mcVar[estTI], math.Abs(t-c), mcVar[estTrapVsCorr])
	if d := math.Abs(t-th) / 3; d > res.TI.DiscErr {
		res.TI = newEstimate(t, mcVar[estTI], d, mcVar[estTrapVsSub]/9)
	}
	res.TIHigher = newEstimate(c, mcVar[estTIHigher], math.Abs(c-ch)/3, mcVar[estCorrVsSub]/9)
	if n < 3 {
		// No sub-ladder exists: fall back on the trapezoid's error estimate.
		res.TIHigher = newEstimate(c, mcVar[estTIHigher], math.Abs(t-c), mcVar[estTrapVsCorr])
		res.Warnings = append(res.Warnings, "evidence: a 2-rung ladder has no sub-ladder; discretisation errors rest on the rule difference alone")
	}
	res.SS = newEstimate(ssLnZ, mcVar[estSS], ssVar, 0)
	discShares(res.Intervals, sub, betas, E, V, res.TIHigher.DiscErr)
	if pm := opt.PriorMass; pm != nil {
		for _, e := range []*Estimate{&res.TI, &res.TIHigher, &res.SS} {
			pm.apply(e)
		}
		res.PriorMass = pm
	}

	for _, e := range []Estimate{res.TI, res.TIHigher, res.SS} {
		if !numeric.Finite(e.LnZ) || !numeric.Finite(e.Total) || !numeric.Finite(e.DiscNoise) {
			return Result{}, fmt.Errorf("evidence: ln Z or its error overflowed (%g +- %g); are the ln L values sane?", e.LnZ, e.Total)
		}
	}
	diff := res.TIHigher.LnZ - res.SS.LnZ
	res.DisagreeErr = math.Sqrt(mcVar[estDiff] + res.TIHigher.DiscErr*res.TIHigher.DiscErr + res.SS.DiscErr*res.SS.DiscErr)
	if res.DisagreeErr > 0 {
		res.DisagreeSigma = math.Abs(diff) / res.DisagreeErr
		res.Disagree = res.DisagreeSigma > opt.DisagreeAt
	} else {
		res.Disagree = diff != 0
	}
	return res, nil
}

// minWeightESS is the fewest effective importance samples a stepping-stone
// ratio may rest on before a warning (common practice: about a hundred).
const minWeightESS = 100

func newEstimate(lnZ, mcVar, disc, discVar float64) Estimate {
	mc := math.Sqrt(mcVar)
	return Estimate{LnZ: lnZ, MCErr: mc, DiscErr: disc, Total: mc + disc, DiscNoise: math.Sqrt(discVar)}
}

// subLadder returns the rung indices of the every-other-rung sub-ladder:
// 0, 2, 4, ..., always ending with the last rung.
func subLadder(n int) []int {
	idx := make([]int, 0, n/2+2)
	for k := 0; k < n-1; k += 2 {
		idx = append(idx, k)
	}
	return append(idx, n-1)
}

// discShares splits disc, the corrected trapezoid's discretisation error,
// among the ladder intervals. Each sub-ladder interval [beta_i, beta_j]
// contributes |C_ij - sum of the fine C over it|, the local part of
// C' - C; that part is divided among its fine intervals in proportion to
// the size of their derivative corrections (equally if all are zero), and
// all parts are scaled to add up to disc. This tells where refining the
// ladder pays.
func discShares(ivs []Interval, sub []int, betas, E, V []float64, disc float64) {
	var total float64
	for i := 0; i+1 < len(sub); i++ {
		lo, hi := sub[i], sub[i+1]
		h := betas[hi] - betas[lo]
		coarse := h*(E[lo]+E[hi])/2 - h*h*(V[hi]-V[lo])/12
		var fine, corr float64
		for k := lo; k < hi; k++ {
			fine += ivs[k].Trapezoid + ivs[k].Correction
			corr += math.Abs(ivs[k].Correction)
		}
		part := math.Abs(coarse - fine)
		for k := lo; k < hi; k++ {
			if corr > 0 {
				ivs[k].DiscShare = part * math.Abs(ivs[k].Correction) / corr
			} else {
				ivs[k].DiscShare = part / float64(hi-lo)
			}
		}
		total += part
	}
	if total == 0 {
		// No sub-ladder difference (two rungs): share by corrections.
		for k := range ivs {
			ivs[k].DiscShare = math.Abs(ivs[k].Correction)
			total += ivs[k].DiscShare
		}
	}
	for k := range ivs {
		if total > 0 {
			ivs[k].DiscShare *= disc / total
		} else {
			ivs[k].DiscShare = disc / float64(len(ivs))
		}
	}
}
