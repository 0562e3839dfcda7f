package main

import (
	"encoding/json"
	"io"
	"os"
	"time"

	"tautline/chains"
)

// runMeta is a fit's meta.json: the chains package's metadata plus the
// run's status and the sampler's and likelihood's settings as resolved.
type runMeta struct {
	chains.Meta
	// Status is running, interrupted, converged or max-steps.
	Status string `json:"status"`
	// Sampling holds burn-in, thinning, acceptance and the likelihood's
	// bandwidths, filled at the end.
	Sampling map[string]any `json:"sampling,omitempty"`
}

// newMeta starts a run's metadata: everything needed to reproduce it.
func newMeta(cfg Config, pb *problem, started time.Time) *runMeta {
	var params []chains.ParamInfo
	fixed := map[string]bool{}
	for _, n := range pb.post.FreeNames() {
		fixed[n] = false
	}
	for i, p := range pb.model.Params() {
		_, free := fixed[p.Name]
		params = append(params, chains.ParamInfo{Name: p.Name, Label: p.Label, Unit: p.Unit, Prior: pb.priors[i].String(), Fixed: !free})
	}
	return &runMeta{Meta: chains.Meta{
		Version:     versionString(),
		CommandLine: os.Args,
		Config:      cfg,
		Seed:        cfg.Sampler.Seed,
		Data:        chains.DataSet{Name: pb.data.Name, Path: cfg.Data, SHA256: pb.data.SHA256},
		Model:       chains.ModelInfo{Name: pb.model.Name(), Params: params},
		Start:       started,
		Outputs: []chains.Output{
			{File: "chain.csv", Description: "every walker at every step: step, walker, ln_post, ln_like, then the sampled parameters"},
			{File: "posterior.npy", Description: "burned-in, thinned posterior samples (float64, one row per sample, columns in the order of the free parameters)"},
			{File: "summary.json", Description: "median, 68 % and 95 % equal-tailed intervals, mean and std per parameter"},
			{File: "checkpoint.bin", Description: "complete sampler state for --resume"},
			{File: "meta.json", Description: "this file"},
		},
	}}
}

func writeMeta(path string, m *runMeta) error {
	m.Schema = chains.MetaSchema
	return writeJSON(path, m)
}

// writeJSON writes v as indented JSON, atomically.
func writeJSON(path string, v any) error {
	return chains.WriteFileAtomic(path, func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(v)
	})
}

// freePriors returns the prior of every sampled parameter, in the order of
// the posterior's free parameters, in the syntax priors.Parse reads.
func freePriors(pb *problem) []string {
	idx := map[string]int{}
	for i, p := range pb.model.Params() {
		idx[p.Name] = i
	}
	var out []string
	for _, n := range pb.post.FreeNames() {
		out = append(out, pb.priors[idx[n]].String())
	}
	return out
}
