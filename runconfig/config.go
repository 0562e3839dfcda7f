// Package runconfig is the configuration of a tautline run: the YAML schema
// (Config and its sections), the defaults of fit and compare, decoding that
// refuses unknown keys with their line number and the keys accepted there,
// the YAML rendering stored in every run's metadata and printed by
// --print-config, the fingerprint that identifies a chain, and the
// command-line flags that override the keys. It also turns a configuration
// into the problem a run samples: the data sets it names, loaded and cut to
// the selected bins (LoadData), joined with the model into the product of
// their free-spectrum likelihoods (LoadProblem, likelihood.Joint), and the
// records of those data sets in the run metadata (DataIdentity,
// DataRecords).
package runconfig

import (
	"bytes"
	"errors"
	"fmt"
	"path/filepath"
	"reflect"
	"sort"
	"strings"

	"gopkg.in/yaml.v3"

	"tautline/compare"
	"tautline/internal/safeio"
	"tautline/models/registry"
	"tautline/rundir"
)

// Config is a run's full configuration. Every key has a default (see
// Default), may be set in a YAML file given with --config, and may be
// overridden by a flag of the same meaning. The resolved configuration is
// printed by --print-config and stored in every run's metadata.
type Config struct {
	// Data are the free-spectrum data sets: paths to their YAML
	// descriptions, or "demo:NAME" for an embedded simulated demo. In YAML
	// one data set is a string and several a list; their likelihoods
	// multiply (the data sets are treated as independent).
	Data DataList `yaml:"data"`
	// Bins selects frequency bins of the data sets (see Bins); empty uses
	// every bin of every data set.
	Bins       Bins             `yaml:"bins,omitempty" json:",omitempty"`
	Model      ModelConfig      `yaml:"model"`
	Likelihood LikelihoodConfig `yaml:"likelihood"`
	Cosmology  CosmologyConfig  `yaml:"cosmology"`
	Sampler    SamplerConfig    `yaml:"sampler"`
	Output     OutputConfig     `yaml:"output"`
}

// ModelConfig chooses the model and its priors.
type ModelConfig struct {
	// Name is smbhb, strings, or strings+smbhb.
	Name string `yaml:"name"`
	// Priors maps a parameter name to a prior, e.g. "uniform(-18, -11)";
	// parameters not listed keep the model's default prior.
	Priors map[string]string `yaml:"priors"`
	// FixGamma fixes the SMBHB spectral index to 13/3.
	FixGamma bool `yaml:"fix_gamma"`
	// Turnover adds the SMBHB low-frequency bend: none, fixed (at FBend and
	// TurnoverKappa) or fit (parameters log10_fbend and kappa sampled).
	Turnover string `yaml:"turnover"`
	// FBend is the fixed bend frequency in Hz.
	FBend float64 `yaml:"f_bend_hz"`
	// TurnoverKappa is the fixed shape exponent of the bend (0: 10/3).
	TurnoverKappa float64 `yaml:"turnover_kappa"`
	// Strings holds the string-network settings.
	Strings StringsConfig `yaml:"strings"`
}

// StringsConfig holds the fixed settings of the string-network model.
type StringsConfig struct {
	// Q is the emission spectral index: 4/3 cusps, 5/3 kinks, 2 kink-kink.
	Q float64 `yaml:"q"`
	// Gamma is the total loop GW power in units of G mu^2.
	Gamma float64 `yaml:"gamma_loop"`
	// F is the fraction of loop-production energy in large loops.
	F float64 `yaml:"f_large"`
	// CEff is "vos" or "step".
	CEff string `yaml:"loop_production"`
	// Kappa sets the loop density's dependence P^(-kappa).
	Kappa float64 `yaml:"kappa"`
	// Modes is the number of harmonics summed; 0 adds the N -> infinity tail.
	Modes int `yaml:"modes"`
	// DOF is "standard-model" or "constant".
	DOF string `yaml:"dof"`
	// Direct evaluates the spectrum by quadrature instead of the table.
	Direct bool `yaml:"direct"`
	// Alpha is the loop size at birth as a fraction of cosmic time, fixed
	// in the metastable model (strings-metastable), which samples log10_Gmu
	// and sqrt_kappa_m instead.
	Alpha float64 `yaml:"alpha"`
	// P is the reconnection probability, fixed in the metastable model.
	P float64 `yaml:"p"`
}

// LikelihoodConfig sets how per-bin densities are built.
type LikelihoodConfig struct {
	// Bandwidth is the KDE bandwidth rule for sample bins: scott or silverman.
	Bandwidth string `yaml:"bandwidth"`
}

