package compare

import (
	"fmt"
	"runtime"
	"slices"

	"tautline/internal/budget"
	"tautline/sampler"
)

// CheckSize refuses a ladder of more than sampler.MaxRungs rungs, and a comparison whose units would need more memory or
// disk than caps allow, before any is run. dims are the models' numbers of
// free parameters, in Problem order. A unit's memory is
// sampler.Footprint.Peak of its rung block (walkers x steps x (parameters +
// rungs in the block) x 8 bytes of history, held three times while the
// evidence and the part files are made from it, plus the ensemble); the
// units run side by side (Workers, default every CPU) add up. With an
// error target the caps MaxSteps and MaxRungs are what a unit may reach.
// Disk is every unit's lnl.npy and posterior.npy. The error wraps
// budget.ErrTooLarge and names the options.
func (s Settings) CheckSize(dims []int, caps budget.Caps) error {
	steps, rungs := s.Steps, s.Rungs
	if s.ErrorTarget > 0 {
		steps, rungs = max(steps, s.MaxSteps), max(rungs, s.MaxRungs)
	}
	if rungs > sampler.MaxRungs {
		flag := "--rungs"
		if rungs != s.Rungs {
			flag = "--max-rungs"
		}
		return fmt.Errorf("%w: %s %d is more than the %d rungs a ladder may have", budget.ErrTooLarge, flag, rungs, sampler.MaxRungs)
	}
	blocks := max(s.Blocks, 1)
	perBlock := (rungs + blocks - 1) / blocks
	var peaks []float64
	disk := 0.0
	for i, d := range dims {
		for b := range blocks {
			if s.Task >= 0 && (i*blocks+b)%max(s.Tasks, 1) != s.Task {
				continue
			}
			f := sampler.Footprint{Walkers: s.Walkers, Dim: d, Rungs: perBlock, Steps: steps}
			peaks = append(peaks, f.Peak())
			disk += float64(steps)*float64(s.Walkers)*float64(perBlock)*8 + float64(steps)*float64(s.Walkers)*float64(d)*8
		}
	}
	par := s.Workers
	if par <= 0 {
		par = runtime.GOMAXPROCS(0)
	}
	par = max(1, min(par, len(peaks)))
	slices.Sort(peaks)
	slices.Reverse(peaks)
	mem := 0.0
	for _, p := range peaks[:min(par, len(peaks))] {
		mem += p
	}
	what := fmt.Sprintf("--walkers %d x --rungs %d (%d a block) x --steps %d, %d unit(s) at once", s.Walkers, rungs, perBlock, steps, par)
	if err := caps.CheckMemory(mem, what); err != nil {
		return fmt.Errorf("%w; each unit keeps walkers x steps x (parameters + rungs) x 8 bytes of history: lower --walkers, --steps or --rungs, or run fewer units at once (--workers)", err)
	}
	if err := caps.CheckDisk(disk, what); err != nil {
		return fmt.Errorf("%w (the ln L of every rung, walker and step, 8 bytes each): lower --walkers, --steps or --rungs, or choose another --out", err)
	}
	return nil
}
