package cosmicstrings

import "math"

// A population is a loop number density n(l, t) (per unit length and
// volume) made of up to two parts, in the notation of docs/physics.md
// section 3 (x = l + Gamma Gmu t is constant along a loop's life):
//
// Born loops, produced at t_b = x/(alpha + Gamma Gmu) with length alpha t_b
// and then only diluted and shrunk,
//
//	n_b(l, t) = K c(t_b) t_b^(-4) (a(t_b)/a(t))^3 D(l, t),   t_b <= min(t, t_cut),
//
// where c is C_eff(t_b) (or 1), t_cut ends production and D is the survival
// probability of a loop that nucleates monopole pairs at the rate Gamma_d per
// unit length from t_s on (Leblond, Shlaer & Siemens 2009; the treatment of
// Buchmueller, Domcke & Schmitz 2021, from memory),
//
//	D = exp(-Gamma_d [l (t - t_s) + (1/2) Gamma Gmu (t - t_s)^2])   for t > t_s,
//
// the exponent being Gamma_d times the integral of the loop length
// l(t') = l + Gamma Gmu (t - t') from t_s to t. For the one-scale model
// K = F/(alpha (alpha + Gamma Gmu)) and c = C_eff; for the radiation-era
// density of Blanco-Pillado, Olum & Shlaer 2014, 0.18 t^(-3/2) x^(-5/2) for
// l <= 0.1 t, K = 0.18 (0.1 + Gamma Gmu)^(-5/2) and c = 1 (see bos.go).
//
// Matter-era loops (Blanco-Pillado, Olum & Shlaer 2014, from memory),
//
//	n_m(l, t) = (0.27 - 0.45 (l/t)^0.31) / (t^2 x^2)   for l <= 0.18 t and t >= t_eq.
type population struct {
	bornK, bornAlpha float64
	lnTCut           float64 // +Inf: production never stops
	decay            bool
	ts, gammaD       float64 // t_s and Gamma_d = t_s^-2, both in seconds
	matter           bool
}

// Numerical settings of popDirect beyond those of Direct.
const (
	// decayCut ends the time integral where the survival probability D
	// falls below e^-60, far below the quadrature's relative tolerance.
	decayCut = 60.0
)

// popDirect computes Omega_GW(f) for a population by adaptive quadrature
// in ln t, from the master formula of docs/physics.md section 3,
//
//	Omega^(1)(f) = (8 pi/(3 H0^2)) (Gmu)^2 Gamma_1 (2/f) integral dt a(t)^5 n(2 a(t)/f, t),
//
// and the mode sum of modeSummer. It is not safe for concurrent use.
type popDirect struct {
	bg                      expansion
	lnTLo, lnTHi, lnTeq, h0 float64
	gamma, zetaQ            float64
	cEff                    func(lnti float64) float64 // nil: 1
	cEffStep                bool                       // c jumps at t_b = t_eq
	gk                      *adaptiveGK
	edges                   []float64
	pop                     population
	gg, lnPref, ln2f, scale float64
	modeSummer
}

func newPopDirect(bg expansion, q, gamma float64, modes int) *popDirect {
	p := &popDirect{bg: bg, h0: bg.H0SI(), gamma: gamma, zetaQ: zeta(q),
		gk: newAdaptiveGK(quadRel, quadMaxIvls), edges: make([]float64, 0, 64)}
	p.lnTLo, p.lnTHi = bg.LnTimeRange()
	p.lnTeq = math.Log(bg.Teq())
	p.modeSummer = modeSummer{q: q, modes: modes, step: omega1Step}
	return p
}

// clone returns an independent copy sharing the background and C_eff.
func (p *popDirect) clone() *popDirect {
	c := newPopDirect(p.bg, p.q, p.gamma, p.modes)
	c.cEff, c.cEffStep = p.cEff, p.cEffStep
	return c
}

// set prepares the evaluation for tension gmu and population pop; scale
// multiplies the spectrum (the P^(-kappa) of the loop density).
func (p *popDirect) set(gmu float64, pop population, scale float64) {
	p.pop = pop
	p.gg = p.gamma * gmu
	p.scale = scale
	p.lnPref = math.Log(8*math.Pi/(3*p.h0*p.h0)) + 2*math.Log(gmu) + math.Log(p.gamma/p.zetaQ)
}

