package runconfig

import "fmt"

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
