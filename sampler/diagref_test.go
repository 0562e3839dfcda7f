package sampler

// The diagnostics as they were before their buffers were reused, their
// folded ranks merged and their parameters run concurrently: the reference
// the current code must match to the bit.

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"

	"tautline/internal/numeric"
	"tautline/sampler/internal/acf"
)

// refRanker is the radix-sort ranker as it was.
type refRanker struct {
	size   int
	scores []float64
	keys   []uint64
	tmpK   []uint64
	idx    []int32
	tmpI   []int32
	sorted []float64
}

// refLags is acf.Lags as it was.
type refLags struct {
	n, m int
	dev  []float64
	mean []float64
}

func (l *refLags) Mean(j int) float64 { return l.mean[j] }

const refLagBlock = 8

// refTauPass is maxTauThinned from the reference's estimates, with the
// thinning it ends at.
func refTauPass(h *History, from int, th thinning) (tau float64, k int) {
	n := h.n - from
	if n < 4 {
		return math.NaN(), 1
	}
	k = max(1, n/th.Coarse)
	if th.ShortCoarse > 0 && n < 2*th.Coarse {
		k = max(1, n/th.ShortCoarse)
	}
	for range 8 {
		tau := refThinnedTau(h, from, k, th.DirectFrom)
		next := th.interval(tau)
		if next >= k || math.IsNaN(tau) {
			return tau, k
		}
		k = next
	}
	return refThinnedTau(h, from, k, th.DirectFrom), k
}

func refThinnedTau(h *History, from, k, direct int) float64 {
	ns := (h.n - from + k - 1) / k
	if ns < 4 {
		return math.NaN()
	}
	x := make([]float64, ns*h.walkers)
	tau := math.NaN()
	for p := range h.dim {
		for i := range ns {
			s := from + i*k
			for w := range h.walkers {
				x[i*h.walkers+w] = h.pos[(s*h.walkers+w)*h.dim+p]
			}
		}
		t, _ := refAutocorrTimeFrom(x, ns, h.walkers, direct)
		if !math.IsNaN(t) && !(t*float64(k) <= tau) {
			tau = t * float64(k)
		}
	}
	return tau
}

