package compare

import (
	"os"
	"path/filepath"
	"testing"
	"time"

	"tautline/rundir"
)

// TestRemoveStale: a task removes old temporaries from its own units'
// part folders only; the merging run also from the comparison folder and
// the model folders; recent temporaries stay.
func TestRemoveStale(t *testing.T) {
	out := t.TempDir()
	units, err := Plan([]string{"a", "b"}, 4, 2, 2)
	if err != nil {
		t.Fatal(err)
	}
	old := time.Now().Add(-time.Hour)
	plant := func(dir, name string, when time.Time) string {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
		if err := os.Chtimes(p, when, when); err != nil {
			t.Fatal(err)
		}
		return p
	}
	mine := plant(units[0].Dir(out), ".part.json.tmp-1", old)
	theirs := plant(units[1].Dir(out), ".lnl.npy.tmp-2", old)
	recent := plant(units[0].Dir(out), ".lnl.npy.tmp-3", time.Now().Add(time.Hour))
	top := plant(out, ".compare.json.tmp-4", old)
	model := plant(rundir.ModelDir(out, "a"), ".evidence.json.tmp-5", old)
	exists := func(p string) bool { _, err := os.Stat(p); return err == nil }

	task := Settings{Out: out, Task: 0, Tasks: 2}
	removed, err := removeStale(task, units[:1], []string{"a", "b"}, time.Now())
	if err != nil || len(removed) != 1 || exists(mine) || !exists(theirs) || !exists(recent) || !exists(top) || !exists(model) {
		t.Fatalf("task 0: removed %v (%v)", removed, err)
	}
	all := Settings{Out: out, Task: -1}
	removed, err = removeStale(all, units, []string{"a", "b"}, time.Now())
	if err != nil || len(removed) != 3 || exists(theirs) || exists(top) || exists(model) || !exists(recent) {
		t.Fatalf("merging run: removed %v (%v)", removed, err)
	}
}
