package priors

import (
	"math"
	"math/rand/v2"
	"strconv"

	"gonum.org/v1/gonum/mathext"

	"tautline/internal/numeric"
)

// fmtNum formats v in the shortest form that parses back to the same
// float64, so that String and Parse round-trip exactly.
func fmtNum(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// Uniform is the uniform distribution on [Min, Max],
//
//	p(x) = 1 / (Max - Min),  Min <= x <= Max.
type Uniform struct{ Min, Max float64 }

// LogProb returns -ln(Max - Min) inside [Min, Max] and -Inf outside.
func (u Uniform) LogProb(x float64) float64 {
	if !(x >= u.Min && x <= u.Max) {
		return math.Inf(-1)
	}
	return -math.Log(u.Max - u.Min)
}

// Rand draws a value uniformly from [Min, Max).
func (u Uniform) Rand(r *rand.Rand) float64 {
	x := u.Min + (u.Max-u.Min)*r.Float64()
	if x > u.Max { // rounding
		x = u.Max
	}
	return x
}

// Bounds returns Min and Max.
func (u Uniform) Bounds() (lo, hi float64) { return u.Min, u.Max }

// String returns "uniform(Min, Max)".
func (u Uniform) String() string {
	return "uniform(" + fmtNum(u.Min) + ", " + fmtNum(u.Max) + ")"
}

// LogUniform is the log-uniform (reciprocal) distribution on [Min, Max],
// Min > 0: ln x is uniform on [ln Min, ln Max], so
//
//	p(x) = 1 / (x ln(Max/Min)),  Min <= x <= Max.
type LogUniform struct{ Min, Max float64 }

// LogProb returns -ln x - ln ln(Max/Min) inside [Min, Max] and -Inf outside.
func (u LogUniform) LogProb(x float64) float64 {
	if !(x >= u.Min && x <= u.Max) || x <= 0 {
		return math.Inf(-1)
	}
	return -math.Log(x) - math.Log(math.Log(u.Max)-math.Log(u.Min))
}

// Rand draws a value whose logarithm is uniform on [ln Min, ln Max).
func (u LogUniform) Rand(r *rand.Rand) float64 {
	lo, hi := math.Log(u.Min), math.Log(u.Max)
	x := math.Exp(lo + (hi-lo)*r.Float64())
	// exp(ln Min) may round just outside the support.
	return math.Min(math.Max(x, u.Min), u.Max)
}

// Bounds returns Min and Max.
func (u LogUniform) Bounds() (lo, hi float64) { return u.Min, u.Max }

// String returns "log-uniform(Min, Max)".
func (u LogUniform) String() string {
	return "log-uniform(" + fmtNum(u.Min) + ", " + fmtNum(u.Max) + ")"
}

// Normal is the normal distribution with mean Mu and standard deviation
// Sigma > 0,
//
//	p(x) = exp(-(x - Mu)^2 / (2 Sigma^2)) / (Sigma sqrt(2 pi)).
type Normal struct{ Mu, Sigma float64 }

// LogProb returns the log density at x.
func (n Normal) LogProb(x float64) float64 {
	z := (x - n.Mu) / n.Sigma
	return -0.5*z*z - math.Log(n.Sigma) - numeric.LnSqrt2Pi
}

// Rand draws a normal variate.
func (n Normal) Rand(r *rand.Rand) float64 { return n.Mu + n.Sigma*r.NormFloat64() }

// Bounds returns -Inf and +Inf.
func (n Normal) Bounds() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }

// String returns "normal(Mu, Sigma)".
func (n Normal) String() string {
	return "normal(" + fmtNum(n.Mu) + ", " + fmtNum(n.Sigma) + ")"
}

// TruncNormal is the normal distribution with location Mu and scale
// Sigma > 0 restricted to [Min, Max] and renormalised there,
//
//	p(x) = phi((x - Mu)/Sigma) / (Sigma [Phi(b) - Phi(a)]),  Min <= x <= Max,
//
// with a = (Min - Mu)/Sigma, b = (Max - Mu)/Sigma, phi and Phi the standard
// normal density and distribution function. Either bound may be infinite.
// The normalisation is computed in log space, so intervals far in a tail
// (Phi(b) - Phi(a) below the smallest float64) keep a finite density.
type TruncNormal struct{ Mu, Sigma, Min, Max float64 }

// LogProb returns the log density at x; -Inf outside [Min, Max].
func (t TruncNormal) LogProb(x float64) float64 {
	if !(x >= t.Min && x <= t.Max) {
		return math.Inf(-1)
	}
	z := (x - t.Mu) / t.Sigma
	a, b := (t.Min-t.Mu)/t.Sigma, (t.Max-t.Mu)/t.Sigma
	return -0.5*z*z - math.Log(t.Sigma) - numeric.LnSqrt2Pi - lnNormMass(a, b)
}

