package main

import (
	"os"
	"time"

	"tautline/chains"
	"tautline/runconfig"
	"tautline/rundir"
)

// newMeta starts a run's metadata: everything needed to reproduce it.
func newMeta(cfg runconfig.Config, pb *problem, started time.Time) chains.Meta {
	var params []chains.ParamInfo
	fixed := map[string]bool{}
	for _, n := range pb.post.FreeNames() {
		fixed[n] = false
	}
	for i, p := range pb.model.Params() {
		_, free := fixed[p.Name]
		params = append(params, chains.ParamInfo{Name: p.Name, Label: p.Label, Unit: p.Unit, Prior: pb.priors[i].String(), Fixed: !free})
	}
	return chains.Meta{
		Version:     versionString(),
		CommandLine: os.Args,
		Config:      cfg,
		Seed:        cfg.Sampler.Seed,
		Data:        chains.DataSet{Name: pb.data.Name, Path: cfg.Data, SHA256: pb.data.SHA256},
		Model:       chains.ModelInfo{Name: pb.model.Name(), Params: params},
		Start:       started,
		Outputs:     rundir.FitOutputs(),
	}
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
