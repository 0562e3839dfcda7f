package importer

import (
	"bytes"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"testing"

	"codeberg.org/sbinet/npyio"
	"gonum.org/v1/gonum/mat"
	"tautline/likelihood"
	"tautline/models/gw"
)

// TestNPYLayouts reads the same matrix in every supported dtype, byte order
// and memory order, and checks each against the independent npyio reader.
func TestNPYLayouts(t *testing.T) {
	vals := samples(7, 3, 1)
	for _, descr := range []string{"<f8", ">f8", "<f4", ">f4"} {
		for _, fortran := range []bool{false, true} {
			b := npyBytes(descr, fortran, vals)
			m, err := decodeNPY(bytes.NewReader(b), "x.npy", int64(len(b)), DefaultLimit)
			if err != nil {
				t.Fatalf("%s fortran=%v: %v", descr, fortran, err)
			}
			// npyio reads float64 arrays into a matrix; float32 ones
			// are checked against the values written.
			var ref mat.Dense
			if descr[1:] == "f8" {
				if err := npyio.Read(bytes.NewReader(b), &ref); err != nil {
					t.Fatalf("%s fortran=%v: npyio: %v", descr, fortran, err)
				}
			}
			if m.Rows != 7 || len(m.Cols) != 3 {
				t.Fatalf("%s fortran=%v: shape %dx%d", descr, fortran, m.Rows, len(m.Cols))
			}
			for i := range 7 {
				for j := range 3 {
					want := vals[i][j]
					if descr[1:] == "f4" {
						want = float64(float32(want))
					}
					if m.Cols[j][i] != want {
						t.Fatalf("%s fortran=%v: [%d,%d] = %g, want %g", descr, fortran, i, j, m.Cols[j][i], want)
					}
					if descr[1:] == "f8" && ref.At(i, j) != want {
						t.Fatalf("%s fortran=%v: npyio [%d,%d] = %g, want %g", descr, fortran, i, j, ref.At(i, j), want)
					}
				}
			}
		}
	}
	// Version 2.0 and 3.0 headers: the length field is a uint32.
	for _, major := range []byte{2, 3} {
		v1 := npyBytes("<f8", false, vals)
		hlen := int(v1[8]) | int(v1[9])<<8
		v2 := append([]byte("\x93NUMPY"), major, 0, byte(hlen+2), byte((hlen+2)>>8), 0, 0)
		v2 = append(v2, v1[10:10+hlen]...)
		v2 = append(v2, ' ', ' ')
		v2 = append(v2, v1[10+hlen:]...)
		m, err := decodeNPY(bytes.NewReader(v2), "x.npy", int64(len(v2)), DefaultLimit)
		if err != nil || m.Cols[2][6] != vals[6][2] {
			t.Fatalf("version %d.0: %v", major, err)
		}
	}
}

// TestRoundTripNPYvsLong imports the same samples from a hand-laid .npy
// file and from a hand-written long CSV; the written data sets must be
// byte-identical (same digest) and score identically.
func TestRoundTripNPYvsLong(t *testing.T) {
	dir := t.TempDir()
	vals := samples(300, 5, 2)
	npy := writeFile(t, dir, "s.npy", npyBytes("<f8", false, vals))
	var csv strings.Builder
	csv.WriteString("bin,log10_rho\n")
	for j := range 5 {
		for i := range vals {
			fmt.Fprintf(&csv, "%d,%s\n", j+1, strconv.FormatFloat(vals[i][j], 'g', -1, 64))
		}
	}
	long := writeFile(t, dir, "s.csv", []byte(csv.String()))

	var digests []string
	var lls []float64
	for k, read := range []func() (*Matrix, error){
		func() (*Matrix, error) { return ReadMatrix(npy, "", 0) },
		func() (*Matrix, error) { return ReadLong(long, 0) },
	} {
		m, err := read()
		if err != nil {
			t.Fatal(err)
		}
		ds, err := FromMatrix(m, MatrixOptions{Meta: meta("rt", 5)})
		if err != nil {
			t.Fatal(err)
		}
		out := t.TempDir()
		back, err := Save(out, ds)
		if err != nil {
			t.Fatal(err)
		}
		digests = append(digests, back.SHA256)
		fs, err := likelihood.NewFreeSpectrum(back, likelihood.Options{})
		if err != nil {
			t.Fatal(err)
		}
		lls = append(lls, fs.LogLike([]float64{-7, -7.1, -6.9, -7.3, -7.2}))
		if k == 0 && back.Provenance != "simulated: invented samples for tests; imported by tautline: 300 posterior samples per bin" {
			t.Errorf("provenance %q", back.Provenance)
		}
	}
	if digests[0] != digests[1] || digests[0] == "" {
		t.Errorf("digests differ: npy %s, long %s", digests[0], digests[1])
	}
	if math.Float64bits(lls[0]) != math.Float64bits(lls[1]) {
		t.Errorf("log-likelihoods differ: %.17g vs %.17g", lls[0], lls[1])
	}
}

