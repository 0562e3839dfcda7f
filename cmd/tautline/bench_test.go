package main

import (
	"math/rand/v2"
	"tautline/models/registry"
	"tautline/runconfig"
	"testing"
)

// benchPosterior builds the posterior of model on the 30-bin SMBHB demo
// and returns it with a set of prior draws to evaluate.
func benchPosterior(b *testing.B, model string) (*runconfig.Problem, [][]float64) {
	b.Helper()
	cfg := runconfig.Default()
	cfg.Model.Name = model
	cfg.Data = runconfig.DataList{"demo:smbhb"}
	pb, err := buildProblem(cfg, nil)
	if err != nil {
		b.Fatal(err)
	}
	r := rand.New(rand.NewPCG(1, 2))
	pts := make([][]float64, 256)
	for i := range pts {
		pts[i] = make([]float64, pb.Target.Dim())
		pb.Target.Draw(r, pts[i])
	}
	return pb, pts
}

// BenchmarkLogLike compares one full log-likelihood evaluation (model
// spectrum, conversion to log10 rho, free-spectrum lookup) across models on
// the same 30-bin data set; the target is every string model <= 3 x smbhb.
func BenchmarkLogLike(b *testing.B) {
	for _, model := range registry.Names() {
		b.Run(model, func(b *testing.B) {
			pb, pts := benchPosterior(b, model)
			b.ReportAllocs()
			b.ResetTimer()
			s := 0.0
			for i := 0; i < b.N; i++ {
				s += pb.Target.LogLike(pts[i%len(pts)])
			}
			_ = s
		})
	}
}
