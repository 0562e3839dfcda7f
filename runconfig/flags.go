package runconfig

import (
	"flag"
	"strings"

	"tautline/likelihood/simulate"
	"tautline/models/gw"
)

// Demos lists the embedded simulated demo data sets, as named after
// "demo:".
func Demos() []string { return []string{"smbhb", "strings", "pair-a", "pair-b"} }

// dataHelp is the help of --data.
func dataHelp(tail string) string {
	return "free-spectrum data set: path to its YAML description, or demo:NAME for an embedded simulated demo (NAME: " +
		strings.Join(Demos(), ", ") + "); repeat it for several data sets, whose likelihoods multiply: " +
		"that treats them as independent, an approximation when the arrays share pulsars" + tail
}

const binsHelp = "use only some frequency bins: SPEC for every data set, or NAME=SPEC for the data set of that name (or 1-based position); " +
	"SPEC is 1-5, 1,3,7-9 or lowest:5; repeatable"

// dataFlag is the repeatable --data: the first use on the command line
// replaces the configuration's list, later ones add to it.
type dataFlag struct {
	list *DataList
	set  bool
}

func (f *dataFlag) String() string {
	if f.list == nil {
		return ""
	}
	return f.list.String()
}

func (f *dataFlag) Set(v string) error {
	if !f.set {
		*f.list, f.set = nil, true
	}
	*f.list = append(*f.list, v)
	return nil
}

// binsFlag is the repeatable --bins (see Config.SetBins).
type binsFlag struct{ cfg *Config }

func (f binsFlag) String() string     { return "" }
func (f binsFlag) Set(v string) error { return f.cfg.SetBins(v) }

// bindData registers --data and --bins.
func bindData(fs *flag.FlagSet, cfg *Config, tail string) {
	fs.Var(&dataFlag{list: &cfg.Data}, "data", dataHelp(tail))
	fs.Var(binsFlag{cfg}, "bins", binsHelp)
}

// BindFit registers on fs a flag for every key of cfg that fit uses, with
// cfg's values as the defaults; parsing writes into cfg.
func BindFit(fs *flag.FlagSet, cfg *Config) {
	bindData(fs, cfg, "; none picks the demo that suits --model")
	fs.StringVar(&cfg.Model.Name, "model", cfg.Model.Name, "model: smbhb, strings, or strings+smbhb")
	bindModelSettings(fs, cfg)
	fs.StringVar(&cfg.Likelihood.Bandwidth, "bandwidth", cfg.Likelihood.Bandwidth, "KDE bandwidth rule for bins given as samples: scott or silverman")
	bindSampler(fs, cfg, false)
	fs.StringVar(&cfg.Sampler.Until, "until", cfg.Sampler.Until, "stop when all criteria hold, e.g. ess=5000,tau=50,rhat=1.01 (effective sample size, chain length in autocorrelation times, split R-hat); --steps is then the cap")
	fs.StringVar(&cfg.Sampler.Moves, "moves", cfg.Sampler.Moves, "ensemble moves: stretch, de (differential evolution), or a weighted mix such as stretch:0.8,de:0.2")
	fs.IntVar(&cfg.Sampler.CheckpointEvery, "checkpoint-every", cfg.Sampler.CheckpointEvery, "steps between checkpoints (0 disables them)")
	fs.IntVar(&cfg.Sampler.Temperatures, "temperatures", cfg.Sampler.Temperatures, "parallel-tempering rungs, geometric in beta from 1 to --beta-min, swapping walkers every step; helps multimodal posteriors mix; only the beta = 1 rung is written (1: no tempering)")
	fs.Float64Var(&cfg.Sampler.BetaMin, "beta-min", cfg.Sampler.BetaMin, "inverse temperature of the hottest rung with --temperatures")
	fs.StringVar(&cfg.Output.Dir, "out", cfg.Output.Dir, "output folder for chains and metadata; empty means runs/fit-MODEL")
	fs.IntVar(&cfg.Output.FlushEvery, "flush-every", cfg.Output.FlushEvery, "steps between requests to write chain.csv and start its writeback to disk, made without waiting (1: write and fsync at every step, waiting); if the process dies it loses at most these steps plus those queued for the writer (at most 4 MiB of values, about 4,000 steps of 32 walkers and 2 parameters); checkpoints always fsync and wait, so a crash of the machine loses at most the steps after the last checkpoint, from which --resume continues")
}

