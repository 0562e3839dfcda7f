package sampler

import (
	"fmt"
	"math"
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
// > 1; A = 2 is the value recommended by the authors.
type Stretch struct {
	A float64
}

// Propose implements Move.
func (m Stretch) Propose(r *rand.Rand, x, others []float64, n int, y []float64) float64 {
	d := len(x)
	j := r.IntN(n)
	xj := others[j*d : j*d+d]
	// Inverse CDF of g: z = ((A-1)u + 1)^2 / A.
	u := r.Float64()
	s := (m.A-1)*u + 1
	z := s * s / m.A
	for k := range d {
		y[k] = xj[k] + z*(x[k]-xj[k])
	}
	return float64(d-1) * math.Log(z)
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
