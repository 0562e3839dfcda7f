package chains

import (
	"bytes"
	"encoding/binary"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"codeberg.org/sbinet/npyio"
	"codeberg.org/sbinet/npyio/npy"
	"gonum.org/v1/gonum/mat"
)

// TestWriteNPYLayout checks WriteNPY's files byte by byte against the .npy
// format specification (NumPy enhancement proposal 1, version 1.0): magic
// "\x93NUMPY", version 1.0, a little-endian uint16 header length, the dict
// literal "{'descr': '<f8', 'fortran_order': False, 'shape': (R, C), }"
// padded with spaces and ended by '\n' so that the whole header is a
// multiple of 64 bytes (what current NumPy writes; the original
// specification asks for 16), then R*C little-endian float64 values in C
// order. The values must come back bit-identical through ReadNPY and
// through the independent reader of the npyio library.
func TestWriteNPYLayout(t *testing.T) {
	cases := []struct {
		rows, cols int
		dict       string
		// dataAt is the data offset worked by hand: 10 bytes of magic,
		// version and length, the dict (59 characters for one-digit
		// dimensions, 62 for "7200, 2") and the newline make 70 or 73,
		// rounded up to the next multiple of 64.
		dataAt int
	}{
		{1, 1, "{'descr': '<f8', 'fortran_order': False, 'shape': (1, 1), }", 128},
		{3, 3, "{'descr': '<f8', 'fortran_order': False, 'shape': (3, 3), }", 128},
		{7200, 2, "{'descr': '<f8', 'fortran_order': False, 'shape': (7200, 2), }", 128},
		{0, 3, "{'descr': '<f8', 'fortran_order': False, 'shape': (0, 3), }", 128},
		{4, 0, "{'descr': '<f8', 'fortran_order': False, 'shape': (4, 0), }", 128},
	}
	src := rand.New(rand.NewPCG(3, 4))
	dir := t.TempDir()
	for _, c := range cases {
		data := make([]float64, c.rows*c.cols)
		for i := range data {
			// Arbitrary bit patterns with a finite exponent, so that any
			// byte-order or rounding slip shows.
			data[i] = math.Float64frombits(src.Uint64()&^(0x7ff<<52) | uint64(src.IntN(0x7ff))<<52)
		}
		if len(data) >= 4 {
			copy(data, []float64{math.Inf(-1), math.Copysign(0, -1), 5e-324, math.MaxFloat64})
		}
		p := filepath.Join(dir, "m.npy")
		if err := WriteNPY(p, c.rows, c.cols, data); err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if len(b) < 10 || string(b[:8]) != "\x93NUMPY\x01\x00" {
			t.Fatalf("%dx%d: magic and version %q", c.rows, c.cols, b[:min(len(b), 8)])
		}
		hlen := int(binary.LittleEndian.Uint16(b[8:]))
		if 10+hlen != c.dataAt || (10+hlen)%64 != 0 {
			t.Errorf("%dx%d: data at byte %d, want %d (a multiple of 64)", c.rows, c.cols, 10+hlen, c.dataAt)
		}
		if len(b) != 10+hlen+8*len(data) {
			t.Fatalf("%dx%d: file %d bytes, want %d", c.rows, c.cols, len(b), 10+hlen+8*len(data))
		}
		want := c.dict + strings.Repeat(" ", hlen-len(c.dict)-1) + "\n"
		if got := string(b[10 : 10+hlen]); got != want {
			t.Errorf("%dx%d: header %q, want %q", c.rows, c.cols, got, want)
		}
		for i, v := range data {
			if got := binary.LittleEndian.Uint64(b[10+hlen+8*i:]); got != math.Float64bits(v) {
				t.Fatalf("%dx%d: value %d on disk %#x, want %#x", c.rows, c.cols, i, got, math.Float64bits(v))
			}
		}

		r, k, got, err := ReadNPY(p)
		if err != nil || r != c.rows || k != c.cols || !sameBits(got, data) {
			t.Errorf("%dx%d: ReadNPY gave %dx%d, %v; values identical: %v", c.rows, c.cols, r, k, err, sameBits(got, data))
		}

		// The library's reader: a gonum matrix for non-empty shapes (it
		// cannot hold an empty one), the parsed header for all.
		nr, err := npy.NewReader(bytes.NewReader(b))
		if err != nil {
			t.Fatalf("%dx%d: npy.NewReader: %v", c.rows, c.cols, err)
		}
		h := nr.Header
		if h.Major != 1 || h.Minor != 0 || strings.Trim(h.Descr.Type, `'"`) != "<f8" || h.Descr.Fortran || len(h.Descr.Shape) != 2 ||
			h.Descr.Shape[0] != c.rows || h.Descr.Shape[1] != c.cols {
			t.Errorf("%dx%d: npy header %+v", c.rows, c.cols, h)
		}
		if len(data) == 0 {
			continue
		}
		var m mat.Dense
		if err := npyio.Read(bytes.NewReader(b), &m); err != nil {
			t.Fatalf("%dx%d: npyio.Read: %v", c.rows, c.cols, err)
		}
		if mr, mc := m.Dims(); mr != c.rows || mc != c.cols || !sameBits(m.RawMatrix().Data, data) {
			t.Errorf("%dx%d: npyio.Read gave %dx%d; values identical: %v", c.rows, c.cols, mr, mc, sameBits(m.RawMatrix().Data, data))
		}
	}
}

// TestNPYHeaderAlignment: the header is a multiple of 64 bytes and ends in
// '\n' for shapes up to the largest an int holds, where the dict literal is
// longest (95 characters, still inside 128 bytes).
func TestNPYHeaderAlignment(t *testing.T) {
	for _, s := range [][2]int{{0, 0}, {1, 1}, {10, 10}, {99999, 7}, {1e9, 1e9}, {math.MaxInt64, math.MaxInt64}} {
		h := npyHeader(s[0], s[1])
		if len(h)%64 != 0 || h[len(h)-1] != '\n' || int(binary.LittleEndian.Uint16(h[8:])) != len(h)-10 {
			t.Errorf("%v: header of %d bytes, length field %d, last byte %q", s, len(h), binary.LittleEndian.Uint16(h[8:]), h[len(h)-1])
		}
	}
}

// sameBits reports whether a and b hold the same float64 bit patterns.
func sameBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// BenchmarkWriteNPY writes a 7200 x 2 posterior.
func BenchmarkWriteNPY(b *testing.B) {
	data := make([]float64, 7200*2)
	for i := range data {
		data[i] = float64(i)
	}
	p := filepath.Join(b.TempDir(), "m.npy")
	b.ReportAllocs()
	for b.Loop() {
		if err := WriteNPY(p, 7200, 2, data); err != nil {
			b.Fatal(err)
		}
	}
}
