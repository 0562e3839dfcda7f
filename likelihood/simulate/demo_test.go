package simulate

import (
	"bytes"
	"flag"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"tautline/likelihood"

	"tautline/models/gw"
)

var update = flag.Bool("update", false, "rewrite the demo data sets under testdata/data")

// demoSets are the example data sets shipped in testdata/data, both
// simulated from an invented array and a power-law background
// h_c = 2.4e-15 (f/f_yr)^(-2/3): demo (14 bins, all three representations)
// and demo30 (30 bins of 400 posterior samples each).
func demoSets(t *testing.T) map[string]*likelihood.Dataset {
	arr := Array{Pulsars: 25, Span: 15 * gw.JulianYear, Cadence: 14 * 86400, Sigma: 1e-7, Bins: 30}
	lnO := powerLaw(harmonics(arr), math.Log10(2.4e-15), 13.0/3)
	grid, err := Run(lnO, arr, h0, 2026, GridOptions{Min: -10, Max: -4, Points: 200})
	if err != nil {
		t.Fatal(err)
	}
	samp, err := Run(lnO, arr, h0, 2026, GridOptions{Min: -10, Max: -4, Points: 200, Samples: 400})
	if err != nil {
		t.Fatal(err)
	}
	samp.Name = "demo30"
	// The first 14 bins of the same seed draw the same statistics.
	arr.Bins = 14
	grid14, err := Run(lnO[:14], arr, h0, 2026, GridOptions{Min: -10, Max: -4, Points: 200})
	if err != nil {
		t.Fatal(err)
	}
	// A 14-bin set mixing the three representations: Gaussian summaries of
	// the (nearly normal) signal-dominated bins 1-4, samples for bins 5-9
	// and grids for the noise-dominated bins 10-14.
	mix := *grid14
	mix.Name = "demo"
	mix.Bins = append([]likelihood.Bin(nil), grid14.Bins...)
	for i := range 4 {
		if !reflectEqual(grid14.Bins[i], grid.Bins[i]) {
			t.Fatalf("bin %d differs between the 14- and 30-bin runs", i+1)
		}
		g, d := grid.Bins[i].Grid, grid.Bins[i].Density
		var m0, m1, m2 float64
		for k := 1; k < len(g); k++ {
			w := 0.5 * (d[k] + d[k-1]) * (g[k] - g[k-1])
			x := 0.5 * (g[k] + g[k-1])
			m0 += w
			m1 += w * x
			m2 += w * x * x
		}
		mean := m1 / m0
		mix.Bins[i] = likelihood.Bin{Kind: likelihood.Gaussian, Mean: mean, SD: math.Sqrt(m2/m0 - mean*mean)}
	}
	for i := 4; i < 9; i++ {
		mix.Bins[i] = samp.Bins[i]
	}
	mix.Provenance += "; bins 1-4 summarised as Gaussians (posterior mean and sd), bins 5-9 as 400 posterior samples"
	return map[string]*likelihood.Dataset{"demo": &mix, "demo30": samp}
}

// TestDemoData regenerates the shipped demo data sets and checks that the
// files on disk are exactly what the simulator produces (go test -update
// rewrites them), and that they load back to the same data.
func TestDemoData(t *testing.T) {
	root := filepath.Join("..", "..", "testdata", "data")
	for name, ds := range demoSets(t) {
		dir := filepath.Join(root, name)
		if *update {
			if err := os.MkdirAll(dir, 0o755); err != nil {
				t.Fatal(err)
			}
			if err := likelihood.Write(dir, name, ds); err != nil {
				t.Fatal(err)
			}
		}
		tmp := t.TempDir()
		if err := likelihood.Write(tmp, name, ds); err != nil {
			t.Fatal(err)
		}
		ents, err := os.ReadDir(tmp)
		if err != nil {
			t.Fatal(err)
		}
		for _, e := range ents {
			want, _ := os.ReadFile(filepath.Join(tmp, e.Name()))
			got, err := os.ReadFile(filepath.Join(dir, e.Name()))
			if err != nil || !bytes.Equal(got, want) {
				t.Errorf("%s/%s is out of date with the simulator (run go test -run TestDemoData -update): %v", name, e.Name(), err)
			}
		}
		got, err := likelihood.Load(filepath.Join(dir, name+".yaml"))
		if err != nil {
			t.Fatal(err)
		}
		if len(got.Bins) != len(ds.Bins) || got.Name != name {
			t.Errorf("%s: loaded %d bins named %q", name, len(got.Bins), got.Name)
		}
	}
}

func reflectEqual(a, b likelihood.Bin) bool { return reflect.DeepEqual(a, b) }
