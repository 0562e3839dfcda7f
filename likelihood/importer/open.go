package importer

import (
	"fmt"
	"io"
	"io/fs"
	"os"
)

// Read limits.
const (
	// DefaultLimit caps the bytes read from one matrix or grid file (and
	// the uncompressed size of one array in an .npz archive): 2 GiB.
	DefaultLimit int64 = 2 << 30
	// SummaryLimit caps the bytes read from one summary table: 64 MiB.
	SummaryLimit int64 = 64 << 20
)

// openRegular opens path for reading after checking that it is a regular
// file of at most limit bytes; it returns the file and its size.
func openRegular(path string, limit int64) (*os.File, int64, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, 0, fmt.Errorf("importer: %w", err)
	}
	if err := checkRegular(path, st, limit); err != nil {
		return nil, 0, err
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, 0, fmt.Errorf("importer: %w", err)
	}
	// The file may have been replaced between Stat and Open.
	st, err = f.Stat()
	if err == nil {
		err = checkRegular(path, st, limit)
	}
	if err != nil {
		f.Close()
		return nil, 0, err
	}
	return f, st.Size(), nil
}

func checkRegular(path string, st fs.FileInfo, limit int64) error {
	m := st.Mode()
	if !m.IsRegular() {
		what := "not a regular file"
		switch {
		case m.IsDir():
			what = "a directory"
		case m&fs.ModeNamedPipe != 0:
			what = "a named pipe"
		case m&fs.ModeDevice != 0:
			what = "a device"
		case m&fs.ModeSocket != 0:
			what = "a socket"
		}
		return fmt.Errorf("importer: %s: is %s; give a regular file", path, what)
	}
	if st.Size() > limit {
		return fmt.Errorf("importer: %s: %d bytes is more than the limit of %s", path, st.Size(), byteSize(limit))
	}
	return nil
}

// byteSize writes n as a whole number of GiB, MiB or KiB when it is one.
func byteSize(n int64) string {
	for _, u := range []struct {
		s string
		b int64
	}{{"GiB", 1 << 30}, {"MiB", 1 << 20}, {"KiB", 1 << 10}} {
		if n >= u.b && n%u.b == 0 {
			return fmt.Sprintf("%d %s", n/u.b, u.s)
		}
	}
	return fmt.Sprintf("%d bytes", n)
}

// capped reads at most limit bytes of r and reports the overrun as an
// error naming file, for inputs that may grow while being read.
type capped struct {
	r     io.Reader
	left  int64
	limit int64
	file  string
}

func (c *capped) Read(p []byte) (int, error) {
	if c.left <= 0 {
		var one [1]byte
		if n, _ := c.r.Read(one[:]); n > 0 {
			return 0, fmt.Errorf("importer: %s: more than the limit of %s", c.file, byteSize(c.limit))
		}
		return 0, io.EOF
	}
	if int64(len(p)) > c.left {
		p = p[:c.left]
	}
	n, err := c.r.Read(p)
	c.left -= int64(n)
	return n, err
}
