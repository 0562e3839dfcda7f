package sampler

import (
	"cmp"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"

	"tautline/sampler/internal/acf"
)

// Chain layout used by every diagnostic: x[s*walkers+w] is the value of one
// parameter at step s for walker w.

// SokalWindow is the constant c of Sokal's automatic windowing: the sum of
// the autocorrelation function is truncated at the smallest lag M with
// M >= c tau(M) (Sokal 1997, section 3).
const SokalWindow = 5.0

// MinTauMultiple is the chain length, in autocorrelation times, below which
// AutocorrTime reports ErrShortChain (common practice: the windowed
// estimate is biased low for shorter chains).
const MinTauMultiple = 50.0

// ErrShortChain reports that a chain is too short for a reliable
// autocorrelation time; the estimate returned with it is a lower bound.
var ErrShortChain = errors.New("sampler: chain too short for a reliable autocorrelation time")

func checkLayout(x []float64, steps, walkers int) error {
	if steps < 1 || walkers < 1 {
		return fmt.Errorf("sampler: need steps >= 1 and walkers >= 1, got %d and %d", steps, walkers)
	}
	if len(x) != steps*walkers {
		return fmt.Errorf("sampler: chain has %d values, want steps x walkers = %d x %d = %d", len(x), steps, walkers, steps*walkers)
	}
	return nil
}

// AutocorrTime estimates the integrated autocorrelation time
//
//	tau = 1 + 2 sum_{k>=1} rho(k)
//
// of one parameter of an ensemble run, from the autocorrelation function
// rho averaged over walkers (each walker's computed by FFT), summed up to
// Sokal's automatic window with c = SokalWindow. Walkers that never move
// are left out of the average. If the window is not reached or the chain is
// shorter than MinTauMultiple tau, the estimate is returned together with an
// error wrapping ErrShortChain.
func AutocorrTime(x []float64, steps, walkers int) (float64, error) {
	if err := checkLayout(x, steps, walkers); err != nil {
		return math.NaN(), err
	}
	if steps < 2 {
		return math.NaN(), fmt.Errorf("%w: %d step", ErrShortChain, steps)
	}
	w := acf.New(steps)
	series := make([]float64, steps)
	ac := make([]float64, steps)
	rho := make([]float64, steps)
	used := 0
	for k := range walkers {
		for s := range steps {
			series[s] = x[s*walkers+k]
		}
		w.Autocov(series, ac)
		if !(ac[0] > 0) {
			continue
		}
		for t := range steps {
			rho[t] += ac[t] / ac[0]
		}
		used++
	}
	if used == 0 {
		return math.NaN(), errors.New("sampler: autocorrelation time of a constant chain is undefined")
	}
	tau := 1.0
	for m := 1; m < steps; m++ {
		tau += 2 * rho[m] / float64(used)
		if float64(m) >= SokalWindow*tau {
			if float64(steps) < MinTauMultiple*tau {
				return tau, fmt.Errorf("%w: %d steps < %v x tau = %.4g", ErrShortChain, steps, MinTauMultiple, tau)
			}
			return tau, nil
		}
	}
	return tau, fmt.Errorf("%w: Sokal window not reached in %d steps (tau > %.4g)", ErrShortChain, steps, tau)
}

// ESS returns the effective sample size steps x walkers / tau of one
// parameter, with tau from AutocorrTime (and its error).
func ESS(x []float64, steps, walkers int) (float64, error) {
	tau, err := AutocorrTime(x, steps, walkers)
	return float64(steps*walkers) / tau, err
}

// splitChains returns 2 x walkers chains of length steps/2 (first and last
// halves of each walker; the middle step is dropped for odd steps), chain c
// at out[c*n:(c+1)*n].
func splitChains(x []float64, steps, walkers int) (out []float64, n, m int) {
	n = steps / 2
	m = 2 * walkers
	out = make([]float64, n*m)
	for w := range walkers {
		for s := range n {
			out[(2*w)*n+s] = x[s*walkers+w]
			out[(2*w+1)*n+s] = x[(steps-n+s)*walkers+w]
		}
	}
	return out, n, m
}

