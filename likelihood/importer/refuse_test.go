package importer

import (
	"archive/zip"
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

func npzBytes(t *testing.T, members map[string][]byte) []byte {
	t.Helper()
	var b bytes.Buffer
	z := zip.NewWriter(&b)
	for _, name := range []string{"rho.npy", "chain.npy", "other.npy"} {
		data, ok := members[name]
		if !ok {
			continue
		}
		w, err := z.Create(name)
		if err != nil {
			t.Fatal(err)
		}
		w.Write(data)
	}
	if err := z.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func f8(vals []float64) []byte {
	var b []byte
	for _, v := range vals {
		b = append(b, byte(0), 0, 0, 0, 0, 0, 0, 0)
		u := math.Float64bits(v)
		for k := range 8 {
			b[len(b)-8+k] = byte(u >> (8 * k))
		}
	}
	return b
}

func textMatrix(vals [][]float64) []byte {
	var s strings.Builder
	for _, r := range vals {
		for j, v := range r {
			if j > 0 {
				s.WriteByte(' ')
			}
			fmt.Fprint(&s, v)
		}
		s.WriteByte('\n')
	}
	return []byte(s.String())
}

// TestRefused feeds the usual mistakes to the readers; each must be refused
// with the exact message shown (the test directory is written as DIR).
func TestRefused(t *testing.T) {
	dir := t.TempDir()
	good := samples(100, 3, 9)
	mod := func(f func(v [][]float64)) [][]float64 {
		c := samples(100, 3, 9)
		f(c)
		return c
	}
	outside := mod(func(v [][]float64) { v[10][1] = -3.5 })
	lnRho := mod(func(v [][]float64) {
		for _, r := range v {
			r[2] *= math.Ln10
		}
	})
	lnDeep := mod(func(v [][]float64) {
		for _, r := range v {
			r[0] = (r[0] - 3) * math.Ln10
		}
	})
	ns := mod(func(v [][]float64) {
		for _, r := range v {
			r[0] += 9
		}
	})
	linear := mod(func(v [][]float64) {
		for _, r := range v {
			r[1] = math.Pow(10, r[1])
		}
	})
	nan := mod(func(v [][]float64) { v[20][2] = math.NaN() })
	inf := mod(func(v [][]float64) { v[7][0] = math.Inf(1) })
	fifo := filepath.Join(dir, "pipe.npy")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Fatal(err)
	}
	summary := func(name, text string) func() error {
		p := writeFile(t, dir, name, []byte(text))
		return func() error { _, _, err := ReadSummary(p, SummaryOptions{Meta: meta("s", 1)}); return err }
	}
	gridText := "x p\n-8 0.1\n-7 -0.2\n-6 0.1\n"
	gridDown := "x p\n-8 0.1\n-7 0.2\n-7.5 0.1\n"
	type run func() error
	matrix := func(name string, data []byte, opt MatrixOptions) run {
		p := writeFile(t, dir, name, data)
		return func() error {
			m, err := ReadMatrix(p, "", 0)
			if err == nil {
				_, err = FromMatrix(m, opt)
			}
			return err
		}
	}
	three := MatrixOptions{Meta: meta("m", 3)}
	for _, c := range []struct {
		name string
		run  run
		want string
	}{
		{"outside prior", matrix("outside.npy", npyBytes("<f8", false, outside), three),
			"importer: DIR/outside.npy: column 1 (bin 2): row 10: log10(rho/s) = -3.5 lies outside the prior range [-10, -4] stated for the original analysis; check the prior range and the unit"},
		{"ln rho given as log10", matrix("ln.npy", npyBytes("<f8", false, lnRho), three),
			"importer: DIR/ln.npy: column 2 (bin 3): row 0: log10(rho/s) = -16.3065 lies outside the prior range [-10, -4] stated for the original analysis; read as ln-rho-s every value of this column would lie inside it: was that unit meant?"},
		{"ln rho below -20", matrix("lndeep.txt", textMatrix(lnDeep), three),
			"importer: DIR/lndeep.txt: column 0 (bin 1): every value is below -20 (log10(rho/s) from -24.18 to -21.01), which would mean rho < 1e-20 s; these look like ln(rho/s); give the unit ln-rho-s"},
		{"log10 rho in ns", matrix("ns.npy", npyBytes("<f8", true, ns), three),
			"importer: DIR/ns.npy: column 0 (bin 1): every value is above 0 (log10(rho/s) from 1.5 to 2.875), which would mean rho > 1 s; these look like log10(rho/ns); give the unit log10-rho-ns"},
		{"rho not its log", matrix("lin.npy", npyBytes("<f8", false, linear), three),
			"importer: DIR/lin.npy: column 1 (bin 2): every value is above 0 (log10(rho/s) from 1.476e-08 to 3.876e-07), which would mean rho > 1 s; these look like rho itself in s; take log10 of the values first"},
		{"too few samples", matrix("few.npy", npyBytes("<f8", false, good[:60]), MatrixOptions{Meta: meta("m", 3), BurnIn: 0.2}),
			"importer: DIR/few.npy: column 0 (bin 1): 48 samples after dropping 12 of 60 as burn-in and thinning by 1; need at least 50"},
		{"NaN in text", matrix("nan.txt", textMatrix(nan), three),
			"importer: DIR/nan.txt: column 2 (bin 3): line 21: NaN; samples must be finite"},
		{"Inf in npy", matrix("inf.npy", npyBytes(">f8", false, inf), three),
			"importer: DIR/inf.npy: column 0 (bin 1): row 7: +Inf; samples must be finite"},
		{"transposed", matrix("t.npy", npyRaw("{'descr': '<f8', 'fortran_order': False, 'shape': (3, 100), }", f8(make([]float64, 300))), three),
			"importer: DIR/t.npy: 3 rows x 100 columns: more columns than rows, but a samples matrix has one row per sample and one column per bin; was it saved transposed?"},
		{"columns and bins differ", matrix("cols.npy", npyBytes("<f8", false, good), MatrixOptions{Meta: meta("m", 4)}),
			"importer: DIR/cols.npy: 3 columns but 4 bins; pick the 4 columns of the bins, or give as many bins as columns"},
		{"column out of range", matrix("pick.npy", npyBytes("<f8", false, good), MatrixOptions{Meta: meta("m", 2), Columns: []int{0, 3}}),
			"importer: DIR/pick.npy: column 3 does not exist; the file has columns 0..2"},
		{"column twice", matrix("twice.npy", npyBytes("<f8", false, good), MatrixOptions{Meta: meta("m", 2), Columns: []int{1, 1}}),
			"importer: DIR/twice.npy: column 1 is picked twice"},
		{"npz without the array", func() error {
			p := writeFile(t, dir, "a.npz", npzBytes(t, map[string][]byte{"chain.npy": npyBytes("<f8", false, good), "other.npy": npyBytes("<f8", false, good)}))
			_, err := ReadNPZ(p, "rho", 0)
			return err
		}, `importer: DIR/a.npz: no array "rho" in the archive (arrays: chain, other)`},
		{"npz with several arrays, none named", func() error {
			p := writeFile(t, dir, "b.npz", npzBytes(t, map[string][]byte{"chain.npy": npyBytes("<f8", false, good), "rho.npy": npyBytes("<f8", false, good)}))
			_, err := ReadNPZ(p, "", 0)
			return err
		}, "importer: DIR/b.npz: the archive holds 2 arrays (chain, rho); name the one to read"},
		{"1-D array", matrix("one.npy", npyRaw("{'descr': '<f8', 'fortran_order': False, 'shape': (100,), }", f8(make([]float64, 100))), three),
			"importer: DIR/one.npy: array of shape (100,) has 1 dimension; a samples matrix needs 2 (samples x bins): save a single bin as a column, shape (100, 1)"},
		{"3-D array", matrix("three.npy", npyRaw("{'descr': '<f8', 'fortran_order': False, 'shape': (4, 100, 3), }", f8(make([]float64, 1200))), three),
			"importer: DIR/three.npy: array of shape (4, 100, 3) has 3 dimensions; a samples matrix needs 2 (samples x bins)"},
		{"integer dtype", matrix("int.npy", npyRaw("{'descr': '<i8', 'fortran_order': False, 'shape': (100, 3), }", make([]byte, 2400)), three),
			`importer: DIR/int.npy: dtype "<i8" is not supported; samples must be float64 ('<f8', '>f8') or float32 ('<f4', '>f4')`},
		{"truncated data", matrix("short.npy", npyRaw("{'descr': '<f8', 'fortran_order': False, 'shape': (100, 3), }", make([]byte, 2000)), three),
			"importer: DIR/short.npy: shape (100, 3) needs 2400 data bytes but the file holds 2000 (truncated?)"},
		{"not npy", matrix("text.npy", []byte("1 2 3\n"), three),
			`importer: DIR/text.npy: not a .npy file (it does not start with the magic "\x93NUMPY")`},
		{"unknown version", matrix("v4.npy", append([]byte("\x93NUMPY\x04\x00"), make([]byte, 60)...), three),
			"importer: DIR/v4.npy: .npy format version 4.0 is not supported (1.0, 2.0 and 3.0 are)"},
		{"named pipe", func() error { _, err := ReadNPY(fifo, 0); return err },
			"importer: DIR/pipe.npy: is a named pipe (FIFO), not a regular file"},
		{"device", func() error { _, err := ReadText("/dev/zero", 0); return err },
			"importer: /dev/zero: is a character device, not a regular file"},
		{"over the limit", func() error {
			p := writeFile(t, dir, "big.npy", npyBytes("<f8", false, good))
			_, err := ReadNPY(p, 1<<10)
			return err
		}, "importer: DIR/big.npy: 2.5 KiB is more than the 1 KiB limit for this kind of file"},
		{"ragged text", matrix("ragged.txt", []byte("-7 -7 -7\n-7 -7\n"), three),
			"importer: DIR/ragged.txt: line 2: 2 fields, but the first row has 3"},
		{"burn-in of 1", matrix("burn.npy", npyBytes("<f8", false, good), MatrixOptions{Meta: meta("m", 3), BurnIn: 1}),
			"importer: DIR/burn.npy: burn-in fraction: must be in [0, 1), got 1"},
		{"negative density", func() error {
			_, err := ReadGrid(writeFile(t, dir, "neg.txt", []byte(gridText)), "", 0, GridOptions{Meta: meta("g", 1)})
			return err
		}, `importer: DIR/neg.txt: column 1 ("p") (bin 1): line 3: density -0.2 is negative; if the column holds ln density, say so`},
		{"grid not increasing", func() error {
			_, err := ReadGrid(writeFile(t, dir, "down.txt", []byte(gridDown)), "", 0, GridOptions{Meta: meta("g", 1)})
			return err
		}, `importer: DIR/down.txt: column 0 ("x") (log10 rho): line 4: -7.5 after -7; the grid must increase strictly`},
		{"lopsided summary", summary("lop.csv", "median,lower,upper\n-7,-7.5,-6.9\n"),
			"importer: DIR/lop.csv: line 2 (bin 1): interval [-7.5, -6.9] around median -7: (median-lower)/(upper-median) = 5, but a split normal reaches only 0.645 to 1.55 at this level; the summary cannot be represented honestly"},
		{"limit at the top of the prior", summary("top.csv", "limit\n-4.2\n"),
			"importer: DIR/top.csv: line 2 (bin 1): upper limit -4.2 lies too close to the top of the prior range -4: 95 % of the mass below it leaves 0.305 dex of mass above it, but only 0.2 dex of range remain"},
		{"summary rows and bins", summary("rows.csv", "median,minus,plus\n-7,0.2,0.2\n-7,0.2,0.2\n"),
			"importer: DIR/rows.csv: 2 rows but 1 bins; give one row per bin"},
	} {
		err := c.run()
		got := "<nil>"
		if err != nil {
			got = strings.ReplaceAll(err.Error(), dir, "DIR")
		}
		if got != c.want {
			t.Errorf("%s:\n got %s\nwant %s", c.name, got, c.want)
		}
	}
	if _, err := os.Stat(fifo); err != nil {
		t.Fatal(err)
	}
}
