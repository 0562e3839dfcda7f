package compare

import (
	"errors"
	"strings"
	"testing"

	"tautline/internal/budget"
)

// TestCheckSize: a ladder or ensemble too large for the memory cap is
// refused naming the options; the units of one task only are counted; a
// small comparison passes.
func TestCheckSize(t *testing.T) {
	caps := budget.Caps{Memory: 1 << 30, MemoryWhy: "test"}
	base := Settings{Rungs: 16, Blocks: 1, Walkers: 32, Steps: 40, Workers: 2, Task: -1}
	rungs := base
	rungs.Rungs = 1e6
	walkers := base
	walkers.Walkers = 1e9
	for name, s := range map[string]Settings{"--rungs 1000000": rungs, "--walkers 1000000000": walkers} {
		err := s.CheckSize([]int{2, 3, 5}, caps)
		if !errors.Is(err, budget.ErrTooLarge) || !strings.Contains(err.Error(), name) {
			t.Errorf("%s: %v", name, err)
		}
	}
	ladder := base
	ladder.Rungs = 5000
	if err := ladder.CheckSize([]int{2}, budget.Caps{}); !errors.Is(err, budget.ErrTooLarge) || !strings.Contains(err.Error(), "--rungs 5000 is more than the 4096 rungs") {
		t.Errorf("long ladder: %v", err)
	}
	if err := base.CheckSize([]int{2, 3, 5}, caps); err != nil {
		t.Errorf("small comparison refused: %v", err)
	}
	// 400 steps x 320 walkers x (2 + 4000) x 8 x 3 = 12 GB for one unit:
	// refused alone, while a task holding none of the units passes.
	one := base
	one.Rungs, one.Steps, one.Walkers = 4000, 400, 320
	if err := one.CheckSize([]int{2}, caps); !errors.Is(err, budget.ErrTooLarge) {
		t.Errorf("one large unit: %v", err)
	}
	one.Task, one.Tasks = 1, 2
	if err := one.CheckSize([]int{2}, caps); err != nil {
		t.Errorf("a task without units refused: %v", err)
	}
}
