package main

import (
	"os"
	"time"

	"tautline/chains"
	"tautline/runconfig"
	"tautline/rundir"
)

// newMeta starts a run's metadata: everything needed to reproduce it.
func newMeta(cfg runconfig.Config, pb *runconfig.Problem, started time.Time) chains.Meta {
	return chains.Meta{
		Version:     versionString(),
		CommandLine: os.Args,
		Config:      cfg,
		Seed:        cfg.Sampler.Seed,
		Data:        runconfig.DataIdentity(pb.Data),
		Datasets:    runconfig.DataRecords(pb.Data),
		Model:       chains.ModelInfo{Name: pb.Model.Name(), Params: pb.Params()},
		Start:       started,
		Outputs:     rundir.FitOutputs(),
	}
}
