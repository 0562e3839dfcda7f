package cosmicstrings

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"sync"
	"tautline/internal/atomicfile"
	"tautline/internal/numeric"
)

// A gridAxis has n nodes at lo + i step.
type gridAxis struct {
	Lo, Step float64
	N        uint32
}

// index returns the first stencil node and the cubic Lagrange weights at
// coordinate x.
func (a gridAxis) index(x float64) (int, [4]float64) {
	return numeric.Lagrange4Weights((x-a.Lo)/a.Step, int(a.N))
}

// A grid holds float32 values on a regular grid of two or three axes
// (row-major, the last axis fastest): the storage behind the BOS and
// metastable tables, interpolated by cubic Lagrange polynomials in every
// direction.
type grid struct {
	axes []gridAxis
	data []float32
}

func newGrid(axes ...gridAxis) *grid {
	n := 1
	for _, a := range axes {
		n *= int(a.N)
	}
	return &grid{axes: axes, data: make([]float32, n)}
}

// rows returns the number of rows (all axes but the last) and the length
// of a row.
func (g *grid) rows() (n, m int) {
	m = int(g.axes[len(g.axes)-1].N)
	return len(g.data) / m, m
}

// A gridTable is what the BOS and metastable tables share: the grid, the
// file magic, the hash of the settings it was built for and its
// certificate; their exported types embed it.
type gridTable struct {
	magic [8]byte
	hash  string
	g     *grid
	cert  GridCertificate
}

// Certificate returns the table's certification record.
func (t *gridTable) Certificate() GridCertificate { return t.cert }

// MarshalBinary encodes the table in its on-disk format.
func (t *gridTable) MarshalBinary() ([]byte, error) {
	return encodeGrid(t.magic, t.hash, t.g, t.cert)
}

// WriteFile writes the table to path atomically, creating its folder if
// needed.
func (t *gridTable) WriteFile(path string) error {
	b, err := t.MarshalBinary()
	if err != nil {
		return fmt.Errorf("strings: %s: %w", path, err)
	}
	return writeFileAtomic(path, b)
}

// decode replaces t's grid and certificate by those encoded in b, which
// must carry t's magic and hash and the layout of t's grid; name labels
// errors.
func (t *gridTable) decode(name string, b []byte) error {
	g, c, err := decodeGrid(name, b, t.magic, t.hash, t.g)
	if err != nil {
		return err
	}
	t.g, t.cert = g, c
	return nil
}

// GridCertificate records how well a BOS or metastable table reproduces
// its direct path: the maximum and 99th-percentile absolute error of
// ln Omega over Points comparisons at random parameters inside the table's
// box and random frequencies in [BandLo, BandHi], plus cell centres of the
// parameter grid (the worst case for interpolation).
type GridCertificate struct {
	MaxErr, P99Err float64
	Points         uint32
	BandLo, BandHi float64
	// Worst holds the parameters (padded with 0) and the frequency where
	// MaxErr occurred.
	Worst [3]float64
	Seed  uint64
}

// String formats the certificate for logs.
func (c GridCertificate) String() string {
	return fmt.Sprintf("max |d ln Omega| = %.2g, p99 = %.2g over %d points, f in [%g, %g] Hz (worst at %.4g, %.4g, f = %.3g Hz)",
		c.MaxErr, c.P99Err, c.Points, c.BandLo, c.BandHi, c.Worst[0], c.Worst[1], c.Worst[2])
}

// certStats fills the error statistics of c from errs (one per point, with
// where(i) the point's parameters and frequency) and fails, wrapping
// ErrCertification, above certMaxErr.
func certStats(c *GridCertificate, errs []float64, where func(i int) [3]float64) error {
	c.Points = uint32(len(errs))
	if len(errs) == 0 {
		return fmt.Errorf("%w: no points", ErrCertification)
	}
	var worst int
	c.MaxErr, c.P99Err, worst = errorStats(errs)
	c.Worst = where(worst)
	if !(c.MaxErr <= certMaxErr) {
		return fmt.Errorf("%w: %v", ErrCertification, c)
	}
	return nil
}