// lnFLow returns the lowest frequency at which Omega^(1) can be non-zero:
// loops radiate at 2 a(t)/l, and the largest ratio l/a(t) available is that
// of the biggest loop at the last time of production.
func (p *popDirect) lnFLow() float64 {
	lo := math.Inf(1)
	if p.pop.bornK > 0 {
		lt := math.Min(p.lnTHi, p.pop.lnTCut)
		if p.pop.decay {
			lt = math.Min(lt, math.Log(p.pop.ts))
		}
		lnA, _ := p.bg.LnAHT(lt)
		lo = math.Ln2 + lnA - math.Log(p.pop.bornAlpha) - lt
	}
	if p.pop.matter {
		lo = math.Min(lo, math.Ln2-math.Log(bosMatterAlpha)-p.lnTHi)
	}
	return lo
}

// omega writes scale * sum_k k^-q Omega^(1)(f_i/k) into out (f checked by
// the caller).
func (p *popDirect) omega(f, out []float64) {
	fmin, fmax := math.Inf(1), 0.0
	for _, v := range f {
		fmin, fmax = math.Min(fmin, v), math.Max(fmax, v)
	}
	p.fill(fmin, fmax, p.lnFLow(), p.omega1)
	for i, v := range f {
		out[i] = p.scale * p.modeSum(v)
	}
}

// omega1 returns Omega^(1) at ln f (unscaled).
func (p *popDirect) omega1(lnf float64) float64 {
	p.ln2f = math.Ln2 - lnf
	var v float64
	if p.pop.bornK > 0 {
		v += p.born()
	}
	if p.pop.matter {
		v += p.matterPart()
	}
	return v
}

// lnTb returns ln t_b of the loop radiating at ln t, and ln a(t).
func (p *popDirect) lnTb(u float64) (lntb, lnA float64) {
	lnA, _ = p.bg.LnAHT(u)
	return math.Log((math.Exp(lnA+p.ln2f) + p.gg*math.Exp(u)) / (p.pop.bornAlpha + p.gg)), lnA
}

func (p *popDirect) bornIntegrand(u float64) float64 {
	lntb, lnA := p.lnTb(u)
	if lntb < p.lnTLo {
		return 0
	}
	lnAb, _ := p.bg.LnAHT(lntb)
	c := 1.0
	if p.cEff != nil {
		c = p.cEff(lntb)
	}
	v := p.pop.bornK * c * math.Exp(p.lnPref+p.ln2f+u+3*lnAb+2*lnA-4*lntb)
	if p.pop.decay {
		if dt := math.Exp(u) - p.pop.ts; dt > 0 {
			v *= math.Exp(-p.decayExponent(math.Exp(lnA+p.ln2f), dt))
		}
	}
	return v
}

// decayExponent is Gamma_d [l dt + (1/2) Gamma Gmu dt^2], dt = t - t_s.
func (p *popDirect) decayExponent(l, dt float64) float64 {
	return p.pop.gammaD * (l*dt + 0.5*p.gg*dt*dt)
}

