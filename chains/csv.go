package chains

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"tautline/internal/safeio"
)

// A Writer appends rows to a chain file. It is not safe for concurrent use.
type Writer struct {
	path string
	f    *os.File
	bw   *bufio.Writer
	ncol int
	off  int64  // file length once everything appended is flushed
	line []byte // formatting scratch, reused
	err  error  // first write error; later calls return it
	memo *floatMemo
}

var errClosed = errors.New("chains: writer is closed")

// header returns the header line for columns, after checking the names.
func header(columns []string) ([]byte, error) {
	if len(columns) == 0 {
		return nil, errors.New("no columns")
	}
	seen := make(map[string]bool, len(columns))
	for i, c := range columns {
		if c == "" {
			return nil, fmt.Errorf("column %d: empty name", i)
		}
		if j := strings.IndexFunc(c, func(r rune) bool {
			return r <= ' ' || r == ',' || r == '#' || r == '"' || r == '\'' || r == 0x7f
		}); j >= 0 {
			return nil, fmt.Errorf("column %d (%q): names may not contain commas, quotes, '#' or white space", i, c)
		}
		if seen[c] {
			return nil, fmt.Errorf("column %d (%q): duplicate name", i, c)
		}
		seen[c] = true
	}
	return []byte("# " + strings.Join(columns, ",") + "\n"), nil
}

// Create creates (or truncates) the chain file at path and writes the
// header naming columns.
func Create(path string, columns []string) (*Writer, error) {
	h, err := header(columns)
	if err != nil {
		return nil, fmt.Errorf("chains: %s: %w", path, err)
	}
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_TRUNC, 0o644)
	if err != nil {
		return nil, fmt.Errorf("chains: %w", err)
	}
	w := newWriter(path, f, len(columns), 0)
	if _, err := w.bw.Write(h); err != nil {
		f.Close()
		return nil, fmt.Errorf("chains: %s: %w", path, err)
	}
	w.off = int64(len(h))
	return w, nil
}

func newWriter(path string, f *os.File, ncol int, off int64) *Writer {
	return &Writer{
		path: path,
		f:    f,
		bw:   bufio.NewWriterSize(f, 1<<16),
		ncol: ncol,
		off:  off,
		line: make([]byte, 0, 32*ncol+1),
		memo: new(floatMemo),
	}
}

// memoBits is log2 of the number of formatted values a Writer remembers:
// 4096 hold the values of the last few dozen steps of an ensemble, so a
// walker whose proposal was rejected, which repeats its previous row, is
// usually written from memory.
const memoBits = 12

// floatMemo remembers the text of recently formatted values, indexed by a
// hash of their bits. An entry is only used for the same bits, so the
// output is exactly strconv's.
type floatMemo [1 << memoBits]struct {
	bits uint64
	n    uint8 // text length; 0 for an empty entry
	text [24]byte
}

// appendFloat appends v formatted as strconv.AppendFloat(b, v, 'g', -1, 64)
// does: the shortest text that reads back as v.
func (m *floatMemo) appendFloat(b []byte, v float64) []byte {
	// Integers below 1e6 in magnitude print as plain integers in 'g' format
	// (shorter than their exponent form); -0 prints as "-0".
	if v > -1e6 && v < 1e6 && v == float64(int64(v)) && (v != 0 || !math.Signbit(v)) {
		return strconv.AppendInt(b, int64(v), 10)
	}
	bits := math.Float64bits(v)
	e := &m[(bits*0x9e3779b97f4a7c15)>>(64-memoBits)]
	if e.n > 0 && e.bits == bits {
		return append(b, e.text[:e.n]...)
	}
	start := len(b)
	b = strconv.AppendFloat(b, v, 'g', -1, 64)
	if t := b[start:]; len(t) <= len(e.text) {
		e.bits, e.n = bits, uint8(copy(e.text[:], t))
	}
	return b
}

