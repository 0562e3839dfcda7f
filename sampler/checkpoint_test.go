package sampler

import (
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

func checkpointSetup(t *testing.T) (Target, Config) {
	g := newGaussTarget(t, []float64{0, 1}, [][]float64{{1, 0.6}, {0.6, 1}})
	ladder, err := PowerLadder(4, 5)
	if err != nil {
		t.Fatal(err)
	}
	return g, Config{
		Walkers: 8, Seed: 77, Betas: ladder, AdaptLadder: true, AdaptSteps: 20,
		Moves:       []WeightedMove{{Stretch{A: 2}, 2}, {DefaultDiffEvolution(2), 1}},
		Fingerprint: "data+model+settings hash",
	}
}

func sameResult(t *testing.T, a, b Result) {
	t.Helper()
	ja, _ := json.Marshal(a.Report)
	jb, _ := json.Marshal(b.Report)
	if a.Status != b.Status || a.Steps != b.Steps || a.Burn != b.Burn || a.Thin != b.Thin || string(ja) != string(jb) {
		t.Errorf("results differ:\n%v %d %d %d %s\n%v %d %d %d %s", a.Status, a.Steps, a.Burn, a.Thin, ja, b.Status, b.Steps, b.Burn, b.Thin, jb)
	}
	ha, hb := a.History, b.History
	if ha.Start() != hb.Start() || ha.Len() != hb.Len() {
		t.Fatalf("history start/len %d/%d vs %d/%d", ha.Start(), ha.Len(), hb.Start(), hb.Len())
	}
	for r := range ha.Rungs() {
		x, y := ha.LnLike(r, 0), hb.LnLike(r, 0)
		for i := range x {
			if math.Float64bits(x[i]) != math.Float64bits(y[i]) {
				t.Fatalf("history ln L rung %d [%d]: %v vs %v", r, i, x[i], y[i])
			}
		}
	}
	x, y := ha.Positions(0), hb.Positions(0)
	for i := range x {
		if math.Float64bits(x[i]) != math.Float64bits(y[i]) {
			t.Fatalf("history positions[%d]: %v vs %v", i, x[i], y[i])
		}
	}
}

// TestResumeBitIdentical runs N steps straight through, and k steps,
// checkpoint, restore (with another worker count), N-k steps; every float
// of the state and of Run's history and decisions must agree bit for bit.
func TestResumeBitIdentical(t *testing.T) {
	tg, cfg := checkpointSetup(t)
	const n, k = 120, 47
	opt := RunOptions{MaxSteps: n, Burn: -1, CheckEvery: 10, Until: Criteria{ESS: 1e9}}
	straight, err := New(tg, cfg)
	if err != nil {
		t.Fatal(err)
	}
	want, err := Run(context.Background(), straight, opt)
	if err != nil {
		t.Fatal(err)
	}

	first, err := New(tg, cfg)
	if err != nil {
		t.Fatal(err)
	}
	part := opt
	part.MaxSteps = k
	if _, err := Run(context.Background(), first, part); err != nil {
		t.Fatal(err)
	}
	data, err := first.MarshalBinary()
	if err != nil {
		t.Fatal(err)
	}
	rcfg := cfg
	rcfg.Workers, rcfg.MinBatch = 2, 1
	if n := len(data); n > 4096 {
		t.Errorf("checkpoint of %d steps has %d bytes; the history's values do not belong in it", k, n)
	}
	resumed, err := Restore(tg, rcfg, data, replay(first.hist))
	if err != nil {
		t.Fatal(err)
	}
	defer resumed.Close()
	got, err := Run(context.Background(), resumed, opt)
	if err != nil {
		t.Fatal(err)
	}
	sameState(t, straight, resumed)
	sameResult(t, want, got)
	if got.LadderFrozenAt != 20 || got.Burn < 20 {
		t.Errorf("LadderFrozenAt = %d, Burn = %d; want 20 and >= 20", got.LadderFrozenAt, got.Burn)
	}
}

// TestResumeAtCheck checkpoints inside OnStep at the step where the run
// converges, before that step's check; the resumed run must stop there too.
func TestResumeAtCheck(t *testing.T) {
	tg, cfg := checkpointSetup(t)
	opt := RunOptions{MaxSteps: 5000, Burn: -1, CheckEvery: 50, Until: Criteria{TauMultiple: 5}}
	straight, err := New(tg, cfg)
	if err != nil {
		t.Fatal(err)
	}
	want, err := Run(context.Background(), straight, opt)
	if err != nil || want.Status != Converged {
		t.Fatalf("straight run: %v, %v", want.Status, err)
	}
	resumed := checkpointedAt(t, tg, cfg, opt, want.Steps)
	defer resumed.Close()
	got, err := Run(context.Background(), resumed, opt)
	if err != nil {
		t.Fatal(err)
	}
	sameResult(t, want, got)
}

// checkpointedAt runs opt from a new ensemble to step at, checkpointing
// inside OnStep at that step (before that step's check), and returns the
// ensemble restored from the checkpoint.
func checkpointedAt(t *testing.T, tg Target, cfg Config, opt RunOptions, at int) *Ensemble {
	t.Helper()
	var data []byte
	var err error
	snap := opt
	snap.MaxSteps = at
	snap.OnStep = func(e *Ensemble) error {
		if e.Steps() == at {
			data, err = e.MarshalBinary()
			return err
		}
		return nil
	}
	first, err := New(tg, cfg)
	if err != nil {
		t.Fatal(err)
	}
	defer first.Close()
	if _, err := Run(context.Background(), first, snap); err != nil {
		t.Fatal(err)
	}
	resumed, err := Restore(tg, cfg, data, replay(first.hist))
	if err != nil {
		t.Fatal(err)
	}
	return resumed
}

func TestCorruptCheckpoint(t *testing.T) {
	tg, cfg := checkpointSetup(t)
	e := runSteps(t, tg, cfg, 5)
	data, err := e.MarshalBinary()
	if err != nil {
		t.Fatal(err)
	}
	flip := func(i int) []byte {
		d := append([]byte(nil), data...)
		d[i] ^= 0x10
		return d
	}
	other := func(f func(*Config)) Config {
		c := cfg
		f(&c)
		return c
	}
	tests := []struct {
		name string
		data []byte
		cfg  Config
		want error
		text string
	}{
		{"truncated in body", data[:len(data)-100], cfg, ErrCheckpointTruncated, "have"},
		{"truncated in header", data[:7], cfg, ErrCheckpointTruncated, "7 bytes"},
		{"bit flip in positions", flip(len(data) / 2), cfg, ErrCheckpointCorrupt, "checksum mismatch"},
		{"bit flip in checksum", flip(len(data) - 1), cfg, ErrCheckpointCorrupt, "checksum mismatch"},
		{"bad magic", flip(0), cfg, ErrCheckpointFormat, "bad magic"},
		{"trailing bytes", append(append([]byte(nil), data...), 0), cfg, ErrCheckpointFormat, "after the declared end"},
		{"other fingerprint", data, other(func(c *Config) { c.Fingerprint = "another run" }), ErrCheckpointFingerprint, `"another run"`},
		{"other seed", data, other(func(c *Config) { c.Seed++ }), ErrCheckpointConfig, "Seed: checkpoint has 77, configuration has 78"},
		{"other walkers", data, other(func(c *Config) { c.Walkers = 10 }), ErrCheckpointConfig, "Walkers"},
		{"other moves", data, other(func(c *Config) { c.Moves = nil }), ErrCheckpointConfig, "Moves"},
		{"other ladder", data, other(func(c *Config) { c.Betas = []float64{1, 0.5, 0.1, 0} }), ErrCheckpointConfig, "Betas"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Restore(tg, tc.cfg, tc.data, nil)
			if !errors.Is(err, tc.want) || !strings.Contains(err.Error(), tc.text) {
				t.Errorf("Restore: error %v, want %v containing %q", err, tc.want, tc.text)
			}
		})
	}
	if _, err := Restore(tg, cfg, data, nil); err != nil {
		t.Errorf("intact checkpoint refused: %v", err)
	}
}

