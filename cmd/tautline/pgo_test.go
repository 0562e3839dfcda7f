package main

import (
	"context"
	"io"
	"path/filepath"
	"testing"
)

// BenchmarkPGOWorkload runs the workload whose CPU profile is
// default.pgo, the profile that go build (-pgo=auto, the default) uses for
// this command and the packages it links: the default compare, and
// 100000-step fits of the smbhb and strings demos with the defaults
// otherwise, the runs whose hot paths (likelihoods, model spectra,
// stretch moves, diagnostics, the chain writer) a user waits for. Refresh
// the profile after changing hot code:
//
//	go test ./cmd/tautline -run '^$' -bench PGOWorkload -benchtime 1x -cpuprofile cmd/tautline/default.pgo
//	rm tautline.test
func BenchmarkPGOWorkload(b *testing.B) {
	for b.Loop() {
		dir := b.TempDir() // outputs of their own at every iteration
		runs := [][]string{
			{"compare", "--out", filepath.Join(dir, "compare")},
			{"fit", "--data", "demo:smbhb", "--model", "smbhb", "--steps", "100000", "--out", filepath.Join(dir, "smbhb")},
			{"fit", "--data", "demo:strings", "--model", "strings", "--steps", "100000", "--out", filepath.Join(dir, "strings")},
		}
		for _, args := range runs {
			if code := run(context.Background(), &env{stdout: io.Discard, stderr: io.Discard}, args); code != 0 {
				b.Fatalf("tautline %v: exit status %d", args, code)
			}
		}
	}
}