// CosmologyConfig holds the background parameters.
type CosmologyConfig struct {
	// H0 is the Hubble constant in km/s/Mpc.
	H0 float64 `yaml:"h0"`
	// OmegaM is the matter density today.
	OmegaM float64 `yaml:"omega_m"`
	// TCMB is the CMB temperature today in K.
	TCMB float64 `yaml:"t_cmb"`
	// Neff is the effective number of neutrino species.
	Neff float64 `yaml:"n_eff"`
}

// SamplerConfig sets the ensemble sampler.
type SamplerConfig struct {
	// Walkers is the ensemble size (per rung in compare).
	Walkers int `yaml:"walkers"`
	// Steps is the number of ensemble steps (per rung in compare).
	Steps int `yaml:"steps"`
	// Burn is the number of steps discarded as burn-in; -1 chooses it.
	Burn int `yaml:"burn"`
	// Thin keeps every Thin-th step in the posterior samples; 0 chooses it.
	Thin int `yaml:"thin"`
	// Seed is the run's random seed.
	Seed uint64 `yaml:"seed"`
	// Workers is the number of goroutines; 0 uses every CPU. Results do
	// not depend on it.
	Workers int `yaml:"workers"`
	// Until holds stopping criteria such as "ess=5000,rhat=1.01"; when set,
	// Steps is the cap.
	Until string `yaml:"until"`
	// Moves is "stretch", "de", or a weighted mix like "stretch:0.8,de:0.2".
	Moves string `yaml:"moves"`
	// CheckpointEvery is the number of steps between checkpoints.
	CheckpointEvery int `yaml:"checkpoint_every"`
	// Temperatures is the number of parallel-tempering rungs of fit (1:
	// no tempering), spaced geometrically from beta = 1 to BetaMin.
	Temperatures int `yaml:"temperatures"`
	// BetaMin is the hottest rung's inverse temperature.
	BetaMin float64 `yaml:"beta_min"`
}

// OutputConfig says where results go.
type OutputConfig struct {
	// Dir is the run folder.
	Dir string `yaml:"dir"`
	// FlushEvery is the number of steps between chain flushes to disk.
	FlushEvery int `yaml:"flush_every"`
}

// Default returns fit's defaults: the SMBHB power law, 32 walkers, 4000
// steps, seed 1.
func Default() Config {
	return Config{
		Data: nil,
		Model: ModelConfig{
			Name: "smbhb", Turnover: "none",
			Strings: StringsConfig{
				Q: 4.0 / 3, Gamma: 50, F: 0.1, CEff: "vos", Kappa: 1, Modes: 100000, DOF: "standard-model", Alpha: 0.1, P: 1,
			},
		},
		Likelihood: LikelihoodConfig{Bandwidth: "scott"},
		Cosmology:  CosmologyConfig{H0: 67.4, OmegaM: 0.315, TCMB: 2.7255, Neff: 3.046},
		Sampler: SamplerConfig{
			Walkers: 32, Steps: 4000, Burn: -1, Thin: 0, Seed: 1, Workers: 0,
			Moves: "stretch", CheckpointEvery: 1000, Temperatures: 1, BetaMin: 1e-3,
		},
		Output: OutputConfig{Dir: "", FlushEvery: 100},
	}
}

// CompareDefault returns compare's defaults: fit's, with the string demo,
// 3000 steps per rung, and the folder runs/compare.
func CompareDefault() Config {
	c := Default()
	c.Data = DataList{"demo:strings"}
	c.Sampler.Steps = compare.DefaultSteps
	c.Sampler.Walkers = compare.DefaultWalkers
	c.Output.Dir = filepath.Join("runs", "compare")
	return c
}

// Load reads a YAML configuration file over the values already in cfg
// (usually Default). Unknown keys are refused with their line number. The
// path must name a regular file of at most safeio.LimitConfig (1 MiB): a
// named pipe, a device such as /dev/zero or a link to one is refused before
// anything is read.
func Load(path string, cfg *Config) error {
	raw, err := safeio.ReadFile(path, safeio.LimitConfig)
	if err != nil {
		return fmt.Errorf("reading the configuration: %w", err)
	}
	return Decode(path, raw, cfg)
}