// Rand draws from the truncated normal by inverting the distribution
// function on the side of the mode where Phi is accurate, and, for intervals
// too far in a tail for float64 Phi, by exponential rejection sampling
// (Robert 1995, "Simulation of truncated normal variables").
func (t TruncNormal) Rand(r *rand.Rand) float64 {
	a, b := (t.Min-t.Mu)/t.Sigma, (t.Max-t.Mu)/t.Sigma
	sign := 1.0
	if a > 0 {
		// Reflect the upper tail into the lower one, where Phi(x) has full
		// relative precision.
		a, b, sign = -b, -a, -1
	}
	var z float64
	if b > -30 {
		pa, pb := numeric.NormCDF(a), numeric.NormCDF(b)
		z = mathext.NormalQuantile(pa + (pb-pa)*r.Float64())
	} else {
		// Far lower tail: sample |z| from [-b, -a] with Robert's method.
		z = -tailRand(r, -b, -a)
	}
	z = math.Min(math.Max(z, a), b)
	x := t.Mu + sign*z*t.Sigma
	return math.Min(math.Max(x, t.Min), t.Max)
}

// Bounds returns Min and Max.
func (t TruncNormal) Bounds() (lo, hi float64) { return t.Min, t.Max }

// String returns "truncnormal(Mu, Sigma, Min, Max)".
func (t TruncNormal) String() string {
	return "truncnormal(" + fmtNum(t.Mu) + ", " + fmtNum(t.Sigma) + ", " +
		fmtNum(t.Min) + ", " + fmtNum(t.Max) + ")"
}

// Fixed is a point mass at Value. It takes no sampled dimension: callers
// detect it as a PointMass.
type Fixed struct{ Value float64 }

// LogProb returns 0 at Value and -Inf elsewhere (the log "density" of a
// point mass with respect to counting measure).
func (p Fixed) LogProb(x float64) float64 {
	if x == p.Value {
		return 0
	}
	return math.Inf(-1)
}

// Rand returns Value.
func (p Fixed) Rand(*rand.Rand) float64 { return p.Value }

// Bounds returns Value, Value.
func (p Fixed) Bounds() (lo, hi float64) { return p.Value, p.Value }

// FixedValue returns Value.
func (p Fixed) FixedValue() float64 { return p.Value }

// String returns "fixed(Value)".
func (p Fixed) String() string { return "fixed(" + fmtNum(p.Value) + ")" }

// lnStdNormCDF is ln Phi(z) for any z, using the asymptotic Mills-ratio
// series (Abramowitz & Stegun 26.2.12) where Phi underflows.
func lnStdNormCDF(z float64) float64 {
	if z > -30 {
		return math.Log(numeric.NormCDF(z))
	}
	// Phi(z) = phi(z)/(-z) (1 - 1/z^2 + 3/z^4 - 15/z^6 + ...); at |z| >= 30
	// the terms kept are below 1e-11 relative.
	z2 := 1 / (z * z)
	s := 1 - z2*(1-3*z2*(1-5*z2*(1-7*z2)))
	return -0.5*z*z - numeric.LnSqrt2Pi - math.Log(-z) + math.Log(s)
}

// lnNormMass returns ln(Phi(b) - Phi(a)) for a <= b.
func lnNormMass(a, b float64) float64 {
	if a > 0 {
		a, b = -b, -a
	}
	// Now a < 0 or the interval straddles 0 with a <= 0.
	if b > 0 {
		// Both tails are moderate: direct difference is accurate.
		return math.Log(1 - numeric.NormCDF(a) - numeric.NormCDF(-b))
	}
	la, lb := lnStdNormCDF(a), lnStdNormCDF(b)
	return lb + math.Log1p(-math.Exp(la-lb))
}

// tailRand draws z from the standard normal restricted to [a, b], a > 0,
// by rejection (Robert 1995): a translated-exponential proposal when the
// interval is long compared with 1/a, a uniform proposal otherwise.
func tailRand(r *rand.Rand, a, b float64) float64 {
	if (b-a)*a < 1 {
		for {
			z := a + (b-a)*r.Float64()
			// Acceptance exp(-(z^2 - a^2)/2) >= exp(-(b-a)(b+a)/2) > exp(-1.5)
			// here, so the loop ends quickly.
			if math.Log(r.Float64()) <= -0.5*(z*z-a*a) {
				return z
			}
		}
	}
	lam := 0.5 * (a + math.Sqrt(a*a+4))
	for {
		z := a + r.ExpFloat64()/lam
		if z > b {
			continue
		}
		d := z - lam
		if math.Log(r.Float64()) <= -0.5*d*d {
			return z
		}
	}
}
