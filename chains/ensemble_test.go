package chains

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync/atomic"
	"syscall"
	"testing"
	"time"
)

// An ensembleStep is what the command hands to AppendEnsemble after a
// step: the walkers' ln posteriors, ln likelihoods and positions.
type ensembleStep struct {
	step               int
	lnPost, lnLike, xs []float64
}

// rows returns the step as the rows Append would take: step, walker,
// ln_post, ln_like, then the walker's dim parameters (chains/doc.go's
// column convention).
func (e ensembleStep) rows(dim int) [][]float64 {
	var rows [][]float64
	for k := range e.lnPost {
		r := []float64{float64(e.step), float64(k), e.lnPost[k], e.lnLike[k]}
		rows = append(rows, append(r, e.xs[k*dim:(k+1)*dim]...))
	}
	return rows
}

// randomEnsemble returns steps ensemble steps of walkers walkers with dim
// parameters each, starting at step first: a walker keeps its previous
// values (a rejected proposal) 40 % of the time, else takes chain-like
// values (chainLike: long fractions, small integers, tiny and huge
// magnitudes, signed zeros, NaN, infinities) or, now and then, an edge
// value or the same value with its other zero sign or the next float.
func randomEnsemble(r *rand.Rand, first, steps, walkers, dim int) []ensembleStep {
	per := 2 + dim
	cur := chainLike(r, walkers*per)
	var out []ensembleStep
	for s := range steps {
		for k := range walkers {
			if s > 0 && r.Float64() < 0.4 {
				continue
			}
			vals := chainLike(r, per)
			for j := range vals {
				switch r.IntN(20) {
				case 0:
					vals[j] = edgeValues[r.IntN(len(edgeValues))]
				case 1:
					vals[j] = math.Copysign(cur[k*per+j], -cur[k*per+j]) // -0 for 0 and the like
				case 2:
					vals[j] = math.Nextafter(cur[k*per+j], math.Inf(1))
				}
			}
			copy(cur[k*per:], vals)
		}
		e := ensembleStep{step: first + s, lnPost: make([]float64, walkers), lnLike: make([]float64, walkers), xs: make([]float64, walkers*dim)}
		for k := range walkers {
			v := cur[k*per : (k+1)*per]
			e.lnPost[k], e.lnLike[k] = v[0], v[1]
			copy(e.xs[k*dim:], v[2:])
		}
		out = append(out, e)
	}
	return out
}

// ensembleColumnNames returns the column names of an ensemble with dim
// parameters.
func ensembleColumnNames(dim int) []string {
	c := []string{"step", "walker", "ln_post", "ln_like"}
	for j := range dim {
		c = append(c, "p"+strconv.Itoa(j))
	}
	return c
}

// TestAppendEnsembleMatchesAppend writes random ensembles with
// AppendEnsemble and, row by row, with Append, through Writers whose
// batches of 1 to 1000 rows end inside ensembles (and, with 32 or 33
// walkers, at every place of one), with waiting and non-waiting flushes,
// and compares both files byte for byte with strconv's formatting
// (strconv.AppendFloat 'g' -1, which chains/doc.go specifies) of the same
// rows; every Flush offset must be the length of that text so far.
func TestAppendEnsembleMatchesAppend(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 22))
	dir := t.TempDir()
	for _, walkers := range []int{1, 3, 32, 33} {
		for _, dim := range []int{0, 1, 2, 5} {
			steps := randomEnsemble(r, 1, 40, walkers, dim)
			columns := ensembleColumnNames(dim)
			for _, batch := range []int{1, 2, 7, 31, 32, 33, 1000} {
				pe, pa := filepath.Join(dir, "e.csv"), filepath.Join(dir, "a.csv")
				we := createBatched(t, pe, columns, batch)
				wa := createBatched(t, pa, columns, batch)
				want, _ := header(columns)
				for i, e := range steps {
					if err := we.AppendEnsemble(e.step, e.lnPost, e.lnLike, e.xs); err != nil {
						t.Fatal(err)
					}
					for _, row := range e.rows(dim) {
						if err := wa.Append(row); err != nil {
							t.Fatal(err)
						}
						want = strconvRows(want, row)
					}
					switch i % 17 {
					case 5:
						for _, w := range []*Writer{we, wa} {
							off, err := w.Flush()
							if err != nil {
								t.Fatal(err)
							}
							if off != int64(len(want)) {
								t.Fatalf("%d walkers, %d parameters, batch %d, step %d: Flush offset %d, text so far %d bytes", walkers, dim, batch, e.step, off, len(want))
							}
						}
					case 11:
						for _, w := range []*Writer{we, wa} {
							if err := w.StartFlush(); err != nil {
								t.Fatal(err)
							}
						}
					}
				}
				for _, c := range []struct {
					name string
					w    *Writer
					path string
				}{{"AppendEnsemble", we, pe}, {"Append", wa, pa}} {
					if err := c.w.Close(); err != nil {
						t.Fatal(err)
					}
					got, err := os.ReadFile(c.path)
					if err != nil {
						t.Fatal(err)
					}
					if !bytes.Equal(got, want) {
						t.Fatalf("%s, %d walkers, %d parameters, batch %d: file differs from strconv's formatting (%d vs %d bytes)%s",
							c.name, walkers, dim, batch, len(got), len(want), firstDiff(got, want))
					}
				}
			}
		}
	}
}

