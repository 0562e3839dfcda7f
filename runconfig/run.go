package runconfig

import (
	"encoding/json"
	"errors"
	"fmt"
	"path/filepath"
	"slices"
	"strings"

	"tautline/compare"
	"tautline/models/registry"
	"tautline/rundir"
	"tautline/sampler"
)

// RunConfigs decodes the configuration each model of run recorded (over
// Default, so that keys added since the run keep their defaults). An
// error names the file it came from.
func RunConfigs(run *rundir.Run) (map[*rundir.Model]Config, error) {
	out := map[*rundir.Model]Config{}
	for _, m := range run.Models {
		cfg := Default()
		if err := json.Unmarshal(m.Config, &cfg); err != nil {
			if run.Kind == rundir.KindFit {
				return nil, fmt.Errorf("%s: config: %w", filepath.Join(run.Dir, rundir.MetaFile), err)
			}
			return nil, fmt.Errorf("%s: part.json of model %s: config: %w", run.Dir, m.Name, err)
		}
		out[m] = cfg
	}
	return out, nil
}

// CheckCompare refuses a comparison of the models (as listed by the
// --models option, list) against reference with the ladder settings s
// before anything is loaded: an error target with a split ladder, an
// unknown model, sampler settings CheckSampler refuses, a reference not
// compared, a ladder sampler.PowerLadder refuses, or more blocks than
// rungs. The messages name the compare command's options.
func (c Config) CheckCompare(models []string, list, reference string, s compare.Settings) error {
	if s.ErrorTarget > 0 && s.Blocks > 1 {
		return errors.New("--evidence-error needs the whole ladder in one block (--rung-blocks 1)")
	}
	for _, m := range models {
		if !slices.Contains(registry.Names(), m) {
			return fmt.Errorf("--models: unknown model %q; want some of %s", m, strings.Join(registry.Names(), ", "))
		}
	}
	if err := c.CheckSampler(); err != nil {
		return err
	}
	if !slices.Contains(models, reference) {
		return fmt.Errorf("--reference %q is not among --models %s", reference, list)
	}
	if _, err := sampler.PowerLadder(s.Rungs, s.Exponent); err != nil {
		return fmt.Errorf("--rungs/--ladder-exponent: %v", err)
	}
	if s.Blocks < 1 || s.Blocks > s.Rungs {
		return fmt.Errorf("--rung-blocks must be between 1 and --rungs (%d), got %d", s.Rungs, s.Blocks)
	}
	return nil
}

// ComparisonID hashes everything that decides a comparison's result: the
// data (dataSHA), the configuration c, the models (as listed by the
// --models option), the reference and the ladder, error-target and
// prior-mass settings of s, but not the --tasks split, the workers or where
// the output goes. The text hashed is fixed, so that parts written by
// earlier versions keep their identity.
func (c Config) ComparisonID(list, reference string, s compare.Settings, dataSHA string) string {
	c.Output, c.Sampler.Workers = OutputConfig{}, 0
	key := fmt.Sprintf("{models:%s reference:%s rungs:%d exponent:%v blocks:%d target:%v maxSteps:%d maxRungs:%d task:0 tasks:0 swapEvery:%d adapt:%t cmdline: priorDraws:%d}",
		list, reference, s.Rungs, s.Exponent, s.Blocks, s.ErrorTarget, s.MaxSteps, s.MaxRungs, s.SwapEvery, s.AdaptLadder, s.PriorDraws)
	return rundir.Fingerprint(dataSHA, fmt.Sprintf("%s\n%s", Marshal(c), key))
}
