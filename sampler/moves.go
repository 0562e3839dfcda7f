package sampler

import (
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
)

// A Move proposes a new position for one walker from the positions of the
// complementary half of the ensemble, in the manner of Goodman & Weare (2010)
// section 3: the other half is held fixed while this half is updated, so
// detailed balance holds for each walker given the other half.
//
// Propose writes the proposal into y (len(y) == len(x) == dim) and returns
// the log of the factor that multiplies the density ratio in the
// Metropolis–Hastings acceptance (for the stretch move (d-1) ln z; zero for
// symmetric moves). others holds n rows of dim values, row-major. Propose
// must use only r for randomness, must not retain any of its slices and must
// not allocate: it runs concurrently for different walkers.
type Move interface {
	Propose(r *rand.Rand, x, others []float64, n int, y []float64) (lnFactor float64)
}

// A Validator is a Move that can check its own settings. New and Restore
// call Validate on every move of Config.Moves that implements it and
// refuse the configuration if it returns an error.
type Validator interface {
	Validate() error
}

// A Partnered move draws more than one walker of the complementary half
// per proposal: Partners is how many distinct ones it needs. New refuses
// ensembles whose halves have fewer walkers; a Move that does not
// implement Partnered is taken to need one.
type Partnered interface {
	Partners() int
}

// A WeightedMove is one entry of a move mixture: at each update a walker
// chooses Move with probability Weight / (sum of weights).
type WeightedMove struct {
	Move   Move
	Weight float64
}

// Stretch is the affine-invariant stretch move of Goodman & Weare (2010),
// eq. (7)-(10):
//
//	y = x_j + z (x - x_j),  z ~ g(z) ∝ 1/sqrt(z) on [1/A, A],
//	accept with min(1, z^(d-1) p(y)/p(x)),
//
// with x_j a uniformly chosen walker of the complementary half. A must be
// > 1; A = 2 is the value recommended by the authors. The ensemble runs a
// Stretch value of Config.Moves without the Move interface, with the same
// draws and the same results as Propose.
type Stretch struct {
	A float64
}

// Propose implements Move.
func (m Stretch) Propose(r *rand.Rand, x, others []float64, n int, y []float64) float64 {
	d := len(x)
	j := r.IntN(n)
	z := stretchZ(m.A, r.Float64())
	stretchTo(y, x, others[j*d:j*d+d], z)
	return float64(d-1) * math.Log(z)
}

// stretchZ is the inverse distribution function of g(z) ∝ 1/sqrt(z) on
// [1/a, a] (Goodman & Weare 2010, eq. 9) at u in [0, 1):
// z = ((a-1)u + 1)^2 / a. Stretch.Propose and the ensemble's own stretch
// update share it, so both round alike.
func stretchZ(a, u float64) float64 {
	s := (a-1)*u + 1
	return s * s / a
}

// stretchTo writes y = xj + z (x - xj) (Goodman & Weare 2010, eq. 7).
func stretchTo(y, x, xj []float64, z float64) {
	y, xj = y[:len(x)], xj[:len(x)]
	for k := range x {
		y[k] = xj[k] + z*(x[k]-xj[k])
	}
}

// stretchPCG is Stretch{A: a}.Propose(rand.New(p), x, others, n, y) with
// the draws taken from p directly (the same draws, see pcgIntN and
// pcgFloat64); it returns z and leaves (d-1) ln z, the log factor, to the
// caller, which rarely needs it exactly (see acceptStretch).
func stretchPCG(p *pcg, a float64, x, others []float64, n int, y []float64) (z float64) {
	d := len(x)
	j := pcgIntN(p, n)
	z = stretchZ(a, pcgFloat64(p))
	stretchTo(y, x, others[j*d:j*d+d], z)
	return z
}

// pcgFloat64 returns rand.New(p).Float64(), taking the same single draw
// from p: math/rand/v2 defines Float64 as float64(Uint64()<<11>>11) / 2^53.
// Calling the concrete PCG saves the Source interface call.
func pcgFloat64(p *pcg) float64 {
	return float64(p.Uint64()<<11>>11) / (1 << 53)
}