// TestAppendEnsembleLayouts: one Writer takes ensemble steps of changing
// sizes (1, 3, 5 and 200 walkers; 200 makes a record larger than the
// smaller batches, appended row by row) mixed with rows appended one by
// one and with flushes, so that batches switch between rows and records
// of each size at every place; the file holds exactly strconv's text of
// the same rows, and every Flush offset is its length so far.
func TestAppendEnsembleLayouts(t *testing.T) {
	const dim = 2
	r := rand.New(rand.NewPCG(23, 24))
	columns := ensembleColumnNames(dim)
	sizes := []int{3, 3, 5, 1, 200, 3, 0, 5, 5, 200, 200, 1}
	for _, batch := range []int{1, 4, 64, 1000} {
		p := filepath.Join(t.TempDir(), "c.csv")
		w := createBatched(t, p, columns, batch)
		want, _ := header(columns)
		for i := range 60 {
			walkers := sizes[i%len(sizes)]
			if walkers == 0 { // a row appended on its own
				row := append([]float64{float64(i), 7}, chainLike(r, 2+dim)...)
				if err := w.Append(row); err != nil {
					t.Fatal(err)
				}
				want = strconvRows(want, row)
				continue
			}
			e := randomEnsemble(r, i, 1, walkers, dim)[0]
			if err := w.AppendEnsemble(e.step, e.lnPost, e.lnLike, e.xs); err != nil {
				t.Fatal(err)
			}
			want = strconvRows(want, e.rows(dim)...)
			switch i % 7 {
			case 2:
				off, err := w.Flush()
				if err != nil {
					t.Fatal(err)
				}
				if off != int64(len(want)) {
					t.Fatalf("batch %d, step %d: Flush offset %d, text so far %d bytes", batch, i, off, len(want))
				}
			case 5:
				if err := w.StartFlush(); err != nil {
					t.Fatal(err)
				}
			}
		}
		closeAndCompare(t, w, p, want, fmt.Sprintf("batch %d", batch))
	}
}

// firstDiff describes the first line where got and want differ.
func firstDiff(got, want []byte) string {
	g, w := strings.Split(string(got), "\n"), strings.Split(string(want), "\n")
	for i := range min(len(g), len(w)) {
		if g[i] != w[i] {
			return "; line " + strconv.Itoa(i+1) + ": " + strconv.Quote(g[i]) + ", want " + strconv.Quote(w[i])
		}
	}
	return ""
}

