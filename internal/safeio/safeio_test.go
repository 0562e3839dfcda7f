package safeio

import (
	"bytes"
	"errors"
	"io"
	"io/fs"
	"net"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
	"testing/fstest"
	"testing/iotest"
	"time"
)

// within runs f and fails the test if it does not return within d: the
// point of this package is that no input can make a reader wait forever.
func within(t *testing.T, d time.Duration, f func()) {
	t.Helper()
	done := make(chan struct{})
	go func() { defer close(done); f() }()
	select {
	case <-done:
	case <-time.After(d):
		t.Fatalf("did not return within %v (blocked on a special file?)", d)
	}
}

func TestReadFile(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, n int) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, bytes.Repeat([]byte("x"), n), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	sock := filepath.Join(dir, "sock")
	ln, err := net.Listen("unix", sock)
	if err != nil {
		t.Fatal(err)
	}
	defer ln.Close()
	linkToFile := filepath.Join(dir, "link-file")
	if err := os.Symlink(write("target", 3), linkToFile); err != nil {
		t.Fatal(err)
	}
	linkToFIFO := filepath.Join(dir, "link-fifo")
	if err := os.Symlink(fifo, linkToFIFO); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name  string
		path  string
		limit int64
		size  int    // bytes expected on success
		is    error  // error class expected, nil for success
		msg   string // substring of the error message
	}{
		{"small file", write("small", 10), 100, 10, nil, ""},
		{"empty file", write("empty", 0), 100, 0, nil, ""},
		{"exactly the limit", write("exact", 100), 100, 100, nil, ""},
		{"zero limit, empty file", write("empty0", 0), 0, 0, nil, ""},
		{"one byte over", write("over", 101), 100, 0, ErrTooLarge, "over: 101 B is more than the 100 B limit"},
		{"far over, human units", write("big", 3<<20), 1 << 20, 0, ErrTooLarge, "big: 3 MiB is more than the 1 MiB limit"},
		{"symlink to a file", linkToFile, 100, 3, nil, ""},
		{"directory", dir, 100, 0, ErrNotRegular, "is a directory, not a regular file"},
		{"named pipe", fifo, 100, 0, ErrNotRegular, "pipe: is a named pipe (FIFO), not a regular file"},
		{"symlink to a pipe", linkToFIFO, 100, 0, ErrNotRegular, "link-fifo: is a named pipe (FIFO)"},
		{"socket", sock, 100, 0, ErrNotRegular, "sock: is a socket"},
		{"/dev/zero", "/dev/zero", 100, 0, ErrNotRegular, "/dev/zero: is a character device"},
		{"/dev/null", "/dev/null", 100, 0, ErrNotRegular, "/dev/null: is a character device"},
		{"missing", filepath.Join(dir, "nope"), 100, 0, fs.ErrNotExist, "open " + filepath.Join(dir, "nope") + ": no such file or directory"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var b []byte
			var err error
			within(t, 5*time.Second, func() { b, err = ReadFile(c.path, c.limit) })
			if c.is == nil {
				if err != nil || len(b) != c.size {
					t.Fatalf("got %d bytes, %v; want %d bytes", len(b), err, c.size)
				}
				return
			}
			if !errors.Is(err, c.is) || !strings.Contains(err.Error(), c.msg) {
				t.Fatalf("error %v; want one matching %v and containing %q", err, c.is, c.msg)
			}
			if b != nil {
				t.Fatalf("returned %d bytes with the error", len(b))
			}
		})
	}
}

// TestOpenRefusesBeforeBlocking checks that Open returns at once on a pipe
// that no one writes to, where os.Open would wait for a writer forever.
func TestOpenRefusesBeforeBlocking(t *testing.T) {
	fifo := filepath.Join(t.TempDir(), "p")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Fatal(err)
	}
	within(t, 5*time.Second, func() {
		f, err := Open(fifo)
		if err == nil {
			f.Close()
			t.Error("Open of a FIFO succeeded")
		}
		var ne *NotRegularError
		if !errors.As(err, &ne) || ne.Path != fifo {
			t.Errorf("error %v is not a *NotRegularError naming %s", err, fifo)
		}
	})
}

// endless is a reader that never ends, like /dev/zero or a /proc file
// whose stat size is 0.
type endless struct{}

func (endless) Read(p []byte) (int, error) {
	for i := range p {
		p[i] = 'z'
	}
	return len(p), nil
}

