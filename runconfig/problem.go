package runconfig

import (
	"fmt"
	"strings"

	"tautline/chains"
	"tautline/compare"
	"tautline/likelihood"
	"tautline/models"
	"tautline/models/gw"
	"tautline/models/registry"
	"tautline/priors"
)

// Problem is what a run samples: its data sets with their likelihood
// tables, a model with its priors, and the posterior that joins them (the
// product of the data sets' likelihoods, likelihood.Joint).
type Problem struct {
	Data   []Data
	Parts  []likelihood.Part
	Model  models.Model
	Priors []priors.Prior
	Target *likelihood.Joint
}

// LoadParts loads the data sets of c (see LoadData) and builds their
// free-spectrum likelihood tables.
func (c Config) LoadParts(load Loader) ([]Data, []likelihood.Part, error) {
	data, err := c.LoadData(load)
	if err != nil {
		return nil, nil, err
	}
	parts := make([]likelihood.Part, len(data))
	for i, d := range data {
		fs, err := likelihood.NewFreeSpectrum(d.Set, likelihood.Options{Bandwidth: c.Likelihood.Bandwidth})
		if err != nil {
			return nil, nil, err
		}
		parts[i] = likelihood.Part{Data: d.Set, FS: fs}
	}
	return data, parts, nil
}

// LoadProblem loads the data sets and builds the model of c and joins
// them. logf, if not nil, receives each data set's warnings (what was
// accepted but assumed, such as a two-point grid) and log lines while a
// string-spectrum table is built.
func (c Config) LoadProblem(load Loader, logf registry.Logf) (*Problem, error) {
	data, parts, err := c.LoadParts(load)
	if err != nil {
		return nil, err
	}
	if logf != nil {
		for _, d := range data {
			for _, w := range d.Set.Warnings {
				logf("data set %s: warning: %s", d.Set.Name, w)
			}
		}
	}
	m, err := registry.Build(c.ModelSettings(), logf)
	if err != nil {
		return nil, err
	}
	return c.NewProblem(data, parts, m)
}

// NewProblem joins loaded data sets, their likelihood tables and a built
// model under the priors of c. None of them is changed, so one of each can
// serve many problems (compare's models).
func (c Config) NewProblem(data []Data, parts []likelihood.Part, m models.Model) (*Problem, error) {
	p := &Problem{Data: data, Parts: parts, Model: m}
	var err error
	if p.Priors, err = registry.ResolvePriors(m, c.Model.Priors); err != nil {
		return nil, err
	}
	h0 := gw.H0SI(c.Cosmology.H0)
	// Each data set alone first, so that one data set's refusal reads as
	// it did before several were possible.
	for _, pt := range parts {
		if _, err := likelihood.NewPosterior(m, p.Priors, pt.Data, pt.FS, h0); err != nil {
			if len(parts) > 1 {
				return nil, fmt.Errorf("data set %q: %w", pt.Data.Name, err)
			}
			return nil, err
		}
	}
	if p.Target, err = likelihood.NewJoint(m, p.Priors, parts, h0); err != nil {
		return nil, err
	}
	return p, nil
}

// Name is the data sets' names joined by " + ".
func (p *Problem) Name() string { return DataIdentity(p.Data).Name }

// NumBins is the number of bins over all data sets.
func (p *Problem) NumBins() int {
	n := 0
	for _, d := range p.Data {
		n += len(d.Set.Freqs)
	}
	return n
}

// Params describes every model parameter as run, for the metadata.
func (p *Problem) Params() []chains.ParamInfo {
	free := map[string]bool{}
	for _, n := range p.Target.FreeNames() {
		free[n] = true
	}
	var out []chains.ParamInfo
	for i, q := range p.Model.Params() {
		out = append(out, chains.ParamInfo{Name: q.Name, Label: q.Label, Unit: q.Unit, Prior: p.Priors[i].String(), Fixed: !free[q.Name]})
	}
	return out
}

// FreePriors returns the prior of every sampled parameter, in the order of
// the target's free parameters, in the syntax priors.Parse reads.
func (p *Problem) FreePriors() []string {
	idx := map[string]int{}
	for i, q := range p.Model.Params() {
		idx[q.Name] = i
	}
	var out []string
	for _, n := range p.Target.FreeNames() {
		out = append(out, p.Priors[idx[n]].String())
	}
	return out
}

// Likelihood returns the density settings for the metadata: the bandwidth
// rule, the per-bin bandwidths (data set after data set) and the
// above-range penalty.
func (p *Problem) Likelihood() (rule string, bandwidths []float64, penalty float64) {
	for _, pt := range p.Parts {
		bandwidths = append(bandwidths, pt.FS.Bandwidths()...)
	}
	return p.Parts[0].FS.BandwidthRule(), bandwidths, p.Parts[0].FS.Penalty()
}

// CompareModels builds every model of a comparison on the data sets and
// likelihood tables given (loaded once), each with its share of the priors
// of c (a prior applies to every model with that parameter).
func (c Config) CompareModels(names []string, data []Data, parts []likelihood.Part, logf registry.Logf) ([]compare.Model, error) {
	var built []models.Model
	for _, name := range names {
		mc := c
		mc.Model.Name = name
		m, err := registry.Build(mc.ModelSettings(), logf)
		if err != nil {
			return nil, err
		}
		built = append(built, m)
	}
	shares, err := registry.SharePriors(names, built, c.Model.Priors)
	if err != nil {
		return nil, err
	}
	sha := DataIdentity(data).SHA256
	var out []compare.Model
	for i, name := range names {
		mc := c
		mc.Model.Name, mc.Model.Priors = name, shares[i]
		pb, err := mc.NewProblem(data, parts, built[i])
		if err != nil {
			return nil, fmt.Errorf("model %s: %w", name, err)
		}
		record := func(workers int) any {
			r := mc
			r.Sampler.Workers = workers
			return r
		}
		out = append(out, compare.Model{Name: name, Target: pb.Target, Params: pb.Target.FreeNames(), Priors: pb.FreePriors(),
			Fingerprint: mc.Fingerprint(sha), Config: record})
	}
	return out, nil
}

// DataSpecs is the data sets of c as the logs name them.
func (c Config) DataSpecs() string { return strings.Join(c.Data, ", ") }