// rankNormalize replaces values by normal scores of their pooled ranks,
// z = Phi^-1((r - 3/8)/(S + 1/4)), with average ranks for ties
// (Vehtari et al. 2021, eq. 14).
func rankNormalize(v []float64) []float64 {
	S := len(v)
	type vi struct {
		v float64
		i int
	}
	idx := make([]vi, S)
	for i, x := range v {
		idx[i] = vi{x, i}
	}
	slices.SortFunc(idx, func(a, b vi) int { return cmp.Compare(a.v, b.v) })
	z := make([]float64, S)
	for i := 0; i < S; {
		j := i
		for j+1 < S && idx[j+1].v == idx[i].v {
			j++
		}
		r := float64(i+j)/2 + 1
		q := distuv.UnitNormal.Quantile((r - 0.375) / (float64(S) + 0.25))
		for k := i; k <= j; k++ {
			z[idx[k].i] = q
		}
		i = j + 1
	}
	return z
}

// rhat is the potential scale reduction sqrt(var+/W) of Gelman & Rubin
// (1992) for m chains of length n (Vehtari et al. 2021, eq. 1-4).
func rhat(c []float64, n, m int) float64 {
	if n < 2 || m < 2 {
		return math.NaN()
	}
	var W, mm, mv float64
	means := make([]float64, m)
	for j := range m {
		ch := c[j*n : (j+1)*n]
		mu := 0.0
		for _, v := range ch {
			mu += v
		}
		mu /= float64(n)
		s2 := 0.0
		for _, v := range ch {
			s2 += (v - mu) * (v - mu)
		}
		W += s2 / float64(n-1)
		means[j] = mu
		mm += mu
	}
	W /= float64(m)
	mm /= float64(m)
	for _, mu := range means {
		mv += (mu - mm) * (mu - mm)
	}
	B := float64(n) * mv / float64(m-1)
	if !(W > 0) {
		if B > 0 {
			return math.Inf(1)
		}
		return math.NaN()
	}
	vp := float64(n-1)/float64(n)*W + B/float64(n)
	return math.Sqrt(vp / W)
}

// SplitRhat returns the rank-normalised split R-hat of Vehtari et al.
// (2021), eq. 14-15: each walker's chain is split in halves, draws are
// replaced by normal scores of their pooled ranks, and the result is the
// larger of R-hat for these scores and for the scores of the folded draws
// |x - median|. It is NaN for fewer than 4 steps.
func SplitRhat(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 4 {
		return math.NaN()
	}
	c, n, m := splitChains(x, steps, walkers)
	z := rankNormalize(c)
	return splitRhat(c, z, median(c), n, m)
}

// splitRhat combines the bulk R-hat of the rank-normalised split chains z
// with the R-hat of the rank-normalised folded chains |c - med|.
func splitRhat(c, z []float64, med float64, n, m int) float64 {
	f := make([]float64, len(c))
	for i, v := range c {
		f[i] = math.Abs(v - med)
	}
	return math.Max(rhat(z, n, m), rhat(rankNormalize(f), n, m))
}

