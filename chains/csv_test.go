package chains

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"testing"
	"time"
)

// strconvRows is the reference text of rows: every value formatted with
// strconv.AppendFloat(b, v, 'g', -1, 64) (the standard library's shortest
// round-trip form, which doc.go specifies), comma-separated, one line per
// row.
func strconvRows(b []byte, rows ...[]float64) []byte {
	for _, r := range rows {
		for j, v := range r {
			if j > 0 {
				b = append(b, ',')
			}
			b = strconv.AppendFloat(b, v, 'g', -1, 64)
		}
		b = append(b, '\n')
	}
	return b
}

// createBatched is Create with batches of rows rows, so that tests can
// make batch boundaries fall anywhere.
func createBatched(t testing.TB, path string, columns []string, rows int) *Writer {
	t.Helper()
	h, err := header(columns)
	if err != nil {
		t.Fatal(err)
	}
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.Write(h); err != nil {
		t.Fatal(err)
	}
	return newWriter(path, f, len(columns), int64(len(h)), rows)
}

// edgeValues are values whose text takes every branch of appendFloat and
// of strconv's 'g' format: signed zeros, the integer shortcut's limits,
// the exponent switch at 1e-4 and 1e21, subnormals, the extremes, NaN and
// the infinities.
var edgeValues = []float64{
	0, math.Copysign(0, -1), 1, -1, 999999, -999999, 1e6, -1e6, 123456.5, 1e20, 1e21, -1e21,
	1e-4, 9.999999999999999e-5, 0.1, 1.0 / 3, -2.5e-7, 1 << 53, 1<<53 + 2, -(1 << 62),
	math.SmallestNonzeroFloat64, -math.SmallestNonzeroFloat64, 2.2250738585072014e-308,
	-2.2250738585072014e-308, 2.225073858507201e-308, math.MaxFloat64, -math.MaxFloat64,
	math.Inf(1), math.Inf(-1), math.NaN(), math.Float64frombits(0x7ff8000000000001),
	math.Float64frombits(0xfff0000000000001), -14.52513370917262, 4.161803398874989,
}

// TestWriterMatchesStrconv writes an ensemble stream with the edge values
// mixed in, through Writers with batches of 1 to several thousand rows and
// flushes (waiting and not) at odd places, and compares the file byte for
// byte with strconv's formatting; every Flush offset must equal the length
// of that text so far and the file's length on disk.
func TestWriterMatchesStrconv(t *testing.T) {
	rows := ensembleStream(300)
	for i, v := range edgeValues {
		rows[37*i+5][2+i%4] = v
		rows[37*i+6][2+i%4] = v // and again
	}
	for _, batch := range []int{1, 2, 3, 31, 32, 33, 1000, batchFloats / len(cols), 20000} {
		p := filepath.Join(t.TempDir(), "c.csv")
		w := createBatched(t, p, cols, batch)
		want := []byte("# step,walker,ln_post,ln_like,log10_A,gamma\n")
		for i, r := range rows {
			if err := w.Append(r); err != nil {
				t.Fatal(err)
			}
			want = strconvRows(want, r)
			switch i % 1009 {
			case 17:
				off, err := w.Flush()
				if err != nil {
					t.Fatal(err)
				}
				st, err := os.Stat(p)
				if err != nil {
					t.Fatal(err)
				}
				if off != int64(len(want)) || st.Size() != off {
					t.Fatalf("batch %d, row %d: Flush offset %d, file length %d, text so far %d bytes", batch, i, off, st.Size(), len(want))
				}
			case 400, 401, 900:
				if err := w.StartFlush(); err != nil {
					t.Fatal(err)
				}
			}
		}
		closeAndCompare(t, w, p, want, fmt.Sprintf("batch %d", batch))
	}
}

