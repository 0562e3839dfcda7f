package evidence

import (
	"fmt"
	"math"
	"sort"
)

// Advice says how to change a run so that the recommended estimate
// (Result.TIHigher) reaches a target total error.
type Advice struct {
	// Done reports that the total error is already at most the target.
	Done bool `json:"done"`
	// StepsFactor is the factor by which the recorded steps per rung should
	// grow (1 if the Monte-Carlo error already fits its share; at most a
	// million).
	StepsFactor float64 `json:"stepsFactor"`
	// Insert lists new betas to add to the ladder, sorted increasing.
	Insert []float64 `json:"insert,omitempty"`
	// Hotspots are the ladder intervals that contribute most to the
	// discretisation error, largest first, at most three.
	Hotspots []Hotspot `json:"hotspots,omitempty"`
	// Reason explains the advice in one sentence.
	Reason string `json:"reason"`
}

// A Hotspot is a ladder interval and its share of the discretisation error.
type Hotspot struct {
	Lo      float64 `json:"lo"`
	Hi      float64 `json:"hi"`
	DiscErr float64 `json:"discErr"`
}

// maxInsertFactor caps the betas inserted by one Advise call at this many
// times the current number of rungs; the caller iterates.
const maxInsertFactor = 2

// Advise compares r.TIHigher with the target total error and says whether
// more steps (Monte-Carlo error) or more rungs (discretisation error), and
// where, are needed.
//
// The discretisation error is taken interval by interval from
// Interval.DiscShare, which points at the part of the ladder where
// E_beta[ln L] bends most. Intervals are halved, largest
// share first (at the geometric mean of their ends, which suits ladders dense
// near beta = 0; the arithmetic mean for the interval starting at 0), each
// halving assumed to quarter that interval's share, until the
// discretisation error fits its budget: target minus the Monte-Carlo error,
// but at least half the target. The steps factor then brings the
// Monte-Carlo error, which scales as 1/sqrt(steps), within what is left:
// (MCErr / (target - DiscErr'))^2. Adding rungs is assumed to leave the
// Monte-Carlo error unchanged. A discretisation estimate smaller than twice
// its own Monte-Carlo noise (Estimate.DiscNoise) is treated as noise: the
// advice is then more steps only, by (Total / target)^2. A prior-mass
// error (Estimate.PriorMassErr) is taken off the target first, since only
// more prior draws reduce it.
func Advise(r Result, target float64) Advice {
	est := r.TIHigher
	if !(target > 0) || math.IsInf(target, 1) {
		return Advice{StepsFactor: 1, Reason: fmt.Sprintf("evidence: target error must be positive and finite, got %g", target)}
	}
	if est.Total <= target {
		return Advice{Done: true, StepsFactor: 1, Reason: fmt.Sprintf("total error %.3g is within the target %.3g", est.Total, target)}
	}
	// Neither steps nor rungs shrink the prior-mass error: what they can
	// reach is the target without it.
	if est.PriorMassErr > 0 {
		if est.PriorMassErr >= target {
			return Advice{StepsFactor: 1, Reason: fmt.Sprintf("the prior-mass error %.3g alone exceeds the target %.3g: it needs more prior draws, not more steps or rungs", est.PriorMassErr, target)}
		}
		target -= est.PriorMassErr
		est.Total -= est.PriorMassErr
	}

	segs := make([]segment, len(r.Intervals))
	for k, iv := range r.Intervals {
		segs[k] = segment{lo: iv.Lo, hi: iv.Hi, d: iv.DiscShare}
	}
	adv := Advice{StepsFactor: 1}
	byShare := append([]segment(nil), segs...)
	sort.SliceStable(byShare, func(i, j int) bool { return byShare[i].d > byShare[j].d })
	for _, s := range byShare[:min(3, len(byShare))] {
		if s.d > 0 {
			adv.Hotspots = append(adv.Hotspots, Hotspot{Lo: s.lo, Hi: s.hi, DiscErr: s.d})
		}
	}

	if est.DiscErr < noiseSigmas*est.DiscNoise {
		// The discretisation estimate is indistinguishable from sampling
		// noise, so the whole total shrinks as 1/sqrt(steps).
		adv.StepsFactor = stepsFactor(est.Total / target)
		adv.Reason = fmt.Sprintf("Monte-Carlo noise dominates (MC error %.3g; discretisation estimate %.3g within %g sigma of its own noise %.3g): record %.3gx the steps per rung",
			est.MCErr, est.DiscErr, float64(noiseSigmas), est.DiscNoise, adv.StepsFactor)
		return adv
	}
	budget := target - math.Min(est.MCErr, target/2)
	disc := est.DiscErr
	limit := maxInsertFactor * (len(r.Intervals) + 1)
	for disc > budget && len(adv.Insert) < limit {
		i := 0
		for j := range segs {
			if segs[j].d > segs[i].d {
				i = j
			}
		}
		s := segs[i]
		mid := s.hi / 2
		if s.lo > 0 {
			mid = math.Sqrt(s.lo * s.hi)
		}
		if !(mid > s.lo && mid < s.hi) {
			break // interval cannot be split in floating point
		}
		adv.Insert = append(adv.Insert, mid)
		segs[i] = segment{lo: s.lo, hi: mid, d: s.d / 8}
		segs = append(segs, segment{lo: mid, hi: s.hi, d: s.d / 8})
		disc -= s.d * 3 / 4
	}
	sort.Float64s(adv.Insert)

	// If the insertion cap stopped short, the next call refines further;
	// meanwhile give the Monte-Carlo error at least half the target.
	if left := math.Max(target-disc, target/2); est.MCErr > left {
		adv.StepsFactor = stepsFactor(est.MCErr / left)
	}
	switch {
	case len(adv.Insert) > 0 && adv.StepsFactor > 1:
		adv.Reason = fmt.Sprintf("discretisation error %.3g (mostly beta in [%.3g, %.3g]) and Monte-Carlo error %.3g both exceed their shares of the target %.3g: add %d rungs and record %.3gx the steps",
			est.DiscErr, adv.Hotspots[0].Lo, adv.Hotspots[0].Hi, est.MCErr, target, len(adv.Insert), adv.StepsFactor)
	case len(adv.Insert) > 0:
		adv.Reason = fmt.Sprintf("discretisation error %.3g dominates (mostly beta in [%.3g, %.3g]): add %d rungs",
			est.DiscErr, adv.Hotspots[0].Lo, adv.Hotspots[0].Hi, len(adv.Insert))
	case adv.StepsFactor == 1:
		adv.Reason = fmt.Sprintf("discretisation error %.3g exceeds the target %.3g but its intervals cannot be split further", est.DiscErr, target)
	default:
		adv.Reason = fmt.Sprintf("Monte-Carlo error %.3g dominates: record %.3gx the steps per rung", est.MCErr, adv.StepsFactor)
	}
	return adv
}

// maxStepsFactor caps Advice.StepsFactor: a run that needs more than a
// million times its steps needs rethinking, not more steps.
const maxStepsFactor = 1e6

// stepsFactor is f^2, the growth of the steps that shrinks a Monte-Carlo
// error by f, rounded up to a tenth and capped at maxStepsFactor.
func stepsFactor(f float64) float64 {
	if !(f < 1e3) {
		return maxStepsFactor
	}
	return math.Min(math.Ceil(10*f*f)/10, maxStepsFactor)
}

// noiseSigmas is how many of its own standard errors a discretisation
// estimate must exceed before Advise trusts it (common practice: 2).
const noiseSigmas = 2

type segment struct{ lo, hi, d float64 }