// TestReadLimitedIgnoresStatSize checks the cap holds even when the size
// stat gave was wrong (0 for /proc files, or a file that grew since).
func TestReadLimitedIgnoresStatSize(t *testing.T) {
	for _, size := range []int64{-1, 0, 10} {
		_, err := readLimited("grows", endless{}, size, 1000)
		var le *LimitError
		if !errors.As(err, &le) || le.Limit != 1000 || !strings.Contains(err.Error(), "grows: more than the 1000 B limit") {
			t.Errorf("stat size %d: error %v, want a LimitError at 1000 B", size, err)
		}
	}
	if _, err := readLimited("x", strings.NewReader(""), 0, -1); err == nil {
		t.Error("a negative limit was accepted")
	}
}

func TestReadFileFS(t *testing.T) {
	mfs := fstest.MapFS{
		"d/ok.yaml":  {Data: []byte("name: x\n")},
		"d/big.csv":  {Data: bytes.Repeat([]byte("1,2\n"), 1000)},
		"d/sub/x":    {Data: []byte("x")},
		"d/pipe":     {Mode: fs.ModeNamedPipe},
		"d/dev":      {Mode: fs.ModeDevice | fs.ModeCharDevice},
		"d/exact.bn": {Data: make([]byte, 64)},
	}
	dir := t.TempDir()
	if err := syscall.Mkfifo(filepath.Join(dir, "fifo"), 0o600); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "f"), []byte("abc"), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		fsys  fs.FS
		name  string
		limit int64
		want  string
		is    error
		msg   string
	}{
		{mfs, "d/ok.yaml", 100, "name: x\n", nil, ""},
		{mfs, "d/exact.bn", 64, string(make([]byte, 64)), nil, ""},
		{mfs, "d/big.csv", 1024, "", ErrTooLarge, "d/big.csv: 3.9 KiB is more than the 1 KiB limit"},
		{mfs, "d/sub", 100, "", ErrNotRegular, "d/sub: is a directory"},
		{mfs, "d/pipe", 100, "", ErrNotRegular, "d/pipe: is a named pipe (FIFO)"},
		{mfs, "d/dev", 100, "", ErrNotRegular, "d/dev: is a character device"},
		{mfs, "d/none", 100, "", fs.ErrNotExist, "open d/none: file does not exist"},
		{os.DirFS(dir), "fifo", 100, "", ErrNotRegular, "fifo: is a named pipe (FIFO)"},
		{os.DirFS(dir), "f", 3, "abc", nil, ""},
		{os.DirFS(dir), "f", 2, "", ErrTooLarge, "f: 3 B is more than the 2 B limit"},
	}
	for _, c := range cases {
		var b []byte
		var err error
		within(t, 5*time.Second, func() { b, err = ReadFileFS(c.fsys, c.name, c.limit) })
		if c.is == nil {
			if err != nil || string(b) != c.want {
				t.Errorf("%s: got %q, %v; want %q", c.name, b, err, c.want)
			}
			continue
		}
		if !errors.Is(err, c.is) || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%s: error %v; want one matching %v containing %q", c.name, err, c.is, c.msg)
		}
	}
}

func TestFormatSize(t *testing.T) {
	cases := []struct {
		n    int64
		want string
	}{
		{0, "0 B"}, {1023, "1023 B"}, {1024, "1 KiB"}, {1536, "1.5 KiB"},
		{LimitDescription, "1 MiB"}, {LimitTable, "512 MiB"}, {LimitCheckpoint, "4 GiB"},
		{3 * GiB / 2, "1.5 GiB"}, {GiB << 10, "1 TiB"},
	}
	for _, c := range cases {
		if got := FormatSize(c.n); got != c.want {
			t.Errorf("FormatSize(%d) = %q, want %q", c.n, got, c.want)
		}
	}
}

