//go:build linux

package chains

import (
	"errors"
	"os"
	"path/filepath"
	"syscall"
	"testing"
)

// TestNewWriteback: on a regular file the writeback succeeds without an
// fsync and leaves the file as it was, again and again; on a pipe, which
// sync_file_range(2) refuses with ESPIPE (the Linux man-pages), it falls
// back to fsync, whose error for a pipe is EINVAL (fsync(2)), from then on.
func TestNewWriteback(t *testing.T) {
	p := filepath.Join(t.TempDir(), "c.csv")
	f, err := os.Create(p)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var fsyncs int
	counted := func(f *os.File) func() error {
		return func() error { fsyncs++; return f.Sync() }
	}
	wb := newWriteback(f, counted(f))
	want := []byte("# a,b\n1,2\n")
	for i := range 3 {
		if _, err := f.Write(want[len(want)*i/3 : len(want)*(i+1)/3]); err != nil {
			t.Fatal(err)
		}
		if err := wb(); err != nil {
			t.Fatalf("writeback %d of a regular file: %v", i, err)
		}
	}
	if fsyncs != 0 {
		t.Fatalf("%d fsyncs for the writebacks of a regular file, want none", fsyncs)
	}
	if got, err := os.ReadFile(p); err != nil || string(got) != string(want) {
		t.Fatalf("file after the writebacks: %q, %v; want %q", got, err, want)
	}

	pr, pw, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	defer pr.Close()
	defer pw.Close()
	wb = newWriteback(pw, counted(pw))
	for i := range 2 {
		if err := wb(); !errors.Is(err, syscall.EINVAL) || fsyncs != i+1 {
			t.Fatalf("writeback %d of a pipe: %v after %d fsyncs, want fsync's EINVAL after %d", i, err, fsyncs, i+1)
		}
	}
}