// replay is the HistoryLoader that hands back src's recorded steps, as a
// caller that wrote them out would read them back.
func replay(src *History) HistoryLoader {
	return func(h *History, steps int) error {
		if h.Start() != src.Start() || steps > src.Len() {
			return fmt.Errorf("history from step %d, %d steps: src has %d from %d", h.Start(), steps, src.Len(), src.Start())
		}
		row := src.Walkers() * src.Dim()
		pos := src.Positions(0)
		ll := make([][]float64, src.Rungs())
		for r := range ll {
			ll[r] = src.LnLike(r, 0)
		}
		step := make([]float64, 0, src.Rungs()*src.Walkers())
		for s := range steps {
			step = step[:0]
			for r := range ll {
				step = append(step, ll[r][s*src.Walkers():(s+1)*src.Walkers()]...)
			}
			if err := h.Append(pos[s*row:(s+1)*row], step); err != nil {
				return err
			}
		}
		return nil
	}
}

// TestRestoreHistory: a checkpoint written during Run records the span of
// its history; Restore refuses a missing, short or failing loader, and a
// step of the wrong shape.
func TestRestoreHistory(t *testing.T) {
	tg, cfg := checkpointSetup(t)
	e, err := New(tg, cfg)
	if err != nil {
		t.Fatal(err)
	}
	defer e.Close()
	if _, err := Run(context.Background(), e, RunOptions{MaxSteps: 30, CheckEvery: 10}); err != nil {
		t.Fatal(err)
	}
	data, err := e.MarshalBinary()
	if err != nil {
		t.Fatal(err)
	}
	boom := errors.New("chain unreadable")
	tests := []struct {
		name string
		load HistoryLoader
		text string
	}{
		{"no loader", nil, "records a history of 30 steps and no history was supplied"},
		{"short", func(h *History, steps int) error { return replay(e.hist)(h, steps-1) }, "29 steps supplied, the checkpoint records 30"},
		{"failing", func(*History, int) error { return boom }, "chain unreadable"},
		{"wrong shape", func(h *History, _ int) error { return h.Append(make([]float64, 3), nil) }, "3 positions and 0 ln likelihoods, want 16 and 32"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Restore(tg, cfg, data, tc.load)
			if err == nil || !strings.Contains(err.Error(), tc.text) {
				t.Errorf("Restore: %v, want an error containing %q", err, tc.text)
			}
		})
	}
	if _, err := Restore(tg, cfg, data, replay(e.hist)); err != nil {
		t.Errorf("Restore with the history: %v", err)
	}
}