// FuzzWriterMatchesStrconv writes rows decoded from the input through a
// Writer with small batches and compares the file with strconv's
// formatting. Each value is a control byte and up to eight bytes: raw
// float64 bits (any NaN, infinity, signed zero, subnormal or exponent), a
// small integer, a repeat of the value above it (a rejected walker), a
// decimal fraction, or a short decimal times a power of ten; the control
// byte also places Flush and StartFlush calls.
func FuzzWriterMatchesStrconv(f *testing.F) {
	raw := func(vs ...float64) []byte {
		b := []byte{5, 2}
		for _, v := range vs {
			b = binary.LittleEndian.AppendUint64(append(b, 0), math.Float64bits(v))
		}
		return b
	}
	f.Add(raw(edgeValues...))
	f.Add(raw(math.NaN(), math.Inf(-1), math.Copysign(0, -1), 5e-324, 1e300, -1e-300, 12, 0.5))
	f.Add([]byte{3, 0, 1, 7, 0, 0, 0, 0, 0, 0, 0, 2, 0, 0, 0, 0, 0, 0, 0, 0x42, 3, 0, 0, 0, 0, 0, 0, 0, 0x83, 9, 0, 0, 0, 0, 0, 0, 0})
	f.Add([]byte{2, 1, 7, 1, 0, 0, 0, 0xfb, 0, 0, 0, 7, 0x39, 0x30, 0, 0, 6, 0, 0, 0, 7, 0xff, 0xff, 0xff, 0xff, 0xec, 0, 0, 0, 0x47, 1, 0, 0, 0, 5, 0, 0, 0})
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) < 2 {
			return
		}
		ncol, batch := 1+int(data[0]%7), 1+int(data[1]%5)
		data = data[2:]
		columns := make([]string, ncol)
		for j := range columns {
			columns[j] = "c" + strconv.Itoa(j)
		}
		p := filepath.Join(t.TempDir(), "c.csv")
		w := createBatched(t, p, columns, batch)
		want, _ := header(columns)
		// Each Flush fsyncs: a few per input keep the fuzzer fast.
		flushes := 0
		var prev, row []float64
		for len(data) > 0 && len(want) < 1<<14 {
			ctl := data[0]
			data = data[1:]
			var x [8]byte
			n := copy(x[:], data)
			data = data[n:]
			var above float64
			if prev != nil {
				above = prev[len(row)]
			}
			row = append(row, fuzzValue(ctl, binary.LittleEndian.Uint64(x[:]), above))
			if len(row) < ncol {
				continue
			}
			if err := w.Append(row); err != nil {
				t.Fatal(err)
			}
			want = strconvRows(want, row)
			prev, row = row, nil
			if flushes == 8 {
				continue
			}
			flushes += fuzzFlush(t, w, ctl, len(want))
		}
		closeAndCompare(t, w, p, want, "")
	})
}

