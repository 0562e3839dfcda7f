package sampler

import (
	"bytes"
	"crypto/sha256"
	"encoding"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"slices"
)

// Checkpoint layout (little-endian):
//
//	magic [8]byte "TLSMPCKP" | version uint32 | total length uint64 |
//	body | SHA-256 of everything before it [32]byte
//
// Version 2 records only the span of Run's history (its start and length),
// not its values, so that a checkpoint's size does not grow with the run.
const (
	ckMagic   = "TLSMPCKP"
	ckVersion = 2
	ckHeader  = 8 + 4 + 8
	ckSum     = sha256.Size
)

// Checkpoint errors; Restore wraps them with detail.
var (
	ErrCheckpointTruncated   = errors.New("sampler: checkpoint truncated")
	ErrCheckpointCorrupt     = errors.New("sampler: checkpoint checksum mismatch (the data are corrupted)")
	ErrCheckpointFormat      = errors.New("sampler: not a sampler checkpoint")
	ErrCheckpointFingerprint = errors.New("sampler: checkpoint belongs to another run (fingerprint differs)")
	ErrCheckpointConfig      = errors.New("sampler: checkpoint configuration differs")
)

type enc struct{ b []byte }

func (w *enc) u64(v uint64)  { w.b = binary.LittleEndian.AppendUint64(w.b, v) }
func (w *enc) int(v int)     { w.u64(uint64(int64(v))) }
func (w *enc) f64(v float64) { w.u64(math.Float64bits(v)) }
func (w *enc) bytes(p []byte) {
	w.int(len(p))
	w.b = append(w.b, p...)
}
func (w *enc) str(s string) { w.bytes([]byte(s)) }
func (w *enc) floats(v []float64) {
	w.int(len(v))
	w.b = slices.Grow(w.b, 8*len(v))
	for _, f := range v {
		w.b = binary.LittleEndian.AppendUint64(w.b, math.Float64bits(f))
	}
}
func (w *enc) ints(v []int64) {
	w.int(len(v))
	for _, x := range v {
		w.u64(uint64(x))
	}
}
func (w *enc) pcg(p encoding.BinaryMarshaler) error {
	b, err := p.MarshalBinary()
	if err != nil {
		return fmt.Errorf("sampler: checkpoint: %w", err)
	}
	w.bytes(b)
	return nil
}

type dec struct {
	b   []byte
	err error
}

func (r *dec) u64() uint64 {
	if r.err != nil {
		return 0
	}
	if len(r.b) < 8 {
		r.err = fmt.Errorf("%w: body ends early", ErrCheckpointFormat)
		return 0
	}
	v := binary.LittleEndian.Uint64(r.b)
	r.b = r.b[8:]
	return v
}
func (r *dec) int() int     { return int(int64(r.u64())) }
func (r *dec) f64() float64 { return math.Float64frombits(r.u64()) }

// length reads a count of items of unit bytes each, which must fit in the
// bytes that follow it.
func (r *dec) length(unit int) int {
	n := r.int()
	if r.err == nil && (n < 0 || n > len(r.b)/unit) {
		r.err = fmt.Errorf("%w: length %d out of range", ErrCheckpointFormat, n)
		return 0
	}
	return n
}
func (r *dec) bytes() []byte {
	n := r.length(1)
	if r.err != nil {
		return nil
	}
	p := r.b[:n]
	r.b = r.b[n:]
	return p
}
func (r *dec) str() string { return string(r.bytes()) }
func (r *dec) floatsInto(dst []float64, what string) {
	n := r.length(8)
	if r.err == nil && n != len(dst) {
		r.err = fmt.Errorf("%w: %s has %d values, want %d", ErrCheckpointConfig, what, n, len(dst))
	}
	for i := range dst {
		dst[i] = r.f64()
	}
}
func (r *dec) floats() []float64 {
	n := r.length(8)
	v := make([]float64, n)
	for i := range v {
		v[i] = r.f64()
	}
	return v
}
func (r *dec) intsInto(dst []int64, what string) {
	n := r.length(8)
	if r.err == nil && n != len(dst) {
		r.err = fmt.Errorf("%w: %s has %d values, want %d", ErrCheckpointConfig, what, n, len(dst))
	}
	for i := range dst {
		dst[i] = int64(r.u64())
	}
}
func (r *dec) pcg(p encoding.BinaryUnmarshaler) {
	b := r.bytes()
	if r.err != nil {
		return
	}
	if err := p.UnmarshalBinary(b); err != nil {
		r.err = fmt.Errorf("%w: random stream: %v", ErrCheckpointFormat, err)
	}
}