func refEvaluate(e *Ensemble, opt RunOptions, final bool) evaluation {
	h := e.hist
	ev := evaluation{thin: max(opt.Thin, 1), needSteps: math.NaN()}
	first := max(e.frozenAt, h.start) // ensemble step after which samples are usable
	u0 := min(first-h.start, h.n)
	th := checkThinning
	if final {
		th = finalThinning
	}
	// A check first estimates tau after the least burn-in it could
	// choose (a tenth of the usable run, or the fixed burn-in), and, if
	// 1.5 x 5 tau is later, again after that, at the thinning that
	// estimate asks for if coarser (checkPass).
	checkK := 0
	burn := first
	if !final {
		b := first + (e.steps-first)/10
		if opt.Burn >= 0 {
			b = max(opt.Burn, first)
		}
		from := min(b-h.start, h.n)
		tau, k := refTauPass(h, from, th)
		if !math.IsNaN(tau) && opt.Burn < 0 {
			if nb := first + int(math.Ceil(checkBurnMargin*5*tau)); nb > b {
				b = nb
				k = max(k, th.interval(tau))
				tau = refThinnedTau(h, min(b-h.start, h.n), k, th.DirectFrom)
			}
		}
		if !math.IsNaN(tau) {
			burn, checkK = b, k
		}
	}
	var k int
	if checkK == 0 {
		tau0 := h.maxTauThinned(u0, th)
		if opt.Burn >= 0 {
			burn = max(opt.Burn, first)
		} else if !math.IsNaN(tau0) {
			// Five autocorrelation times, but at least a tenth of the usable
			// run (common practice): a walker that started far out can take
			// longer than 5 tau of the settled ensemble to join it.
			burn = first + max(int(math.Ceil(5*tau0)), (e.steps-first)/10)
		}
		// The diagnostics are computed on the post-burn-in chain thinned by
		// k = floor(tau0/10) for the final report (checks: see checkThinning):
		// for an exponentially decaying autocorrelation k tau(thinned) differs
		// from tau by less than 0.5 %, and the ESS is unchanged, while the work
		// drops k-fold.
		k = th.interval(tau0)
	} else {
		k = checkK
	}
	ev.burn = burn
	ev.burnIndex = min(burn-h.start, h.n)
	n := h.n - ev.burnIndex
	ns := (n + k - 1) / k
	if ns < 8 {
		return ev
	}
	row := h.walkers * h.dim
	pos := make([]float64, 0, ns*row)
	for s := ev.burnIndex; s < h.n; s += k {
		pos = append(pos, h.pos[s*row:(s+1)*row]...)
	}
	direct := directMinLen // the check's tau is that of its estimate (checkPass)
	if checkK != 0 {
		direct = th.DirectFrom
	}
	rep, err := refDiagnoseFrom(pos, ns, h.walkers, h.dim, e.AcceptanceFractions(0), nil, final, direct)
	if err != nil {
		return ev
	}
	rep.Steps = n
	rep.MaxTau, rep.MinESS = math.Inf(-1), math.Inf(1)
	for i := range rep.Params {
		p := &rep.Params[i]
		p.Tau *= float64(k)
		p.ESS = float64(n*h.walkers) / p.Tau
		rep.MaxTau = nanMax(rep.MaxTau, p.Tau)
		rep.MinESS = nanMin(rep.MinESS, p.ESS)
	}
	rep.StuckWalkers = StuckWalkers(e.AcceptanceFractions(0), e.steps)
	ev.report = rep
	if opt.Thin == 0 && rep.MaxTau > 0 {
		ev.thin = max(1, int(rep.MaxTau/2))
	}
	c := opt.Until
	need := 0.0
	ok := e.steps >= opt.MinSteps && (c.ESS > 0 || c.TauMultiple > 0 || c.Rhat > 0)
	if c.ESS > 0 {
		ok = ok && rep.MinESS >= c.ESS
		need = math.Max(need, float64(n)*c.ESS/rep.MinESS)
	}
	if c.TauMultiple > 0 {
		ok = ok && float64(n) >= c.TauMultiple*rep.MaxTau
		need = math.Max(need, c.TauMultiple*rep.MaxTau)
	}
	if c.Rhat > 0 && final { // a check's R-hat decides nothing
		ok = ok && rep.MaxRhat <= c.Rhat
	}
	ev.converged = ok
	if c.ESS > 0 || c.TauMultiple > 0 {
		ev.needSteps = need
	}
	return ev
}

func refAutocorrTime(x []float64, steps, walkers int) (float64, error) {
	return refAutocorrTimeFrom(x, steps, walkers, directMinLen)
}

// refAutocorrTimeFrom is refAutocorrTime with the direct sums tried from
// series of direct steps.
func refAutocorrTimeFrom(x []float64, steps, walkers, direct int) (float64, error) {
	if err := checkLayout(x, steps, walkers); err != nil {
		return math.NaN(), err
	}
	if steps < 2 {
		return math.NaN(), fmt.Errorf("%w: %d step", ErrShortChain, steps)
	}
	if steps >= direct {
		if tau, err, ok := refAutocorrDirect(x, steps, walkers); ok {
			return tau, err
		}
	}
	return refAutocorrFFT(x, steps, walkers)
}

func refSokalTau(steps, used int, rhoSum func(m int) (float64, bool)) (tau float64, err error, ok bool) {
	tau = 1.0
	for m := 1; m < steps; m++ {
		r, fine := rhoSum(m)
		if !fine {
			return 0, nil, false
		}
		tau += 2 * r / float64(used)
		if float64(m) >= SokalWindow*tau {
			if float64(steps) < MinTauMultiple*tau {
				return tau, fmt.Errorf("%w: %d steps < %v x tau = %.4g", ErrShortChain, steps, MinTauMultiple, tau), true
			}
			return tau, nil, true
		}
	}
	return tau, fmt.Errorf("%w: Sokal window not reached in %d steps (tau > %.4g)", ErrShortChain, steps, tau), true
}

func refAutocorrFFT(x []float64, steps, walkers int) (float64, error) {
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
		return math.NaN(), errConstant
	}
	tau, err, _ := refSokalTau(steps, used, func(m int) (float64, bool) { return rho[m], true })
	return tau, err
}