// BindCompare registers the flags of the keys compare uses: not the model
// (compare takes --models), nor --until, the moves, checkpoints or
// flushing, which compare does not use.
func BindCompare(fs *flag.FlagSet, cfg *Config) {
	bindData(fs, cfg, "")
	bindModelSettings(fs, cfg)
	fs.StringVar(&cfg.Likelihood.Bandwidth, "bandwidth", cfg.Likelihood.Bandwidth, "KDE bandwidth rule for bins given as samples: scott or silverman")
	bindSampler(fs, cfg, true)
	fs.StringVar(&cfg.Output.Dir, "out", cfg.Output.Dir, "output folder of the comparison")
}

// BindModel registers the flags that choose the model and configure it
// and the background cosmology (simulate, spectrum).
func BindModel(fs *flag.FlagSet, cfg *Config) {
	fs.StringVar(&cfg.Model.Name, "model", cfg.Model.Name, "model: smbhb, strings, or strings+smbhb")
	bindModelSettings(fs, cfg)
}

// bindModelSettings registers the models' fixed settings and the
// background cosmology.
func bindModelSettings(fs *flag.FlagSet, cfg *Config) {
	fs.BoolVar(&cfg.Model.FixGamma, "fix-gamma", cfg.Model.FixGamma, "fix the SMBHB spectral index gamma to 13/3 (circular GW-driven binaries)")
	fs.StringVar(&cfg.Model.Turnover, "turnover", cfg.Model.Turnover, "SMBHB low-frequency turnover (environmental hardening), h_c x (1 + (f_bend/f)^kappa)^(-1/2): none, fixed (at --f-bend and --turnover-kappa) or fit (log10_fbend and kappa sampled)")
	fs.Float64Var(&cfg.Model.FBend, "f-bend", cfg.Model.FBend, "fixed turnover bend frequency in Hz (with --turnover fixed)")
	fs.Float64Var(&cfg.Model.TurnoverKappa, "turnover-kappa", cfg.Model.TurnoverKappa, "fixed turnover shape exponent (with --turnover fixed; 0 means 10/3)")
	fs.Float64Var(&cfg.Model.Strings.Q, "q", cfg.Model.Strings.Q, "string-loop emission spectral index: 4/3 cusps, 5/3 kinks, 2 kink-kink collisions (dimensionless)")
	fs.Float64Var(&cfg.Model.Strings.Gamma, "gamma-loop", cfg.Model.Strings.Gamma, "total GW power of a loop in units of G mu^2")
	fs.Float64Var(&cfg.Model.Strings.F, "f-large", cfg.Model.Strings.F, "fraction of loop-production energy going into large loops")
	fs.StringVar(&cfg.Model.Strings.CEff, "loop-production", cfg.Model.Strings.CEff, "loop-production efficiency C_eff: vos (velocity-dependent one-scale equations) or step (5.4 before matter-radiation equality, 0.39 after)")
	fs.Float64Var(&cfg.Model.Strings.Kappa, "kappa", cfg.Model.Strings.Kappa, "loop density scales as P^(-kappa) with the reconnection probability P")
	fs.IntVar(&cfg.Model.Strings.Modes, "modes", cfg.Model.Strings.Modes, "number of loop harmonics summed; 0 adds the N -> infinity tail")
	fs.StringVar(&cfg.Model.Strings.DOF, "dof", cfg.Model.Strings.DOF, "relativistic degrees of freedom: standard-model or constant")
	fs.Float64Var(&cfg.Model.Strings.Alpha, "string-alpha", cfg.Model.Strings.Alpha, "loop size at birth as a fraction of cosmic time, fixed in strings-metastable (dimensionless)")
	fs.Float64Var(&cfg.Model.Strings.P, "string-p", cfg.Model.Strings.P, "reconnection probability, fixed in strings-metastable (0 < P <= 1)")
	fs.BoolVar(&cfg.Model.Strings.Direct, "direct", cfg.Model.Strings.Direct, "evaluate the string spectrum by direct quadrature instead of the certified table (slow; for checks)")
	fs.Float64Var(&cfg.Cosmology.H0, "h0", cfg.Cosmology.H0, "Hubble constant in km/s/Mpc")
	fs.Float64Var(&cfg.Cosmology.OmegaM, "omega-m", cfg.Cosmology.OmegaM, "matter density parameter today")
	fs.Float64Var(&cfg.Cosmology.TCMB, "t-cmb", cfg.Cosmology.TCMB, "CMB temperature today in K")
	fs.Float64Var(&cfg.Cosmology.Neff, "n-eff", cfg.Cosmology.Neff, "effective number of neutrino species")
}

