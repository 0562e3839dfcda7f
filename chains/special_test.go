package chains

import (
	"errors"
	"os"
	"path/filepath"
	"syscall"
	"testing"
	"time"

	"tautline/internal/safeio"
)

// TestReadersRefuseSpecialFiles checks that every reader of run files
// refuses a named pipe, a device and an oversize file at once, with the
// message naming the file, where a plain open would block or never end.
func TestReadersRefuseSpecialFiles(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Fatal(err)
	}
	big := filepath.Join(dir, "big.npy")
	f, err := os.Create(big)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(NPYLimit + 1); err != nil {
		t.Fatal(err)
	}
	f.Close()
	cols := []string{"step", "walker", "ln_post", "ln_like", "x"}
	for _, tc := range []struct {
		name string
		read func() error
		is   error
		want string
	}{
		{"ReadNPY FIFO", func() error { _, _, _, err := ReadNPY(fifo); return err }, safeio.ErrNotRegular, "chains: " + fifo + ": is a named pipe (FIFO), not a regular file"},
		{"ReadNPY /dev/zero", func() error { _, _, _, err := ReadNPY("/dev/zero"); return err }, safeio.ErrNotRegular, "chains: /dev/zero: is a character device, not a regular file"},
		{"ReadNPY sparse", func() error { _, _, _, err := ReadNPY(big); return err }, safeio.ErrTooLarge, "chains: " + big + ": 4.0 GiB is more than the 4 GiB limit for this kind of file"},
		{"ReadMeta FIFO", func() error { _, err := ReadMeta(fifo); return err }, safeio.ErrNotRegular, "chains: " + fifo + ": is a named pipe (FIFO), not a regular file"},
		{"ReadMeta sparse", func() error { _, err := ReadMeta(big); return err }, safeio.ErrTooLarge, "chains: " + big + ": 4.0 GiB is more than the 64 MiB limit for this kind of file"},
		{"ReadCSV FIFO", func() error { _, _, err := ReadCSV(fifo); return err }, safeio.ErrNotRegular, "chains: " + fifo + ": is a named pipe (FIFO), not a regular file"},
		{"FileSHA256 /dev/urandom", func() error { _, err := FileSHA256("/dev/urandom"); return err }, safeio.ErrNotRegular, "chains: /dev/urandom: is a character device, not a regular file"},
		{"Resume FIFO", func() error { _, err := Resume(fifo, cols, 10); return err }, safeio.ErrNotRegular, "chains: " + fifo + ": is a named pipe (FIFO), not a regular file"},
		{"Resume /dev/zero", func() error { _, err := Resume("/dev/zero", cols, 10); return err }, safeio.ErrNotRegular, "chains: /dev/zero: is a character device, not a regular file"},
	} {
		var err error
		done := make(chan struct{})
		go func() { defer close(done); err = tc.read() }()
		select {
		case <-done:
		case <-time.After(5 * time.Second):
			t.Fatalf("%s: blocked", tc.name)
		}
		if !errors.Is(err, tc.is) || err.Error() != tc.want {
			t.Errorf("%s: error\n got: %v\nwant: %s", tc.name, err, tc.want)
		}
	}
}
