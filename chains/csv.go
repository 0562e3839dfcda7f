package chains

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"sync/atomic"
	"time"

	"tautline/internal/safeio"
)

// A Writer appends rows to a chain file. Append (or AppendEnsemble, for a
// whole ensemble step) only copies rows (or the step's slices) into a
// batch; a full batch is handed to the Writer's background goroutine,
// which formats the batches in order and writes each with one write call,
// so that formatting runs beside the caller's work (on another core when
// one is free) while the bytes are exactly those of formatting every value
// on the spot. A
// fixed number of batches (batchesInFlight) circulate between the two,
// which bounds the memory and how far the goroutine may fall behind:
// Append waits when they are all in use. The writebacks to the disk that
// StartFlush asks for and those the goroutine starts on its own run on a
// second goroutine, so that the formatting goes on while the disk works;
// they do not wait for the disk, whereas Flush fsyncs and waits.
// Hold pauses the goroutine while the caller needs every core. Handing a
// batch over never wakes the goroutine: when idle, it looks for work at
// short intervals (idlePoll), and only the calls that wait for it (Flush,
// Close, an Append that finds no free batch) prompt it.
//
// Flush waits until everything appended is written and fsynced. An error
// met in the background (a failed write or writeback) is returned by the next
// Append, StartFlush, Flush or Close; rows appended after it are dropped.
// A Writer is not safe for concurrent use. Close must be called, also after
// an error, to stop the goroutines and close the file.
type Writer struct {
	path  string
	f     *os.File // written only by the goroutine until it has stopped
	ncol  int
	batch []float64 // rows appended since the last hand-over
	// walkers is the batch's layout: 0 for rows of ncol values, else
	// records of ensemble steps of that many walkers (see AppendEnsemble).
	walkers int

	work  chan message     // batches and flush requests, in order, to the goroutine
	free  chan []float64   // emptied batches, back from the goroutine
	reply chan flushResult // the goroutine's answer to a waiting Flush
	done  chan struct{}    // closed when the goroutine has returned
	// nudge prompts an idle goroutine to look for work now; only the
	// calls that wait for it send one (see idlePoll).
	nudge chan struct{}

	gate  *gate                 // Hold's, shared with the goroutine
	bgErr atomic.Pointer[error] // the goroutine's first error
	syncs atomic.Uint64         // flush requests made so far
	// pending is the number of a StartFlush request that waits in batch
	// for the batch to be handed over, or 0.
	pending uint64

	err error // first error the caller saw; every later call returns it
}

// A message hands the goroutine a batch (rows may be empty; walkers is
// its layout, as Writer.walkers) and says what to do once it is written:
// nothing, start a writeback (sync, for the flush request number seq; a
// later request makes it redundant), or fsync and answer on reply (wait).
type message struct {
	rows       []float64
	walkers    int
	sync, wait bool
	seq        uint64
}

type flushResult struct {
	off int64
	err error
}

// batchFloats is the size of a batch in values (64 KiB): 1365 rows of the
// smbhb model's 6 columns appended one by one, or 63 steps of its 32-walker
// ensemble (129 values a step) appended whole, formatted into one write of
// about 170 KB. batchesInFlight batches circulate (4 MiB, made once per
// Writer): one being filled by Append, the others queued for or being
// written by the goroutine, enough for the caller to go on at a fast
// model's pace (about 4,000 steps of the smbhb demo, some 20 ms) while
// the goroutine waits for a core or for a write held up by the disk.
// With 8 batches (512 KiB) the smbhb demo's caller waited for a free batch
// about 5 ms per 20000-step run, with 64 under 1 ms.
//
// writebackBytes is how much the goroutine writes before it starts a
// writeback of the file on its own when it has nothing else to do, so
// that the data reach the disk while the caller works and the fsync of the
// next Flush or of Close is short.
const (
	batchFloats     = 1 << 13
	batchesInFlight = 64
	writebackBytes  = 2 << 20
)

// idlePoll is how long the goroutine waits, when it has nothing to do,
// before it looks for work again; each look that finds nothing doubles
// the wait, up to idlePollMax. A look costs the goroutine's core a
// timer's wake-up; a send that woke an idle goroutine at once would cost
// the caller's (5 to 15 us on this 2-core machine, about 600 times in a
// 20000-step smbhb fit, some 4 % of its time). A batch then waits at most
// idlePollMax before it is formatted, while the caller has batches left
// for at least 20 ms of a fast model's steps (see batchFloats).
const (
	idlePoll    = time.Millisecond
	idlePollMax = 4 * time.Millisecond
)