func median(v []float64) float64 {
	s := slices.Clone(v)
	slices.Sort(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// quantile returns the type-7 (linear interpolation) sample quantile.
func quantile(sorted []float64, p float64) float64 {
	h := p * float64(len(sorted)-1)
	i := int(math.Floor(h))
	if i >= len(sorted)-1 {
		return sorted[len(sorted)-1]
	}
	return sorted[i] + (h-float64(i))*(sorted[i+1]-sorted[i])
}

// multiESS is the multi-chain effective sample size of Vehtari et al.
// (2021), eq. 10-11, with Geyer's (1992) initial monotone sequence
// truncation of the combined autocorrelation estimate.
func multiESS(c []float64, n, m int) float64 {
	if n < 4 || m < 1 {
		return math.NaN()
	}
	w := acf.New(n)
	acov := make([]float64, m*n)
	means := make([]float64, m)
	for j := range m {
		means[j] = w.Autocov(c[j*n:(j+1)*n], acov[j*n:(j+1)*n])
	}
	W := 0.0
	for j := range m {
		W += acov[j*n] * float64(n) / float64(n-1)
	}
	W /= float64(m)
	vp := W * float64(n-1) / float64(n)
	if m > 1 {
		mm := 0.0
		for _, mu := range means {
			mm += mu
		}
		mm /= float64(m)
		mv := 0.0
		for _, mu := range means {
			mv += (mu - mm) * (mu - mm)
		}
		vp += mv / float64(m-1)
	}
	if !(vp > 0) {
		return math.NaN()
	}
	rho := func(t int) float64 {
		s := 0.0
		for j := range m {
			s += acov[j*n+t]
		}
		return 1 - (W-s/float64(m))/vp
	}
	sum := 0.0
	prev := math.Inf(1)
	for t := 0; t+1 < n; t += 2 {
		p := rho(t)
		if t == 0 {
			p = 1
		}
		p += rho(t + 1)
		if p < 0 {
			break
		}
		if p > prev {
			p = prev
		}
		sum += p
		prev = p
	}
	tau := -1 + 2*sum
	if tau < 1/math.Log10(float64(n*m)) {
		tau = 1 / math.Log10(float64(n*m))
	}
	return float64(n*m) / tau
}

// BulkESS returns the bulk effective sample size of Vehtari et al. (2021):
// the multi-chain ESS of the rank-normalised split chains. It is NaN for
// fewer than 8 steps.
func BulkESS(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 8 {
		return math.NaN()
	}
	c, n, m := splitChains(x, steps, walkers)
	return multiESS(rankNormalize(c), n, m)
}

// TailESS returns the tail effective sample size of Vehtari et al. (2021):
// the smaller of the multi-chain ESS of the indicators I(x <= q05) and
// I(x <= q95) over the split chains. It is NaN for fewer than 8 steps.
func TailESS(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 8 {
		return math.NaN()
	}
	c, n, m := splitChains(x, steps, walkers)
	s := slices.Clone(c)
	slices.Sort(s)
	return tailESS(c, s, n, m)
}

// tailESS is TailESS of split chains c with sorted copy s.
func tailESS(c, s []float64, n, m int) float64 {
	ind := make([]float64, len(c))
	out := math.Inf(1)
	for _, p := range []float64{0.05, 0.95} {
		q := quantile(s, p)
		for i, v := range c {
			ind[i] = 0
			if v <= q {
				ind[i] = 1
			}
		}
		out = math.Min(out, multiESS(ind, n, m))
	}
	return out
}

// vehtari returns split R-hat, bulk ESS and tail ESS of one parameter,
// sharing the split, sort and rank normalisation between them.
func vehtari(x []float64, steps, walkers int) (rh, bulk, tail float64) {
	if steps < 8 {
		return SplitRhat(x, steps, walkers), math.NaN(), math.NaN()
	}
	c, n, m := splitChains(x, steps, walkers)
	s := slices.Clone(c)
	slices.Sort(s)
	z := rankNormalize(c)
	return splitRhat(c, z, quantile(s, 0.5), n, m), multiESS(z, n, m), tailESS(c, s, n, m)
}

// StuckWalkers returns the indices of walkers whose acceptance fraction,
// after steps proposals each, lies both below half the ensemble median and
// more than 5 binomial standard deviations below it (common practice: such
// a walker is trapped, not merely unlucky).
func StuckWalkers(acc []float64, steps int) []int {
	if len(acc) == 0 || steps < 1 {
		return nil
	}
	med := median(acc)
	sd := math.Sqrt(med * (1 - med) / float64(steps))
	var out []int
	for w, a := range acc {
		if a < med/2 && a < med-5*sd {
			out = append(out, w)
		}
	}
	return out
}

// ParamReport holds the convergence diagnostics of one parameter.
type ParamReport struct {
	Index       int     `json:"index"`
	Name        string  `json:"name,omitempty"`
	Tau         float64 `json:"tau"`
	TauReliable bool    `json:"tau_reliable"`
	ESS         float64 `json:"ess"`
	BulkESS     float64 `json:"bulk_ess"`
	TailESS     float64 `json:"tail_ess"`
	Rhat        float64 `json:"rhat"`
}

// Report bundles the diagnostics of a run, per parameter and overall.
// Non-finite numbers are written as JSON null.
type Report struct {
	Steps          int           `json:"steps"`
	Walkers        int           `json:"walkers"`
	Params         []ParamReport `json:"params"`
	MaxTau         float64       `json:"max_tau"`
	MinESS         float64       `json:"min_ess"`
	MaxRhat        float64       `json:"max_rhat"`
	MeanAcceptance float64       `json:"mean_acceptance"`
	StuckWalkers   []int         `json:"stuck_walkers"`
}

// Diagnose computes the diagnostics of a chain of positions laid out as
// pos[(s*walkers+w)*dim+k] (as History.Positions), for every parameter k.
// acc, the per-walker acceptance fractions, may be nil; names, if not nil,
// label the parameters.
func Diagnose(pos []float64, steps, walkers, dim int, acc []float64, names []string) (Report, error) {
	return diagnose(pos, steps, walkers, dim, acc, names, true)
}

// diagnose is Diagnose; without tails it leaves BulkESS and TailESS NaN,
// which saves most of the work.
func diagnose(pos []float64, steps, walkers, dim int, acc []float64, names []string, tails bool) (Report, error) {
	if dim < 1 || steps < 1 || walkers < 1 || len(pos) != steps*walkers*dim {
		return Report{}, fmt.Errorf("sampler: Diagnose: have %d values, want steps x walkers x dim = %d x %d x %d", len(pos), steps, walkers, dim)
	}
	if names != nil && len(names) != dim {
		return Report{}, fmt.Errorf("sampler: Diagnose: %d names for %d parameters", len(names), dim)
	}
	rep := Report{Steps: steps, Walkers: walkers, MaxTau: math.Inf(-1), MinESS: math.Inf(1), MaxRhat: math.Inf(-1)}
	x := make([]float64, steps*walkers)
	for k := range dim {
		for i := range x {
			x[i] = pos[i*dim+k]
		}
		tau, err := AutocorrTime(x, steps, walkers)
		p := ParamReport{Index: k, Tau: tau, TauReliable: err == nil, ESS: float64(steps*walkers) / tau}
		if tails {
			p.Rhat, p.BulkESS, p.TailESS = vehtari(x, steps, walkers)
		} else {
			p.Rhat, p.BulkESS, p.TailESS = SplitRhat(x, steps, walkers), math.NaN(), math.NaN()
		}
		if names != nil {
			p.Name = names[k]
		}
		rep.Params = append(rep.Params, p)
		rep.MaxTau = nanMax(rep.MaxTau, p.Tau)
		rep.MinESS = nanMin(rep.MinESS, p.ESS)
		rep.MaxRhat = nanMax(rep.MaxRhat, p.Rhat)
	}
	if acc != nil {
		for _, a := range acc {
			rep.MeanAcceptance += a
		}
		rep.MeanAcceptance /= float64(len(acc))
		rep.StuckWalkers = StuckWalkers(acc, steps)
	}
	return rep, nil
}

// nanMax and nanMin propagate NaN so that an undefined diagnostic is not
// hidden by a defined one.
func nanMax(a, b float64) float64 {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.NaN()
	}
	return math.Max(a, b)
}

func nanMin(a, b float64) float64 {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.NaN()
	}
	return math.Min(a, b)
}

