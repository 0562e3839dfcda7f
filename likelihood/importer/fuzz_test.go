package importer

import (
	"bytes"
	"strings"
	"testing"
)

// Every reader must either fail with an "importer: " error or return a
// matrix whose columns have the stated length; none may panic. Seeds live
// in testdata/fuzz.

func checkMatrix(t *testing.T, m *Matrix, err error) {
	t.Helper()
	if err != nil {
		if !strings.HasPrefix(err.Error(), "importer: ") {
			t.Fatalf("error without package prefix: %v", err)
		}
		return
	}
	for j, c := range m.Cols {
		if m.Rows > 0 && len(c) != m.Rows {
			t.Fatalf("column %d has %d values, want %d", j, len(c), m.Rows)
		}
	}
	// Whatever was read must be refused or accepted cleanly downstream.
	if len(m.Cols) > 0 && len(m.Cols) <= 64 {
		_, ferr := FromMatrix(m, MatrixOptions{Meta: meta("f", len(m.Cols))})
		if ferr != nil && !strings.HasPrefix(ferr.Error(), "importer: ") {
			t.Fatalf("FromMatrix error without package prefix: %v", ferr)
		}
	}
}

func FuzzDecodeNPY(f *testing.F) {
	f.Fuzz(func(t *testing.T, b []byte) {
		m, err := decodeNPY(bytes.NewReader(b), "f.npy", int64(len(b)), 1<<20)
		checkMatrix(t, m, err)
	})
}

func FuzzDecodeNPZ(f *testing.F) {
	f.Fuzz(func(t *testing.T, b []byte, name string) {
		m, err := decodeNPZ(bytes.NewReader(b), int64(len(b)), "f.npz", name, 1<<20)
		checkMatrix(t, m, err)
	})
}

func FuzzDecodeText(f *testing.F) {
	f.Fuzz(func(t *testing.T, b []byte) {
		m, err := decodeText(bytes.NewReader(b), "f.txt")
		checkMatrix(t, m, err)
		if err == nil && len(m.Cols) >= 2 && len(m.Cols) <= 64 {
			_, gerr := FromGrid(m, GridOptions{Meta: meta("g", len(m.Cols)-1)})
			if gerr != nil && !strings.HasPrefix(gerr.Error(), "importer: ") {
				t.Fatalf("FromGrid error without package prefix: %v", gerr)
			}
		}
	})
}

func FuzzDecodeLong(f *testing.F) {
	f.Fuzz(func(t *testing.T, b []byte) {
		m, err := decodeLong(bytes.NewReader(b), "f.csv")
		checkMatrix(t, m, err)
	})
}

func FuzzDecodeSummary(f *testing.F) {
	f.Fuzz(func(t *testing.T, b []byte) {
		rows, lines, err := decodeSummary(bytes.NewReader(b), "f.csv")
		if err != nil {
			if !strings.HasPrefix(err.Error(), "importer: ") {
				t.Fatalf("error without package prefix: %v", err)
			}
			return
		}
		if len(rows) != len(lines) || len(rows) > 64 {
			return
		}
		ds, _, err := fromSummary(rows, lines, "f.csv", SummaryOptions{Meta: meta("s", len(rows))})
		if err != nil {
			if !strings.HasPrefix(err.Error(), "importer: ") {
				t.Fatalf("error without package prefix: %v", err)
			}
			return
		}
		if verr := ds.Validate(); verr != nil {
			t.Fatalf("accepted a summary whose data set does not validate: %v", verr)
		}
	})
}