// errorStats returns the largest of errs (NaN counting as largest), its
// index and the 99th percentile (the smallest value at or above 99 % of
// errs); errs must not be empty.
func errorStats(errs []float64) (maxErr, p99 float64, worst int) {
	for i, e := range errs {
		if !(e <= errs[worst]) {
			worst = i
		}
	}
	sorted := slices.Clone(errs)
	slices.Sort(sorted)
	return errs[worst], sorted[int(math.Ceil(0.99*float64(len(sorted))))-1], worst
}

// bandFreqs returns certFreqsPerPoint frequencies drawn log-uniformly in
// the certification band, sorted.
func bandFreqs(rng *rand.Rand) []float64 {
	f := make([]float64, certFreqsPerPoint)
	for j := range f {
		f[j] = certBandLo * math.Pow(certBandHi/certBandLo, rng.Float64())
	}
	slices.Sort(f)
	return f
}

// certifyAt certifies a BOS or metastable table against its direct path:
// at each point i (parameters params(i)) and each of its frequencies
// freqs[i] (certFreqsPerPoint of them) the error is
// |ln Omega_table - ln Omega_direct|, 0 where both vanish (direct 0, table
// -Inf); direct evaluates Omega at point i on a worker's own evaluator from
// newWorker, and table gives ln Omega. The statistics and the failure rule
// are those of certStats.
func certifyAt[W any](opt BuildOptions, newWorker func() W, freqs [][]float64, params func(i int) [2]float64,
	direct func(w W, i int, f, out []float64) error, table func(i int, f float64) (float64, error)) (GridCertificate, error) {
	errs := make([]float64, len(freqs)*certFreqsPerPoint)
	err := parallel(opt.Workers, len(freqs), newWorker, func(w W, i int) error {
		out := make([]float64, certFreqsPerPoint)
		if err := direct(w, i, freqs[i], out); err != nil {
			return err
		}
		for j, f := range freqs[i] {
			v, err := table(i, f)
			if err != nil {
				return err
			}
			e := math.Abs(v - math.Log(out[j]))
			if math.IsInf(v, -1) && out[j] == 0 {
				e = 0
			}
			errs[i*certFreqsPerPoint+j] = e
		}
		return nil
	}, nil)
	c := GridCertificate{BandLo: certBandLo, BandHi: certBandHi, Seed: opt.Seed}
	if err != nil {
		return c, err
	}
	err = certStats(&c, errs, func(k int) [3]float64 {
		i := k / certFreqsPerPoint
		p := params(i)
		return [3]float64{p[0], p[1], freqs[i][k%certFreqsPerPoint]}
	})
	return c, err
}

// parallel runs job(w, i) for i in [0, n) on workers goroutines, w being
// the worker's own state from newWorker; it returns the first error.
func parallel[W any](workers, n int, newWorker func() W, job func(w W, i int) error, progress func(done, total int)) error {
	jobs := make(chan int)
	var (
		wg       sync.WaitGroup
		mu       sync.Mutex
		done     int
		firstErr error
	)
	for range max(1, workers) {
		w := newWorker()
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				err := job(w, i)
				mu.Lock()
				if err != nil && firstErr == nil {
					firstErr = err
				}
				done++
				if progress != nil {
					progress(done, n)
				}
				mu.Unlock()
			}
		}()
	}
	for i := range n {
		jobs <- i
	}
	close(jobs)
	wg.Wait()
	return firstErr
}

// gridHeader starts a grid file (little endian): magic, settings hash,
// number of axes, the axes (padded to three), the certificate; then the
// float32 values and a CRC-32 (IEEE) of all preceding bytes.
type gridHeader struct {
	Magic [8]byte
	Hash  [64]byte
	NAxes uint32
	Axes  [3]gridAxis
	Cert  GridCertificate
}