// TestAppendEnsembleErrors: an ensemble whose slices do not match the
// columns, or a Writer with fewer than the four leading columns, gives an
// error naming the file and appends nothing; a later ensemble is written
// as usual (the file holds strconv's text of its rows only).
func TestAppendEnsembleErrors(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "c.csv")
	w, err := Create(p, cols) // two parameters
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name                   string
		lnPost, lnLike, params []float64
	}{
		{"short ln_like", []float64{1, 2}, []float64{1}, []float64{1, 2, 3, 4}},
		{"long ln_like", []float64{1, 2}, []float64{1, 2, 3}, []float64{1, 2, 3, 4}},
		{"short positions", []float64{1, 2}, []float64{1, 2}, []float64{1, 2, 3}},
		{"long positions", []float64{1, 2}, []float64{1, 2}, []float64{1, 2, 3, 4, 5}},
		{"positions of no walker", nil, nil, []float64{1, 2}},
	} {
		if err := w.AppendEnsemble(3, c.lnPost, c.lnLike, c.params); err == nil || !strings.Contains(err.Error(), p) {
			t.Errorf("%s: error %v, want one naming %s", c.name, err, p)
		}
	}
	if err := w.AppendEnsemble(9, nil, nil, nil); err != nil {
		t.Errorf("an ensemble of no walker: %v", err)
	}
	e := ensembleStep{step: 4, lnPost: []float64{-1.5, -2.25}, lnLike: []float64{0.5, 0.75}, xs: []float64{-14.6, 4.1, -14.9, 3.8}}
	if err := w.AppendEnsemble(e.step, e.lnPost, e.lnLike, e.xs); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	want, _ := header(cols)
	want = strconvRows(want, e.rows(2)...)
	if got, _ := os.ReadFile(p); !bytes.Equal(got, want) {
		t.Errorf("file %q, want %q", got, want)
	}
	if err := w.AppendEnsemble(e.step, e.lnPost, e.lnLike, e.xs); !errors.Is(err, errClosed) {
		t.Errorf("after Close: %v", err)
	}

	p3 := filepath.Join(dir, "three.csv")
	w3, err := Create(p3, []string{"a", "b", "c"})
	if err != nil {
		t.Fatal(err)
	}
	defer w3.Close()
	if err := w3.AppendEnsemble(1, []float64{1}, []float64{2}, nil); err == nil || !strings.Contains(err.Error(), p3) {
		t.Errorf("three columns: error %v, want one naming %s", err, p3)
	}
}

// TestAppendEnsembleNoAllocAcrossBatches: AppendEnsemble hands batches
// over and takes emptied ones back (batches of 7 rows, a fraction of a
// 32-walker ensemble) without allocating.
func TestAppendEnsembleNoAllocAcrossBatches(t *testing.T) {
	w := createBatched(t, filepath.Join(t.TempDir(), "c.csv"), cols, 7)
	defer w.Close()
	e := randomEnsemble(rand.New(rand.NewPCG(3, 4)), 1, 1, 32, 2)[0]
	if n := testing.AllocsPerRun(300, func() {
		if err := w.AppendEnsemble(e.step, e.lnPost, e.lnLike, e.xs); err != nil {
			t.Fatal(err)
		}
	}); n != 0 {
		t.Errorf("AppendEnsemble allocates %v times per ensemble", n)
	}
}

// TestWriterRepeatsText writes, through Append, rows built to catch a
// wrongly reused text (the Writer copies the text of a row's first value
// when the row before had the same one, and of the rest of a row when the
// last row with the same walker number had the same values): rows that
// differ from an earlier one only in the sign of a zero, in the last bit,
// in a NaN's payload or in the step; walker numbers that are no memo slot
// (negative, fractional, -0, NaN, infinite, 2^31 and beyond, past the
// memo's size); the longest texts, repeated. The file must hold strconv's
// text of every row.
func TestWriterRepeatsText(t *testing.T) {
	longest := []float64{-2.2250738585072014e-308, -1.2345678901234567e-100, -9.876543210987654e+299, -1.7976931348623157e+308}
	negZero := math.Copysign(0, -1)
	up := func(v float64) float64 { return math.Nextafter(v, math.Inf(1)) }
	walkers := []float64{0, negZero, 1, 31, -1, 0.5, math.NaN(), math.Inf(1), math.Inf(-1), 1<<31 - 1, 1 << 31, 1e300, 5e6, 123456, 8191, 8192}
	var rows [][]float64
	add := func(r ...float64) { rows = append(rows, r) }
	for i, k := range walkers {
		s := float64(i)
		add(s, k, -12.5, 3, 0, longest[0])
		add(s, k, -12.5, 3, 0, longest[0])           // the same row
		add(s, k, -12.5, 3, negZero, longest[0])     // -0 for 0
		add(s, k, -12.5, 3, negZero, up(longest[0])) // the next float
		add(negZero, k, -12.5, 3, negZero, up(longest[0]))
		add(0, k, -12.5, 3, negZero, up(longest[0])) // 0 after -0 as the step
		add(0, k, math.NaN(), 3, 1, 2)
		add(0, k, math.Float64frombits(0x7ff8000000000001), 3, 1, 2) // another NaN
		add(0, k, longest[1], longest[2], longest[3], longest[0])
		add(1, k, longest[1], longest[2], longest[3], longest[0])
		add(1, up(k), longest[1], longest[2], longest[3], longest[0])
	}
	// The same values but for the walker's sign of zero.
	add(5, 0, 1, 2, 3, 4)
	add(5, negZero, 1, 2, 3, 4)
	add(5, 0, 1, 2, 3, 4)
	// Every slot of a full memo, twice.
	for rep := range 2 {
		for k := range 9000 {
			add(float64(rep), float64(k), float64(k)/3, -1, longest[k%4], 1)
		}
	}
	for _, batch := range []int{1, 3, 1000} {
		p := filepath.Join(t.TempDir(), "c.csv")
		w := createBatched(t, p, cols, batch)
		want, _ := header(cols)
		for _, r := range rows {
			if err := w.Append(r); err != nil {
				t.Fatal(err)
			}
			want = strconvRows(want, r)
		}
		closeAndCompare(t, w, p, want, fmt.Sprintf("batch %d", batch))
	}
}