func refAutocorrDirect(x []float64, steps, walkers int) (tau float64, err error, ok bool) {
	var lg refLags
	lg.LoadInterleaved(x, steps, walkers)
	const B = refLagBlock
	buf := make([]float64, walkers*B)
	c0 := make([]float64, walkers)
	lg.Block(0, buf)
	used := 0
	for w := range walkers {
		c0[w] = buf[w*B]
		if c0[w] > 0 {
			used++
		}
	}
	if used == 0 {
		return math.NaN(), errConstant, true
	}
	var rho [B]float64
	k0 := -B
	budget := lagBudget(steps)
	return refSokalTau(steps, used, func(m int) (float64, bool) {
		if m >= k0+B {
			k0 = m - m%B
			if k0 > budget {
				return 0, false
			}
			if k0 > 0 {
				lg.Block(k0, buf)
			}
			rho = [B]float64{}
			for w := range walkers {
				if !(c0[w] > 0) {
					continue
				}
				for i := range B {
					rho[i] += buf[w*B+i] / c0[w]
				}
			}
		}
		return rho[m-k0], true
	})
}

func refRhat(c []float64, n, m int) float64 {
	if n < 2 || m < 2 {
		return math.NaN()
	}
	means, ss := make([]float64, m), make([]float64, m)
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
		means[j], ss[j] = mu, s2
	}
	return refRhatMoments(means, ss, n)
}

