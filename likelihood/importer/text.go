package importer

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// maxLine caps one line of a text table.
const maxLine = 16 << 20

// ReadText reads a samples matrix (or a wide grid) from a text table: one
// row per line, fields separated by commas (when the first row holds one)
// or by white space; blank lines and lines starting with '#' are skipped.
// The first row is a header of column names when any of its fields is not a
// number. NaN and Inf are read as such and refused later with their place.
// limit caps the bytes read; 0 means DefaultLimit.
func ReadText(path string, limit int64) (*Matrix, error) {
	if limit <= 0 {
		limit = DefaultLimit
	}
	f, _, err := openRegular(path, limit)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return decodeText(&capped{r: f, left: limit, limit: limit, file: path}, path)
}

// lineScanner yields the non-blank, non-comment lines of r with their
// numbers.
type lineScanner struct {
	sc   *bufio.Scanner
	file string
	line int
	text string
}

func newLineScanner(r io.Reader, file string) *lineScanner {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 1<<16), maxLine)
	return &lineScanner{sc: sc, file: file}
}

func (s *lineScanner) next() bool {
	for s.sc.Scan() {
		s.line++
		t := strings.TrimSpace(s.sc.Text())
		if t == "" || t[0] == '#' {
			continue
		}
		s.text = t
		return true
	}
	return false
}

func (s *lineScanner) err() error {
	err := s.sc.Err()
	if err == nil {
		return nil
	}
	if errors.Is(err, bufio.ErrTooLong) {
		return fmt.Errorf("importer: %s: line %d: longer than %s", s.file, s.line+1, byteSize(maxLine))
	}
	if strings.HasPrefix(err.Error(), "importer: ") { // the read cap
		return err
	}
	return fmt.Errorf("importer: %s: %w", s.file, err)
}

// splitFields splits a line at commas or white space.
func splitFields(t string, comma bool) []string {
	if !comma {
		return strings.Fields(t)
	}
	p := strings.Split(t, ",")
	for i := range p {
		p[i] = strings.TrimSpace(p[i])
	}
	return p
}

func decodeText(r io.Reader, src string) (*Matrix, error) {
	s := newLineScanner(r, src)
	m := &Matrix{Source: src}
	comma := false
	first := true
	var nf int
	for s.next() {
		if first {
			first = false
			comma = strings.Contains(s.text, ",")
			f := splitFields(s.text, comma)
			nf = len(f)
			header := false
			for _, x := range f {
				if _, err := strconv.ParseFloat(x, 64); err != nil {
					header = true
				}
			}
			m.Cols = make([][]float64, nf)
			if header {
				for k, x := range f {
					if x == "" {
						return nil, fmt.Errorf("importer: %s: line %d: header: column %d has no name", src, s.line, k)
					}
				}
				m.Names = f
				continue
			}
		}
		f := splitFields(s.text, comma)
		if len(f) != nf {
			return nil, fmt.Errorf("importer: %s: line %d: %d fields, but the first row has %d", src, s.line, len(f), nf)
		}
		for j, x := range f {
			v, err := strconv.ParseFloat(x, 64)
			if err != nil {
				return nil, fmt.Errorf("importer: %s: line %d: column %d: %q is not a number", src, s.line, j, x)
			}
			m.Cols[j] = append(m.Cols[j], v)
		}
		m.lines = append(m.lines, s.line)
		m.Rows++
	}
	if err := s.err(); err != nil {
		return nil, err
	}
	if m.Rows == 0 {
		return nil, fmt.Errorf("importer: %s: no data rows", src)
	}
	return m, nil
}

// ReadLong reads posterior samples in long form: two columns, the bin
// number (1-based) and the value, with an optional header row (for example
// "bin,log10_rho"); the rows of a bin are contiguous and the bins are
// 1..n, each present. Bin j becomes column j-1 of the returned matrix,
// whose Rows is 0 because bins may hold different numbers of samples.
// limit caps the bytes read; 0 means DefaultLimit.
func ReadLong(path string, limit int64) (*Matrix, error) {
	if limit <= 0 {
		limit = DefaultLimit
	}
	f, _, err := openRegular(path, limit)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return decodeLong(&capped{r: f, left: limit, limit: limit, file: path}, path)
}

func decodeLong(r io.Reader, src string) (*Matrix, error) {
	s := newLineScanner(r, src)
	m := &Matrix{Source: src}
	first := true
	comma := false
	cur := 0
	for s.next() {
		if first {
			comma = strings.Contains(s.text, ",")
		}
		f := splitFields(s.text, comma)
		if len(f) != 2 {
			return nil, fmt.Errorf("importer: %s: line %d: %d fields; long form has two, the bin number and the value", src, s.line, len(f))
		}
		b, berr := strconv.Atoi(f[0])
		v, verr := strconv.ParseFloat(f[1], 64)
		if first {
			first = false
			if berr != nil && verr != nil {
				continue // header row
			}
		}
		if berr != nil || b < 1 {
			return nil, fmt.Errorf("importer: %s: line %d: bin: %q is not a bin number >= 1", src, s.line, f[0])
		}
		if verr != nil {
			return nil, fmt.Errorf("importer: %s: line %d: %q is not a number", src, s.line, f[1])
		}
		switch {
		case b == cur:
		case b == cur+1:
			cur = b
			m.Cols = append(m.Cols, nil)
			m.colLines = append(m.colLines, nil)
		case b <= cur:
			return nil, fmt.Errorf("importer: %s: line %d: bin %d after bin %d; the rows of a bin must be contiguous and the bins in order 1, 2, ...", src, s.line, b, cur)
		default:
			return nil, fmt.Errorf("importer: %s: line %d: bin %d after bin %d; bin %d is missing", src, s.line, b, cur, cur+1)
		}
		m.Cols[b-1] = append(m.Cols[b-1], v)
		m.colLines[b-1] = append(m.colLines[b-1], s.line)
	}
	if err := s.err(); err != nil {
		return nil, err
	}
	if len(m.Cols) == 0 {
		return nil, fmt.Errorf("importer: %s: no data rows", src)
	}
	return m, nil
}