// Resume reopens a chain file written by a Writer, checks that its header
// names columns, truncates it to offset (a length returned by Flush) and
// positions the Writer there, so that appending continues exactly where the
// flushed part of the file ended.
func Resume(path string, columns []string, offset int64) (*Writer, error) {
	h, err := header(columns)
	if err != nil {
		return nil, fmt.Errorf("chains: %s: %w", path, err)
	}
	// A named pipe or device in the chain's place would block the reads
	// below or never end: check the type before opening and on the open
	// file.
	if st, err := os.Stat(path); err != nil {
		return nil, fmt.Errorf("chains: %w", err)
	} else if err := safeio.CheckRegular(path, st); err != nil {
		return nil, fmt.Errorf("chains: %w", err)
	}
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		return nil, fmt.Errorf("chains: %w", err)
	}
	fail := func(format string, a ...any) (*Writer, error) {
		f.Close()
		return nil, fmt.Errorf("chains: %s: "+format, append([]any{path}, a...)...)
	}
	st, err := f.Stat()
	if err != nil {
		return fail("%w", err)
	}
	if err := safeio.CheckRegular(path, st); err != nil {
		f.Close()
		return nil, fmt.Errorf("chains: %w", err)
	}
	got := make([]byte, len(h))
	if _, err := io.ReadFull(f, got); err != nil || !bytes.Equal(got, h) {
		line, _, _ := bytes.Cut(got, []byte("\n"))
		return fail("line 1: header %q does not match the expected columns %q", line, strings.Join(columns, ","))
	}
	if offset < int64(len(h)) || offset > st.Size() {
		return fail("resume offset %d outside the file (header ends at %d, file length %d)", offset, len(h), st.Size())
	}
	last := make([]byte, 1)
	if _, err := f.ReadAt(last, offset-1); err != nil {
		return fail("%w", err)
	}
	if last[0] != '\n' {
		return fail("resume offset %d is not at the end of a line", offset)
	}
	if err := f.Truncate(offset); err != nil {
		return fail("%w", err)
	}
	if _, err := f.Seek(offset, io.SeekStart); err != nil {
		return fail("%w", err)
	}
	if err := f.Sync(); err != nil {
		return fail("%w", err)
	}
	return newWriter(path, f, len(columns), offset), nil
}

// Append adds one row, which must have one value per column. Rows are
// buffered; call Flush to make them durable. Append does not allocate.
func (w *Writer) Append(row []float64) error {
	if w.err != nil {
		return w.err
	}
	if len(row) != w.ncol {
		return fmt.Errorf("chains: %s: row has %d values, want %d", w.path, len(row), w.ncol)
	}
	b := w.line[:0]
	for j, v := range row {
		if j > 0 {
			b = append(b, ',')
		}
		b = w.memo.appendFloat(b, v)
	}
	b = append(b, '\n')
	w.line = b
	if _, err := w.bw.Write(b); err != nil {
		w.err = fmt.Errorf("chains: %s: %w", w.path, err)
		return w.err
	}
	w.off += int64(len(b))
	return nil
}

// Flush writes the buffered rows and fsyncs the file. It returns the file
// length, the offset at which Resume can continue.
func (w *Writer) Flush() (offset int64, err error) {
	if w.err != nil {
		return 0, w.err
	}
	if err := w.bw.Flush(); err != nil {
		w.err = fmt.Errorf("chains: %s: %w", w.path, err)
		return 0, w.err
	}
	if err := w.f.Sync(); err != nil {
		w.err = fmt.Errorf("chains: %s: %w", w.path, err)
		return 0, w.err
	}
	return w.off, nil
}

// Close flushes and closes the file. Later calls to any method return an
// error.
func (w *Writer) Close() error {
	if w.err == errClosed {
		return errClosed
	}
	_, ferr := w.Flush()
	cerr := w.f.Close()
	w.err = errClosed
	if ferr != nil {
		return ferr
	}
	if cerr != nil {
		return fmt.Errorf("chains: %s: %w", w.path, cerr)
	}
	return nil
}