// TestValueTextBound checks maxValueText, which sizes the batch text
// buffer, against strconv on the longest values (a sign, 17 significant
// digits, a three-digit negative exponent) and on the edge values, and
// that formatting a batch of the longest values does not allocate, so the
// buffer never grows.
func TestValueTextBound(t *testing.T) {
	longest := []float64{-2.2250738585072014e-308, -1.2345678901234567e-100, -9.876543210987654e+299}
	for _, v := range append(longest, edgeValues...) {
		if n := len(strconv.AppendFloat(nil, v, 'g', -1, 64)); n > maxValueText {
			t.Errorf("%v: %d bytes of text, more than maxValueText %d", v, n, maxValueText)
		}
	}
	if n := len(strconv.AppendFloat(nil, longest[0], 'g', -1, 64)); n != maxValueText {
		t.Errorf("%v: %d bytes of text, want maxValueText %d", longest[0], n, maxValueText)
	}
	const ncol, rows = 6, 64
	f, err := os.Create(filepath.Join(t.TempDir(), "x"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	// Rows appended one by one, and ensemble records of 1 walker (76
	// steps of 5 values) and of 95 (one step of 381 values), the most
	// rows a batch of 384 values holds.
	for _, walkers := range []int{0, 1, 95} {
		fm := &formatter{f: f, ncol: ncol, out: make([]byte, 0, textBytes(ncol, rows)), row: make([]float64, ncol)}
		batch := make([]float64, rows*ncol)
		for i := range batch {
			batch[i] = math.Nextafter(longest[i%3], 0) // texts near the longest
		}
		if n := testing.AllocsPerRun(20, func() { fm.write(batch, walkers) }); n != 0 || fm.err != nil {
			t.Errorf("formatting a batch (layout %d walkers) of the longest values allocates %v times (error %v)", walkers, n, fm.err)
		}
	}
}

// TestAppendNoAllocAcrossBatches: Append hands batches over and gets
// emptied ones back without allocating, so the buffers in circulation are
// the fixed ones made by Create.
func TestAppendNoAllocAcrossBatches(t *testing.T) {
	w := createBatched(t, filepath.Join(t.TempDir(), "c.csv"), cols, 7)
	defer w.Close()
	r := row(12345, 17)
	if n := testing.AllocsPerRun(1000, func() {
		if err := w.Append(r); err != nil {
			t.Fatal(err)
		}
	}); n != 0 {
		t.Errorf("Append allocates %v times per row", n)
	}
}

// breakFile makes every later write and fsync of w's file fail, as a full
// or vanished disk would, after a Flush has left the goroutine idle.
func breakFile(t *testing.T, w *Writer) {
	t.Helper()
	if _, err := w.Flush(); err != nil {
		t.Fatal(err)
	}
	if err := w.f.Close(); err != nil {
		t.Fatal(err)
	}
}

// stopped reports whether w's goroutine has returned.
func stopped(w *Writer) bool {
	select {
	case <-w.done:
		return true
	default:
		return false
	}
}

// TestWriterBackgroundErrors: a write or fsync error met by the goroutine
// is returned by the next Append (at the latest once every batch in
// circulation has come back), StartFlush, Flush or Close, wrapped and
// naming the file; it sticks; and Close stops the goroutine.
func TestWriterBackgroundErrors(t *testing.T) {
	const batch = 4
	for _, c := range []struct {
		name string
		hit  func(w *Writer) error // calls that must end with the error
	}{
		{"Append", func(w *Writer) error {
			// The failing batch is handed over by the batch-th Append;
			// the goroutine publishes the error before that batch comes
			// back, which happens before the Append that needs it for the
			// batchesInFlight-th batch after it returns.
			for i := range (batchesInFlight + 1) * batch {
				if err := w.Append(row(i, 0)); err != nil {
					return err
				}
			}
			return errors.New("no Append returned the error")
		}},
		{"Flush", func(w *Writer) error {
			if err := w.Append(row(1, 0)); err != nil {
				return errors.New("Append returned an error before any was met")
			}
			_, err := w.Flush()
			return err
		}},
		{"Flush of nothing", func(w *Writer) error { _, err := w.Flush(); return err }},
		{"StartFlush", func(w *Writer) error {
			if err := w.Append(row(1, 0)); err != nil {
				return errors.New("Append returned an error before any was met")
			}
			if err := w.StartFlush(); err != nil {
				return errors.New("StartFlush returned an error before any was met")
			}
			// Wait until the goroutine has met the error (the wait ends
			// the test; it measures nothing).
			for deadline := time.Now().Add(10 * time.Second); w.bgErr.Load() == nil; time.Sleep(time.Millisecond) {
				if time.Now().After(deadline) {
					return errors.New("the goroutine met no error")
				}
			}
			return w.StartFlush()
		}},
		{"Close", func(w *Writer) error {
			if err := w.Append(row(1, 0)); err != nil {
				return errors.New("Append returned an error before any was met")
			}
			return w.Close()
		}},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := filepath.Join(t.TempDir(), "c.csv")
			w := createBatched(t, p, cols, batch)
			breakFile(t, w)
			err := c.hit(w)
			if !errors.Is(err, os.ErrClosed) || !bytes.Contains([]byte(err.Error()), []byte(p)) {
				t.Fatalf("error %v, want the file's closed-file error naming %s", err, p)
			}
			if err2 := w.Append(row(0, 0)); !errors.Is(err2, os.ErrClosed) && !errors.Is(err2, errClosed) {
				t.Errorf("Append after the error: %v", err2)
			}
			if _, err2 := w.Flush(); !errors.Is(err2, os.ErrClosed) && !errors.Is(err2, errClosed) {
				t.Errorf("Flush after the error: %v", err2)
			}
			if cerr := w.Close(); c.name != "Close" && !errors.Is(cerr, os.ErrClosed) {
				t.Errorf("Close after the error: %v", cerr)
			}
			if !stopped(w) {
				t.Error("the goroutine still runs after Close")
			}
			if err := w.Close(); err != errClosed {
				t.Errorf("second Close: %v", err)
			}
		})
	}
}