// TestWriterOneColumn: rows of a single value (no walker column) are
// written as strconv formats them, repeated or not.
func TestWriterOneColumn(t *testing.T) {
	p := filepath.Join(t.TempDir(), "c.csv")
	w := createBatched(t, p, []string{"x"}, 2)
	want, _ := header([]string{"x"})
	for _, v := range append(edgeValues, 1, 1, 2, 2, math.Copysign(0, -1), 0, 0) {
		if err := w.Append([]float64{v}); err != nil {
			t.Fatal(err)
		}
		want = strconvRows(want, []float64{v})
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(p); !bytes.Equal(got, want) {
		t.Errorf("file differs from strconv's formatting%s", firstDiff(got, want))
	}
}

// FuzzAppendEnsembleMatchesStrconv writes ensembles decoded from the
// input with AppendEnsemble (and some steps row by row with Append)
// through a Writer with small batches, and compares the file with
// strconv's formatting of the same rows. The first bytes choose the
// walkers (1 to 9), the parameters (0 to 3) and the batch (1 to 7 rows);
// then, per walker and step, a control byte says whether the walker keeps
// its values (a rejected proposal) or takes new ones, decoded as in
// FuzzWriterMatchesStrconv; a step's last control byte also places
// flushes and row-by-row steps.
func FuzzAppendEnsembleMatchesStrconv(f *testing.F) {
	f.Add([]byte{3, 2, 4, 1, 0, 0, 0, 0, 0, 0, 0xf0, 0x3f, 5, 1, 2, 3, 4, 5, 6, 7, 8, 0, 0x40, 0x81})
	f.Add([]byte{32, 1, 7, 0, 0, 0, 0, 0, 0, 0, 0, 0x80, 1, 0, 0, 0, 0, 0, 0, 0, 0, 2, 2, 2, 0xc1})
	// The edge values as raw bits, five per walker (three parameters),
	// each walker taking new values at every step.
	raw := []byte{4, 3, 2}
	for i, v := range edgeValues {
		if i%5 == 0 {
			raw = append(raw, 0x10)
		}
		raw = binary.LittleEndian.AppendUint64(raw, math.Float64bits(v))
	}
	f.Add(raw)
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) < 3 {
			return
		}
		walkers, dim, batch := 1+int(data[0]%9), int(data[1]%4), 1+int(data[2]%7)
		data = data[3:]
		columns := ensembleColumnNames(dim)
		p := filepath.Join(t.TempDir(), "c.csv")
		w := createBatched(t, p, columns, batch)
		want, _ := header(columns)
		per := 2 + dim
		cur := make([]float64, walkers*per)
		flushes := 0
		for step := 1; len(data) > 0 && len(want) < 1<<14; step++ {
			var ctl byte
			for k := range walkers {
				if len(data) == 0 {
					break
				}
				ctl = data[0]
				data = data[1:]
				if ctl&0x10 == 0 && step > 1 {
					continue // rejected: the walker keeps its values
				}
				for j := range per {
					var x [8]byte
					n := copy(x[:], data)
					data = data[n:]
					cur[k*per+j] = fuzzValue(ctl>>(j%3), binary.LittleEndian.Uint64(x[:]), cur[k*per+j])
				}
			}
			e := ensembleStep{step: step, lnPost: make([]float64, walkers), lnLike: make([]float64, walkers), xs: make([]float64, walkers*dim)}
			for k := range walkers {
				e.lnPost[k], e.lnLike[k] = cur[k*per], cur[k*per+1]
				copy(e.xs[k*dim:], cur[k*per+2:(k+1)*per])
			}
			if ctl&0x20 != 0 {
				for _, r := range e.rows(dim) {
					if err := w.Append(r); err != nil {
						t.Fatal(err)
					}
				}
			} else if err := w.AppendEnsemble(e.step, e.lnPost, e.lnLike, e.xs); err != nil {
				t.Fatal(err)
			}
			want = strconvRows(want, e.rows(dim)...)
			if flushes == 8 {
				continue
			}
			flushes += fuzzFlush(t, w, ctl, len(want))
		}
		closeAndCompare(t, w, p, want, "")
	})
}