// configKey lists the settings that must match between a checkpoint and
// the configuration it is restored with (not Workers or MinBatch, which do
// not change results).
func (e *Ensemble) configKey(w *enc) {
	w.int(e.dim)
	w.int(e.nw)
	w.u64(e.cfg.Seed)
	w.int(e.cfg.SwapEvery)
	w.int(e.cfg.AdaptSteps)
	w.str(moveKey(e.moves))
}

// MarshalBinary serialises the sampler's state: positions, densities,
// every random stream, counters, the ladder and its adaptation, and the
// span of Run's history (the ensemble step it starts after and the number
// of steps recorded), under a header with a format version, the
// configuration's Fingerprint and a SHA-256 checksum. The history's values
// are not included: they are the record of the run, which the caller
// writes as it goes (one row per walker and step) and hands back to
// Restore. The encoding's size is therefore independent of the run's
// length, and Restore with the same history continues bit-identically.
func (e *Ensemble) MarshalBinary() ([]byte, error) {
	size := 1024
	for r := range e.rungs {
		size += 8 * (len(e.rungs[r].pos) + 4*e.nw)
	}
	w := &enc{b: make([]byte, 0, size+64*e.nw*len(e.rungs))}
	w.b = append(w.b, ckMagic...)
	w.b = binary.LittleEndian.AppendUint32(w.b, ckVersion)
	w.u64(0) // total length, filled in below
	w.str(e.cfg.Fingerprint)
	e.configKey(w)
	w.floats(e.cfg.Betas)
	w.int(len(e.rungs))
	w.int(e.steps)
	w.int(e.frozenAt)
	w.floats(e.betas)
	for r := range e.rungs {
		g := &e.rungs[r]
		w.floats(g.pos)
		w.floats(g.lp)
		w.floats(g.ll)
		w.floats(g.lpost)
		w.ints(g.acc)
		for k := range g.pcgs {
			if err := w.pcg(&g.pcgs[k]); err != nil {
				return nil, err
			}
		}
	}
	if err := w.pcg(e.swapPCG); err != nil {
		return nil, err
	}
	w.ints(e.swapAcc)
	w.ints(e.swapTry)
	w.floats(e.roundAcc)
	if h := e.hist; h != nil {
		w.int(1)
		w.int(h.start)
		w.int(h.n)
	} else {
		w.int(0)
	}
	binary.LittleEndian.PutUint64(w.b[12:20], uint64(len(w.b)+ckSum))
	sum := sha256.Sum256(w.b)
	return append(w.b, sum[:]...), nil
}

// A HistoryLoader gives Restore back the history a checkpoint recorded:
// it must Append steps steps to h, the first being ensemble step
// h.Start()+1, exactly as Run recorded them (the cold rung's positions and
// every rung's ln likelihood).
type HistoryLoader func(h *History, steps int) error

// NewHistory returns an empty history of an ensemble of walkers walkers
// per rung, dim parameters and rungs rungs, whose first recorded step is
// ensemble step start+1; for a HistoryLoader's tests and tools.
func NewHistory(start, walkers, dim, rungs int) *History {
	return &History{start: start, walkers: walkers, dim: dim, rungs: rungs}
}

// Append records one more step: pos holds the cold rung's positions
// (walkers x dim, walker-major) and ll every rung's ln likelihood (rungs x
// walkers, rung-major), as Run records them.
func (h *History) Append(pos, ll []float64) error {
	if len(pos) != h.walkers*h.dim || len(ll) != h.walkers*h.rungs {
		return fmt.Errorf("sampler: history step %d: %d positions and %d ln likelihoods, want %d and %d",
			h.start+h.n+1, len(pos), len(ll), h.walkers*h.dim, h.walkers*h.rungs)
	}
	h.pos = append(h.pos, pos...)
	h.ll = append(h.ll, ll...)
	h.n++
	return nil
}