// ReadCSV reads a chain file written by a Writer: its column names and its
// rows. Errors name the file and line at fault. A last line without its
// newline (a run killed while writing) is an error; Resume at the last
// flushed offset repairs such a file.
func ReadCSV(path string) (columns []string, rows [][]float64, err error) {
	f, err := safeio.Open(path)
	if err != nil {
		return nil, nil, fmt.Errorf("chains: %w", err)
	}
	defer f.Close()
	columns, rows, err = readCSV(bufio.NewReaderSize(f, 1<<16))
	if err != nil {
		return nil, nil, fmt.Errorf("chains: %s:%w", path, err)
	}
	return columns, rows, nil
}

// ScanCSV reads the first limit bytes of a chain file written by a Writer
// (a length returned by Flush, such as a checkpoint's), checks that its
// header names columns, and calls fn with each row in order. The row slice
// is reused between calls. It reads a long chain in constant memory, which
// ReadCSV does not. Errors name the file and line at fault.
func ScanCSV(path string, limit int64, columns []string, fn func(row []float64) error) error {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("chains: %w", err)
	}
	defer f.Close()
	want := strings.Join(columns, ",")
	err = scanCSV(bufio.NewReaderSize(io.LimitReader(f, limit), 1<<16), func(cols []string) error {
		if got := strings.Join(cols, ","); got != want {
			return fmt.Errorf("1: header %q does not match the expected columns %q", got, want)
		}
		return nil
	}, fn)
	if err != nil {
		return fmt.Errorf("chains: %s:%w", path, err)
	}
	return nil
}

// readCSV parses a chain; its errors start with "line N: " (ReadCSV adds
// the file name before them).
func readCSV(r *bufio.Reader) ([]string, [][]float64, error) {
	var (
		columns []string
		rows    [][]float64
		data    []float64
	)
	err := scanCSV(r, func(c []string) error { columns = c; return nil }, func(row []float64) error {
		if len(data)+len(row) > cap(data) {
			data = make([]float64, 0, max(1024*len(row), 2*cap(data)))
		}
		start := len(data)
		data = append(data, row...)
		rows = append(rows, data[start:len(data):len(data)])
		return nil
	})
	if err != nil {
		return nil, nil, err
	}
	return columns, rows, nil
}

// scanCSV parses a chain, passing its column names to head and each row
// (a reused slice) to fn; its errors start with "N: ", the line number.
func scanCSV(r *bufio.Reader, head func([]string) error, fn func([]float64) error) error {
	lineNo := 0
	next := func() (string, bool, error) {
		s, err := r.ReadString('\n')
		if err == io.EOF {
			if s == "" {
				return "", false, nil
			}
			return "", false, fmt.Errorf("%d: incomplete last line (no newline)", lineNo+1)
		}
		if err != nil {
			return "", false, fmt.Errorf("%d: %w", lineNo+1, err)
		}
		lineNo++
		s = strings.TrimSuffix(s[:len(s)-1], "\r")
		return s, true, nil
	}
	h, ok, err := next()
	if err != nil {
		return err
	}
	if !ok {
		return errors.New("1: empty file, want a header line \"# name,name,...\"")
	}
	if !strings.HasPrefix(h, "#") {
		return fmt.Errorf("1: header must start with '#', got %.40q", h)
	}
	columns := strings.Split(strings.TrimSpace(h[1:]), ",")
	if _, err := header(columns); err != nil {
		return fmt.Errorf("1: header: %w", err)
	}
	if err := head(columns); err != nil {
		return err
	}
	row := make([]float64, len(columns))
	for {
		s, ok, err := next()
		if err != nil {
			return err
		}
		if !ok {
			return nil
		}
		fields := strings.Split(s, ",")
		if len(fields) != len(columns) {
			return fmt.Errorf("%d: %d fields, want %d", lineNo, len(fields), len(columns))
		}
		for k, tok := range fields {
			v, err := strconv.ParseFloat(tok, 64)
			if err != nil {
				return fmt.Errorf("%d: field %d (%s): %.40q is not a number", lineNo, k+1, columns[k], tok)
			}
			row[k] = v
		}
		if err := fn(row); err != nil {
			return fmt.Errorf("%d: %w", lineNo, err)
		}
	}
}