// TestMatrixOptions checks column choice, burn-in, thinning and the unit
// conversions, each against its closed form.
func TestMatrixOptions(t *testing.T) {
	vals := samples(400, 4, 3)
	b := npyBytes("<f8", true, vals)
	m, err := decodeNPY(bytes.NewReader(b), "x.npy", int64(len(b)), DefaultLimit)
	if err != nil {
		t.Fatal(err)
	}
	opt := MatrixOptions{Meta: meta("opt", 2), Columns: []int{3, 1}, BurnIn: 0.25, Thin: 3}
	ds, err := FromMatrix(m, opt)
	if err != nil {
		t.Fatal(err)
	}
	// floor(0.25*400) = 100 rows dropped, then rows 100, 103, ..., 397.
	for b, j := range []int{3, 1} {
		s := ds.Bins[b].Samples
		if len(s) != 100 || s[0] != vals[100][j] || s[99] != vals[397][j] {
			t.Errorf("bin %d: %d samples, first %g last %g", b+1, len(s), s[0], s[len(s)-1])
		}
	}
	want := "simulated: invented samples for tests; imported by tautline: 100 posterior samples per bin; columns 3,1 of 4 taken as bins 1..2; first fraction 0.25 of each column dropped as burn-in; thinned by a factor of 3"
	if ds.Provenance != want {
		t.Errorf("provenance\n%s\nwant\n%s", ds.Provenance, want)
	}

	// Units: each input column is made from the same log10(rho/s) values by
	// the inverse conversion; the import must give them back.
	base := samples(60, 1, 4)
	span := 4.7e8
	for _, c := range []struct {
		u   Unit
		fwd func(x float64) float64 // log10(rho/s) -> unit
		tol float64
	}{
		{Log10RhoNS, func(x float64) float64 { return x + 9 }, 1e-14},
		{LnRhoS, func(x float64) float64 { return x * math.Ln10 }, 1e-14},
		// rho^2 = S/T (docs/physics.md section 5): S = rho^2 T, computed
		// in linear space with models/gw.
		{Log10PSD, func(x float64) float64 { r := math.Pow(10, x); return math.Log10(gw.PSDFromRho2(r*r, span)) }, 1e-13},
	} {
		mm := &Matrix{Source: "u.txt", Rows: 60, Cols: [][]float64{make([]float64, 60)}}
		for i := range base {
			mm.Cols[0][i] = c.fwd(base[i][0])
		}
		o := MatrixOptions{Meta: meta("u", 1)}
		o.Unit = c.u
		ds, err := FromMatrix(mm, o)
		if err != nil {
			t.Fatalf("%s: %v", c.u, err)
		}
		for i, x := range ds.Bins[0].Samples {
			if math.Abs(x-base[i][0]) > c.tol*math.Abs(base[i][0]) {
				t.Fatalf("%s: sample %d = %.17g, want %.17g", c.u, i, x, base[i][0])
			}
		}
		if !strings.Contains(ds.Provenance, "converted to log10(rho/s)") {
			t.Errorf("%s: provenance does not record the conversion: %q", c.u, ds.Provenance)
		}
	}
}

func TestTextMatrix(t *testing.T) {
	dir := t.TempDir()
	vals := samples(60, 3, 5)
	var ws, cs strings.Builder
	ws.WriteString("# invented samples\nrho_a rho_b rho_c\n")
	cs.WriteString("a,b,c\n")
	for _, r := range vals {
		fmt.Fprintf(&ws, "%v %v\t%v\n", r[0], r[1], r[2])
		fmt.Fprintf(&cs, "%v, %v,%v\n", r[0], r[1], r[2])
	}
	for name, text := range map[string]string{"w.txt": ws.String(), "c.csv": cs.String(), "n.dat": strings.SplitN(cs.String(), "\n", 2)[1]} {
		m, err := ReadMatrix(writeFile(t, dir, name, []byte(text)), "", 0)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if m.Rows != 60 || len(m.Cols) != 3 || m.Cols[2][59] != vals[59][2] {
			t.Fatalf("%s: %dx%d", name, m.Rows, len(m.Cols))
		}
		if name == "w.txt" {
			ds, err := FromMatrix(m, MatrixOptions{Meta: meta("t", 2), ColumnNames: []string{"rho_c", "rho_a"}})
			if err != nil {
				t.Fatal(err)
			}
			if ds.Bins[0].Samples[0] != vals[0][2] || ds.Bins[1].Samples[0] != vals[0][0] {
				t.Error("columns picked by name in the wrong order")
			}
		}
	}
}