// maxValueText is the longest text appendFloat writes for one value, that
// of a negative 17-digit number with a three-digit exponent such as
// -2.2250738585072014e-308 (strconv's shortest 'g' format has at most 17
// significant digits, and float64 exponents at most three digits).
const maxValueText = 24

// A gate holds a Writer's goroutine, between blocks of rows and before
// it starts a writeback, while the caller asks it to (Writer.Hold).
type gate struct {
	held atomic.Bool
	wake chan struct{} // a token after a release, for a goroutine waiting
}

func newGate() *gate { return &gate{wake: make(chan struct{}, 1)} }

func (g *gate) release() {
	if g.held.Load() && g.held.Swap(false) {
		select {
		case g.wake <- struct{}{}:
		default: // a token is there already
		}
	}
}

// pass returns once the gate is not held (a nil gate never is). A token
// left by an earlier release, which no one waited for, only lets it look
// again.
func (g *gate) pass() {
	for g != nil && g.held.Load() {
		<-g.wake
	}
}

// holdRows is the number of rows the goroutine formats between looks at
// the gate: about 11 us of work at the 87 ns a row of an SMBHB-like
// ensemble that BenchmarkFormatter measured here, short against a check.
const holdRows = 128

// formatter is the state of a Writer's goroutine (and of the writebacks
// it has made by writebackLoop).
type formatter struct {
	path      string
	f         *os.File
	fsync     func() error // f.Sync, for Flush
	writeback func() error // newWriteback(f, f.Sync), for the background
	gate      *gate
	ncol      int
	off       int64     // bytes of the file written so far
	dirty     int64     // bytes written since the last writeback or fsync began
	out       []byte    // a batch's text; its capacity fits the longest batch
	row       []float64 // ncol values: a row of an ensemble record
	err       error     // first write, writeback or fsync error; later batches are dropped

	// kick asks writebackLoop for a writeback, whose error comes back on
	// result; writingBack says that one is in progress, owed that another
	// must follow it (rows were written after it began that a flush
	// request covers).
	kick              chan struct{}
	result            chan error
	writingBack, owed bool

	// The text of the first value of the last row (the step, which all
	// the rows of an ensemble share): first[:firstLen] is the text of the
	// float64 whose bits are firstBits; firstLen 0 when there is none.
	firstBits uint64
	firstLen  int
	first     [maxValueText]byte
	// tails keeps, for each walker slot (see walkerSlot), the values after
	// the first of the last row with that slot and their text (from the
	// comma before the second value to the newline): a walker whose
	// proposal was rejected repeats them exactly.
	tails memo
}

// A memo holds, for slots 0 to n-1, the last row tail (the values after a
// row's first) remembered in the slot and its text: slot k's values are
// bits[k*m:(k+1)*m] (m values) and its text text[k*stride:][:size[k]],
// size[k] 0 for a slot not yet used.
type memo struct {
	m, stride int
	bits      []uint64
	text      []byte
	size      []int32
}

// memoBytes bounds a Writer's memo: about 1500 walkers of the smbhb
// model's 6 columns, 160 of 50 columns (the rows of walkers beyond are
// formatted every time).
const memoBytes = 1 << 18

// walkerSlot returns the memo slot of a row whose second value is v: v
// itself when it is an integer from 0 to 2^31-1 (a walker number in the
// command's column convention), else -1 (the row is not remembered).
func walkerSlot(v float64) int {
	if !(v >= 0 && v < 1<<31) {
		return -1 // also NaN
	}
	k := int(v)
	if float64(k) != v {
		return -1
	}
	return k
}

// get returns the text remembered in slot k if the values remembered
// there are bit for bit those of tail, else nil.
func (mm *memo) get(k int, tail []float64) []byte {
	if k >= len(mm.size) || mm.size[k] == 0 {
		return nil
	}
	bits := mm.bits[k*mm.m : (k+1)*mm.m]
	for j, v := range tail[:len(bits)] {
		if math.Float64bits(v) != bits[j] {
			return nil
		}
	}
	return mm.text[k*mm.stride:][:mm.size[k]]
}