// pipeWriter returns a Writer on the writing end of a pipe, whose writes
// succeed (a goroutine reads them) and whose fsyncs fail with EINVAL (a
// pipe cannot be synchronized: fsync(2) in the Linux man-pages), and the
// name it goes by.
func pipeWriter(t *testing.T, batch int) (*Writer, string) {
	t.Helper()
	if runtime.GOOS != "linux" {
		t.Skip("relies on fsync of a pipe failing, as on Linux")
	}
	pr, pw, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	drained := make(chan struct{})
	go func() {
		io.Copy(io.Discard, pr)
		pr.Close()
		close(drained)
	}()
	const name = "pipe.csv"
	w := newWriter(name, pw, len(cols), 0, batch)
	t.Cleanup(func() {
		w.Close() // closes pw, which ends the reading
		<-drained
	})
	return w, name
}

// TestBackgroundSyncErrors: a writeback made in the background, for a
// StartFlush or on its own after writebackBytes, that fails (on a pipe,
// which sync_file_range refuses, the fsync that stands in for it) is
// returned by a later Append, StartFlush, Flush or Close, wrapped and
// naming the file, and sticks; so is the fsync of a Flush.
func TestBackgroundSyncErrors(t *testing.T) {
	waitErr := func(w *Writer) error {
		// Wait until the goroutine has met the error (the wait ends the
		// test; it measures nothing).
		for deadline := time.Now().Add(10 * time.Second); w.bgErr.Load() == nil; time.Sleep(time.Millisecond) {
			if time.Now().After(deadline) {
				return errors.New("the goroutine met no error")
			}
		}
		return nil
	}
	for _, c := range []struct {
		name string
		hit  func(w *Writer) error
	}{
		{"StartFlush then Append", func(w *Writer) error {
			if err := w.Append(row(1, 0)); err != nil {
				return errors.New("Append returned an error before any was met")
			}
			if err := w.StartFlush(); err != nil {
				return errors.New("StartFlush returned an error before any was met")
			}
			if err := waitErr(w); err != nil {
				return err
			}
			return w.Append(row(2, 0))
		}},
		{"writeback then StartFlush", func(w *Writer) error {
			r := row(123456, 31)
			for range writebackBytes / len(strconvRows(nil, r)) * 3 / 2 {
				if err := w.Append(r); err != nil {
					return err // the writeback may fail before the last row
				}
			}
			if err := waitErr(w); err != nil {
				return err
			}
			return w.StartFlush()
		}},
		{"Flush", func(w *Writer) error { _, err := w.Flush(); return err }},
		{"Close", func(w *Writer) error { return w.Close() }},
	} {
		t.Run(c.name, func(t *testing.T) {
			w, name := pipeWriter(t, 5)
			err := c.hit(w)
			if !errors.Is(err, syscall.EINVAL) || !strings.Contains(err.Error(), name) {
				t.Fatalf("error %v, want the pipe's fsync error (EINVAL) naming %s", err, name)
			}
			if err2 := w.AppendEnsemble(1, []float64{1}, []float64{2}, []float64{3, 4}); !errors.Is(err2, syscall.EINVAL) && !errors.Is(err2, errClosed) {
				t.Errorf("AppendEnsemble after the error: %v", err2)
			}
			if cerr := w.Close(); c.name != "Close" && !errors.Is(cerr, syscall.EINVAL) {
				t.Errorf("Close after the error: %v", cerr)
			}
			if !stopped(w) {
				t.Error("the goroutine still runs after Close")
			}
		})
	}
}