// pcgIntN returns rand.New(p).IntN(n) for n > 0, taking the same draws
// from p: math/rand/v2 masks one draw when n is a power of two and
// otherwise keeps the high word of Uint64() x n, redrawing while the low
// word falls below 2^64 mod n (Lemire 2019, "Fast random integer
// generation in an interval"); its 32-bit variant gives the same values.
func pcgIntN(p *pcg, n int) int {
	un := uint64(n)
	if un&(un-1) == 0 {
		return int(p.Uint64() & (un - 1))
	}
	hi, lo := bits.Mul64(p.Uint64(), un)
	if lo < un {
		thresh := -un % un
		for lo < thresh {
			hi, lo = bits.Mul64(p.Uint64(), un)
		}
	}
	return int(hi)
}

// Validate implements Validator: A must be finite and > 1.
func (m Stretch) Validate() error {
	if !(m.A > 1) || math.IsInf(m.A, 0) {
		return fmt.Errorf("stretch move scale A must be finite and > 1, got %v", m.A)
	}
	return nil
}

// DiffEvolution is the differential-evolution move of ter Braak (2006):
//
//	y = x + gamma (x_j - x_k) + e,  e ~ N(0, Noise^2) per coordinate,
//
// with x_j, x_k two distinct walkers of the complementary half. gamma is
// Gamma, or 1 with probability JumpProb, which lets a walker jump between
// modes that are translates of each other (ter Braak 2006, section 2). The
// move is symmetric, so the acceptance is min(1, p(y)/p(x)). Use
// DefaultDiffEvolution for the published settings.
type DiffEvolution struct {
	Gamma    float64 // step factor; ter Braak (2006) recommends 2.38/sqrt(2d)
	JumpProb float64 // probability of gamma = 1
	Noise    float64 // standard deviation of the small jitter e
}

// DefaultDiffEvolution returns the differential-evolution move with ter Braak's
// (2006) settings for dimension dim: Gamma = 2.38/sqrt(2 dim),
// JumpProb = 0.1, and a jitter of 1e-6 (small against any posterior width of
// order one; the jitter only has to make the chain irreducible).
func DefaultDiffEvolution(dim int) DiffEvolution {
	if dim < 1 {
		dim = 1
	}
	return DiffEvolution{Gamma: 2.38 / math.Sqrt(2*float64(dim)), JumpProb: 0.1, Noise: 1e-6}
}

// Propose implements Move.
func (m DiffEvolution) Propose(r *rand.Rand, x, others []float64, n int, y []float64) float64 {
	d := len(x)
	j := r.IntN(n)
	k := r.IntN(n - 1)
	if k >= j {
		k++
	}
	g := m.Gamma
	if m.JumpProb > 0 && r.Float64() < m.JumpProb {
		g = 1
	}
	xj := others[j*d : j*d+d]
	xk := others[k*d : k*d+d]
	for i := range d {
		y[i] = x[i] + g*(xj[i]-xk[i])
		if m.Noise > 0 {
			y[i] += m.Noise * r.NormFloat64()
		}
	}
	return 0
}

// Partners implements Partnered: the move takes the difference of two
// distinct walkers.
func (DiffEvolution) Partners() int { return 2 }

// Validate implements Validator: Gamma finite and > 0, JumpProb in [0, 1],
// Noise finite and >= 0.
func (m DiffEvolution) Validate() error {
	switch {
	case !(m.Gamma > 0) || math.IsInf(m.Gamma, 0):
		return fmt.Errorf("differential-evolution Gamma must be finite and > 0, got %v", m.Gamma)
	case !(m.JumpProb >= 0 && m.JumpProb <= 1):
		return fmt.Errorf("differential-evolution JumpProb must be in [0, 1], got %v", m.JumpProb)
	case !(m.Noise >= 0) || math.IsInf(m.Noise, 0):
		return fmt.Errorf("differential-evolution Noise must be finite and >= 0, got %v", m.Noise)
	}
	return nil
}

// minOthers is the number of complementary walkers a move needs.
func minOthers(m Move) int {
	if p, ok := m.(Partnered); ok {
		return max(p.Partners(), 1)
	}
	return 1
}

// moveKey describes a move mixture for checkpoint compatibility checks.
func moveKey(moves []WeightedMove) string {
	s := ""
	for i, m := range moves {
		s += fmt.Sprintf("%d:%T%+v@%v;", i, m.Move, m.Move, m.Weight)
	}
	return s
}