// put remembers tail and its text in slot k, growing the memo (up to
// memoBytes) when k is beyond it; a slot that does not fit is not
// remembered.
func (mm *memo) put(k int, tail []float64, text []byte) {
	if k >= len(mm.size) {
		if mm.stride == 0 {
			mm.m = len(tail)
			mm.stride = len(tail)*(maxValueText+1) + 1 // ",value" for each, then "\n"
		}
		limit := memoBytes / (8*mm.m + mm.stride + 4)
		if k >= limit {
			return
		}
		n := min(limit, max(k+1, 2*len(mm.size), 32))
		bits := make([]uint64, n*mm.m)
		copy(bits, mm.bits)
		txt := make([]byte, n*mm.stride)
		copy(txt, mm.text)
		size := make([]int32, n)
		copy(size, mm.size)
		mm.bits, mm.text, mm.size = bits, txt, size
	}
	bits := mm.bits[k*mm.m : (k+1)*mm.m]
	for j, v := range tail[:len(bits)] {
		bits[j] = math.Float64bits(v)
	}
	mm.size[k] = int32(copy(mm.text[k*mm.stride:(k+1)*mm.stride], text))
}

// run serves the Writer's messages until work is closed. An error is
// published in w.bgErr before the batch that met it goes back on w.free,
// so the Append that takes that batch back sees it; an error of a
// writeback made in the background (see startWriteback) is published when
// it comes back.
func (fm *formatter) run(w *Writer) {
	defer close(w.done)
	fm.kick, fm.result = make(chan struct{}, 1), make(chan error, 1)
	go writebackLoop(fm.writeback, fm.kick, fm.result)
	defer close(fm.kick)
	defer fm.awaitWriteback()
	look := time.NewTimer(idlePoll)
	defer look.Stop()
	wait := idlePoll
	for {
		var result <-chan error
		if fm.writingBack {
			result = fm.result
		}
		var m message
		select {
		case err := <-result:
			fm.afterWriteback(w, err)
			continue
		case mm, ok := <-w.work:
			if !ok {
				return
			}
			m, wait = mm, idlePoll
		default:
			// Idle: a send on w.work does not wake the goroutine here.
			look.Reset(wait)
			select {
			case <-look.C:
				wait = min(2*wait, idlePollMax)
			case <-w.nudge:
			case err := <-result:
				fm.afterWriteback(w, err)
			}
			continue
		}
		if len(m.rows) > 0 {
			fm.write(m.rows, m.walkers)
		}
		switch {
		case m.wait:
			fm.sync()
		case m.sync && (w.syncs.Load() == m.seq || fm.dirty >= writebackBytes):
			// A later request, made already, would write back for both; but
			// not if its turn could be put off again and again.
			fm.startWriteback()
		case fm.dirty >= writebackBytes && len(w.work) == 0 && !fm.writingBack:
			fm.startWriteback() // on its own, while idle
		}
		fm.publish(w)
		if m.rows != nil {
			w.free <- m.rows[:0]
		}
		if m.wait {
			w.reply <- flushResult{fm.off, fm.err}
		}
	}
}

// afterWriteback records the outcome of the writeback writebackLoop made, and
// starts the next one if it is owed or the writeback asks for one.
func (fm *formatter) afterWriteback(w *Writer, err error) {
	fm.writebackDone(err)
	if fm.owed || fm.dirty >= writebackBytes && len(w.work) == 0 {
		fm.startWriteback()
	}
	fm.publish(w)
}

// publish makes the goroutine's first error visible to the caller.
func (fm *formatter) publish(w *Writer) {
	if fm.err != nil && w.bgErr.Load() == nil {
		err := fm.err
		w.bgErr.Store(&err)
	}
}

// writebackLoop calls writeback once for every value received on kick and
// sends the outcome on result, until kick is closed.
func writebackLoop(writeback func() error, kick <-chan struct{}, result chan<- error) {
	for range kick {
		result <- writeback()
	}
}

// startWriteback has everything written so far written back in the
// background (see newWriteback), by writebackLoop, while the goroutine
// goes on formatting and writing (a writeback may wait for the disk's
// queue, and the fsync that stands in for it where there is none waits
// for the disk, about a millisecond per MB): at once, or, when a
// writeback is in progress (begun before the last writes), as soon as
// that one is done. The data are durable once a Flush has fsynced them.
func (fm *formatter) startWriteback() {
	if fm.err != nil {
		return
	}
	// Not while the caller holds the goroutine: a writeback costs the
	// kernel CPU time too.
	fm.gate.pass()
	if fm.writingBack {
		fm.owed = true
		return
	}
	fm.writingBack, fm.owed, fm.dirty = true, false, 0
	fm.kick <- struct{}{} // room: writebackLoop has sent its last result
}