// fuzzValue decodes a fuzzed value from a control byte's two low bits and
// eight bytes: raw float64 bits (any NaN, infinity, signed zero, subnormal
// or exponent), a small integer, prev (a repeated value), a decimal
// fraction, or, with bit 2, a short decimal times a power of ten.
func fuzzValue(ctl byte, bits uint64, prev float64) float64 {
	switch ctl & 3 {
	case 0:
		return math.Float64frombits(bits)
	case 1:
		return float64(int32(bits))
	case 2:
		return prev
	}
	if ctl&4 != 0 {
		// A short decimal times a power of ten: the switches between
		// plain digits and the exponent form.
		return float64(int32(bits)) * math.Pow(10, float64(int8(bits>>32)%40))
	}
	return float64(int64(bits)) / 1e3
}

// TestBackgroundSyncs follows the writebacks of a Writer through its
// writeback function: a StartFlush whose rows are written while a
// writeback begun before them is in progress gets a writeback of its own
// once that one is done, without waiting for a later call; writebackBytes
// written with no flush request are written back on their own; every
// writeback begins after the rows it is for are in the file. None of
// this fsyncs; Flush does, through the fsync function.
func TestBackgroundSyncs(t *testing.T) {
	p := filepath.Join(t.TempDir(), "c.csv")
	h, _ := header(cols)
	f, err := os.Create(p)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.Write(h); err != nil {
		t.Fatal(err)
	}
	sizes := make(chan int64, 1000) // the file's length as each writeback begins
	release := make(chan struct{})
	var calls, fsyncs atomic.Int64
	w := newWriterSync(p, f, len(cols), int64(len(h)), 5, func() error {
		fsyncs.Add(1)
		return f.Sync()
	}, func() error {
		st, err := f.Stat()
		if err != nil {
			return err
		}
		sizes <- st.Size()
		if calls.Add(1) == 1 {
			<-release // the first writeback lasts until the test says
		}
		return newWriteback(f, f.Sync)()
	})
	defer w.Close()
	next := func(what string) int64 {
		t.Helper()
		select {
		case n := <-sizes:
			return n
		case <-time.After(10 * time.Second): // ends the test; measures nothing
			t.Fatalf("no writeback %s", what)
			return 0
		}
	}
	want := h
	appendRows := func(step, n int) {
		t.Helper()
		for k := range n {
			r := row(step, k)
			if err := w.Append(r); err != nil {
				t.Fatal(err)
			}
			want = strconvRows(want, r)
		}
	}
	appendRows(1, 3)
	if err := w.StartFlush(); err != nil {
		t.Fatal(err)
	}
	if n := next("for the first StartFlush"); n != int64(len(want)) {
		t.Fatalf("first writeback at length %d, want %d", n, len(want))
	}
	appendRows(2, 2)
	if err := w.StartFlush(); err != nil {
		t.Fatal(err)
	}
	// Wait until the rows are written: the goroutine then sees the flush
	// request with the first writeback still in progress.
	for deadline := time.Now().Add(10 * time.Second); ; time.Sleep(time.Millisecond) {
		if st, err := os.Stat(p); err == nil && st.Size() == int64(len(want)) {
			break
		}
		if time.Now().After(deadline) {
			t.Fatal("the second StartFlush's rows were not written")
		}
	}
	select {
	case n := <-sizes:
		t.Fatalf("a writeback (at length %d) began while the first was in progress", n)
	default:
	}
	close(release)
	if n := next("for the StartFlush made during the first writeback"); n != int64(len(want)) {
		t.Fatalf("second writeback at length %d, want %d", n, len(want))
	}
	before := len(want)
	for step := 3; len(want)-before < writebackBytes*3/2; step++ {
		appendRows(step, 5) // a batch
	}
	if n := next("on its own after writebackBytes"); n < int64(before+writebackBytes) {
		t.Fatalf("writeback at length %d, before %d bytes more than %d were written", n, writebackBytes, before)
	}
	if n := fsyncs.Load(); n != 0 {
		t.Fatalf("%d fsyncs without a Flush, want none", n)
	}
	off, err := w.Flush()
	if err != nil {
		t.Fatal(err)
	}
	if n := fsyncs.Load(); n != 1 || off != int64(len(want)) {
		t.Fatalf("Flush: %d fsyncs, offset %d; want 1 fsync, offset %d", n, off, len(want))
	}
}