// jnum encodes non-finite floats as null.
type jnum float64

func (v jnum) MarshalJSON() ([]byte, error) {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return json.Marshal(f)
}

// MarshalJSON implements json.Marshaler, writing non-finite values as null.
func (p ParamReport) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Index       int    `json:"index"`
		Name        string `json:"name,omitempty"`
		Tau         jnum   `json:"tau"`
		TauReliable bool   `json:"tau_reliable"`
		ESS         jnum   `json:"ess"`
		BulkESS     jnum   `json:"bulk_ess"`
		TailESS     jnum   `json:"tail_ess"`
		Rhat        jnum   `json:"rhat"`
	}{p.Index, p.Name, jnum(p.Tau), p.TauReliable, jnum(p.ESS), jnum(p.BulkESS), jnum(p.TailESS), jnum(p.Rhat)})
}

// MarshalJSON implements json.Marshaler, writing non-finite values as null.
func (r Report) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Steps          int           `json:"steps"`
		Walkers        int           `json:"walkers"`
		Params         []ParamReport `json:"params"`
		MaxTau         jnum          `json:"max_tau"`
		MinESS         jnum          `json:"min_ess"`
		MaxRhat        jnum          `json:"max_rhat"`
		MeanAcceptance jnum          `json:"mean_acceptance"`
		StuckWalkers   []int         `json:"stuck_walkers"`
	}{r.Steps, r.Walkers, r.Params, jnum(r.MaxTau), jnum(r.MinESS), jnum(r.MaxRhat), jnum(r.MeanAcceptance), r.StuckWalkers})
}