func encodeGrid(magic [8]byte, hash string, g *grid, c GridCertificate) ([]byte, error) {
	h := gridHeader{Magic: magic, NAxes: uint32(len(g.axes)), Cert: c}
	copy(h.Hash[:], hash)
	copy(h.Axes[:], g.axes)
	var buf bytes.Buffer
	buf.Grow(binary.Size(h) + 4*len(g.data) + 4)
	if err := binary.Write(&buf, binary.LittleEndian, &h); err != nil {
		return nil, err
	}
	if err := binary.Write(&buf, binary.LittleEndian, g.data); err != nil {
		return nil, err
	}
	if err := binary.Write(&buf, binary.LittleEndian, crc32.ChecksumIEEE(buf.Bytes())); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// decodeGrid parses a grid file, checking the magic, the hash and that the
// layout equals want's; name labels errors.
func decodeGrid(name string, b []byte, magic [8]byte, hash string, want *grid) (*grid, GridCertificate, error) {
	var h gridHeader
	hs := binary.Size(h)
	if len(b) < hs+4 {
		return nil, h.Cert, fmt.Errorf("strings: %s: too short for a table (%d bytes)", name, len(b))
	}
	if crc32.ChecksumIEEE(b[:len(b)-4]) != binary.LittleEndian.Uint32(b[len(b)-4:]) {
		return nil, h.Cert, fmt.Errorf("strings: %s: checksum mismatch (corrupt table)", name)
	}
	if err := binary.Read(bytes.NewReader(b[:hs]), binary.LittleEndian, &h); err != nil {
		return nil, h.Cert, fmt.Errorf("strings: %s: header: %w", name, err)
	}
	if h.Magic != magic {
		return nil, h.Cert, fmt.Errorf("strings: %s: not a tautline %s table", name, bytes.TrimRight(magic[:], "0123456789"))
	}
	if got := string(h.Hash[:]); got != hash {
		return nil, h.Cert, fmt.Errorf("strings: %s: built for settings hash %.12s, want %.12s", name, got, hash)
	}
	if int(h.NAxes) != len(want.axes) || !slices.Equal(h.Axes[:h.NAxes], want.axes) {
		return nil, h.Cert, fmt.Errorf("strings: %s: grid layout differs from this version's", name)
	}
	g := newGrid(want.axes...)
	if len(b) != hs+4*len(g.data)+4 {
		return nil, h.Cert, fmt.Errorf("strings: %s: %d bytes, want %d", name, len(b), hs+4*len(g.data)+4)
	}
	raw := b[hs : len(b)-4]
	for i := range g.data {
		v := math.Float32frombits(binary.LittleEndian.Uint32(raw[4*i:]))
		if math.IsNaN(float64(v)) || math.IsInf(float64(v), 0) {
			return nil, h.Cert, fmt.Errorf("strings: %s: non-finite value at index %d", name, i)
		}
		g.data[i] = v
	}
	return g, h.Cert, nil
}

// writeFileAtomic writes b to path through internal/atomicfile, creating
// the folder first, so that no half-written table is ever seen there.
func writeFileAtomic(path string, b []byte) error {
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return fmt.Errorf("strings: %w", err)
	}
	if err := atomicfile.WriteFile(path, b); err != nil {
		return fmt.Errorf("strings: %w", err)
	}
	return nil
}

// cacheFile returns cacheDir/name, cacheDir defaulting to
// os.UserCacheDir()/tautline.
func cacheFile(cacheDir, name string) (string, error) {
	if cacheDir == "" {
		base, err := os.UserCacheDir()
		if err != nil {
			return "", fmt.Errorf("strings: no user cache directory: %w", err)
		}
		cacheDir = filepath.Join(base, "tautline")
	}
	return filepath.Join(cacheDir, name), nil
}

// loadOrBuild returns the embedded table when it decodes for the
// settings, else the cached file, else a freshly built one, which it
// caches; a failure to cache is returned, wrapping ErrCacheWrite, with the
// usable table.
func loadOrBuild[T any](embedded []byte, noEmbedded bool, path string, pathErr error,
	decode func(name string, b []byte) (T, error), build func() (T, error), encode func(T) ([]byte, error)) (T, error) {
	var zero T
	if !noEmbedded && len(embedded) > 0 {
		if t, err := decode("embedded table", embedded); err == nil {
			return t, nil
		}
	}
	if pathErr == nil {
		if b, err := os.ReadFile(path); err == nil {
			if t, err := decode(path, b); err == nil {
				return t, nil
			}
		}
	}
	t, err := build()
	if err != nil {
		return zero, err
	}
	if pathErr != nil {
		return t, fmt.Errorf("%w: %w", ErrCacheWrite, pathErr)
	}
	b, err := encode(t)
	if err == nil {
		err = writeFileAtomic(path, b)
	}
	if err != nil {
		return t, fmt.Errorf("%w: %w", ErrCacheWrite, err)
	}
	return t, nil
}

var errGridTheta = errors.New("strings: theta has the wrong number of entries")