// bindSampler registers the sampler flags fit and compare share; compare's
// steps count per rung and its burn-in is a fixed share.
func bindSampler(fs *flag.FlagSet, cfg *Config, compare bool) {
	if compare {
		fs.IntVar(&cfg.Sampler.Walkers, "walkers", cfg.Sampler.Walkers, "walkers per rung (at least 2 x the number of sampled parameters, even)")
		fs.IntVar(&cfg.Sampler.Steps, "steps", cfg.Sampler.Steps, "ensemble steps of every rung")
		fs.IntVar(&cfg.Sampler.Burn, "burn", cfg.Sampler.Burn, "steps of every rung discarded as burn-in; -1 discards the first quarter")
		fs.IntVar(&cfg.Sampler.Thin, "thin", cfg.Sampler.Thin, "keep every n-th step in the beta = 1 posterior samples; 0 chooses from the autocorrelation time")
		fs.Uint64Var(&cfg.Sampler.Seed, "seed", cfg.Sampler.Seed, "random seed; the same seed gives byte-identical results, in one process or split into tasks")
		fs.IntVar(&cfg.Sampler.Workers, "workers", cfg.Sampler.Workers, "(model, rung block) units run side by side; 0 uses every CPU (results do not depend on it)")
		return
	}
	fs.IntVar(&cfg.Sampler.Walkers, "walkers", cfg.Sampler.Walkers, "number of ensemble walkers (at least 2 x the number of sampled parameters, even)")
	fs.IntVar(&cfg.Sampler.Steps, "steps", cfg.Sampler.Steps, "number of ensemble steps; with --until, the cap on steps (100000 when --until is given and --steps is not)")
	fs.IntVar(&cfg.Sampler.Burn, "burn", cfg.Sampler.Burn, "steps discarded as burn-in in the summary; -1 chooses 5 autocorrelation times or a tenth of the run, whichever is longer")
	fs.IntVar(&cfg.Sampler.Thin, "thin", cfg.Sampler.Thin, "keep every n-th step in the posterior samples; 0 chooses from the autocorrelation time")
	fs.Uint64Var(&cfg.Sampler.Seed, "seed", cfg.Sampler.Seed, "random seed; the same seed gives byte-identical chains")
	fs.IntVar(&cfg.Sampler.Workers, "workers", cfg.Sampler.Workers, "goroutines evaluating walkers; 0 uses every CPU (results do not depend on it)")
}

// ArrayFlags are the options of an invented timing array (simulate,
// calibrate), in the units a user gives them.
type ArrayFlags struct {
	Pulsars, Bins                int
	SpanYr, CadenceDays, SigmaNs float64
}

// BindArray registers the invented array's options: --pulsars, --span-yr,
// --cadence-days, --sigma-ns and --bins.
func BindArray(fs *flag.FlagSet) *ArrayFlags {
	a := &ArrayFlags{}
	fs.IntVar(&a.Pulsars, "pulsars", 40, "number of invented pulsars")
	fs.Float64Var(&a.SpanYr, "span-yr", 15, "observing span T in years (bins at f_i = i/T)")
	fs.Float64Var(&a.CadenceDays, "cadence-days", 14, "days between observations of each pulsar")
	fs.Float64Var(&a.SigmaNs, "sigma-ns", 500, "white timing noise per observation, rms, in nanoseconds")
	fs.IntVar(&a.Bins, "bins", 15, "number of frequency bins")
	return a
}

// Array converts the options to SI units.
func (a ArrayFlags) Array() simulate.Array {
	return simulate.Array{Pulsars: a.Pulsars, Span: a.SpanYr * gw.JulianYear, Cadence: a.CadenceDays * 86400,
		Sigma: a.SigmaNs * 1e-9, Bins: a.Bins}
}
