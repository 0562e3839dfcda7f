package rundir

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"syscall"
	"testing"
	"time"

	"tautline/internal/safeio"
	"tautline/sampler"
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

// TestCheckpointLimitBoundsRealState checks CheckpointLimit against the
// sampler's own encoding: a checkpoint written after a run of the given
// settings fits under the limit, and the limit is not so loose that it
// stops meaning anything (within twice the size plus the 1 MiB floor).
func TestCheckpointLimitBoundsRealState(t *testing.T) {
	for _, tc := range []struct{ walkers, dim, rungs, steps int }{
		{8, 2, 1, 50},
		{16, 3, 4, 300},
		{32, 5, 2, 2000},
	} {
		ladder := []float64{1}
		if tc.rungs > 1 {
			var err error
			if ladder, err = sampler.GeometricLadder(tc.rungs, 1e-3); err != nil {
				t.Fatal(err)
			}
		}
		e, err := sampler.New(box{tc.dim}, sampler.Config{Walkers: tc.walkers, Seed: 7, Betas: ladder, Fingerprint: "0123456789abcdef0123456789abcdef0123456789abcdef0123456789abcdef"})
		if err != nil {
			t.Fatal(err)
		}
		if _, err := sampler.Run(context.Background(), e, sampler.RunOptions{MaxSteps: tc.steps, MinSteps: tc.steps, Burn: -1}); err != nil {
			t.Fatal(err)
		}
		state, err := e.MarshalBinary()
		e.Close()
		if err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(t.TempDir(), CheckpointFile)
		if err := WriteCheckpoint(p, Checkpoint{ChainOffset: 123, State: state}); err != nil {
			t.Fatal(err)
		}
		st, err := os.Stat(p)
		if err != nil {
			t.Fatal(err)
		}
		lim := CheckpointLimit(tc.walkers, tc.dim, tc.rungs, tc.steps)
		if st.Size() > lim || lim > 2*st.Size()+safeio.MiB {
			t.Errorf("%+v: checkpoint of %d bytes, limit %d: want size <= limit <= 2 size + 1 MiB", tc, st.Size(), lim)
		}
		if _, err := ReadCheckpointLimit(p, lim); err != nil {
			t.Errorf("%+v: %v", tc, err)
		}
	}
	if got := CheckpointLimit(1<<30, 100, 64, 1<<40); got != safeio.LimitCheckpoint {
		t.Errorf("huge settings: limit %d, want the outer cap %d", got, safeio.LimitCheckpoint)
	}
	if got := CheckpointLimit(-1, -1, -1, -1); got != safeio.MiB+4608 {
		t.Errorf("nonsense settings: limit %d, want the 1 MiB floor plus one rung's slack", got)
	}
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
		{"over the settings' limit", func() error { _, err := ReadCheckpointLimit(small, 1024); return err }, safeio.ErrTooLarge, small + ": 4.0 KiB is more than the 1 KiB limit for this kind of file"},
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

// TestRemoveStale checks that each cleanup removes the old temporaries of
// its own files only: not fresh ones (a live writer's), not other hidden
// files, not the temporaries of a unit it was not given.
func TestRemoveStale(t *testing.T) {
	started := time.Now()
	old := started.Add(-time.Hour)
	put := func(t *testing.T, p string, stale bool) {
		t.Helper()
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte("half"), 0o644); err != nil {
			t.Fatal(err)
		}
		if stale {
			if err := os.Chtimes(p, old, old); err != nil {
				t.Fatal(err)
			}
		}
	}
	left := func(t *testing.T, root string) []string {
		t.Helper()
		var out []string
		_ = filepath.WalkDir(root, func(p string, d os.DirEntry, err error) error {
			if err == nil && !d.IsDir() {
				r, _ := filepath.Rel(root, p)
				out = append(out, r)
			}
			return nil
		})
		slices.Sort(out)
		return out
	}

	t.Run("fit", func(t *testing.T) {
		dir := t.TempDir()
		for _, n := range []string{".checkpoint.bin.tmp-111", ".posterior.npy.tmp-222", ".summary.json.tmp-333", ".meta.json.tmp-444", ".chain.csv.tmp-5"} {
			put(t, filepath.Join(dir, n), true)
		}
		put(t, filepath.Join(dir, ".meta.json.tmp-999"), false) // a live writer's
		put(t, filepath.Join(dir, ".notes.tmp-1"), true)        // not a run file
		put(t, filepath.Join(dir, "meta.json"), true)
		got, err := RemoveStaleFit(dir, started)
		if err != nil {
			t.Fatal(err)
		}
		if want := []string{".chain.csv.tmp-5", ".checkpoint.bin.tmp-111", ".meta.json.tmp-444", ".posterior.npy.tmp-222", ".summary.json.tmp-333"}; !slices.Equal(got, want) {
			t.Errorf("removed %v, want %v", got, want)
		}
		if want := []string{".meta.json.tmp-999", ".notes.tmp-1", "meta.json"}; !slices.Equal(left(t, dir), want) {
			t.Errorf("left %v, want %v", left(t, dir), want)
		}
		if got, err := RemoveStaleFit(filepath.Join(dir, "not-yet"), started); err != nil || got != nil {
			t.Errorf("missing folder: %v, %v; want nothing", got, err)
		}
	})
	t.Run("compare", func(t *testing.T) {
		out := t.TempDir()
		u0 := Unit{Model: "strings+smbhb", Block: 0}
		u1 := Unit{Model: "smbhb", Block: 1}
		for _, u := range []Unit{u0, u1} {
			put(t, filepath.Join(u.Dir(out), ".part.json.tmp-1"), true)
			put(t, filepath.Join(u.Dir(out), ".lnl.npy.tmp-2"), true)
		}
		put(t, filepath.Join(out, ".compare.json.tmp-3"), true)
		put(t, filepath.Join(ModelDir(out, "smbhb"), ".evidence.json.tmp-4"), true)
		put(t, filepath.Join(ModelDir(out, "smbhb"), ".lnl_beta.csv.tmp-5"), false)
		got, err := RemoveStaleUnit(out, u0, started)
		if err != nil {
			t.Fatal(err)
		}
		p0 := filepath.Join(PartsDir, "strings-smbhb.block0")
		if want := []string{filepath.Join(p0, ".lnl.npy.tmp-2"), filepath.Join(p0, ".part.json.tmp-1")}; !slices.Equal(got, want) {
			t.Errorf("unit: removed %v, want %v", got, want)
		}
		got, err = RemoveStaleMerge(out, []string{"smbhb", "strings+smbhb"}, started)
		if err != nil {
			t.Fatal(err)
		}
		if want := []string{".compare.json.tmp-3", filepath.Join(ModelsDir, "smbhb", ".evidence.json.tmp-4")}; !slices.Equal(got, want) {
			t.Errorf("merge: removed %v, want %v", got, want)
		}
		p1 := filepath.Join(PartsDir, "smbhb.block1")
		if want := []string{filepath.Join(ModelsDir, "smbhb", ".lnl_beta.csv.tmp-5"), filepath.Join(p1, ".lnl.npy.tmp-2"), filepath.Join(p1, ".part.json.tmp-1")}; !slices.Equal(left(t, out), want) {
			t.Errorf("left %v, want %v", left(t, out), want)
		}
	})
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