// FuzzRestore feeds arbitrary bytes to the checkpoint parser, which must
// refuse or accept them without panicking. The seed corpus in
// testdata/fuzz/FuzzRestore holds a valid checkpoint and damaged copies.
func FuzzRestore(f *testing.F) {
	tg := funcTarget{dim: 1, draw: boxDraw(0, 1), prior: boxPrior(0, 1), like: func(x []float64) float64 { return -x[0] * x[0] }}
	cfg := Config{Walkers: 4, Seed: 1, Betas: []float64{1, 0.5}, Workers: 1, Fingerprint: "fuzz"}
	// zeros supplies a history of zeros, refusing long ones so that a
	// fuzzed step count cannot exhaust memory.
	zeros := func(h *History, steps int) error {
		if steps > 1000 {
			return errors.New("history too long for the fuzz test")
		}
		for range steps {
			if err := h.Append(make([]float64, h.Walkers()*h.Dim()), make([]float64, h.Walkers()*h.Rungs())); err != nil {
				return err
			}
		}
		return nil
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		try := func(d []byte) {
			e, err := Restore(tg, cfg, d, zeros)
			if err != nil {
				return
			}
			if err := e.Step(); err != nil {
				t.Fatal(err)
			}
		}
		try(data)
		// Reseal the bytes with a correct length and checksum so that the
		// fuzzer also reaches the body decoder.
		if len(data) >= ckHeader {
			d := append([]byte(nil), data...)
			binary.LittleEndian.PutUint64(d[12:20], uint64(len(d)+ckSum))
			sum := sha256.Sum256(d)
			try(append(d, sum[:]...))
		}
	})
}