// TestWriterNoGoroutineLeak: Writers closed after normal use, after an
// error, or while their first batch is still being written leave no
// goroutine behind.
func TestWriterNoGoroutineLeak(t *testing.T) {
	before := runtime.NumGoroutine()
	dir := t.TempDir()
	for i := range 30 {
		w := createBatched(t, filepath.Join(dir, strconv.Itoa(i)+".csv"), cols, 1+i%5)
		if i%3 == 1 {
			breakFile(t, w)
		}
		for s := range 20 {
			w.Append(row(s, i))
		}
		if i%3 == 2 {
			w.StartFlush()
		}
		w.Close()
		if !stopped(w) {
			t.Fatalf("writer %d: the goroutine still runs after Close", i)
		}
	}
	// A goroutine that has closed done may not have exited yet: wait for
	// the count to settle (the wait ends the test, it measures nothing).
	for deadline := time.Now().Add(10 * time.Second); runtime.NumGoroutine() > before; time.Sleep(time.Millisecond) {
		if time.Now().After(deadline) {
			t.Fatalf("%d goroutines after closing every writer, %d before", runtime.NumGoroutine(), before)
		}
	}
}

// ensembleStream returns the rows of steps steps of a 32-walker ensemble
// on a two-parameter model, shaped like the smbhb fit's chain.csv: step,
// walker, ln_post, ln_like, log10_A, gamma, where a walker whose proposal
// is rejected (30 % of the time, about the stretch move's rejection rate
// there) repeats its previous values.
func ensembleStream(steps int) [][]float64 {
	const walkers = 32
	r := rand.New(rand.NewPCG(1, 2))
	cur := make([][4]float64, walkers)
	for k := range cur {
		cur[k] = [4]float64{-15 + r.NormFloat64(), -11 + r.NormFloat64(), -14.5 + 0.1*r.NormFloat64(), 13.0/3 + 0.2*r.NormFloat64()}
	}
	rows := make([][]float64, 0, steps*walkers)
	for s := 1; s <= steps; s++ {
		for k := range walkers {
			if r.Float64() >= 0.3 {
				a, g := -14.5+0.1*r.NormFloat64(), 13.0/3+0.2*r.NormFloat64()
				ll := -11 - 0.5*r.ExpFloat64()
				cur[k] = [4]float64{ll - 3.9, ll, a, g}
			}
			c := cur[k]
			rows = append(rows, []float64{float64(s), float64(k), c[0], c[1], c[2], c[3]})
		}
	}
	return rows
}

// serialWriter is the writer formatting each row in the caller, as the
// Writer did before it formatted in the background: the reference of
// BenchmarkWriterStream.
type serialWriter struct {
	f    *os.File
	bw   *bufio.Writer
	line []byte
}

func (s *serialWriter) append(row []float64) error {
	b := s.line[:0]
	for j, v := range row {
		if j > 0 {
			b = append(b, ',')
		}
		b = appendFloat(b, v)
	}
	b = append(b, '\n')
	s.line = b
	_, err := s.bw.Write(b)
	return err
}

// spin stands for a sampler's work between two steps: n iterations of a
// dependent chain of floating-point operations.
func spin(n int) float64 {
	x := 1.0
	for range n {
		x = x*0.999999 + 1e-9
	}
	return x
}

var spinSink float64

