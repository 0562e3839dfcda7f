package sampler

// Footprint estimates, before anything is allocated, the memory an
// Ensemble and the History of Run take, and the size of its checkpoint.
// All sizes are in bytes and held as float64, so that absurd settings
// (a billion walkers) give a large number rather than an overflow.
type Footprint struct {
	// Walkers per rung, Dim (free parameters), Rungs (temperatures), and
	// Steps recorded by Run.
	Walkers, Dim, Rungs, Steps int
}

// MaxRungs is the most rungs a ladder may have: every rung is a whole
// ensemble stepped at every step, and the rungs a ladder needs grow only
// as the square root of the dimension times ln(1/beta_min) (common
// practice: tens of rungs serve tens of parameters), so 4096 is far above
// any useful ladder while a million would cost hours before one step of the
// cold chain is worth anything.
const MaxRungs = 4096

// pcgEncoded is the size of one PCG stream in a checkpoint: its 20-byte
// binary form and an 8-byte length.
const pcgEncoded = 28

// State is the ensemble itself: per walker and rung the position and the
// proposal scratch (2 x Dim values), ln prior, ln likelihood, ln posterior
// and the acceptance count (4 values), at 8 bytes each, a PCG stream with
// its generator and the headers of the walker's two rows (about 88
// bytes); and the tables of the stretch move's logarithms (stateTables).
func (f Footprint) State() float64 {
	return float64(f.Rungs)*float64(f.Walkers)*(float64(2*f.Dim+4)*8+88) + stateTables
}

// stateTables bounds the bytes of an Ensemble's stretchTable and uTable.
const stateTables = 18 << 10

// History is what Run keeps after Steps steps: the cold rung's positions
// and every rung's ln likelihood, Steps x Walkers x (Dim + Rungs) x 8.
func (f Footprint) History() float64 {
	return float64(f.Steps) * float64(f.Walkers) * float64(f.Dim+f.Rungs) * 8
}

// Checkpoint bounds the length of MarshalBinary's output: every rung's
// positions and four per-walker arrays, the random streams, and 4 kB for
// the header, ladder counters and lengths (plus 8 bytes per rung for the
// ladder and swap counters). The history is not in it (it is read back
// from the chain on resume), so the bound does not grow with Steps.
func (f Footprint) Checkpoint() float64 {
	perRung := float64(f.Walkers)*(float64(f.Dim+4)*8+pcgEncoded) + 6*8 + 4*8
	return float64(f.Rungs)*perRung + 4096
}

// Peak is the largest memory a run holds: the state and three copies of
// the history, since encoding a checkpoint (or, in a comparison, the
// evidence and the part files) copies it twice while it is still held.
func (f Footprint) Peak() float64 { return f.State() + 3*f.History() }

// Evaluations is the number of density evaluations of Steps steps.
func (f Footprint) Evaluations() float64 {
	return float64(f.Steps) * float64(f.Walkers) * float64(f.Rungs)
}
