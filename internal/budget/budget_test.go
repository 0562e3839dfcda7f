package budget

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestPhysicalMemory reads MemTotal from meminfo files in the layout of
// proc(5) (the Linux manual page), and refuses malformed ones.
func TestPhysicalMemory(t *testing.T) {
	dir := t.TempDir()
	cases := []struct {
		name, text string
		want       int64
		ok         bool
	}{
		{"linux", "MemTotal:       24683548 kB\nMemFree:        22727396 kB\n", 24683548 << 10, true},
		{"second line", "Other: 1 kB\nMemTotal: 1024 kB\n", 1 << 20, true},
		{"missing", "MemFree: 1 kB\n", 0, false},
		{"not a number", "MemTotal: lots kB\n", 0, false},
		{"negative", "MemTotal: -5 kB\n", 0, false},
	}
	for _, c := range cases {
		p := filepath.Join(dir, c.name)
		if err := os.WriteFile(p, []byte(c.text), 0o644); err != nil {
			t.Fatal(err)
		}
		got, ok := physicalMemory(p)
		if got != c.want || ok != c.ok {
			t.Errorf("%s: %d, %v; want %d, %v", c.name, got, ok, c.want, c.ok)
		}
	}
	if _, ok := physicalMemory(filepath.Join(dir, "none")); ok {
		t.Error("a missing file gave a memory size")
	}
}

// TestChecks: an estimate above a cap is refused with both numbers and
// wraps ErrTooLarge; one below, or a cap of 0 (unknown), passes.
func TestChecks(t *testing.T) {
	c := Caps{Memory: 1 << 30, MemoryWhy: "test", Disk: 1 << 20}
	err := c.CheckMemory(3<<30, "--walkers 9")
	if !errors.Is(err, ErrTooLarge) || !strings.Contains(err.Error(), "--walkers 9: about 3 GiB of memory, more than the 1 GiB cap (test)") {
		t.Errorf("memory: %v", err)
	}
	err = c.CheckDisk(2<<20, "--steps 9")
	if !errors.Is(err, ErrTooLarge) || !strings.Contains(err.Error(), "about 2 MiB on disk, more than the 1 MiB free there") {
		t.Errorf("disk: %v", err)
	}
	if err := c.CheckMemory(1<<29, "x"); err != nil {
		t.Error(err)
	}
	if err := (Caps{}).CheckDisk(1e30, "x"); err != nil {
		t.Error(err)
	}
}

// TestCurrent: the caps of this machine are positive and say why, and the
// free disk of a folder that does not exist yet is that of its parent.
func TestCurrent(t *testing.T) {
	c := Current(filepath.Join(t.TempDir(), "not", "yet"))
	if c.Memory <= 0 || c.MemoryWhy == "" {
		t.Errorf("memory cap %d (%q)", c.Memory, c.MemoryWhy)
	}
	if c.Disk < 0 {
		t.Errorf("disk %d", c.Disk)
	}
}

// TestFormat: binary units with three significant digits.
func TestFormat(t *testing.T) {
	for _, c := range []struct {
		n    float64
		want string
	}{{512, "512 B"}, {1536, "1.5 KiB"}, {1 << 30, "1 GiB"}, {107 * (1 << 40), "107 TiB"}, {1e30, "8.67e+11 EiB"}} { // 1e30 / 2^60 = 8.67e11
		if got := Format(c.n); got != c.want {
			t.Errorf("Format(%g) = %q, want %q", c.n, got, c.want)
		}
	}
}