// writebackDone records the outcome of a background writeback.
func (fm *formatter) writebackDone(err error) {
	fm.writingBack = false
	if err != nil && fm.err == nil {
		fm.err = fmt.Errorf("chains: %s: %w", fm.path, err)
	}
}

// awaitWriteback waits for the background writeback in progress, if any.
func (fm *formatter) awaitWriteback() {
	if fm.writingBack {
		fm.writebackDone(<-fm.result)
	}
}

// write formats a batch in the layout walkers (see Writer.walkers) and
// writes its text with one call: rows of ncol values, or records of
// ensemble steps, each turned into its rows (step, walker, ln_post,
// ln_like, parameters) in fm.row before it is formatted.
func (fm *formatter) write(vals []float64, walkers int) {
	if fm.err != nil {
		return
	}
	b := fm.out[:0]
	ncol := fm.ncol
	left := 0 // rows before the next look at the gate
	if walkers == 0 {
		for i := 0; i+ncol <= len(vals); i += ncol {
			if left == 0 {
				fm.gate.pass()
				left = holdRows
			}
			left--
			b = fm.appendRow(b, vals[i:i+ncol])
		}
	} else {
		dim := ncol - ensembleColumns
		row := fm.row[:ncol]
		for rec := 1 + walkers*(2+dim); len(vals) >= rec; vals = vals[rec:] {
			lnPost, lnLike := vals[1:1+walkers], vals[1+walkers:1+2*walkers]
			pos := vals[1+2*walkers : rec]
			row[0] = vals[0]
			for k := range walkers {
				if left == 0 {
					fm.gate.pass()
					left = holdRows
				}
				left--
				row[1], row[2], row[3] = float64(k), lnPost[k], lnLike[k]
				copy(row[ensembleColumns:], pos[k*dim:(k+1)*dim])
				b = fm.appendRow(b, row)
			}
		}
	}
	fm.gate.pass()
	n, err := fm.f.Write(b)
	fm.off += int64(n)
	fm.dirty += int64(n)
	fm.out = b[:0] // keeps its capacity, grown if a batch needed more
	if err != nil {
		fm.err = fmt.Errorf("chains: %s: %w", fm.path, err)
	}
}

// appendRow appends the text of row (ncol values, then a newline) to b.
// A value's text depends only on its bits, so the text of a value (or row
// tail) bit-identical to one formatted before is copied instead of
// formatted again: the first value when it is that of the row before (the
// step of an ensemble), and the rest of the row when it repeats the last
// row with the same walker slot (a rejected proposal).
func (fm *formatter) appendRow(b []byte, row []float64) []byte {
	if u := math.Float64bits(row[0]); u == fm.firstBits && fm.firstLen > 0 {
		b = append(b, fm.first[:fm.firstLen]...)
	} else {
		n := len(b)
		b = appendFloat(b, row[0])
		fm.firstBits, fm.firstLen = u, copy(fm.first[:], b[n:])
	}
	tail := row[1:]
	k := -1
	if len(row) > 1 {
		k = walkerSlot(row[1])
	}
	if k >= 0 {
		if t := fm.tails.get(k, tail); t != nil {
			return append(b, t...)
		}
	}
	n := len(b)
	for _, v := range tail {
		b = append(b, ',')
		b = appendFloat(b, v)
	}
	b = append(b, '\n')
	if k >= 0 {
		fm.tails.put(k, tail, b[n:])
	}
	return b
}

// sync fsyncs everything written so far and waits for it, after the
// background writeback in progress (whose error it reports too).
func (fm *formatter) sync() {
	fm.awaitWriteback()
	if fm.err != nil {
		return
	}
	if err := fm.fsync(); err != nil {
		fm.err = fmt.Errorf("chains: %s: %w", fm.path, err)
		return
	}
	fm.dirty, fm.owed = 0, false
}

var errClosed = errors.New("chains: writer is closed")

