package runconfig

import (
	"fmt"

	"tautline/sampler"
)

// CheckSampler refuses sampler settings that could only fail after the
// sampling: no steps, a burn-in that keeps nothing, a negative thinning,
// too few walkers, negative intervals. The messages name the flags; the
// command reports them as command-line errors.
func (c Config) CheckSampler() error {
	sc := c.Sampler
	switch {
	case sc.Steps <= 0:
		return fmt.Errorf("--steps must be > 0, got %d", sc.Steps)
	case sc.Burn < -1:
		return fmt.Errorf("--burn must be >= 0, or -1 to choose it, got %d", sc.Burn)
	case sc.Burn >= sc.Steps:
		return fmt.Errorf("--burn %d keeps none of --steps %d", sc.Burn, sc.Steps)
	case sc.Thin < 0:
		return fmt.Errorf("--thin must be >= 0 (0 chooses it), got %d", sc.Thin)
	case sc.Walkers < 2:
		return fmt.Errorf("--walkers must be at least 2 x the number of sampled parameters, got %d", sc.Walkers)
	case sc.CheckpointEvery < 0 || c.Output.FlushEvery < 0:
		return fmt.Errorf("--checkpoint-every and --flush-every must be >= 0")
	}
	return nil
}

// SamplerConfig turns the sampler keys into the ensemble's configuration
// for a target of dim sampled parameters: the move mixture (--moves, read
// by sampler.ParseMoves) and, with more than one temperature, the
// geometric ladder of --temperatures rungs down to --beta-min. fingerprint
// identifies the run in its checkpoints (Fingerprint). The messages name
// the flags.
func (c Config) SamplerConfig(dim int, fingerprint string) (sampler.Config, error) {
	sc := c.Sampler
	moves, err := sampler.ParseMoves(sc.Moves, dim)
	if err != nil {
		return sampler.Config{}, fmt.Errorf("--moves %q: %v", sc.Moves, err)
	}
	out := sampler.Config{Walkers: sc.Walkers, Seed: sc.Seed, Moves: moves, Workers: sc.Workers, Fingerprint: fingerprint}
	if n := sc.Temperatures; n > 1 {
		if out.Betas, err = sampler.GeometricLadder(n, sc.BetaMin); err != nil {
			return sampler.Config{}, fmt.Errorf("--temperatures %d --beta-min %g: %v", n, sc.BetaMin, err)
		}
	} else if n < 1 {
		return sampler.Config{}, fmt.Errorf("--temperatures must be >= 1, got %d", n)
	}
	return out, nil
}