// Restore rebuilds an Ensemble from MarshalBinary output. t and cfg must be
// those of the original run (Workers and MinBatch may differ). If the
// checkpoint recorded a history, load supplies its values (load may be nil
// only when it did not). Restore refuses, with errors wrapping
// ErrCheckpointTruncated, ErrCheckpointCorrupt, ErrCheckpointFormat,
// ErrCheckpointFingerprint or ErrCheckpointConfig, data that are cut
// short, fail the checksum, are not a checkpoint, carry another
// fingerprint, or were written under another configuration, and returns
// load's errors wrapped.
func Restore(t Target, cfg Config, data []byte, load HistoryLoader) (*Ensemble, error) {
	if len(data) < ckHeader+ckSum {
		return nil, fmt.Errorf("%w: %d bytes, less than the %d-byte header and checksum", ErrCheckpointTruncated, len(data), ckHeader+ckSum)
	}
	if string(data[:8]) != ckMagic {
		return nil, fmt.Errorf("%w: bad magic %q", ErrCheckpointFormat, data[:8])
	}
	if v := binary.LittleEndian.Uint32(data[8:12]); v != ckVersion {
		return nil, fmt.Errorf("%w: format version %d, this build reads version %d", ErrCheckpointFormat, v, ckVersion)
	}
	total := binary.LittleEndian.Uint64(data[12:20])
	if total > uint64(len(data)) {
		return nil, fmt.Errorf("%w: have %d of %d bytes", ErrCheckpointTruncated, len(data), total)
	}
	if total < uint64(len(data)) {
		return nil, fmt.Errorf("%w: %d bytes after the declared end at %d", ErrCheckpointFormat, uint64(len(data))-total, total)
	}
	body := data[:len(data)-ckSum]
	if sum := sha256.Sum256(body); !bytes.Equal(sum[:], data[len(data)-ckSum:]) {
		return nil, ErrCheckpointCorrupt
	}
	e, err := build(t, cfg)
	if err != nil {
		return nil, err
	}
	r := &dec{b: body[ckHeader:]}
	if fp := r.str(); r.err == nil && fp != cfg.Fingerprint {
		return nil, fmt.Errorf("%w: checkpoint has %q, configuration has %q", ErrCheckpointFingerprint, fp, cfg.Fingerprint)
	}
	want := &enc{}
	e.configKey(want)
	want.floats(e.cfg.Betas)
	want.int(len(e.rungs))
	if r.err == nil {
		if len(r.b) < len(want.b) || !bytes.Equal(r.b[:len(want.b)], want.b) {
			return nil, fmt.Errorf("%w: %s", ErrCheckpointConfig, describeConfigDiff(r.b, want.b))
		}
		r.b = r.b[len(want.b):]
	}
	e.steps = r.int()
	e.frozenAt = r.int()
	r.floatsInto(e.betas, "ladder")
	for k := range e.rungs {
		g := &e.rungs[k]
		r.floatsInto(g.pos, "positions")
		r.floatsInto(g.lp, "ln prior")
		r.floatsInto(g.ll, "ln likelihood")
		r.floatsInto(g.lpost, "ln posterior")
		r.intsInto(g.acc, "acceptance counts")
		for w := range g.pcgs {
			r.pcg(&g.pcgs[w])
		}
	}
	r.pcg(e.swapPCG)
	r.intsInto(e.swapAcc, "swap counts")
	r.intsInto(e.swapTry, "swap counts")
	r.floatsInto(e.roundAcc, "swap round")
	hasHist := r.int()
	start, n := 0, 0
	if hasHist == 1 {
		start, n = r.int(), r.int()
		// Run records every step after the history's start.
		if r.err == nil && (start < 0 || n < 0 || start+n != e.steps) {
			r.err = fmt.Errorf("%w: history of %d steps after step %d does not end at step %d", ErrCheckpointFormat, n, start, e.steps)
		}
	} else if r.err == nil && hasHist != 0 {
		r.err = fmt.Errorf("%w: history flag %d", ErrCheckpointFormat, hasHist)
	}
	if r.err == nil && len(r.b) != 0 {
		r.err = fmt.Errorf("%w: %d unread bytes", ErrCheckpointFormat, len(r.b))
	}
	if r.err != nil {
		return nil, r.err
	}
	if hasHist == 1 {
		h := NewHistory(start, e.nw, e.dim, len(e.rungs))
		switch {
		case n > 0 && load == nil:
			return nil, fmt.Errorf("sampler: checkpoint records a history of %d steps and no history was supplied", n)
		case n > 0:
			h.reserve(n)
			if err := load(h, n); err != nil {
				return nil, fmt.Errorf("sampler: history of the checkpoint: %w", err)
			}
		}
		if h.n != n {
			return nil, fmt.Errorf("sampler: history of the checkpoint: %d steps supplied, the checkpoint records %d", h.n, n)
		}
		e.hist = h
	}
	e.calibrate()
	e.startPool()
	return e, nil
}

// describeConfigDiff names the first configuration field that differs.
func describeConfigDiff(got, want []byte) string {
	names := []string{"dimension", "Walkers", "Seed", "SwapEvery", "AdaptSteps"}
	g, w := &dec{b: got}, &dec{b: want}
	for _, n := range names {
		a, b := g.u64(), w.u64()
		if g.err != nil {
			return "checkpoint ends early"
		}
		if a != b {
			return fmt.Sprintf("%s: checkpoint has %d, configuration has %d", n, int64(a), int64(b))
		}
	}
	if a, b := g.str(), w.str(); a != b {
		return fmt.Sprintf("Moves: checkpoint has %q, configuration has %q", a, b)
	}
	if a, b := g.floats(), w.floats(); fmt.Sprint(a) != fmt.Sprint(b) {
		return fmt.Sprintf("Betas: checkpoint has %v, configuration has %v", a, b)
	}
	return "number of rungs"
}