// header returns the header line for columns, after checking the names.
func header(columns []string) ([]byte, error) {
	if len(columns) == 0 {
		return nil, errors.New("no columns")
	}
	seen := make(map[string]bool, len(columns))
	for i, c := range columns {
		if c == "" {
			return nil, fmt.Errorf("column %d: empty name", i)
		}
		if j := strings.IndexFunc(c, func(r rune) bool {
			return r <= ' ' || r == ',' || r == '#' || r == '"' || r == '\'' || r == 0x7f
		}); j >= 0 {
			return nil, fmt.Errorf("column %d (%q): names may not contain commas, quotes, '#' or white space", i, c)
		}
		if seen[c] {
			return nil, fmt.Errorf("column %d (%q): duplicate name", i, c)
		}
		seen[c] = true
	}
	return []byte("# " + strings.Join(columns, ",") + "\n"), nil
}

// Create creates (or truncates) the chain file at path and writes the
// header naming columns.
func Create(path string, columns []string) (*Writer, error) {
	h, err := header(columns)
	if err != nil {
		return nil, fmt.Errorf("chains: %s: %w", path, err)
	}
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_TRUNC, 0o644)
	if err != nil {
		return nil, fmt.Errorf("chains: %w", err)
	}
	if _, err := f.Write(h); err != nil {
		f.Close()
		return nil, fmt.Errorf("chains: %s: %w", path, err)
	}
	return newWriter(path, f, len(columns), int64(len(h)), max(1, batchFloats/len(columns))), nil
}

// newWriter starts the Writer of f, whose length is off, with batches of
// rows rows, and its goroutine.
func newWriter(path string, f *os.File, ncol int, off int64, rows int) *Writer {
	return newWriterSync(path, f, ncol, off, rows, f.Sync, newWriteback(f, f.Sync))
}

// newWriterSync is newWriter with sync to fsync f and writeback to start
// a writeback of f (f.Sync and newWriteback(f, f.Sync) but in tests).
func newWriterSync(path string, f *os.File, ncol int, off int64, rows int, sync, writeback func() error) *Writer {
	w := &Writer{
		path:  path,
		f:     f,
		ncol:  ncol,
		batch: make([]float64, 0, rows*ncol),
		work:  make(chan message, 2*batchesInFlight),
		free:  make(chan []float64, batchesInFlight),
		reply: make(chan flushResult, 1),
		done:  make(chan struct{}),
		nudge: make(chan struct{}, 1),
		gate:  newGate(),
	}
	for range batchesInFlight - 1 {
		w.free <- make([]float64, 0, rows*ncol)
	}
	fm := &formatter{path: path, f: f, fsync: sync, writeback: writeback, gate: w.gate, ncol: ncol, off: off,
		out: make([]byte, 0, textBytes(ncol, rows)), row: make([]float64, ncol)}
	go fm.run(w)
	return w
}

// textBytes returns the room a formatter needs for the text of a batch of
// rows rows of ncol values: the most rows a batch can hold (rows appended
// one by one; more in ensemble records, which take ncol-2 values a row
// and 1 a step) times the longest text of a row.
func textBytes(ncol, rows int) int {
	most := rows
	if ncol >= ensembleColumns {
		most = rows * ncol / (ncol - 2)
	}
	return most * ncol * (maxValueText + 1)
}

// Resume reopens a chain file written by a Writer, checks that its header
// names columns, truncates it to offset (a length returned by Flush) and
// positions the Writer there, so that appending continues exactly where the
// flushed part of the file ended.
func Resume(path string, columns []string, offset int64) (*Writer, error) {
	h, err := header(columns)
	if err != nil {
		return nil, fmt.Errorf("chains: %s: %w", path, err)
	}
	// A named pipe or device in the chain's place would block the reads
	// below or never end: check the type before opening and on the open
	// file.
	if st, err := os.Stat(path); err != nil {
		return nil, fmt.Errorf("chains: %w", err)
	} else if err := safeio.CheckRegular(path, st); err != nil {
		return nil, fmt.Errorf("chains: %w", err)
	}
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		return nil, fmt.Errorf("chains: %w", err)
	}
	fail := func(format string, a ...any) (*Writer, error) {
		f.Close()
		return nil, fmt.Errorf("chains: %s: "+format, append([]any{path}, a...)...)
	}
	st, err := f.Stat()
	if err != nil {
		return fail("%w", err)
	}
	if err := safeio.CheckRegular(path, st); err != nil {
		f.Close()
		return nil, fmt.Errorf("chains: %w", err)
	}
	got := make([]byte, len(h))
	if _, err := io.ReadFull(f, got); err != nil || !bytes.Equal(got, h) {
		line, _, _ := bytes.Cut(got, []byte("\n"))
		return fail("line 1: header %q does not match the expected columns %q", line, strings.Join(columns, ","))
	}
	if offset < int64(len(h)) || offset > st.Size() {
		return fail("resume offset %d outside the file (header ends at %d, file length %d)", offset, len(h), st.Size())
	}
	last := make([]byte, 1)
	if _, err := f.ReadAt(last, offset-1); err != nil {
		return fail("%w", err)
	}
	if last[0] != '\n' {
		return fail("resume offset %d is not at the end of a line", offset)
	}
	if err := f.Truncate(offset); err != nil {
		return fail("%w", err)
	}
	if _, err := f.Seek(offset, io.SeekStart); err != nil {
		return fail("%w", err)
	}
	if err := f.Sync(); err != nil {
		return fail("%w", err)
	}
	return newWriter(path, f, len(columns), offset, max(1, batchFloats/len(columns))), nil
}

