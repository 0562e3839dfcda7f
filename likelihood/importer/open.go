package importer

import (
	"fmt"
	"io"
	"os"

	"tautline/internal/safeio"
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
// file (safeio.Open: never blocking on a named pipe) of at most limit
// bytes; it returns the file and its size.
func openRegular(path string, limit int64) (*os.File, int64, error) {
	f, err := safeio.Open(path)
	if err != nil {
		return nil, 0, fmt.Errorf("importer: %w", err)
	}
	st, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, 0, fmt.Errorf("importer: %w", err)
	}
	if st.Size() > limit {
		f.Close()
		return nil, 0, fmt.Errorf("importer: %w", &safeio.LimitError{Path: path, Limit: limit, Size: st.Size()})
	}
	return f, st.Size(), nil
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
			return 0, fmt.Errorf("importer: %w", &safeio.LimitError{Path: c.file, Limit: c.limit, Size: -1})
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
