package rundir

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"tautline/internal/safeio"
)

// TestReadCheckpointLimit: a checkpoint within the limit reads back; one
// above the caller's limit, one above the outer 4 GiB cap (sparse), a named
// pipe and a missing file are refused with what is wrong, before reading.
func TestReadCheckpointLimit(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, CheckpointFile)
	ck := Checkpoint{ChainOffset: 42, State: []byte("state bytes")}
	if err := WriteCheckpoint(p, ck); err != nil {
		t.Fatal(err)
	}
	got, err := ReadCheckpointLimit(p, 1<<10)
	if err != nil || got.ChainOffset != 42 || string(got.State) != "state bytes" {
		t.Fatalf("read back: %+v, %v", got, err)
	}
	if _, err := ReadCheckpointLimit(p, 10); !errors.Is(err, safeio.ErrTooLarge) || !strings.Contains(err.Error(), "more than the 10 B limit") {
		t.Errorf("over the run's limit: %v", err)
	}
	sparse := filepath.Join(dir, "sparse.bin")
	f, err := os.Create(sparse)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(8 << 30); err != nil {
		t.Skipf("no sparse files here: %v", err)
	}
	f.Close()
	if _, err := ReadCheckpointLimit(sparse, 1<<10); err == nil || !strings.Contains(err.Error(), "8 GiB is more than the 4 GiB limit") {
		t.Errorf("sparse 8 GiB: %v", err)
	}
	fifo := filepath.Join(dir, "fifo.bin")
	if err := syscall.Mkfifo(fifo, 0o600); err == nil {
		if _, err := ReadCheckpointLimit(fifo, 1<<10); !errors.Is(err, safeio.ErrNotRegular) {
			t.Errorf("fifo: %v", err)
		}
	}
	if _, err := ReadCheckpoint(filepath.Join(dir, "none")); err == nil || !strings.Contains(err.Error(), "no checkpoint to resume from") {
		t.Errorf("missing: %v", err)
	}
}