// Append adds one row, which must have one value per column. Rows are
// buffered and written in the background; call Flush to make them durable.
// Append returns an error the background met since the last call. It does
// not allocate.
func (w *Writer) Append(row []float64) error {
	w.gate.release()
	if w.err != nil {
		return w.err
	}
	if len(row) != w.ncol {
		return fmt.Errorf("chains: %s: row has %d values, want %d", w.path, len(row), w.ncol)
	}
	if err := w.failed(); err != nil {
		return err
	}
	if err := w.setLayout(0); err != nil {
		return err
	}
	w.batch = append(w.batch, row...)
	if len(w.batch) == cap(w.batch) {
		return w.handOver()
	}
	return nil
}

// setLayout makes the batch take the layout walkers (see Writer.walkers),
// handing it over first if it holds values in another layout.
func (w *Writer) setLayout(walkers int) error {
	if len(w.batch) > 0 && w.walkers != walkers {
		if err := w.handOver(); err != nil {
			return err
		}
	}
	w.walkers = walkers
	return nil
}

// handOver hands the batch, with the flush request waiting for it if any,
// to the goroutine and takes a free one. It returns the goroutine's error
// if it has met one: the goroutine publishes it before it gives back the
// batch that met it.
func (w *Writer) handOver() error {
	w.work <- message{rows: w.batch, walkers: w.walkers, sync: w.pending != 0, seq: w.pending}
	w.pending = 0
	w.batch = w.takeFree()
	return w.failed()
}

// ensembleColumns is the number of columns before the parameters in the
// command's column convention: step, walker, ln_post, ln_like.
const ensembleColumns = 4

// AppendEnsemble adds the rows of one ensemble step in the command's
// column convention (step, walker, ln_post, ln_like, then the parameters;
// see the package documentation): for walker k = 0, 1, ..., the row step,
// k, lnPost[k], lnLike[k], pos[k*dim:(k+1)*dim], where dim is the number
// of columns less 4. The file gets exactly the bytes of calling Append with
// each of these rows in turn (step and k are stored as float64, exact up
// to 2^53), for one call and one check of the background's error per step
// instead of per row. It copies the three slices whole, after the step,
// into the batch (a record of 1+walkers*(2+dim) values), and the
// goroutine makes the rows; a record larger than a batch is copied row by
// row. lnLike must hold len(lnPost) values and pos len(lnPost)*dim, else
// nothing is appended and an error is returned. Like Append, it returns
// an error the background met (rows of this step may then be dropped,
// with every later one), and it does not allocate.
func (w *Writer) AppendEnsemble(step int, lnPost, lnLike, pos []float64) error {
	w.gate.release()
	if w.err != nil {
		return w.err
	}
	dim := w.ncol - ensembleColumns
	if dim < 0 {
		return fmt.Errorf("chains: %s: %d columns, fewer than the %d of an ensemble row (step, walker, ln_post, ln_like)", w.path, w.ncol, ensembleColumns)
	}
	walkers := len(lnPost)
	if len(lnLike) != walkers || len(pos) != walkers*dim {
		return fmt.Errorf("chains: %s: ensemble of %d ln_post, %d ln_like and %d parameter values, want %d, %d and %d (%d parameters per walker)",
			w.path, walkers, len(lnLike), len(pos), walkers, walkers, walkers*dim, dim)
	}
	if err := w.failed(); err != nil {
		return err
	}
	if walkers == 0 {
		return nil
	}
	s := float64(step)
	if rec := 1 + walkers*(2+dim); rec <= cap(w.batch) {
		if err := w.setLayout(walkers); err != nil {
			return err
		}
		w.batch = append(w.batch, s)
		w.batch = append(w.batch, lnPost...)
		w.batch = append(w.batch, lnLike...)
		w.batch = append(w.batch, pos...)
		if len(w.batch)+rec > cap(w.batch) {
			return w.handOver() // no room for the next step
		}
		return nil
	}
	if err := w.setLayout(0); err != nil {
		return err
	}
	for k := range walkers {
		// Each batch holds whole rows (its capacity is a multiple of
		// ncol), so a row never straddles two batches.
		w.batch = append(w.batch, s, float64(k), lnPost[k], lnLike[k])
		w.batch = append(w.batch, pos[k*dim:(k+1)*dim]...)
		if len(w.batch) == cap(w.batch) {
			if err := w.handOver(); err != nil {
				return err
			}
		}
	}
	return nil
}