// Decode reads the YAML document raw over the values in cfg. Every error
// starts with name (the file's name); an unknown key is reported with its
// line and the keys accepted beside it, a value of the wrong type with its
// line. An empty document keeps every value.
func Decode(name string, raw []byte, cfg *Config) error {
	var root yaml.Node
	if err := yaml.Unmarshal(raw, &root); err != nil {
		return fmt.Errorf("%s: %s", name, strings.TrimPrefix(err.Error(), "yaml: "))
	}
	if len(root.Content) == 0 {
		return nil // an empty file keeps every default
	}
	if err := checkKeys(name, root.Content[0], reflect.TypeOf(*cfg), ""); err != nil {
		return err
	}
	dec := yaml.NewDecoder(bytes.NewReader(raw))
	dec.KnownFields(true)
	if err := dec.Decode(cfg); err != nil {
		var te *yaml.TypeError
		if errors.As(err, &te) && len(te.Errors) > 0 {
			return fmt.Errorf("%s: %s", name, strings.TrimPrefix(te.Errors[0], "yaml: "))
		}
		return fmt.Errorf("%s: %s", name, strings.TrimPrefix(err.Error(), "yaml: "))
	}
	return nil
}

// checkKeys walks a YAML mapping against the yaml tags of struct type t and
// reports the first key that t does not know, with its line and the keys
// that would be accepted there, and the first integer key given a
// fractional or exponent number (yaml.v3 would truncate 1.5 to 1 silently).
func checkKeys(file string, n *yaml.Node, t reflect.Type, path string) error {
	for n.Kind == yaml.AliasNode && n.Alias != nil {
		n = n.Alias
	}
	if isInteger(t.Kind()) && n.Kind == yaml.ScalarNode && n.Tag == "!!float" {
		return fmt.Errorf("%s: line %d: cannot unmarshal !!float `%s` into %s: %s must be a whole number", file, n.Line, n.Value, t, path)
	}
	if t.Kind() != reflect.Struct {
		return nil
	}
	if n.Kind != yaml.MappingNode {
		if n.Kind == yaml.ScalarNode && n.Tag == "!!null" {
			return nil
		}
		where := path
		if where == "" {
			where = "the top level"
		}
		return fmt.Errorf("%s: line %d: %s: want a mapping of keys", file, n.Line, where)
	}
	fields := map[string]reflect.Type{}
	var names []string
	for i := 0; i < t.NumField(); i++ {
		tag := strings.Split(t.Field(i).Tag.Get("yaml"), ",")[0]
		if tag == "" || tag == "-" {
			continue
		}
		fields[tag] = t.Field(i).Type
		names = append(names, tag)
	}
	sort.Strings(names)
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		ft, ok := fields[k.Value]
		key := k.Value
		if path != "" {
			key = path + "." + k.Value
		}
		if !ok {
			return fmt.Errorf("%s: line %d: unknown key %q; known keys here: %s", file, k.Line, key, strings.Join(names, ", "))
		}
		if err := checkKeys(file, v, ft, key); err != nil {
			return err
		}
	}
	return nil
}

// isInteger reports whether k is a signed or unsigned integer kind.
func isInteger(k reflect.Kind) bool {
	return (k >= reflect.Int && k <= reflect.Int64) || (k >= reflect.Uint && k <= reflect.Uintptr)
}

// Marshal renders cfg as YAML, as --print-config prints it and as the
// fingerprint hashes it.
func Marshal(cfg Config) string {
	var b bytes.Buffer
	enc := yaml.NewEncoder(&b)
	enc.SetIndent(2)
	if err := enc.Encode(cfg); err != nil {
		return fmt.Sprintf("# cannot render configuration: %v\n", err)
	}
	return b.String()
}

// Fingerprint identifies everything that decides a run's chain: the data
// sets' checksum (DataIdentity's) and the configuration except the keys that only say how
// long to run, how often to write, where, or with how many goroutines.
func (c Config) Fingerprint(dataSHA string) string {
	c.Sampler.Steps, c.Sampler.Until, c.Sampler.Workers = 0, "", 0
	c.Sampler.CheckpointEvery, c.Output.FlushEvery, c.Output.Dir = 0, 0, ""
	return rundir.Fingerprint(dataSHA, Marshal(c))
}

// ModelSettings returns the registry's settings of the model c names.
func (c Config) ModelSettings() registry.Settings {
	m, sc, cc := c.Model, c.Model.Strings, c.Cosmology
	return registry.Settings{
		Name:      m.Name,
		Binaries:  registry.Binaries{FixGamma: m.FixGamma, Turnover: m.Turnover, FBend: m.FBend, TurnoverKappa: m.TurnoverKappa},
		Strings:   registry.Strings{Q: sc.Q, Gamma: sc.Gamma, F: sc.F, CEff: sc.CEff, Kappa: sc.Kappa, Modes: sc.Modes, DOF: sc.DOF, Direct: sc.Direct, Alpha: sc.Alpha, P: sc.P},
		Cosmology: registry.Cosmology{H0: cc.H0, OmegaM: cc.OmegaM, TCMB: cc.TCMB, Neff: cc.Neff},
	}
}
