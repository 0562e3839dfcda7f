package fitrun

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"tautline/rundir"
)

// TestStaleTemporaries: temporaries that a killed writer left (older than
// the run) are removed and logged when a run resumes in its folder or
// starts in it afresh, a recent one and other hidden files are kept, and
// the outputs are byte-identical to those of a run that was never
// interrupted.
func TestStaleTemporaries(t *testing.T) {
	const steps = 300
	whole := t.TempDir()
	if _, err := Run(context.Background(), problem(), settings(whole, steps)); err != nil {
		t.Fatal(err)
	}
	plant := func(dir string, age time.Duration, names ...string) {
		for _, n := range names {
			p := filepath.Join(dir, n)
			if err := os.WriteFile(p, []byte("half-written"), 0o644); err != nil {
				t.Fatal(err)
			}
			when := time.Now().Add(-age)
			if err := os.Chtimes(p, when, when); err != nil {
				t.Fatal(err)
			}
		}
	}
	stale := []string{".checkpoint.bin.tmp-1", ".posterior.npy.tmp-2", ".summary.json.tmp-3", ".meta.json.tmp-4", ".chain.csv.tmp-5"}
	for _, resume := range []bool{true, false} {
		dir := t.TempDir()
		if resume {
			ctx, cancel := context.WithCancel(context.Background())
			s := settings(dir, steps)
			s.Reporter.Step = func(n int) {
				if n == 120 {
					cancel()
				}
			}
			if _, err := Run(ctx, problem(), s); err == nil {
				t.Fatal("the cancelled run did not stop")
			}
		}
		plant(dir, time.Hour, stale...)
		plant(dir, -time.Hour, ".meta.json.tmp-future") // written after this run started: not stale
		plant(dir, time.Hour, ".notes.tmp-6")           // not a temporary of a fit file
		s := settings(dir, steps)
		s.Resume = resume
		var warned string
		s.Reporter.Warnf = func(f string, a ...any) { warned = f }
		if _, err := Run(context.Background(), problem(), s); err != nil {
			t.Fatal(err)
		}
		for _, n := range stale {
			if _, err := os.Stat(filepath.Join(dir, n)); !os.IsNotExist(err) {
				t.Errorf("resume %v: %s is left (%v)", resume, n, err)
			}
		}
		for _, n := range []string{".meta.json.tmp-future", ".notes.tmp-6"} {
			if _, err := os.Stat(filepath.Join(dir, n)); err != nil {
				t.Errorf("resume %v: %s was removed", resume, n)
			}
		}
		if !strings.Contains(warned, "stale temporaries") {
			t.Errorf("resume %v: no log of the removal, got %q", resume, warned)
		}
		for _, f := range []string{rundir.ChainFile, rundir.PosteriorFile, rundir.SummaryFile} {
			a, errA := os.ReadFile(filepath.Join(whole, f))
			b, errB := os.ReadFile(filepath.Join(dir, f))
			if errA != nil || errB != nil || !bytes.Equal(a, b) {
				t.Errorf("resume %v: %s differs from the uninterrupted run (%v, %v)", resume, f, errA, errB)
			}
		}
	}
}
