package likelihood

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"testing/fstest"
	"time"

	"tautline/internal/safeio"
)

// copyTiny copies the tiny data set into a fresh folder and replaces the
// file named swap (if any) with what mk makes at its path.
func copyTiny(t *testing.T, swap string, mk func(t *testing.T, p string)) string {
	t.Helper()
	dir := t.TempDir()
	for _, f := range []string{"dataset.yaml", "samples.csv", "grid.csv", "gaussian.csv"} {
		b, err := os.ReadFile(filepath.Join(dataDir, "tiny", f))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, f), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if swap != "" {
		p := filepath.Join(dir, swap)
		if err := os.Remove(p); err != nil {
			t.Fatal(err)
		}
		mk(t, p)
	}
	return dir
}

// TestLoadRefusesSpecialFiles checks that a description or table that is
// a named pipe, a device or a file past its size cap is refused at once
// with a message naming it, where os.ReadFile would block on the pipe or
// read /dev/zero until memory runs out.
func TestLoadRefusesSpecialFiles(t *testing.T) {
	fifo := func(t *testing.T, p string) {
		if err := syscall.Mkfifo(p, 0o600); err != nil {
			t.Fatal(err)
		}
	}
	link := func(target string) func(*testing.T, string) {
		return func(t *testing.T, p string) {
			if err := os.Symlink(target, p); err != nil {
				t.Fatal(err)
			}
		}
	}
	sparse := func(size int64) func(*testing.T, string) {
		return func(t *testing.T, p string) {
			f, err := os.Create(p)
			if err != nil {
				t.Fatal(err)
			}
			defer f.Close()
			if err := f.Truncate(size); err != nil {
				t.Fatal(err)
			}
		}
	}
	big := func(t *testing.T, p string) {
		b, err := os.ReadFile(filepath.Join(dataDir, "tiny", "dataset.yaml"))
		if err != nil {
			t.Fatal(err)
		}
		b = append(append(b, "# "...), bytes.Repeat([]byte("x"), 2<<20)...)
		if err := os.WriteFile(p, append(b, '\n'), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, tc := range []struct {
		name, swap string
		mk         func(*testing.T, string)
		is         error
		want       string // "{d}" stands for the folder
	}{
		{"description is a FIFO", "dataset.yaml", fifo, safeio.ErrNotRegular,
			"likelihood: {d}/dataset.yaml: is a named pipe (FIFO), not a regular file"},
		{"description links to /dev/zero", "dataset.yaml", link("/dev/zero"), safeio.ErrNotRegular,
			"likelihood: {d}/dataset.yaml: is a character device, not a regular file"},
		{"description of 2 MiB", "dataset.yaml", big, safeio.ErrTooLarge,
			"likelihood: {d}/dataset.yaml: 2.0 MiB is more than the 1 MiB limit for this kind of file"},
		{"samples table is a FIFO", "samples.csv", fifo, safeio.ErrNotRegular,
			`likelihood: {d}/dataset.yaml: line 9: tables.samples: cannot read table "samples.csv": {d}/samples.csv: is a named pipe (FIFO), not a regular file`},
		{"grid table links to /dev/urandom", "grid.csv", link("/dev/urandom"), safeio.ErrNotRegular,
			`likelihood: {d}/dataset.yaml: line 10: tables.grid: cannot read table "grid.csv": {d}/grid.csv: is a character device, not a regular file`},
		{"sparse 1 GiB samples table", "samples.csv", sparse(1 << 30), safeio.ErrTooLarge,
			`likelihood: {d}/dataset.yaml: line 9: tables.samples: cannot read table "samples.csv": {d}/samples.csv: 1 GiB is more than the 512 MiB limit for this kind of file`},
		{"missing table", "gaussian.csv", func(*testing.T, string) {}, os.ErrNotExist,
			`likelihood: {d}/dataset.yaml: line 11: tables.gaussian: cannot read table "gaussian.csv": open {d}/gaussian.csv: no such file or directory`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := copyTiny(t, tc.swap, tc.mk)
			var err error
			done := make(chan struct{})
			go func() { defer close(done); _, err = Load(filepath.Join(d, "dataset.yaml")) }()
			select {
			case <-done:
			case <-time.After(5 * time.Second):
				t.Fatal("Load blocked")
			}
			want := strings.ReplaceAll(tc.want, "{d}", d)
			if !errors.Is(err, tc.is) || err.Error() != want {
				t.Errorf("error\n got: %v\nwant: %s (matching %v)", err, want, tc.is)
			}
		})
	}
	if _, err := Load("/dev/zero"); err == nil || err.Error() != "likelihood: /dev/zero: is a character device, not a regular file" {
		t.Errorf("Load(/dev/zero): %v", err)
	}
}

// TestLoadFSRefusesSpecialFiles is TestLoadRefusesSpecialFiles for LoadFS.
func TestLoadFSRefusesSpecialFiles(t *testing.T) {
	desc, err := os.ReadFile(filepath.Join(dataDir, "tiny", "dataset.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	mfs := fstest.MapFS{
		"a/dataset.yaml": {Data: desc},
		"a/samples.csv":  {Mode: os.ModeNamedPipe},
		"b/dataset.yaml": {Mode: os.ModeDevice | os.ModeCharDevice},
		"c/dataset.yaml": {Data: make([]byte, safeio.LimitDescription+1)},
	}
	for name, want := range map[string]string{
		"a/dataset.yaml": `likelihood: a/dataset.yaml: line 9: tables.samples: cannot read table "samples.csv": a/samples.csv: is a named pipe (FIFO), not a regular file`,
		"b/dataset.yaml": "likelihood: b/dataset.yaml: is a character device, not a regular file",
		"c/dataset.yaml": "likelihood: c/dataset.yaml: 1.0 MiB is more than the 1 MiB limit for this kind of file",
	} {
		if _, err := LoadFS(mfs, name); err == nil || err.Error() != want {
			t.Errorf("%s: error\n got: %v\nwant: %s", name, err, want)
		}
	}
}