// TestWriteFuzzCorpus regenerates the FuzzRestore seed corpus when
// TAUTLINE_WRITE_CORPUS is set; otherwise it checks the corpus exists.
func TestWriteFuzzCorpus(t *testing.T) {
	dir := filepath.Join("testdata", "fuzz", "FuzzRestore")
	if os.Getenv("TAUTLINE_WRITE_CORPUS") == "" {
		if ents, err := os.ReadDir(dir); err != nil || len(ents) == 0 {
			t.Errorf("seed corpus %s missing: %v", dir, err)
		}
		return
	}
	tg := funcTarget{dim: 1, draw: boxDraw(0, 1), prior: boxPrior(0, 1), like: func(x []float64) float64 { return -x[0] * x[0] }}
	cfg := Config{Walkers: 4, Seed: 1, Betas: []float64{1, 0.5}, Workers: 1, Fingerprint: "fuzz"}
	e := runSteps(t, tg, cfg, 3)
	if _, err := Run(context.Background(), e, RunOptions{MaxSteps: 6, CheckEvery: 3}); err != nil {
		t.Fatal(err)
	}
	data, err := e.MarshalBinary()
	if err != nil {
		t.Fatal(err)
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	flipped := append([]byte(nil), data...)
	flipped[len(flipped)/2] ^= 1
	for name, d := range map[string][]byte{"valid": data, "valid-body": data[:len(data)-ckSum], "truncated": data[:len(data)/2], "flipped": flipped, "empty": nil} {
		body := "go test fuzz v1\n[]byte(" + quoteBytes(d) + ")\n"
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func quoteBytes(b []byte) string {
	var s strings.Builder
	s.WriteByte('"')
	for _, c := range b {
		s.WriteString(`\x`)
		s.WriteByte("0123456789abcdef"[c>>4])
		s.WriteByte("0123456789abcdef"[c&15])
	}
	s.WriteByte('"')
	return s.String()
}

// TestResumePredictedChecks resumes a run that converges after a few
// deciding checks, each put off to the step its predecessor predicted
// (nextDecision), from checkpoints between those checks and at them: the
// resumed run must repeat the recorded decisions and stop where the
// straight run did, with the same report.
func TestResumePredictedChecks(t *testing.T) {
	tg, cfg := checkpointSetup(t)
	opt := RunOptions{MaxSteps: 20000, Burn: -1, CheckEvery: 50, Until: Criteria{ESS: 3000, Rhat: 1.05}}
	var decided []int
	count := opt
	count.OnCheck = func(p Progress) {
		if p.decides {
			decided = append(decided, p.Steps)
		}
	}
	straight, err := New(tg, cfg)
	if err != nil {
		t.Fatal(err)
	}
	want, err := Run(context.Background(), straight, count)
	if err != nil || want.Status != Converged {
		t.Fatalf("straight run: %v, %v", want.Status, err)
	}
	steps := 0
	for s := 1; s <= want.Steps; s++ {
		if isCheckStep(s, opt.CheckEvery) {
			steps++
		}
	}
	if len(decided) >= steps {
		t.Errorf("%d deciding checks for %d check steps: no decision was put off", len(decided), steps)
	}
	// Just after every decision but the last (where a run that forgot the
	// recorded decisions would decide at the next check step), at one and
	// at the stop.
	var ats []int
	for _, s := range decided[:len(decided)-1] {
		ats = append(ats, s+1)
	}
	for _, at := range append(ats, decided[len(decided)/2], want.Steps) {
		resumed := checkpointedAt(t, tg, cfg, opt, at)
		var again []int
		ropt := opt
		ropt.OnCheck = func(p Progress) {
			if p.decides {
				again = append(again, p.Steps)
			}
		}
		got, err := Run(context.Background(), resumed, ropt)
		if err != nil {
			t.Fatal(err)
		}
		sameResult(t, want, got)
		var rest []int // the straight run's decisions from the resumed step on
		for _, s := range decided {
			if s >= at {
				rest = append(rest, s)
			}
		}
		if !slices.Equal(again, rest) {
			t.Errorf("resumed at step %d: decided at %v, the straight run at %v", at, again, rest)
		}
		resumed.Close()
	}
}
