package fitrun

import (
	"fmt"
	"time"

	"tautline/internal/budget"
	"tautline/sampler"
)

// chainValueBytes is the room one value takes in chain.csv: the shortest
// decimal that reads back to the same float64 has at most 17 significant
// digits, a sign, a point, an exponent such as e-308 and the comma; 21
// bytes is the typical width of a sampled value (an integer step or walker
// index takes less).
const chainValueBytes = 21

// LongRun is the estimated sampling time above which a run without
// checkpoints is warned about: a kill would lose all of it.
const LongRun = 10 * time.Minute

// Footprint is the sampler's size estimate for a fit of dim free
// parameters under s.
func (s Settings) Footprint(dim int) sampler.Footprint {
	return sampler.Footprint{Walkers: s.Sampler.Walkers, Dim: dim, Rungs: max(len(s.Sampler.Betas), 1), Steps: s.Steps}
}

// ChainBytes estimates the length of chain.csv after s.Steps steps: one
// row per walker and step holding step, walker, ln_post, ln_like and the
// dim parameters.
func (s Settings) ChainBytes(dim int) float64 {
	return float64(s.Steps) * float64(s.Sampler.Walkers) * float64(dim+4) * chainValueBytes
}

// CheckSize refuses a ladder of more than sampler.MaxRungs rungs, and settings whose fit would need more memory than
// caps.Memory (the estimate is sampler.Footprint.Peak: the ensemble and
// three copies of the history, walkers x steps x (parameters +
// temperatures) x 8 bytes, since encoding the checkpoint copies it twice),
// or more disk than caps.Disk for chain.csv and the checkpoint. The error
// wraps budget.ErrTooLarge, gives the estimate and names the options.
func (s Settings) CheckSize(dim int, caps budget.Caps) error {
	f := s.Footprint(dim)
	if f.Rungs > sampler.MaxRungs {
		return fmt.Errorf("%w: --temperatures %d is more than the %d rungs a ladder may have", budget.ErrTooLarge, f.Rungs, sampler.MaxRungs)
	}
	what := fmt.Sprintf("--walkers %d x --temperatures %d x --steps %d with %d parameters", f.Walkers, f.Rungs, f.Steps, dim)
	if err := caps.CheckMemory(f.Peak(), what); err != nil {
		return fmt.Errorf("%w; the sampler keeps walkers x steps x (parameters + temperatures) x 8 bytes of history, copied twice while a checkpoint is written: lower --walkers, --steps or --temperatures", err)
	}
	if err := caps.CheckDisk(s.ChainBytes(dim)+f.Checkpoint(), what); err != nil {
		return fmt.Errorf("%w (chain.csv holds a row of %d values per walker and step, and the checkpoint the history): lower --walkers or --steps, or choose another --out", err, dim+4)
	}
	return nil
}

// warnLong warns, through rep.Warnf, when a run without checkpoints is
// estimated to sample for longer than LongRun; perEval is the measured
// time of one density evaluation.
func (s Settings) warnLong(dim int, perEval time.Duration, done int) {
	if s.CheckpointEvery > 0 || s.Reporter.Warnf == nil || perEval <= 0 {
		return
	}
	f := s.Footprint(dim)
	f.Steps = max(s.Steps-done, 0)
	est := f.Evaluations() * perEval.Seconds()
	if est > LongRun.Seconds() {
		s.Reporter.Warnf("no checkpoints (--checkpoint-every 0): %.3g density evaluations of about %v each, some %.3g hours on one core; a kill loses the whole run",
			f.Evaluations(), perEval, est/3600)
	}
}

// checkpointSlack is the room a checkpoint limit leaves above the
// sampler's encoding: rundir's framing (magic, two lengths, CRC: 36 bytes)
// and the fingerprint string, with a wide margin.
const checkpointSlack = 1 << 20

// checkpointLimit is the largest checkpoint.bin that s can have written:
// twice the sampler's bound (which does not depend on the steps, since the
// history is read back from the chain) plus checkpointSlack.
func (s Settings) checkpointLimit(dim int) int64 {
	b := 2*s.Footprint(dim).Checkpoint() + checkpointSlack
	if b > 1<<62 {
		return 1 << 62
	}
	return int64(b)
}