// takeFree returns a free batch, waiting for one (and prompting the
// goroutine, which may be idle) when there is none.
func (w *Writer) takeFree() []float64 {
	select {
	case b := <-w.free:
		return b
	default:
		w.prompt()
		return <-w.free
	}
}

// prompt has the goroutine look for work now, if it is idle.
func (w *Writer) prompt() {
	select {
	case w.nudge <- struct{}{}:
	default: // a prompt is there already
	}
}

// failed records and returns the goroutine's error, if it has met one.
func (w *Writer) failed() error {
	if p := w.bgErr.Load(); p != nil {
		w.err = *p
		return w.err
	}
	return nil
}

// StartFlush is Flush without the wait and without the fsync: it asks the
// goroutine to write everything appended so far to the file and start
// its writeback to the disk, and returns at once. Once written, the rows
// survive the end of the process (a crash, a kill); only a Flush's fsync
// makes them durable against a crash of the machine. The rows go with the
// request now if the goroutine has a batch to give back, else (the
// goroutine is behind) with the batch once it is full, or with the next
// Flush or Close. Once written they are written back for this request, or
// for a later one already made, or at the latest once writebackBytes more
// have been written. It returns an error the goroutine met before; a
// later call returns an error met by this flush.
func (w *Writer) StartFlush() error {
	w.gate.release()
	if w.err != nil {
		return w.err
	}
	if err := w.failed(); err != nil {
		return err
	}
	m := message{sync: true, seq: w.syncs.Add(1)}
	if len(w.batch) == 0 {
		select {
		case w.work <- m:
			w.pending = 0
			return nil
		default:
		}
	} else {
		select {
		case next := <-w.free:
			m.rows, m.walkers = w.batch, w.walkers
			w.work <- m // room for every batch: waits at most for a request's turn
			w.batch, w.pending = next, 0
			return nil
		default:
		}
	}
	w.pending = m.seq
	return nil
}

// Flush writes everything appended so far, fsyncs the file and returns its
// length, the offset at which Resume can continue. It waits for the
// goroutine, and returns the first error the goroutine met.
func (w *Writer) Flush() (offset int64, err error) {
	w.gate.release()
	if w.err != nil {
		return 0, w.err
	}
	m := message{wait: true, seq: w.syncs.Add(1)}
	if len(w.batch) > 0 {
		m.rows, m.walkers = w.batch, w.walkers
	}
	w.work <- m
	w.prompt()
	w.pending = 0
	r := <-w.reply
	if m.rows != nil {
		w.batch = <-w.free // back before the reply
	}
	if r.err != nil {
		w.err = r.err
		return 0, r.err
	}
	return r.off, nil
}

// Hold asks the background goroutine to stop formatting, within about
// holdRows rows, until Release or the next call of another method (which
// may need it to go on): a caller about to run work that wants every core
// for a short while, such as a run's convergence check, has the core the
// goroutine would share with it. The rows already handed over wait, in
// order; nothing is lost or reordered.
func (w *Writer) Hold() { w.gate.held.Store(true) }

// Release ends a Hold: the goroutine goes on with the rows it holds.
func (w *Writer) Release() { w.gate.release() }

// Close flushes and closes the file and stops the goroutine, also after an
// error. Later calls to any method return an error.
func (w *Writer) Close() error {
	if w.err == errClosed {
		return errClosed
	}
	_, ferr := w.Flush()
	close(w.work)
	w.prompt()
	<-w.done
	cerr := w.f.Close()
	w.err = errClosed
	if ferr != nil {
		return ferr
	}
	if cerr != nil {
		return fmt.Errorf("chains: %s: %w", w.path, cerr)
	}
	return nil
}