func TestGrid(t *testing.T) {
	// Two bins, densities of normals N(-7, 0.3) and N(-6, 0.5) on a grid of
	// 241 points, ln densities in a second file.
	var lin, lnd strings.Builder
	lin.WriteString("log10_rho p1 p2\n")
	lnd.WriteString("x,l1,l2\n")
	for k := range 241 {
		x := -10 + 6*float64(k)/240
		l1, l2 := -0.5*math.Pow((x+7)/0.3, 2), -0.5*math.Pow((x+6)/0.5, 2)
		fmt.Fprintf(&lin, "%v %v %v\n", x, math.Exp(l1), math.Exp(l2))
		fmt.Fprintf(&lnd, "%v,%v,%v\n", x, l1, l2)
	}
	dir := t.TempDir()
	for _, c := range []struct {
		file string
		log  bool
	}{{writeFile(t, dir, "g.txt", []byte(lin.String())), false}, {writeFile(t, dir, "l.csv", []byte(lnd.String())), true}} {
		ds, err := ReadGrid(c.file, "", 0, GridOptions{Meta: meta("g", 2), LogDensity: c.log})
		if err != nil {
			t.Fatal(err)
		}
		// Medians of the normals (far from the prior edges): -7 and -6;
		// the piecewise-linear grid density errs by O(h^2), h = 0.025.
		s := ds.Summary()
		if math.Abs(s[0].Median+7) > 1e-3 || math.Abs(s[1].Median+6) > 1e-3 {
			t.Errorf("%s: medians %g %g, want -7 -6", c.file, s[0].Median, s[1].Median)
		}
		// One-sigma quantiles: Phi(+-1) of the normal.
		if math.Abs(s[1].Hi68-(-5.5)) > 2e-3 {
			t.Errorf("%s: bin 2 upper 68 %% point %g, want -5.5", c.file, s[1].Hi68)
		}
	}
}

// TestSummary checks the split normal against its defining quantiles and
// the upper-limit shape against numerical integration (gonum quad).
func TestSummary(t *testing.T) {
	text := "bin,median,minus,plus,limit\n1,-7.0,0.3,0.4,\n2,-6.5,0.2,0.2,\n3,,,,-6.2\n"
	file := writeFile(t, t.TempDir(), "s.csv", []byte(text))
	ds, warn, err := ReadSummary(file, SummaryOptions{Meta: meta("s", 3)})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(warn, "throws the rest of each posterior away") || !strings.Contains(warn, "bins 1-2 are split normals") || !strings.Contains(warn, "bins 3 are flat below") {
		t.Errorf("warning %q", warn)
	}
	q := make([]float64, 3)
	pl, pu := 0.5*math.Erfc(1/math.Sqrt2), 1-0.5*math.Erfc(1/math.Sqrt2)
	for b, want := range [][3]float64{{-7, -7.3, -6.6}, {-6.5, -6.7, -6.3}} {
		ds.Bins[b].Quantiles(ds.PriorMin, ds.PriorMax, []float64{0.5, pl, pu}, q)
		// Grid spacing <= width/8; the exact piecewise-linear quantiles of
		// a smooth density err by well under 1e-3 dex at that spacing.
		for k := range 3 {
			if math.Abs(q[k]-want[k]) > 1e-3 {
				t.Errorf("bin %d: quantile %d = %g, want %g", b+1, k, q[k], want[k])
			}
		}
	}
	// Symmetric interval: the split normal is the normal N(-6.5, 0.2);
	// its density ratio at +-1 sd to the mode is exp(-1/2).
	g, d := ds.Bins[1].Grid, ds.Bins[1].Density
	at := func(x float64) float64 {
		k, _ := slices.BinarySearch(g, x)
		return d[k-1] + (d[k]-d[k-1])*(x-g[k-1])/(g[k]-g[k-1])
	}
	if r := at(-6.3) / at(-6.5); math.Abs(r-math.Exp(-0.5)) > 1e-3 {
		t.Errorf("symmetric split normal: p(m+sd)/p(m) = %g, want exp(-1/2)", r)
	}
	// Upper limit -6.2: 95 % of the mass within [-10, -4] below it.
	ds.Bins[2].Quantiles(ds.PriorMin, ds.PriorMax, []float64{0.95}, q)
	if math.Abs(q[0]+6.2) > 1e-3 {
		t.Errorf("bin 3: 95 %% quantile %g, want -6.2", q[0])
	}
	s, err := limitWidth(-6.2, -10, -4, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	shape := func(x float64) float64 {
		if x <= -6.2 {
			return 1
		}
		return math.Exp(-0.5 * math.Pow((x+6.2)/s, 2))
	}
	below := quadFixed(shape, -10, -6.2)
	above := quadFixed(shape, -6.2, -4)
	if f := below / (below + above); math.Abs(f-0.95) > 1e-9 {
		t.Errorf("fraction below the limit by quadrature %.12g, want 0.95", f)
	}
}
