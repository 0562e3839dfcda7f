package chains

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strings"

	"codeberg.org/sbinet/npyio/npy"

	"tautline/internal/safeio"
)

// WriteNPY writes the rows x cols matrix held row-major in data to path as
// a NumPy .npy file (dtype "<f8", C order), atomically: the header of
// npyHeader followed by the values as little-endian float64 bits. An empty
// matrix (rows or cols zero) keeps its shape, so that numpy.load returns an
// array of shape (rows, cols).
func WriteNPY(path string, rows, cols int, data []float64) error {
	if rows < 0 || cols < 0 {
		return fmt.Errorf("chains: %s: negative matrix size %dx%d", path, rows, cols)
	}
	if cols > 0 && rows > len(data)/cols || rows*cols != len(data) {
		return fmt.Errorf("chains: %s: %dx%d matrix needs %d values, got %d", path, rows, cols, rows*cols, len(data))
	}
	return WriteFileAtomic(path, func(w io.Writer) error {
		if _, err := w.Write(npyHeader(rows, cols)); err != nil {
			return err
		}
		// WriteFileAtomic buffers w; encode in chunks so a large matrix
		// is not copied whole.
		var buf [8 * 512]byte
		for len(data) > 0 {
			n := min(len(data), len(buf)/8)
			for i, v := range data[:n] {
				binary.LittleEndian.PutUint64(buf[8*i:], math.Float64bits(v))
			}
			if _, err := w.Write(buf[:8*n]); err != nil {
				return err
			}
			data = data[n:]
		}
		return nil
	})
}

// npyAlign is the alignment of the data in a .npy file: the format
// specification (NumPy enhancement proposal 1, version 1.0) pads the header
// so that magic, version, length field and header together are a multiple
// of 16 bytes; current NumPy pads to 64, which also satisfies 16, and so
// do we.
const npyAlign = 64

// npyHeader returns the version-1.0 .npy header of a rows x cols float64
// matrix in C order, laid out as the format specification (NumPy
// enhancement proposal 1) requires: the magic "\x93NUMPY", the version
// bytes 1, 0, the header length as a little-endian uint16, and a Python
// dict literal padded with spaces and ended by a newline so that the data
// start on an npyAlign-byte boundary.
func npyHeader(rows, cols int) []byte {
	const pre = 10 // magic (6), version (2), header length (2)
	dict := fmt.Sprintf("{'descr': '<f8', 'fortran_order': False, 'shape': (%d, %d), }", rows, cols)
	n := pre + len(dict) + 1 // + the newline
	pad := (npyAlign - n%npyAlign) % npyAlign
	b := make([]byte, 0, n+pad)
	b = append(b, "\x93NUMPY\x01\x00"...)
	b = binary.LittleEndian.AppendUint16(b, uint16(len(dict)+pad+1))
	b = append(b, dict...)
	for range pad {
		b = append(b, ' ')
	}
	return append(b, '\n')
}

// ReadNPY reads a two-dimensional float64 .npy file (either byte order,
// either memory order) and returns it row-major. A one-dimensional array of
// length n is returned as an n x 1 matrix. Only a regular file of at most
// NPYLimit bytes is read.
func ReadNPY(path string) (rows, cols int, data []float64, err error) {
	f, err := safeio.Open(path)
	if err != nil {
		return 0, 0, nil, fmt.Errorf("chains: %w", err)
	}
	defer f.Close()
	if st, err := f.Stat(); err == nil && st.Size() > NPYLimit {
		return 0, 0, nil, fmt.Errorf("chains: %w", &safeio.LimitError{Path: path, Limit: NPYLimit, Size: st.Size()})
	}
	rows, cols, data, err = readNPY(f)
	if err != nil {
		return 0, 0, nil, fmt.Errorf("chains: %s: %w", path, err)
	}
	return rows, cols, data, nil
}

// NPYLimit caps the .npy files ReadNPY reads. The largest array tautline
// writes is a comparison's lnl.npy, 8 bytes per rung, recorded step and
// walker, which is the bulk of a tempered run's checkpoint too, so the
// checkpoint's cap (safeio.LimitCheckpoint, 4 GiB) serves.
const NPYLimit = safeio.LimitCheckpoint

func readNPY(f *os.File) (rows, cols int, data []float64, err error) {
	// The decoder panics on some malformed headers; report those as errors.
	defer func() {
		if r := recover(); r != nil {
			rows, cols, data, err = 0, 0, nil, fmt.Errorf("malformed .npy file (%v)", r)
		}
	}()
	st, err := f.Stat()
	if err != nil {
		return 0, 0, nil, err
	}
	// Check the header length against the file before the decoder
	// allocates a buffer of that size.
	var pre [12]byte
	if _, err := io.ReadFull(f, pre[:]); err != nil || string(pre[:6]) != "\x93NUMPY" {
		return 0, 0, nil, errors.New("not a .npy file (no \"\\x93NUMPY\" magic)")
	}
	hend := 10 + int64(binary.LittleEndian.Uint16(pre[8:]))
	if pre[6] >= 2 {
		hend = 12 + int64(binary.LittleEndian.Uint32(pre[8:]))
	}
	if hend > st.Size() {
		return 0, 0, nil, fmt.Errorf("header length %d runs past the end of the file (%d bytes)", hend, st.Size())
	}
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		return 0, 0, nil, err
	}
	// The decoder parses the header; the values are read here in bulk
	// (the decoder reads them one by one).
	br := bufio.NewReaderSize(f, 1<<16)
	r, err := npy.NewReader(br)
	if err != nil {
		return 0, 0, nil, fmt.Errorf("not a .npy file: %w", err)
	}
	h := r.Header.Descr
	if dt := strings.Trim(h.Type, `'"`); dt != "<f8" && dt != ">f8" {
		return 0, 0, nil, fmt.Errorf("dtype %s, want float64 ('<f8')", h.Type)
	}
	switch len(h.Shape) {
	case 1:
		rows, cols = h.Shape[0], 1
	case 2:
		rows, cols = h.Shape[0], h.Shape[1]
	default:
		return 0, 0, nil, fmt.Errorf("shape %v, want a matrix", h.Shape)
	}
	if rows < 0 || cols < 0 {
		return 0, 0, nil, fmt.Errorf("shape %v: negative size", h.Shape)
	}
	if rows == 0 || cols == 0 {
		return rows, cols, []float64{}, nil
	}
	// Check the size against the file before allocating for it.
	if int64(rows) > st.Size()/8/int64(cols) {
		return 0, 0, nil, fmt.Errorf("shape %v needs %d bytes of data; file has %d in all", h.Shape, 8*int64(rows)*int64(cols), st.Size())
	}
	order := binary.ByteOrder(binary.LittleEndian)
	if strings.Trim(h.Type, `'"`) == ">f8" {
		order = binary.BigEndian
	}
	data = make([]float64, rows*cols)
	var buf [8 * 4096]byte
	for done := 0; done < len(data); {
		n := min(len(data)-done, len(buf)/8)
		if k, err := io.ReadFull(br, buf[:8*n]); err != nil {
			return 0, 0, nil, fmt.Errorf("shape %v, but %d values", h.Shape, done+k/8)
		}
		for i := range data[done : done+n] {
			data[done+i] = math.Float64frombits(order.Uint64(buf[8*i:]))
		}
		done += n
	}
	if h.Fortran && cols > 1 && rows > 1 {
		t := make([]float64, len(data))
		for j := range cols {
			for i := range rows {
				t[i*cols+j] = data[j*rows+i]
			}
		}
		data = t
	}
	return rows, cols, data, nil
}
