package main

import (
	"math"
	"math/rand/v2"
	"slices"
	"tautline/models/registry"
	"tautline/runconfig"
	"testing"
	"time"
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

// BenchmarkLogLikeRatio measures what BenchmarkLogLike does for every
// model, interleaved: each iteration times one block of calls of each
// model in turn, and the best block of each model (the one least disturbed
// by other work on the machine) gives its cost. It reports each model's
// cost relative to smbhb (metric "x_smbhb/MODEL"; the target is <= 3 for
// every string model) and smbhb's in ns ("ns/smbhb").
func BenchmarkLogLikeRatio(b *testing.B) {
	const block = 16384
	names := registry.Names()
	type bench struct {
		name string
		pb   *runconfig.Problem
		pts  [][]float64
		best float64
	}
	var bs []*bench
	for _, m := range names {
		pb, pts := benchPosterior(b, m)
		bs = append(bs, &bench{name: m, pb: pb, pts: pts, best: math.Inf(1)})
	}
	s := 0.0
	for b.Loop() {
		for _, m := range bs {
			t0 := time.Now()
			for i := range block {
				s += m.pb.Target.LogLike(m.pts[i%len(m.pts)])
			}
			m.best = min(m.best, float64(time.Since(t0).Nanoseconds())/block)
		}
	}
	_ = s
	ref := bs[slices.Index(names, "smbhb")].best
	b.ReportMetric(ref, "ns/smbhb")
	for _, m := range bs {
		if m.name != "smbhb" {
			b.ReportMetric(m.best/ref, "x_smbhb/"+m.name)
		}
	}
}
