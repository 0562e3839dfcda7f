package likelihood

import (
	"math"
	"strings"
	"testing"
)

const fuzzTable = "bin,mean,sd\n1,-7,0.3\n2,-7.5,0.4\n"

// checkParsed asserts what every successful parse must give: a data set
// that passes Validate and scores finitely.
func checkParsed(t *testing.T, ds *Dataset) {
	t.Helper()
	if err := ds.Validate(); err != nil {
		t.Fatalf("parse accepted a data set that Validate rejects: %v", err)
	}
	if len(ds.Bins) > 32 {
		return // keep table building cheap
	}
	fs, err := NewFreeSpectrum(ds, Options{TableSize: 64})
	if err != nil {
		t.Fatalf("parse accepted a data set NewFreeSpectrum rejects: %v", err)
	}
	x := make([]float64, len(ds.Bins))
	for i := range x {
		x[i] = 0.5 * (ds.PriorMin + ds.PriorMax)
	}
	if l := fs.LogLike(x); math.IsNaN(l) || math.IsInf(l, 0) {
		t.Fatalf("LogLike = %g at mid-prior", l)
	}
}

// FuzzParseDescription fuzzes the YAML description with fixed tables.
func FuzzParseDescription(f *testing.F) {
	f.Add([]byte("name: x\nprovenance: p\nspan_seconds: 1e8\nfrequencies:\n  harmonics: 2\nlog10_rho_prior: [-9, -5]\ntables:\n  gaussian: g.csv\n"))
	f.Add([]byte("name: x\nprovenance: p\nspan_years: 3\nfrequencies:\n  hz: [1e-8, 3e-8]\n  irregular: true\nlog10_rho_prior: [-9, -5]\ntables:\n  gaussian: g.csv\n"))
	f.Fuzz(func(t *testing.T, desc []byte) {
		read := func(rel string) (string, []byte, error) { return rel, []byte(fuzzTable), nil }
		ds, err := parse("d.yaml", desc, read)
		if err != nil {
			if !strings.HasPrefix(err.Error(), "likelihood: ") {
				t.Fatalf("error without package prefix: %v", err)
			}
			return
		}
		checkParsed(t, ds)
	})
}

// FuzzParseTable fuzzes the CSV tables, each representation in turn.
func FuzzParseTable(f *testing.F) {
	f.Add(uint8(0), []byte("bin,log10_rho\n"+strings.Repeat("1,-7\n1,-7.2\n", 30)))
	f.Add(uint8(1), []byte("bin,log10_rho,density\n1,-9,0\n1,-7,1\n1,-5,0\n"))
	f.Add(uint8(2), []byte("# c\nbin,mean,sd\n1,-7,0.25\n"))
	f.Fuzz(func(t *testing.T, kind uint8, table []byte) {
		key := [3]string{"samples", "grid", "gaussian"}[kind%3]
		desc := "name: x\nprovenance: p\nspan_seconds: 1e8\nfrequencies:\n  harmonics: 1\nlog10_rho_prior: [-9, -5]\ntables:\n  " + key + ": t.csv\n"
		read := func(rel string) (string, []byte, error) { return rel, table, nil }
		ds, err := parse("d.yaml", []byte(desc), read)
		if err != nil {
			if !strings.HasPrefix(err.Error(), "likelihood: ") {
				t.Fatalf("error without package prefix: %v", err)
			}
			return
		}
		checkParsed(t, ds)
	})
}