func TestTempNames(t *testing.T) {
	cases := []struct {
		name       string
		temp, ours bool
	}{
		{".checkpoint.bin.tmp-123", true, true},
		{".posterior.npy.tmp-9", true, true},
		{".summary.json.tmp-", true, true},
		{".meta.json.tmp-abc", true, true},
		{".chain.csv.tmp-1", true, false}, // a temporary, but not of the files named below
		{"checkpoint.bin.tmp-1", false, false},
		{"checkpoint.bin", false, false},
		{".checkpoint.bin", false, false},
		{".tmp-1", false, false},
		{"..tmp-1", true, false},
		{"", false, false},
	}
	ours := TempsOf("checkpoint.bin", "posterior.npy", "summary.json", "meta.json", "")
	for _, c := range cases {
		if got := IsTempName(c.name); got != c.temp {
			t.Errorf("IsTempName(%q) = %v, want %v", c.name, got, c.temp)
		}
		if got := ours(c.name); got != c.ours {
			t.Errorf("TempsOf(...)(%q) = %v, want %v", c.name, got, c.ours)
		}
	}
}

func TestRemoveStale(t *testing.T) {
	dir := t.TempDir()
	old := time.Now().Add(-time.Hour)
	mk := func(name string, mtime time.Time) {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
		if err := os.Chtimes(p, mtime, mtime); err != nil {
			t.Fatal(err)
		}
	}
	mk(".checkpoint.bin.tmp-1", old)
	mk(".meta.json.tmp-22", old)
	mk(".summary.json.tmp-3", time.Now().Add(time.Hour)) // written after the cut-off: a live writer's
	mk("checkpoint.bin", old)
	mk(".hidden", old)
	mk("target", old)
	if err := os.Mkdir(filepath.Join(dir, ".posterior.npy.tmp-dir"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, ".posterior.npy.tmp-dir", ".meta.json.tmp-4"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(dir, "target"), filepath.Join(dir, ".meta.json.tmp-link")); err != nil {
		t.Fatal(err)
	}
	if err := syscall.Mkfifo(filepath.Join(dir, ".meta.json.tmp-fifo"), 0o600); err != nil {
		t.Fatal(err)
	}
	removed, err := RemoveStale(dir, IsTempName, time.Now())
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{".checkpoint.bin.tmp-1", ".meta.json.tmp-22"}; !slices.Equal(removed, want) {
		t.Errorf("removed %v, want %v", removed, want)
	}
	ents, _ := os.ReadDir(dir)
	var left []string
	for _, e := range ents {
		left = append(left, e.Name())
	}
	want := []string{".hidden", ".meta.json.tmp-fifo", ".meta.json.tmp-link", ".posterior.npy.tmp-dir", ".summary.json.tmp-3", "checkpoint.bin", "target"}
	if !slices.Equal(left, want) {
		t.Errorf("left %v, want %v", left, want)
	}
	if _, err := os.Stat(filepath.Join(dir, ".posterior.npy.tmp-dir", ".meta.json.tmp-4")); err != nil {
		t.Errorf("a file in a subfolder was touched: %v", err)
	}
	if _, err := RemoveStale(filepath.Join(dir, "missing"), IsTempName, time.Now()); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("missing folder: error %v, want ErrNotExist", err)
	}
	again, err := RemoveStale(dir, IsTempName, time.Now())
	if err != nil || len(again) != 0 {
		t.Errorf("second pass removed %v, %v; want nothing", again, err)
	}
}

// FuzzReadLimited checks, for any content, cap and chunking of the reads,
// that the whole content comes back when it fits and a LimitError when it
// does not, never more than limit bytes either way.
func FuzzReadLimited(f *testing.F) {
	f.Add([]byte(""), uint16(0), uint8(0))
	f.Add([]byte("abc"), uint16(3), uint8(1))
	f.Add([]byte("abcd"), uint16(3), uint8(2))
	f.Add(bytes.Repeat([]byte{0}, 5000), uint16(600), uint8(3))
	f.Fuzz(func(t *testing.T, data []byte, limit uint16, mode uint8) {
		var r io.Reader = bytes.NewReader(data)
		size := int64(len(data))
		switch mode % 4 {
		case 1:
			r = iotest.OneByteReader(r)
		case 2:
			r, size = iotest.HalfReader(r), -1
		case 3:
			r, size = iotest.DataErrReader(r), 0 // a stat size that lies
		}
		b, err := readLimited("f", r, size, int64(limit))
		if len(data) <= int(limit) {
			if err != nil || !bytes.Equal(b, data) {
				t.Fatalf("%d bytes under limit %d: got %d bytes, %v", len(data), limit, len(b), err)
			}
			return
		}
		if !errors.Is(err, ErrTooLarge) || b != nil {
			t.Fatalf("%d bytes over limit %d: got %d bytes, %v", len(data), limit, len(b), err)
		}
	})
}
