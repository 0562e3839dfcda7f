package importer

import (
	"math"
	"path/filepath"
	"testing"
)

// TestNumPyFixtures reads files written by NumPy itself (see
// testdata/numpy/README.md): every layout must give the same matrix as the
// text file NumPy wrote with 17 significant digits (exact for float64),
// float32 to float32 precision, and an import of each must validate.
func TestNumPyFixtures(t *testing.T) {
	dir := filepath.Join("testdata", "numpy")
	ref, err := ReadText(filepath.Join(dir, "samples.txt"), 0)
	if err != nil {
		t.Fatal(err)
	}
	if ref.Rows != 60 || len(ref.Cols) != 3 {
		t.Fatalf("samples.txt: %dx%d", ref.Rows, len(ref.Cols))
	}
	for _, c := range []struct {
		file, array string
		f32         bool
	}{
		{"c-f8.npy", "", false},
		{"fortran-f8.npy", "", false},
		{"v2-f8.npy", "", false},
		{"big-endian-f4.npy", "", true},
		{"arrays.npz", "rho", false},
	} {
		m, err := ReadMatrix(filepath.Join(dir, c.file), c.array, 0)
		if err != nil {
			t.Fatalf("%s: %v", c.file, err)
		}
		if m.Rows != 60 || len(m.Cols) != 3 {
			t.Fatalf("%s: %dx%d", c.file, m.Rows, len(m.Cols))
		}
		for j := range 3 {
			for i := range 60 {
				want := ref.Cols[j][i]
				if c.f32 {
					want = float64(float32(want))
				}
				if m.Cols[j][i] != want && !(math.IsNaN(want) && math.IsNaN(m.Cols[j][i])) {
					t.Fatalf("%s: [%d,%d] = %.17g, want %.17g", c.file, i, j, m.Cols[j][i], want)
				}
			}
		}
		if _, err := FromMatrix(m, MatrixOptions{Meta: meta("np", 3)}); err != nil {
			t.Errorf("%s: %v", c.file, err)
		}
	}
	if _, err := ReadNPY(filepath.Join(dir, "int.npy"), 0); err == nil {
		t.Error("int.npy: integer array accepted")
	}
	if m, err := ReadNPZ(filepath.Join(dir, "arrays.npz"), "other.npy", 0); err != nil || len(m.Cols) != 2 {
		t.Errorf("arrays.npz[other]: %v", err)
	}
}
