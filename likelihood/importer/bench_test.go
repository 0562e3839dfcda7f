package importer

import (
	"testing"
)

// benchNPY writes a 1e5 x 30 float64 .npy samples matrix.
func benchNPY(b *testing.B) string {
	b.Helper()
	return writeFile(b, b.TempDir(), "big.npy", npyBytes("<f8", false, samples(100000, 30, 11)))
}

// BenchmarkImportNPY measures reading a 1e5 x 30 float64 .npy matrix and
// turning it into a validated data set.
func BenchmarkImportNPY(b *testing.B) {
	p := benchNPY(b)
	b.ReportAllocs()
	for b.Loop() {
		m, err := ReadNPY(p, 0)
		if err != nil {
			b.Fatal(err)
		}
		if _, err := FromMatrix(m, MatrixOptions{Meta: meta("big", 30)}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkImportNPYSave adds writing the data set (3e6 CSV rows) and
// loading it back for its digest.
func BenchmarkImportNPYSave(b *testing.B) {
	p := benchNPY(b)
	out := b.TempDir()
	b.ReportAllocs()
	for b.Loop() {
		m, err := ReadNPY(p, 0)
		if err != nil {
			b.Fatal(err)
		}
		ds, err := FromMatrix(m, MatrixOptions{Meta: meta("big", 30)})
		if err != nil {
			b.Fatal(err)
		}
		if _, err := Save(out, ds); err != nil {
			b.Fatal(err)
		}
	}
}