// BenchmarkWriterStream writes the rows of 2000 ensemble steps (64,000
// rows, 5.4 MB) per iteration, formatted in the caller (serial, the Writer
// before it had a goroutine: a bufio.Writer and Flush with fsync) or
// through the Writer (batched, with StartFlush), alone or with a stand-in
// for the sampler's work per step (work: about 1.5 times the formatting of
// the step's rows, as in the smbhb fit on one worker; workonly is that
// work alone), with no flush before the last or one every 100 steps (the
// command's --flush-every default), and fsyncs at the end. With work, the
// time above workonly is what writing adds to a fit's wall time; batched
// hides the formatting when a second core is free.
func BenchmarkWriterStream(b *testing.B) {
	rows := ensembleStream(2000)
	const walkers = 32
	var text int64
	for _, r := range rows {
		text += int64(len(strconvRows(nil, r)))
	}
	for _, c := range []struct {
		name        string
		work, flush int // spin iterations per step; steps between flushes
	}{{"alone", 0, 0}, {"work", 5000, 0}, {"work/flush100", 5000, 100}} {
		if c.work > 0 && c.flush == 0 {
			b.Run(c.name+"/workonly", func(b *testing.B) {
				for b.Loop() {
					for i := 0; i < len(rows); i += walkers {
						spinSink += spin(c.work)
					}
				}
				b.SetBytes(text)
			})
		}
		b.Run(c.name+"/serial", func(b *testing.B) {
			p := filepath.Join(b.TempDir(), "c.csv")
			for b.Loop() {
				f, err := os.Create(p)
				if err != nil {
					b.Fatal(err)
				}
				s := &serialWriter{f: f, bw: bufio.NewWriterSize(f, 1<<16), line: make([]byte, 0, 256)}
				for i, r := range rows {
					if i%walkers == 0 {
						spinSink += spin(c.work)
						if step := i / walkers; c.flush > 0 && step > 0 && step%c.flush == 0 {
							if err := s.bw.Flush(); err != nil {
								b.Fatal(err)
							}
							if err := f.Sync(); err != nil {
								b.Fatal(err)
							}
						}
					}
					if err := s.append(r); err != nil {
						b.Fatal(err)
					}
				}
				if err := s.bw.Flush(); err != nil {
					b.Fatal(err)
				}
				if err := f.Sync(); err != nil {
					b.Fatal(err)
				}
				f.Close()
			}
			b.SetBytes(text)
		})
		b.Run(c.name+"/batched", func(b *testing.B) {
			p := filepath.Join(b.TempDir(), "c.csv")
			for b.Loop() {
				w, err := Create(p, cols)
				if err != nil {
					b.Fatal(err)
				}
				for i, r := range rows {
					if i%walkers == 0 {
						spinSink += spin(c.work)
						if step := i / walkers; c.flush > 0 && step > 0 && step%c.flush == 0 {
							if err := w.StartFlush(); err != nil {
								b.Fatal(err)
							}
						}
					}
					if err := w.Append(r); err != nil {
						b.Fatal(err)
					}
				}
				if err := w.Close(); err != nil {
					b.Fatal(err)
				}
			}
			b.SetBytes(text)
		})
	}
}

// TestStartFlushWhenBehind: with every batch held up (as when the
// goroutine is behind), StartFlush does not wait; its request travels
// with the batch once Append fills it, and the file still holds exactly
// strconv's text.
func TestStartFlushWhenBehind(t *testing.T) {
	const batch = 5
	p := filepath.Join(t.TempDir(), "c.csv")
	w := createBatched(t, p, cols, batch)
	want := []byte("# step,walker,ln_post,ln_like,log10_A,gamma\n")
	if _, err := w.Flush(); err != nil {
		t.Fatal(err)
	}
	var held [][]float64
	for range batchesInFlight - 1 {
		held = append(held, <-w.free)
	}
	for i := range 2 * batch {
		r := row(i, 3)
		if err := w.Append(r); err != nil {
			t.Fatal(err)
		}
		want = strconvRows(want, r)
		if i == 1 {
			if err := w.StartFlush(); err != nil {
				t.Fatal(err)
			}
			if w.pending == 0 || len(w.batch) != 2*len(cols) {
				t.Fatalf("StartFlush with no batch to spare: pending %d, %d values in the batch; want the request kept with the 2 rows", w.pending, len(w.batch))
			}
		}
		if i == batch-2 {
			for _, b := range held { // the goroutine catches up
				w.free <- b
			}
		}
		if i == batch-1 && w.pending != 0 {
			t.Fatal("the full batch went without the waiting request")
		}
	}
	closeAndCompare(t, w, p, want, "")
}

