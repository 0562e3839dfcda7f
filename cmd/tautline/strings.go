package main

import (
	"errors"
	"runtime"

	"tautline/models"
	"tautline/models/cosmicstrings"
)

// stringSettings turns the configuration into the string model's settings.
func stringSettings(cfg Config) cosmicstrings.Settings {
	s := cosmicstrings.DefaultSettings()
	sc := cfg.Model.Strings
	s.Q, s.Gamma, s.F, s.Kappa, s.CEff, s.Modes = sc.Q, sc.Gamma, sc.F, sc.Kappa, sc.CEff, sc.Modes
	s.Cosmology.H0, s.Cosmology.OmegaM, s.Cosmology.DOF = cfg.Cosmology.H0, cfg.Cosmology.OmegaM, sc.DOF
	s.Cosmology.TCMB, s.Cosmology.Neff = cfg.Cosmology.TCMB, cfg.Cosmology.Neff
	return s
}

// buildStrings returns the string-network model: the certified table for
// the configured settings (embedded when they are the defaults, else from
// the user cache, else built in parallel and cached), or the direct
// quadrature with --direct and for the step C_eff, whose kink a table would
// smooth over.
func buildStrings(cfg Config, logf func(string, ...any)) (models.Model, error) {
	if logf == nil {
		logf = func(string, ...any) {}
	}
	s := stringSettings(cfg)
	if cfg.Model.Strings.Direct || s.CEff == cosmicstrings.CEffStep {
		if !cfg.Model.Strings.Direct {
			logf("loop_production step: using the direct quadrature (slow), since a table would smooth the step's kink")
		}
		return cosmicstrings.NewDirectModel(s)
	}
	last := -1
	t, err := cosmicstrings.LoadTable(s, "", cosmicstrings.BuildOptions{
		Workers: runtime.NumCPU(), Seed: 1,
		Progress: func(done, total int) {
			if pct := 10 * done / total; pct != last {
				last = pct
				logf("building the string-spectrum table for these settings: %d%% (%d of %d nodes)", 10*pct, done, total)
			}
		},
	})
	if errors.Is(err, cosmicstrings.ErrCacheWrite) && t != nil {
		logf("warning: %v (the table is used but will be rebuilt next time)", err)
		err = nil
	}
	if err != nil {
		return nil, err
	}
	if last >= 0 {
		logf("string table certified: %s", t.Certificate())
	}
	return cosmicstrings.NewModel(t), nil
}
