package fitrun

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"

	"tautline/chains"
	"tautline/sampler"
)

// The history of a fit is written as it is recorded and never again: the
// cold rung is chain.csv (whose shortest round-trip formatting reads back
// bit for bit), and the tempered rungs' ln likelihoods, which chain.csv
// does not hold, go to an append-only binary file (rundir.RungsFile): the
// magic rungsMagic, the number of tempered rungs and of walkers (uint32
// each, little-endian), then per step the ln likelihoods of rungs 1, 2,
// ... (walkers float64 each). A checkpoint therefore holds only the
// sampler's state, and the bytes written over a run grow linearly with it.
const rungsMagic = "tautline-rlnl 1\n"

const rungsHeader = len(rungsMagic) + 8

// rungsFile appends the tempered rungs' ln likelihoods of every step.
type rungsFile struct {
	path string
	f    *os.File
	bw   *bufio.Writer
	buf  []byte
}

func rungsHead(hot, walkers int) []byte {
	b := []byte(rungsMagic)
	b = binary.LittleEndian.AppendUint32(b, uint32(hot))
	return binary.LittleEndian.AppendUint32(b, uint32(walkers))
}

// createRungs creates (or truncates) the file at path for hot tempered
// rungs of walkers walkers.
func createRungs(path string, hot, walkers int) (*rungsFile, error) {
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_TRUNC, 0o644)
	if err != nil {
		return nil, err
	}
	w := &rungsFile{path: path, f: f, bw: bufio.NewWriterSize(f, 1<<16)}
	if _, err := w.bw.Write(rungsHead(hot, walkers)); err != nil {
		f.Close()
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return w, nil
}

// resumeRungs reopens the file at path, checks its header and cuts it back
// to its first steps steps.
func resumeRungs(path string, hot, walkers, steps int) (*rungsFile, error) {
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		return nil, err
	}
	size := int64(rungsHeader) + int64(steps)*int64(8*hot*walkers)
	if err := checkRungsHead(f, path, hot, walkers, size); err != nil {
		f.Close()
		return nil, err
	}
	if err := f.Truncate(size); err != nil {
		f.Close()
		return nil, err
	}
	if _, err := f.Seek(size, io.SeekStart); err != nil {
		f.Close()
		return nil, err
	}
	return &rungsFile{path: path, f: f, bw: bufio.NewWriterSize(f, 1<<16)}, nil
}

// checkRungsHead checks that f starts with the header for hot rungs of
// walkers walkers and holds at least size bytes.
func checkRungsHead(f *os.File, path string, hot, walkers int, size int64) error {
	got := make([]byte, rungsHeader)
	if _, err := io.ReadFull(f, got); err != nil || !bytes.Equal(got, rungsHead(hot, walkers)) {
		return fmt.Errorf("%s: not the tempered rungs' ln likelihoods of this run (header differs)", path)
	}
	st, err := f.Stat()
	if err != nil {
		return err
	}
	if st.Size() < size {
		return fmt.Errorf("%s: %d bytes, the checkpoint needs %d", path, st.Size(), size)
	}
	return nil
}

// append writes the tempered rungs' ln likelihoods of e's last step.
func (w *rungsFile) append(e *sampler.Ensemble) error {
	w.buf = w.buf[:0]
	for r := 1; r < e.Rungs(); r++ {
		for _, v := range e.LnLike(r) {
			w.buf = binary.LittleEndian.AppendUint64(w.buf, math.Float64bits(v))
		}
	}
	if _, err := w.bw.Write(w.buf); err != nil {
		return fmt.Errorf("%s: %w", w.path, err)
	}
	return nil
}

// flush writes the buffered steps and syncs the file.
func (w *rungsFile) flush() error {
	if err := w.bw.Flush(); err != nil {
		return fmt.Errorf("%s: %w", w.path, err)
	}
	if err := w.f.Sync(); err != nil {
		return fmt.Errorf("%s: %w", w.path, err)
	}
	return nil
}

// Close flushes and closes the file; a nil file is a no-op.
func (w *rungsFile) Close() error {
	if w == nil || w.f == nil {
		return nil
	}
	err := w.flush()
	if cerr := w.f.Close(); err == nil {
		err = cerr
	}
	w.f = nil
	return err
}

// historyLoader reads the history a checkpoint records back from the
// first chainLen bytes of chain.csv and, with tempering, from the rungs
// file; it sets *recorded to the number of steps read.
func historyLoader(chainPath, rungsPath string, chainLen int64, columns []string, recorded *int) sampler.HistoryLoader {
	return func(h *sampler.History, steps int) error {
		walkers, dim, rungs := h.Walkers(), h.Dim(), h.Rungs()
		hot := rungs - 1
		var rr *bufio.Reader
		if hot > 0 {
			f, err := os.Open(rungsPath)
			if err != nil {
				return err
			}
			defer f.Close()
			if err := checkRungsHead(f, rungsPath, hot, walkers, int64(rungsHeader)+int64(steps)*int64(8*hot*walkers)); err != nil {
				return err
			}
			rr = bufio.NewReaderSize(f, 1<<16)
		}
		pos := make([]float64, walkers*dim)
		ll := make([]float64, rungs*walkers)
		raw := make([]byte, 8*hot*walkers)
		k, step := 0, h.Start()+1
		errStop := errors.New("stop")
		err := chains.ScanCSV(chainPath, chainLen, columns, func(row []float64) error {
			if row[0] <= float64(h.Start()) {
				return nil // rows before the history began
			}
			if h.Len() == steps {
				return errStop
			}
			if row[0] != float64(step) || row[1] != float64(k) {
				return fmt.Errorf("row of step %g, walker %g; the history needs step %d, walker %d", row[0], row[1], step, k)
			}
			ll[k] = row[3]
			copy(pos[k*dim:(k+1)*dim], row[4:])
			if k++; k < walkers {
				return nil
			}
			if rr != nil {
				if _, err := io.ReadFull(rr, raw); err != nil {
					return fmt.Errorf("%s: step %d: %w", rungsPath, step, err)
				}
				for i := range raw[:len(raw)/8] {
					ll[walkers+i] = math.Float64frombits(binary.LittleEndian.Uint64(raw[8*i:]))
				}
			}
			k, step = 0, step+1
			return h.Append(pos, ll)
		})
		if err != nil && !errors.Is(err, errStop) {
			return err
		}
		if h.Len() != steps || k != 0 {
			return fmt.Errorf("%s holds %d complete steps of the %d the checkpoint records", chainPath, h.Len(), steps)
		}
		*recorded = steps
		return nil
	}
}
