package fitrun

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"tautline/internal/budget"
	"tautline/rundir"
)

// TestCheckSize: settings above the memory cap are refused naming the
// options and the estimate, those above the free disk likewise, and the
// test fit's settings pass.
func TestCheckSize(t *testing.T) {
	caps := budget.Caps{Memory: 1 << 30, MemoryWhy: "test", Disk: 1 << 30}
	huge := settings("", 4000)
	huge.Sampler.Walkers = 1e9
	long := settings("", 1e12)
	cases := []struct {
		name string
		s    Settings
		want string
	}{
		{"walkers", huge, "--walkers 1000000000 x --temperatures 1 x --steps 4000 with 2 parameters: about 262 TiB of memory"}, // 3 x 4000 x 1e9 x 3 x 8 + 1e9 x 120 bytes
		{"steps", long, "--steps 1000000000000"},
		{"rungs", func() Settings { s := settings("", 4000); s.Sampler.Betas = make([]float64, 100000); return s }(), "--temperatures 100000"},
	}
	for _, c := range cases {
		err := c.s.CheckSize(2, caps)
		if !errors.Is(err, budget.ErrTooLarge) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want %q", c.name, err, c.want)
		}
	}
	disk := settings("", 4000)
	disk.Sampler.Walkers = 1e5 // chain.csv: 4000 x 1e5 x 6 x 21 bytes = 47 GiB
	if err := disk.CheckSize(2, budget.Caps{Memory: 1 << 50, Disk: 1 << 30}); !errors.Is(err, budget.ErrTooLarge) || !strings.Contains(err.Error(), "on disk, more than the 1 GiB free there") {
		t.Errorf("disk: %v", err)
	}
	if err := disk.CheckSize(2, budget.Caps{Memory: 1 << 50}); err != nil {
		t.Errorf("unknown free disk refused: %v", err)
	}
	if err := settings("", 3000).CheckSize(2, caps); err != nil {
		t.Errorf("the test fit refused: %v", err)
	}
}

// TestSizeEstimatesBoundTheFiles: chain.csv and checkpoint.bin of a real
// fit are within the estimates CheckSize uses (upper bounds, by at most a
// factor of three for the chain, whose values print shorter than the
// widest float).
func TestSizeEstimatesBoundTheFiles(t *testing.T) {
	out := t.TempDir()
	s := settings(out, 400)
	if _, err := Run(context.Background(), problem(), s); err != nil {
		t.Fatal(err)
	}
	chain, err := os.Stat(filepath.Join(out, rundir.ChainFile))
	if err != nil {
		t.Fatal(err)
	}
	if est := s.ChainBytes(2); float64(chain.Size()) > est || float64(chain.Size()) < est/3 {
		t.Errorf("chain.csv %d bytes, estimate %g", chain.Size(), est)
	}
	ck, err := os.Stat(filepath.Join(out, rundir.CheckpointFile))
	if err != nil {
		t.Fatal(err)
	}
	if est := s.Footprint(2).Checkpoint(); float64(ck.Size()) > est+checkpointSlack {
		t.Errorf("checkpoint.bin %d bytes, estimate %g", ck.Size(), est)
	}
}

// TestWarnLong: a run without checkpoints estimated above LongRun is
// warned about with its estimate; with checkpoints, or short, it is not.
func TestWarnLong(t *testing.T) {
	var got string
	s := settings("", 1e6)
	s.CheckpointEvery = 0
	s.Reporter.Warnf = func(f string, a ...any) { got = f }
	s.warnLong(2, time.Millisecond, 0) // 16e6 evaluations of 1 ms: 4.4 hours
	if !strings.Contains(got, "no checkpoints") {
		t.Errorf("long run without checkpoints: warning %q", got)
	}
	got = ""
	s.warnLong(2, time.Microsecond, 0) // 16 s
	s.CheckpointEvery = 100
	s.warnLong(2, time.Millisecond, 0)
	if got != "" {
		t.Errorf("unexpected warning %q", got)
	}
}