func refRhatMoments(means, ss []float64, n int) float64 {
	m := len(means)
	var W, mm, mv float64
	for j := range m {
		W += ss[j] / float64(n-1)
		mm += means[j]
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

func refDiagnose(pos []float64, steps, walkers, dim int, acc []float64, names []string, tails bool) (Report, error) {
	return refDiagnoseFrom(pos, steps, walkers, dim, acc, names, tails, directMinLen)
}

// refDiagnoseFrom is refDiagnose with tau's direct sums tried from series
// of direct steps.
func refDiagnoseFrom(pos []float64, steps, walkers, dim int, acc []float64, names []string, tails bool, direct int) (Report, error) {
	if dim < 1 || steps < 1 || walkers < 1 || len(pos) != steps*walkers*dim {
		return Report{}, fmt.Errorf("sampler: Diagnose: have %d values, want steps x walkers x dim = %d x %d x %d", len(pos), steps, walkers, dim)
	}
	if names != nil && len(names) != dim {
		return Report{}, fmt.Errorf("sampler: Diagnose: %d names for %d parameters", len(names), dim)
	}
	rep := Report{Steps: steps, Walkers: walkers, MaxTau: math.Inf(-1), MinESS: math.Inf(1), MaxRhat: math.Inf(-1)}
	x := make([]float64, steps*walkers)
	var rk refRanker
	for k := range dim {
		for i := range x {
			x[i] = pos[i*dim+k]
		}
		tau, err := refAutocorrTimeFrom(x, steps, walkers, direct)
		p := ParamReport{Index: k, Tau: tau, TauReliable: err == nil, ESS: float64(steps*walkers) / tau}
		p.Rhat, p.BulkESS, p.TailESS = refEnsembleVehtari(&rk, x, steps, walkers, tails)
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

func refEnsembleVehtari(r *refRanker, x []float64, steps, walkers int, ess bool) (rh, bulk, tail float64) {
	bulk, tail = math.NaN(), math.NaN()
	if steps < 2*rhatSegments {
		return math.NaN(), bulk, tail
	}
	drop := steps % rhatSegments
	S := steps - drop
	xs := x[drop*walkers:]
	z := r.normalize(xs, nil)
	var sorted []float64
	if ess {
		sorted = slices.Clone(r.sorted)
	}
	med := medianSorted(r.sorted)
	f := make([]float64, len(xs))
	for i, v := range xs {
		f[i] = math.Abs(v - med)
	}
	fz := r.normalize(f, f)
	n := S / rhatSegments * walkers
	rh = math.Max(
		math.Max(refRhat(z, n, rhatSegments), refRhat(fz, n, rhatSegments)),
		math.Max(refWalkerHalvesRhat(z, S, walkers), refWalkerHalvesRhat(fz, S, walkers)))
	if !ess {
		return rh, bulk, tail
	}
	N := float64(S * walkers)
	bulk = N / refEnsembleTau(z, S, walkers)
	ind := f // the folded draws are no longer needed
	tail = math.Inf(1)
	for _, p := range []float64{0.05, 0.95} {
		q := numeric.Quantile(sorted, p)
		for i, v := range xs {
			ind[i] = 0
			if v <= q {
				ind[i] = 1
			}
		}
		tail = math.Min(tail, N/refEnsembleTau(ind, S, walkers))
	}
	return rh, bulk, tail
}

func refWalkerHalvesRhat(z []float64, steps, walkers int) float64 {
	n := steps / 2
	if n < 2 {
		return math.NaN()
	}
	m := 2 * walkers
	sum := make([]float64, m)
	for s := range steps {
		h := (s / n) * walkers
		row := z[s*walkers : (s+1)*walkers]
		for w, v := range row {
			sum[h+w] += v
		}
	}
	for j := range sum {
		sum[j] /= float64(n)
	}
	ss := make([]float64, m)
	for s := range steps {
		h := (s / n) * walkers
		row := z[s*walkers : (s+1)*walkers]
		for w, v := range row {
			d := v - sum[h+w]
			ss[h+w] += d * d
		}
	}
	return refRhatMoments(sum, ss, n)
}

func refEnsembleTau(x []float64, steps, walkers int) float64 {
	mean := 0.0
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	if steps >= directMinLen {
		if tau, ok := refEnsembleTauDirect(x, steps, walkers, mean); ok {
			return tau
		}
	}
	w := acf.New(steps)
	series := make([]float64, steps)
	ac := make([]float64, steps)
	sum := make([]float64, steps)
	for k := range walkers {
		for s := range steps {
			series[s] = x[s*walkers+k]
		}
		w.AutocovAbout(series, mean, ac)
		for t := range steps {
			sum[t] += ac[t]
		}
	}
	if !(sum[0] > 0) {
		return math.NaN()
	}
	tau, _, _ := refSokalTau(steps, 1, func(m int) (float64, bool) { return sum[m] / sum[0], true })
	return tau
}

func refEnsembleTauDirect(x []float64, steps, walkers int, mean float64) (float64, bool) {
	var lg refLags
	lg.LoadInterleavedAbout(x, steps, walkers, mean)
	const B = refLagBlock
	buf := make([]float64, walkers*B)
	lg.Block(0, buf)
	c0 := 0.0
	for w := range walkers {
		c0 += buf[w*B]
	}
	if !(c0 > 0) {
		return math.NaN(), true
	}
	var rho [B]float64
	k0 := 0
	budget := lagBudget(steps)
	fill := func() {
		rho = [B]float64{}
		for w := range walkers {
			for i := range B {
				rho[i] += buf[w*B+i]
			}
		}
		for i := range B {
			rho[i] /= c0
		}
	}
	fill()
	tau, _, ok := refSokalTau(steps, 1, func(m int) (float64, bool) {
		if m >= k0+B {
			k0 = m - m%B
			if k0 > budget {
				return 0, false
			}
			lg.Block(k0, buf)
			fill()
		}
		return rho[m-k0], true
	})
	return tau, ok
}

func (r *refRanker) normalize(v, z []float64) []float64 {
	S := len(v)
	if cap(z) < S {
		z = make([]float64, S)
	}
	z = z[:S]
	r.sort(v)
	if r.size != S || r.scores == nil {
		r.size = S
		r.scores = make([]float64, S)
		for i := range r.scores {
			rk := float64(i+i)/2 + 1
			r.scores[i] = distuv.UnitNormal.Quantile((rk - 0.375) / (float64(S) + 0.25))
		}
	}
	s, idx := r.sorted, r.idx
	for i := 0; i < S; {
		j := i
		for j+1 < S && s[j+1] == s[i] {
			j++
		}
		if i == j {
			z[idx[i]] = r.scores[i]
			i++
			continue
		}
		rk := float64(i+j)/2 + 1
		q := distuv.UnitNormal.Quantile((rk - 0.375) / (float64(S) + 0.25))
		for k := i; k <= j; k++ {
			z[idx[k]] = q
		}
		i = j + 1
	}
	return z
}

func (r *refRanker) sort(v []float64) {
	S := len(v)
	grow := func(p *[]uint64) { *p = growU64(*p, S) }
	grow(&r.keys)
	grow(&r.tmpK)
	r.idx = growI32(r.idx, S)
	r.tmpI = growI32(r.tmpI, S)
	if cap(r.sorted) < S {
		r.sorted = make([]float64, S)
	}
	r.sorted = r.sorted[:S]
	keys, idx, tk, ti := r.keys, r.idx, r.tmpK, r.tmpI
	for i, x := range v {
		keys[i] = refSortKey(x)
		idx[i] = int32(i)
	}
	const bitsPer, passes = 11, 6 // 6 x 11 >= 64 bits
	const mask = 1<<bitsPer - 1
	var count [passes][1 << bitsPer]int
	for _, k := range keys {
		for p := range passes {
			count[p][(k>>(p*bitsPer))&mask]++
		}
	}
	for p := range passes {
		shift := uint(p * bitsPer)
		c := &count[p]
		if c[(keys[0]>>shift)&mask] == S {
			continue
		}
		pos := 0
		for d, n := range c {
			c[d] = pos
			pos += n
		}
		for i, k := range keys {
			d := (k >> shift) & mask
			q := c[d]
			c[d]++
			tk[q] = k
			ti[q] = idx[i]
		}
		keys, tk = tk, keys
		idx, ti = ti, idx
	}
	r.keys, r.tmpK, r.idx, r.tmpI = keys, tk, idx, ti
	for i, j := range idx {
		r.sorted[i] = v[j]
	}
}

func refSortKey(v float64) uint64 {
	if v != v {
		return 0
	}
	b := math.Float64bits(v)
	if b>>63 != 0 {
		return ^b
	}
	return b | 1<<63
}

func (l *refLags) LoadInterleaved(x []float64, n, m int) {
	l.resize(n, m)
	for j := range m {
		d := l.dev[j*n : (j+1)*n]
		for t := range d {
			d[t] = x[t*m+j]
		}
		l.centre(j, d)
	}
}

func (l *refLags) LoadInterleavedAbout(x []float64, n, m int, centre float64) {
	l.resize(n, m)
	for j := range m {
		d := l.dev[j*n : (j+1)*n]
		for t := range d {
			d[t] = x[t*m+j] - centre
		}
		l.mean[j] = centre
	}
}

func (l *refLags) resize(n, m int) {
	l.n, l.m = n, m
	if cap(l.dev) < n*m {
		l.dev = make([]float64, n*m)
	}
	l.dev = l.dev[:n*m]
	if cap(l.mean) < m {
		l.mean = make([]float64, m)
	}
	l.mean = l.mean[:m]
}

func (l *refLags) centre(j int, series []float64) {
	mean := 0.0
	for _, v := range series {
		mean += v
	}
	mean /= float64(l.n)
	d := l.dev[j*l.n : (j+1)*l.n]
	for t, v := range series {
		d[t] = v - mean
	}
	l.mean[j] = mean
}

func (l *refLags) Block(k0 int, out []float64) {
	n := l.n
	nf := float64(n)
	for j := range l.m {
		d := l.dev[j*n : (j+1)*n]
		var s [refLagBlock]float64
		// t below full has every lag of the block inside the series.
		full := max(n-(k0+refLagBlock-1), 0)
		if full > 0 {
			a := d[:full]
			b0, b1, b2, b3 := d[k0:k0+full], d[k0+1:k0+1+full], d[k0+2:k0+2+full], d[k0+3:k0+3+full]
			b4, b5, b6, b7 := d[k0+4:k0+4+full], d[k0+5:k0+5+full], d[k0+6:k0+6+full], d[k0+7:k0+7+full]
			var s0, s1, s2, s3, s4, s5, s6, s7 float64
			for t, v := range a {
				s0 += v * b0[t]
				s1 += v * b1[t]
				s2 += v * b2[t]
				s3 += v * b3[t]
				s4 += v * b4[t]
				s5 += v * b5[t]
				s6 += v * b6[t]
				s7 += v * b7[t]
			}
			s = [refLagBlock]float64{s0, s1, s2, s3, s4, s5, s6, s7}
		}
		for t := full; t < n-k0; t++ {
			for i := range refLagBlock {
				if t+k0+i < n {
					s[i] += d[t] * d[t+k0+i]
				}
			}
		}
		o := out[j*refLagBlock : (j+1)*refLagBlock]
		for i := range o {
			o[i] = s[i] / nf
		}
	}
}

// medianSorted is the median of sorted values, the mean of the middle two
// for an even count.
func medianSorted(s []float64) float64 {
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}
