package importer

import (
	"encoding/binary"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

// npyBytes lays out a .npy file by hand following the NumPy format
// specification (NEP 1, version 1.0): the magic "\x93NUMPY", version bytes
// 1 and 0, the header length as a little-endian uint16, the header dict
// with keys descr, fortran_order and shape, padded with spaces and ended by
// a newline so that magic, version, length and header are a multiple of 64
// bytes; then the values in the stated byte order and memory order.
// vals[i][j] is row i, column j.
func npyBytes(descr string, fortran bool, vals [][]float64) []byte {
	rows, cols := len(vals), len(vals[0])
	fo := "False"
	if fortran {
		fo = "True"
	}
	dict := fmt.Sprintf("{'descr': '%s', 'fortran_order': %s, 'shape': (%d, %d), }", descr, fo, rows, cols)
	pad := (64 - (10+len(dict)+1)%64) % 64
	b := []byte("\x93NUMPY\x01\x00")
	b = binary.LittleEndian.AppendUint16(b, uint16(len(dict)+pad+1))
	b = append(b, dict...)
	b = append(b, strings.Repeat(" ", pad)...)
	b = append(b, '\n')
	var order binary.AppendByteOrder = binary.LittleEndian
	if descr[0] == '>' {
		order = binary.BigEndian
	}
	put := func(v float64) {
		if descr[1:] == "f4" {
			b = order.AppendUint32(b, math.Float32bits(float32(v)))
		} else {
			b = order.AppendUint64(b, math.Float64bits(v))
		}
	}
	if fortran {
		for j := range cols {
			for i := range rows {
				put(vals[i][j])
			}
		}
	} else {
		for i := range rows {
			for j := range cols {
				put(vals[i][j])
			}
		}
	}
	return b
}

// npyRaw lays out a .npy file with the header dict given verbatim.
func npyRaw(dict string, data []byte) []byte {
	pad := (64 - (10+len(dict)+1)%64) % 64
	b := []byte("\x93NUMPY\x01\x00")
	b = binary.LittleEndian.AppendUint16(b, uint16(len(dict)+pad+1))
	b = append(b, dict...)
	b = append(b, strings.Repeat(" ", pad)...)
	b = append(b, '\n')
	return append(b, data...)
}

// samples draws rows x cols invented posterior samples of log10 rho,
// column j around -7 - 0.05 j with width 0.3, clipped to [-10, -4].
func samples(rows, cols int, seed uint64) [][]float64 {
	r := rand.New(rand.NewPCG(seed, 1))
	v := make([][]float64, rows)
	for i := range v {
		v[i] = make([]float64, cols)
		for j := range v[i] {
			v[i][j] = math.Min(math.Max(-7-0.05*float64(j)+0.3*r.NormFloat64(), -10), -4)
		}
	}
	return v
}

func writeFile(t testing.TB, dir, name string, data []byte) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, data, 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// meta returns the caller-supplied facts of the invented test data sets.
func meta(name string, bins int) Meta {
	return Meta{Name: name, Provenance: "simulated: invented samples for tests", Span: 4.7e8, Harmonics: bins, PriorMin: -10, PriorMax: -4}
}

// quadFixed integrates f on [a, b] with gonum's Gauss-Legendre rule of 64
// points on 16 panels, accurate to round-off for the smooth pieces used.
func quadFixed(f func(float64) float64, a, b float64) float64 {
	s := 0.0
	for k := range 16 {
		lo := a + (b-a)*float64(k)/16
		hi := a + (b-a)*float64(k+1)/16
		s += quad.Fixed(f, lo, hi, 64, nil, 0)
	}
	return s
}