// born integrates the born loops' Omega^(1) at the current ln2f.
func (p *popDirect) born() float64 {
	lo, hi := p.lnTLo+formationPad, p.lnTHi
	alpha := p.pop.bornAlpha
	// t_b <= t  <=>  l(t) <= alpha t; g decreases with t.
	g := func(u float64) float64 { lnA, _ := p.bg.LnAHT(u); return p.ln2f + lnA - math.Log(alpha) - u }
	tb := func(u float64) float64 { v, _ := p.lnTb(u); return v }
	// Production ends at t_cut (and at t_s for decaying strings): t_b grows
	// with t, so this is an upper limit.
	cut := p.pop.lnTCut
	if p.pop.decay {
		cut = math.Min(cut, math.Log(p.pop.ts))
	}
	if tb(hi) > cut {
		if tb(lo) >= cut {
			return 0
		}
		hi = bisect(func(u float64) float64 { return tb(u) - cut }, lo, hi)
	}
	if p.pop.decay {
		ex := func(u float64) float64 {
			lnA, _ := p.bg.LnAHT(u)
			return p.decayExponent(math.Exp(lnA+p.ln2f), math.Exp(u)-p.pop.ts) - decayCut
		}
		if lts := math.Log(p.pop.ts); lts < hi && ex(hi) > 0 {
			hi = bisect(ex, math.Max(lo, lts), hi)
		}
	}
	if g(hi) > 0 {
		return 0
	}
	if g(lo) < 0 {
		lo = bisect(func(u float64) float64 { return tb(u) - p.lnTLo - formationPad }, lo, hi)
	} else {
		lo = bisect(func(u float64) float64 { return -g(u) }, lo, hi)
	}
	if !(hi > lo) {
		return 0
	}
	s1, s2 := math.NaN(), math.NaN()
	if p.pop.decay {
		s1 = math.Log(p.pop.ts) // D starts acting: a kink in the integrand
	}
	if p.cEffStep && tb(lo) < p.lnTeq && tb(hi) > p.lnTeq {
		s2 = bisect(func(u float64) float64 { return tb(u) - p.lnTeq }, lo, hi)
	}
	p.edges = appendPanels(p.edges[:0], lo, hi, panelWidth, s1, s2)
	v, _, _ := p.gk.integrate(p.bornIntegrand, p.edges)
	return v
}

// Matter-era loop density of Blanco-Pillado, Olum & Shlaer 2014 (from
// memory): n_m = (bosMatterA - bosMatterB (l/t)^bosMatterExp)/(t^2 x^2)
// for l <= bosMatterAlpha t.
const (
	bosMatterA     = 0.27
	bosMatterB     = 0.45
	bosMatterExp   = 0.31
	bosMatterAlpha = 0.18
)

func (p *popDirect) matterIntegrand(u float64) float64 {
	lnA, _ := p.bg.LnAHT(u)
	lnl := lnA + p.ln2f
	t := math.Exp(u)
	x := math.Exp(lnl) + p.gg*t
	shape := bosMatterA - bosMatterB*math.Exp(bosMatterExp*(lnl-u))
	return shape * math.Exp(p.lnPref+p.ln2f+5*lnA-u-2*math.Log(x))
}

// matterPart integrates the matter-era loops' Omega^(1) at the current
// ln2f, over t_eq <= t <= t0 with l(t) <= 0.18 t.
func (p *popDirect) matterPart() float64 {
	lo, hi := p.lnTeq, p.lnTHi
	if !(lo < hi) {
		return 0
	}
	g := func(u float64) float64 { lnA, _ := p.bg.LnAHT(u); return p.ln2f + lnA - math.Log(bosMatterAlpha) - u }
	if g(hi) > 0 {
		return 0
	}
	if g(lo) > 0 {
		lo = bisect(func(u float64) float64 { return -g(u) }, lo, hi)
	}
	p.edges = appendPanels(p.edges[:0], lo, hi, panelWidth, math.NaN(), math.NaN())
	v, _, _ := p.gk.integrate(p.matterIntegrand, p.edges)
	return v
}

// appendPanels appends to dst the edges of about (hi-lo)/width equal panels
// (1 to 48) on [lo, hi], with the split points s1, s2 (NaN: none) inserted
// where they fall inside, so that no panel straddles a kink.
func appendPanels(dst []float64, lo, hi, width, s1, s2 float64) []float64 {
	np := int(math.Ceil((hi - lo) / width))
	np = max(1, min(np, 48))
	if s2 < s1 {
		s1, s2 = s2, s1
	}
	for i := 0; i <= np; i++ {
		x := lo + (hi-lo)*float64(i)/float64(np)
		if i == np {
			x = hi
		}
		for _, s := range [2]float64{s1, s2} {
			if !math.IsNaN(s) && len(dst) > 0 && dst[len(dst)-1] < s && x > s {
				dst = append(dst, s)
			}
		}
		dst = append(dst, x)
	}
	return dst
}