// ReadCSV reads a chain file written by a Writer: its column names and its
// rows. Errors name the file and line at fault. A last line without its
// newline (a run killed while writing) is an error; Resume at the last
// flushed offset repairs such a file.
func ReadCSV(path string) (columns []string, rows [][]float64, err error) {
	f, err := safeio.Open(path)
	if err != nil {
		return nil, nil, fmt.Errorf("chains: %w", err)
	}
	defer f.Close()
	columns, rows, err = readCSV(bufio.NewReaderSize(f, 1<<16))
	if err != nil {
		return nil, nil, fmt.Errorf("chains: %s:%w", path, err)
	}
	return columns, rows, nil
}

// ScanCSV reads the first limit bytes of a chain file written by a Writer
// (a length returned by Flush, such as a checkpoint's), checks that its
// header names columns, and calls fn with each row in order. The row slice
// is reused between calls. It reads a long chain in constant memory, which
// ReadCSV does not. Errors name the file and line at fault.
func ScanCSV(path string, limit int64, columns []string, fn func(row []float64) error) error {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("chains: %w", err)
	}
	defer f.Close()
	want := strings.Join(columns, ",")
	err = scanCSV(bufio.NewReaderSize(io.LimitReader(f, limit), 1<<16), func(cols []string) error {
		if got := strings.Join(cols, ","); got != want {
			return fmt.Errorf("1: header %q does not match the expected columns %q", got, want)
		}
		return nil
	}, fn)
	if err != nil {
		return fmt.Errorf("chains: %s:%w", path, err)
	}
	return nil
}

// readCSV parses a chain; its errors start with "line N: " (ReadCSV adds
// the file name before them).
func readCSV(r *bufio.Reader) ([]string, [][]float64, error) {
	var (
		columns []string
		rows    [][]float64
		data    []float64
	)
	err := scanCSV(r, func(c []string) error { columns = c; return nil }, func(row []float64) error {
		if len(data)+len(row) > cap(data) {
			data = make([]float64, 0, max(1024*len(row), 2*cap(data)))
		}
		start := len(data)
		data = append(data, row...)
		rows = append(rows, data[start:len(data):len(data)])
		return nil
	})
	if err != nil {
		return nil, nil, err
	}
	return columns, rows, nil
}

// scanCSV parses a chain, passing its column names to head and each row
// (a reused slice) to fn; its errors start with "N: ", the line number.
func scanCSV(r *bufio.Reader, head func([]string) error, fn func([]float64) error) error {
	lineNo := 0
	next := func() (string, bool, error) {
		s, err := r.ReadString('\n')
		if err == io.EOF {
			if s == "" {
				return "", false, nil
			}
			return "", false, fmt.Errorf("%d: incomplete last line (no newline)", lineNo+1)
		}
		if err != nil {
			return "", false, fmt.Errorf("%d: %w", lineNo+1, err)
		}
		lineNo++
		s = strings.TrimSuffix(s[:len(s)-1], "\r")
		return s, true, nil
	}
	h, ok, err := next()
	if err != nil {
		return err
	}
	if !ok {
		return errors.New("1: empty file, want a header line \"# name,name,...\"")
	}
	if !strings.HasPrefix(h, "#") {
		return fmt.Errorf("1: header must start with '#', got %.40q", h)
	}
	columns := strings.Split(strings.TrimSpace(h[1:]), ",")
	if _, err := header(columns); err != nil {
		return fmt.Errorf("1: header: %w", err)
	}
	if err := head(columns); err != nil {
		return err
	}
	row := make([]float64, len(columns))
	for {
		s, ok, err := next()
		if err != nil {
			return err
		}
		if !ok {
			return nil
		}
		fields := strings.Split(s, ",")
		if len(fields) != len(columns) {
			return fmt.Errorf("%d: %d fields, want %d", lineNo, len(fields), len(columns))
		}
		for k, tok := range fields {
			v, err := strconv.ParseFloat(tok, 64)
			if err != nil {
				return fmt.Errorf("%d: field %d (%s): %.40q is not a number", lineNo, k+1, columns[k], tok)
			}
			row[k] = v
		}
		if err := fn(row); err != nil {
			return fmt.Errorf("%d: %w", lineNo, err)
		}
	}
}
