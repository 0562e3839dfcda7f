package atomicfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func writeString(s string) func(io.Writer) error {
	return func(w io.Writer) error { _, err := io.WriteString(w, s); return err }
}

func TestWriteReplacesAndKeepsMode(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.txt")
	if err := Write(p, writeString("first\n")); err != nil {
		t.Fatal(err)
	}
	if st, _ := os.Stat(p); st.Mode().Perm() != 0o644 {
		t.Errorf("new file mode %v, want 0644", st.Mode().Perm())
	}
	if err := os.Chmod(p, 0o600); err != nil {
		t.Fatal(err)
	}
	if err := WriteFile(p, []byte("second\n")); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(p); string(b) != "second\n" {
		t.Errorf("content %q, want second", b)
	}
	if st, _ := os.Stat(p); st.Mode().Perm() != 0o600 {
		t.Errorf("mode %v, want the replaced file's 0600", st.Mode().Perm())
	}
	// Larger than the 64 KiB buffer, so that the flush path is exercised.
	big := strings.Repeat("0123456789abcdef", 10000)
	if err := WriteFile(p, []byte(big)); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(p); string(b) != big {
		t.Errorf("large content: %d bytes read back, want %d", len(b), len(big))
	}
}

// TestWriteFailures: every failure leaves the old file and no temporary.
func TestWriteFailures(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.txt")
	if err := WriteFile(p, []byte("kept\n")); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("boom")
	err := Write(p, func(w io.Writer) error {
		io.WriteString(w, "partial")
		return boom
	})
	if !errors.Is(err, boom) || !strings.Contains(err.Error(), p) {
		t.Errorf("error %v, want boom wrapped with the path", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "kept\n" {
		t.Errorf("after failed write: content %q", b)
	}
	if err := os.Mkdir(filepath.Join(dir, "sub"), 0o755); err != nil {
		t.Fatal(err)
	}
	cases := []struct{ name, path, want string }{
		{"folder as target", filepath.Join(dir, "sub"), "not a regular file"},
		{"trailing slash", dir + "/", "not a file name"},
		{"missing folder", filepath.Join(dir, "no", "such", "f"), "no such file"},
	}
	for _, c := range cases {
		if err := WriteFile(c.path, []byte("x")); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want %q", c.name, err, c.want)
		}
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 2 {
		names := []string{}
		for _, e := range ents {
			names = append(names, e.Name())
		}
		t.Errorf("folder holds %v after failed writes, want out.txt and sub only", names)
	}
}

// TestWriteRelative: a bare file name writes into the working folder.
func TestWriteRelative(t *testing.T) {
	t.Chdir(t.TempDir())
	if err := WriteFile("rel.txt", []byte("r")); err != nil {
		t.Fatal(err)
	}
	if b, err := os.ReadFile("rel.txt"); err != nil || string(b) != "r" {
		t.Errorf("read back %q, %v", b, err)
	}
}