// fuzzFlush carries out the flush a fuzz input's control byte asks for
// (ctl>>6: 1 Flush, whose offset must be textLen, the length of the text
// appended so far; 2 StartFlush) and returns how many it made (0 or 1).
func fuzzFlush(t *testing.T, w *Writer, ctl byte, textLen int) int {
	t.Helper()
	switch ctl >> 6 {
	case 1:
		off, err := w.Flush()
		if err != nil {
			t.Fatal(err)
		}
		if off != int64(textLen) {
			t.Fatalf("Flush offset %d, text so far %d bytes", off, textLen)
		}
		return 1
	case 2:
		if err := w.StartFlush(); err != nil {
			t.Fatal(err)
		}
		return 1
	}
	return 0
}

// closeAndCompare closes w and fails the test unless the file p holds
// exactly want (strconv's formatting of the rows appended); what, if not
// empty, says which case failed.
func closeAndCompare(t *testing.T, w *Writer, p string, want []byte, what string) {
	t.Helper()
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	got, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		if what != "" {
			what += ": "
		}
		t.Fatalf("%sfile differs from strconv's formatting (%d vs %d bytes)%s", what, len(got), len(want), firstDiff(got, want))
	}
}

// TestWriterHold: while held, the goroutine writes none of the rows
// handed to it (its batches wait in order); Release lets it go on, and
// Flush or Append end a hold by themselves, so a caller that forgets to
// release does not wait forever. The file then holds exactly strconv's
// text, also after many holds and releases interleaved with appends.
func TestWriterHold(t *testing.T) {
	const batch = 5
	size := func(p string) int64 {
		t.Helper()
		st, err := os.Stat(p)
		if err != nil {
			t.Fatal(err)
		}
		return st.Size()
	}
	t.Run("held", func(t *testing.T) {
		p := filepath.Join(t.TempDir(), "c.csv")
		w := createBatched(t, p, cols, batch)
		want := []byte("# step,walker,ln_post,ln_like,log10_A,gamma\n")
		if _, err := w.Flush(); err != nil {
			t.Fatal(err)
		}
		w.Hold()
		// Batches handed over as Append does, without a call that ends
		// the hold.
		for b := range 3 {
			rows := <-w.free
			for k := range batch {
				r := row(b, k)
				rows = append(rows, r...)
				want = strconvRows(want, r)
			}
			w.work <- message{rows: rows, sync: b == 2, seq: w.syncs.Add(1)}
		}
		// A goroutine that ignored the hold writes within microseconds.
		time.Sleep(50 * time.Millisecond)
		if n := size(p); n != int64(len("# step,walker,ln_post,ln_like,log10_A,gamma\n")) {
			t.Fatalf("held writer wrote: file length %d", n)
		}
		w.Release()
		deadline := time.Now().Add(10 * time.Second)
		for size(p) != int64(len(want)) {
			if time.Now().After(deadline) { // ends the test; measures nothing
				t.Fatalf("released writer did not write its batches: file length %d, want %d", size(p), len(want))
			}
			time.Sleep(time.Millisecond)
		}
		w.Hold()
		r := row(9, 0)
		want = strconvRows(want, r)
		if err := w.Append(r); err != nil { // ends the hold
			t.Fatal(err)
		}
		w.Hold()
		if off, err := w.Flush(); err != nil || off != int64(len(want)) { // ends the hold
			t.Fatalf("Flush of a held writer: offset %d, err %v; want %d", off, err, len(want))
		}
		w.Hold()
		closeAndCompare(t, w, p, want, "after holds")
	})
	t.Run("interleaved", func(t *testing.T) {
		p := filepath.Join(t.TempDir(), "c.csv")
		w := createBatched(t, p, cols, batch)
		want := []byte("# step,walker,ln_post,ln_like,log10_A,gamma\n")
		rng := rand.New(rand.NewPCG(1, 2))
		for step := range 400 {
			for k := range 3 {
				r := row(step, k)
				if err := w.Append(r); err != nil {
					t.Fatal(err)
				}
				want = strconvRows(want, r)
			}
			switch rng.IntN(4) {
			case 0:
				w.Hold()
				runtime.Gosched()
				w.Release()
			case 1:
				w.Hold()
			case 2:
				if err := w.StartFlush(); err != nil {
					t.Fatal(err)
				}
			}
		}
		closeAndCompare(t, w, p, want, "interleaved holds")
	})
}