// BenchmarkAppendCaller measures the caller's side of writing a 32-walker
// ensemble step of two parameters: Append per row (copying each walker
// into a row first, as the command did) against AppendEnsemble, with the
// batches handed back at once unformatted (a stand-in goroutine) so that
// only the caller's work is timed; ns/op is per step.
func BenchmarkAppendCaller(b *testing.B) {
	e := randomEnsemble(rand.New(rand.NewPCG(5, 6)), 1, 1, 32, 2)[0]
	const dim = 2
	for _, name := range []string{"Append", "AppendEnsemble", "Append#2", "AppendEnsemble#2"} {
		b.Run(name, func(b *testing.B) {
			w := &Writer{ncol: len(cols), work: make(chan message, 2*batchesInFlight), free: make(chan []float64, batchesInFlight), done: make(chan struct{}), gate: newGate()}
			w.batch = make([]float64, 0, batchFloats/len(cols)*len(cols))
			for range batchesInFlight - 1 {
				w.free <- make([]float64, 0, cap(w.batch))
			}
			go func() {
				for m := range w.work {
					w.free <- m.rows[:0]
				}
				close(w.done)
			}()
			defer func() { close(w.work); <-w.done }()
			row := make([]float64, len(cols))
			for i := 0; b.Loop(); i++ {
				if strings.HasPrefix(name, "AppendEnsemble") {
					if err := w.AppendEnsemble(i, e.lnPost, e.lnLike, e.xs); err != nil {
						b.Fatal(err)
					}
					continue
				}
				row[0] = float64(i)
				for k := range e.lnPost {
					row[1], row[2], row[3] = float64(k), e.lnPost[k], e.lnLike[k]
					copy(row[4:], e.xs[k*dim:(k+1)*dim])
					if err := w.Append(row); err != nil {
						b.Fatal(err)
					}
				}
			}
		})
	}
}

// BenchmarkFormatter formats the rows of 200 steps of ensembleStream (a
// 32-walker smbhb-like ensemble, 30 % of the walkers repeating their row)
// as the Writer's goroutine does (formatter.write, to os.DevNull), from
// rows (Append's layout) and from ensemble records (AppendEnsemble's),
// and, for reference, formatting every value (appendFloat per value, what
// the goroutine did before it reused the text of repeated values); ns/op
// is per batch of 6400 rows, alternated twice.
func BenchmarkFormatter(b *testing.B) {
	const walkers = 32
	var rows, records []float64
	stream := ensembleStream(200)
	for i, r := range stream {
		rows = append(rows, r...)
		if i%walkers == 0 { // a step's record: step, ln_post, ln_like, parameters
			step := stream[i : i+walkers]
			records = append(records, r[0])
			for c := 2; c < 4; c++ {
				for _, w := range step {
					records = append(records, w[c])
				}
			}
			for _, w := range step {
				records = append(records, w[4:]...)
			}
		}
	}
	f, err := os.OpenFile(os.DevNull, os.O_WRONLY, 0)
	if err != nil {
		b.Fatal(err)
	}
	defer f.Close()
	ncol := len(cols)
	for _, name := range []string{"every-value", "formatter", "records", "every-value#2", "formatter#2", "records#2"} {
		b.Run(name, func(b *testing.B) {
			fm := &formatter{f: f, ncol: ncol, out: make([]byte, 0, len(rows)*(maxValueText+1)), row: make([]float64, ncol)}
			vals, layout := rows, 0
			if strings.HasPrefix(name, "records") {
				vals, layout = records, walkers
			}
			for b.Loop() {
				if !strings.HasPrefix(name, "every-value") {
					fm.write(vals, layout)
					continue
				}
				out := fm.out[:0]
				for i := 0; i < len(rows); i += ncol {
					for j, v := range rows[i : i+ncol] {
						if j > 0 {
							out = append(out, ',')
						}
						out = appendFloat(out, v)
					}
					out = append(out, '\n')
				}
				if _, err := f.Write(out); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
