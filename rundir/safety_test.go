package rundir

import (
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"syscall"
	"testing"
	"time"

	"tautline/internal/safeio"
)

// box is a standard normal likelihood under a uniform prior on
// [-10, 10]^dim (simulated).
type box struct{ dim int }

func (b box) Dim() int { return b.dim }
func (b box) Draw(r *rand.Rand, x []float64) {
	for i := range x {
		x[i] = -10 + 20*r.Float64()
	}
}
func (b box) LogPrior(x []float64) float64 {
	for _, v := range x {
		if math.Abs(v) > 10 {
			return math.Inf(-1)
		}
	}
	return -float64(b.dim) * math.Log(20)
}
func (b box) LogLike(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s -= 0.5 * v * v
	}
	return s
}

// TestReadCheckpointRefuses checks the refusals of the checkpoint reader,
// each with its exact message and without blocking.
func TestReadCheckpointRefuses(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "fifo.bin")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Fatal(err)
	}
	sparse := filepath.Join(dir, "sparse.bin")
	f, err := os.Create(sparse)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(8 << 30); err != nil {
		t.Fatal(err)
	}
	f.Close()
	small := filepath.Join(dir, "small.bin")
	if err := WriteCheckpoint(small, Checkpoint{ChainOffset: 1, State: make([]byte, 4096)}); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		read func() error
		is   error
		want string
	}{
		{"FIFO", func() error { _, err := ReadCheckpoint(fifo); return err }, safeio.ErrNotRegular, fifo + ": is a named pipe (FIFO), not a regular file"},
		{"/dev/zero", func() error { _, err := ReadCheckpoint("/dev/zero"); return err }, safeio.ErrNotRegular, "/dev/zero: is a character device, not a regular file"},
		{"sparse 8 GiB", func() error { _, err := ReadCheckpoint(sparse); return err }, safeio.ErrTooLarge, sparse + ": 8 GiB is more than the 4 GiB limit for this kind of file"},
		{"over the settings' limit", func() error { _, err := ReadCheckpointLimit(small, 1024); return err }, safeio.ErrTooLarge, small + ": 4.0 KiB is more than the 1 KiB limit for this kind of file (the most this run's walkers, parameters and rungs can write: is it another run's checkpoint?)"},
		{"missing", func() error { _, err := ReadCheckpoint(filepath.Join(dir, "none")); return err }, os.ErrNotExist, filepath.Join(dir, "none") + ": no checkpoint to resume from (run without --resume first)"},
	} {
		var err error
		done := make(chan struct{})
		go func() { defer close(done); err = tc.read() }()
		select {
		case <-done:
		case <-time.After(5 * time.Second):
			t.Fatalf("%s: blocked", tc.name)
		}
		if tc.is != os.ErrNotExist && !errors.Is(err, tc.is) || err == nil || err.Error() != tc.want {
			t.Errorf("%s: error\n got: %v\nwant: %s", tc.name, err, tc.want)
		}
	}
}

// TestLoadRefusesFIFOPart checks that a comparison folder whose part.json
// is a named pipe is refused at once, not read forever.
func TestLoadRefusesFIFOPart(t *testing.T) {
	out := t.TempDir()
	pd := filepath.Join(out, PartsDir, "smbhb.block0")
	if err := os.MkdirAll(pd, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := syscall.Mkfifo(filepath.Join(pd, PartFile), 0o600); err != nil {
		t.Fatal(err)
	}
	var err error
	done := make(chan struct{})
	go func() { defer close(done); _, err = findPart(out, "smbhb") }()
	select {
	case <-done:
	case <-time.After(5 * time.Second):
		t.Fatal("findPart blocked on a named pipe")
	}
	want := filepath.Join(pd, PartFile) + ": is a named pipe (FIFO), not a regular file"
	if err == nil || err.Error() != want {
		t.Errorf("error\n got: %v\nwant: %s", err, want)
	}
}
