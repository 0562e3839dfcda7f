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
	"slices"

	"tautline/internal/numeric"
)

// Table layout: nodes every 0.2 in log10 Gmu and log10 alpha and every 0.1
// in ln f, with one node beyond each edge of the domain so that 4-point
// (cubic Lagrange) interpolation never extrapolates.
const (
	tableGLo, tableGHi = -14.0, -6.0 // log10 Gmu domain (the default prior)
	tableALo, tableAHi = -5.0, 0.0   // log10 alpha domain
	tableFLo, tableFHi = 1e-11, 1e-5 // Hz
	tableGStep         = 0.2
	tableAStep         = 0.2
	tableLnFStep       = 0.1
	// Certification band and threshold (docs/physics.md section 11).
	certBandLo, certBandHi = 1e-10, 1e-6
	certMaxErr             = 0.01
	certFreqsPerPoint      = 8
)

// ErrOutsideTable is returned (as this exact value) by Spectrum.LnOmega
// and Table.LnOmega when theta lies outside the table's domain; frequencies
// outside it get ErrFrequencyOutsideTable. The table never extrapolates.
var ErrOutsideTable = errors.New("strings: parameters outside the tabulated domain (log10_Gmu in [-14, -6], log10_alpha in [-5, 0], log10_P <= 0)")

// ErrFrequencyOutsideTable is wrapped, with the frequency, by Model.At and
// Table.LnOmega for a frequency outside the table's band (1e-11 to 1e-5 Hz);
// the direct path has no such limit.
var ErrFrequencyOutsideTable = errors.New("strings: frequency outside the table's range")

// frequencyError reports one frequency outside the table's band.
type frequencyError struct{ f float64 }

func (e frequencyError) Error() string {
	return fmt.Sprintf("strings: frequency %g Hz is outside the table's range [%g, %g] Hz; evaluate it with the direct path (--direct)", e.f, tableFLo, tableFHi)
}

func (e frequencyError) Unwrap() error { return ErrFrequencyOutsideTable }

// ErrCertification is wrapped by BuildTable when the table disagrees with
// the direct path by more than 0.01 in ln Omega inside the band.
var ErrCertification = errors.New("strings: table failed certification")

// ErrCacheWrite is wrapped by LoadTable when a freshly built table could not
// be written to the cache; the table itself is returned and usable.
var ErrCacheWrite = errors.New("strings: could not cache the table")

var errStepTable = errors.New("strings: table: the step C_eff puts a kink in Omega(f) whose position moves with (Gmu, alpha), which an interpolating table would smooth over; use the direct path for CEff = \"step\"")

// A Certificate records how well a table reproduces the direct path: the
// maximum and 99th-percentile absolute error of ln Omega over Points
// comparisons at random (log10 Gmu, log10 alpha) inside the default prior
// box and random frequencies in [BandLo, BandHi], plus a set of points at
// the centre of every (Gmu, alpha) cell of the table at ln f cell centres
// (the worst case for interpolation).
type Certificate struct {
	MaxErr, P99Err float64
	Points         int
	BandLo, BandHi float64
	// Worst is (log10 Gmu, log10 alpha, f) where MaxErr occurred.
	Worst [3]float64
	Seed  uint64
}

// String formats the certificate for logs.
func (c Certificate) String() string {
	return fmt.Sprintf("max |d ln Omega| = %.2g, p99 = %.2g over %d points, f in [%g, %g] Hz (worst at log10 Gmu = %.3f, log10 alpha = %.3f, f = %.3g Hz)",
		c.MaxErr, c.P99Err, c.Points, c.BandLo, c.BandHi, c.Worst[0], c.Worst[1], c.Worst[2])
}

// A Table holds ln Omega_GW at P = 1 on a grid in (log10 Gmu, log10 alpha,
// ln f) for fixed Settings; P enters analytically as -kappa ln P, so the
// stored values do not depend on Kappa. It is immutable and safe for
// concurrent use.
type Table struct {
	s    Settings
	hash string
	// Axes: node i at lo + i step.
	g0, a0, f0 float64
	nG, nA, nF int
	data       []float32 // [iG][iA][iF]
	cert       Certificate
}

// BuildOptions control BuildTable and the build fallback of LoadTable.
type BuildOptions struct {
	// Workers is the number of goroutines; <= 0 means 1.
	Workers int
	// Seed seeds the certification points.
	Seed uint64
	// CertPoints is the number of random (Gmu, alpha) points, each compared
	// at 8 frequencies; 0 means 200. The 1000 cell centres are always
	// added.
	CertPoints int
	// Progress, if not nil, is called after each grid node (from worker
	// goroutines, serialised).
	Progress func(done, total int)
	// NoEmbedded makes LoadTable ignore the table compiled into the binary.
	NoEmbedded bool
}

// Settings returns the settings the table was built or loaded for,
// including the Kappa that LnOmega and Model apply.
func (t *Table) Settings() Settings { return t.s }

// Hash returns the table hash (Settings.TableHash, independent of Kappa)
// the table was built for.
func (t *Table) Hash() string { return t.hash }

// Certificate returns the table's certification record.
func (t *Table) Certificate() Certificate { return t.cert }

// Domain returns the parameter and frequency ranges the table covers.
func (t *Table) Domain() (log10GmuLo, log10GmuHi, log10AlphaLo, log10AlphaHi, fLo, fHi float64) {
	return tableGLo, tableGHi, tableALo, tableAHi, tableFLo, tableFHi
}

func newEmptyTable(s Settings) *Table {
	t := &Table{s: s, hash: s.TableHash()}
	t.g0 = tableGLo - tableGStep
	t.a0 = tableALo - tableAStep
	t.f0 = math.Log(tableFLo) - tableLnFStep
	t.nG = int(math.Round((tableGHi-tableGLo)/tableGStep)) + 3
	t.nA = int(math.Round((tableAHi-tableALo)/tableAStep)) + 3
	t.nF = int(math.Ceil((math.Log(tableFHi)-math.Log(tableFLo))/tableLnFStep)) + 3
	t.data = make([]float32, t.nG*t.nA*t.nF)
	return t
}

func (t *Table) lnFNodes() []float64 {
	f := make([]float64, t.nF)
	for i := range f {
		f[i] = math.Exp(t.f0 + float64(i)*tableLnFStep)
	}
	return f
}

// BuildTable computes the table for s with the direct path on opt.Workers
// goroutines and certifies it. It fails, wrapping ErrCertification, if the
// error of ln Omega in 1e-10 to 1e-6 Hz exceeds 0.01 anywhere it looked.
func BuildTable(s Settings, opt BuildOptions) (*Table, error) {
	if err := s.Validate(); err != nil {
		return nil, err
	}
	if s.CEff == CEffStep {
		return nil, errStepTable
	}
	proto, err := NewDirect(s)
	if err != nil {
		return nil, err
	}
	t := newEmptyTable(s)
	all := make([]int, t.nG*t.nA)
	for i := range all {
		all[i] = i
	}
	if err := t.computeNodes(proto, max(1, opt.Workers), all, opt.Progress); err != nil {
		return nil, err
	}
	cert, err := t.certify(proto, opt)
	t.cert = cert
	if err != nil {
		return nil, err
	}
	return t, nil
}

// computeNodes fills the rows of the given (Gmu, alpha) nodes (index
// iG*nA + iA) with ln Omega from the direct path, on workers goroutines.
func (t *Table) computeNodes(proto *Direct, workers int, nodes []int, progress func(done, total int)) error {
	fn := t.lnFNodes()
	return parallel(workers, len(nodes), proto.Clone, func(d *Direct, k int) error {
		job := nodes[k]
		ig, ia := job/t.nA, job%t.nA
		gmu := math.Pow(10, t.g0+float64(ig)*tableGStep)
		alpha := math.Pow(10, t.a0+float64(ia)*tableAStep)
		out := make([]float64, len(fn))
		err := d.Omega(fn, gmu, alpha, 1, out)
		row := t.data[job*t.nF : (job+1)*t.nF]
		for i, v := range out {
			if !(v > 0) && err == nil {
				err = fmt.Errorf("strings: table: Omega = %g at Gmu = %g, alpha = %g, f = %g", v, gmu, alpha, fn[i])
			}
			row[i] = float32(math.Log(v))
		}
		return err
	}, progress)
}

// certify compares the table with the direct path (see Certificate).
func (t *Table) certify(proto *Direct, opt BuildOptions) (Certificate, error) {
	return t.certifyCells(proto, opt, -1)
}

// certifyCells is certify with at most maxCells cell centres (all when
// negative); tests use a few.
func (t *Table) certifyCells(proto *Direct, opt BuildOptions, maxCells int) (Certificate, error) {
	n := opt.CertPoints
	if n <= 0 {
		n = 200
	}
	rng := rand.New(rand.NewPCG(opt.Seed, 0x7461757463657274))
	type point struct{ lg, la float64 }
	var pts []point
	for range n {
		pts = append(pts, point{tableGLo + (tableGHi-tableGLo)*rng.Float64(), tableALo + (tableAHi-tableALo)*rng.Float64()})
	}
	// Every (Gmu, alpha) cell centre inside the domain, each at random
	// ln f cell centres inside the band: the worst case for interpolation.
	cg := int(math.Round((tableGHi - tableGLo) / tableGStep))
	ca := int(math.Round((tableAHi - tableALo) / tableAStep))
	for ig := range cg {
		for ia := range ca {
			if maxCells >= 0 && len(pts)-n >= maxCells {
				break
			}
			pts = append(pts, point{tableGLo + (float64(ig)+0.5)*tableGStep, tableALo + (float64(ia)+0.5)*tableAStep})
		}
	}
	kLo := int(math.Ceil((math.Log(certBandLo)-t.f0)/tableLnFStep - 0.5))
	kHi := int(math.Floor((math.Log(certBandHi)-t.f0)/tableLnFStep - 0.5))
	freqs := make([][]float64, len(pts))
	for i := range pts {
		if i < n {
			freqs[i] = bandFreqs(rng)
			continue
		}
		f := make([]float64, certFreqsPerPoint)
		for j := range f {
			k := kLo + rng.IntN(kHi-kLo+1)
			f[j] = math.Exp(t.f0 + (float64(k)+0.5)*tableLnFStep)
		}
		slices.Sort(f)
		freqs[i] = f
	}
	errs := make([]float64, len(pts)*certFreqsPerPoint)
	err := parallel(opt.Workers, len(pts), proto.Clone, func(d *Direct, i int) error {
		p := pts[i]
		out := make([]float64, certFreqsPerPoint)
		if err := d.Omega(freqs[i], math.Pow(10, p.lg), math.Pow(10, p.la), 1, out); err != nil {
			return err
		}
		for j, f := range freqs[i] {
			v, err := t.LnOmega(p.lg, p.la, 0, f)
			if err != nil {
				return err
			}
			errs[i*certFreqsPerPoint+j] = math.Abs(v - math.Log(out[j]))
		}
		return nil
	}, nil)
	c := Certificate{Points: len(errs), BandLo: certBandLo, BandHi: certBandHi, Seed: opt.Seed}
	if err != nil {
		return c, err
	}
	var worst int
	c.MaxErr, c.P99Err, worst = errorStats(errs)
	p := pts[worst/certFreqsPerPoint]
	c.Worst = [3]float64{p.lg, p.la, freqs[worst/certFreqsPerPoint][worst%certFreqsPerPoint]}
	if !(c.MaxErr <= certMaxErr) {
		return c, fmt.Errorf("%w: %v", ErrCertification, c)
	}
	return c, nil
}

// inDomain reports whether the point is inside the table's domain.
func inDomain(lg, la, lp float64) bool {
	return lg >= tableGLo && lg <= tableGHi && la >= tableALo && la <= tableAHi && lp <= 0 && lp > -math.MaxFloat64
}

// LnOmega interpolates ln Omega_GW at one point (cubic in each direction).
// It is meant for checks; Model uses the faster per-frequency path.
func (t *Table) LnOmega(log10Gmu, log10Alpha, log10P, f float64) (float64, error) {
	lf := math.Log(f)
	if !inDomain(log10Gmu, log10Alpha, log10P) {
		return 0, ErrOutsideTable
	}
	if !(f >= tableFLo && f <= tableFHi) {
		return 0, frequencyError{f}
	}
	ig, wg := numeric.Lagrange4Weights((log10Gmu-t.g0)/tableGStep, t.nG)
	ia, wa := numeric.Lagrange4Weights((log10Alpha-t.a0)/tableAStep, t.nA)
	iff, wf := numeric.Lagrange4Weights((lf-t.f0)/tableLnFStep, t.nF)
	var v float64
	for a := range 4 {
		for b := range 4 {
			base := ((ig+a)*t.nA + ia + b) * t.nF
			var s float64
			for c := range 4 {
				s += wf[c] * float64(t.data[base+iff+c])
			}
			v += wg[a] * wa[b] * s
		}
	}
	return v - t.s.Kappa*math.Ln10*log10P, nil
}

// File format (little endian): magic, settings hash, axis sizes and
// origins, certificate, float32 ln Omega values, CRC-32 (IEEE) of all
// preceding bytes.
var tableMagic = [8]byte{'T', 'L', 'S', 'T', 'R', 'T', '0', '1'}

type tableHeader struct {
	Magic      [8]byte
	Hash       [64]byte
	NG, NA, NF uint32
	G0, A0, F0 float64
	GStep      float64
	AStep      float64
	FStep      float64
	MaxErr     float64
	P99Err     float64
	Points     uint32
	BandLo     float64
	BandHi     float64
	Worst      [3]float64
	Seed       uint64
}

// MarshalBinary encodes the table in the on-disk format.
func (t *Table) MarshalBinary() ([]byte, error) {
	var h tableHeader
	h.Magic = tableMagic
	copy(h.Hash[:], t.hash)
	h.NG, h.NA, h.NF = uint32(t.nG), uint32(t.nA), uint32(t.nF)
	h.G0, h.A0, h.F0 = t.g0, t.a0, t.f0
	h.GStep, h.AStep, h.FStep = tableGStep, tableAStep, tableLnFStep
	h.MaxErr, h.P99Err, h.Points = t.cert.MaxErr, t.cert.P99Err, uint32(t.cert.Points)
	h.BandLo, h.BandHi, h.Worst, h.Seed = t.cert.BandLo, t.cert.BandHi, t.cert.Worst, t.cert.Seed
	var buf bytes.Buffer
	buf.Grow(binary.Size(h) + 4*len(t.data) + 4)
	if err := binary.Write(&buf, binary.LittleEndian, &h); err != nil {
		return nil, err
	}
	if err := binary.Write(&buf, binary.LittleEndian, t.data); err != nil {
		return nil, err
	}
	if err := binary.Write(&buf, binary.LittleEndian, crc32.ChecksumIEEE(buf.Bytes())); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// decodeTable parses the on-disk format; name labels errors.
func decodeTable(name string, b []byte, s Settings) (*Table, error) {
	var h tableHeader
	hs := binary.Size(h)
	if len(b) < hs+4 {
		return nil, fmt.Errorf("strings: %s: too short for a table (%d bytes)", name, len(b))
	}
	if crc32.ChecksumIEEE(b[:len(b)-4]) != binary.LittleEndian.Uint32(b[len(b)-4:]) {
		return nil, fmt.Errorf("strings: %s: checksum mismatch (corrupt table)", name)
	}
	if err := binary.Read(bytes.NewReader(b[:hs]), binary.LittleEndian, &h); err != nil {
		return nil, fmt.Errorf("strings: %s: header: %w", name, err)
	}
	if h.Magic != tableMagic {
		return nil, fmt.Errorf("strings: %s: not a tautline string table", name)
	}
	if got, want := string(h.Hash[:]), s.TableHash(); got != want {
		return nil, fmt.Errorf("strings: %s: built for settings hash %.12s, want %.12s", name, got, want)
	}
	t := newEmptyTable(s)
	if int(h.NG) != t.nG || int(h.NA) != t.nA || int(h.NF) != t.nF || h.G0 != t.g0 || h.A0 != t.a0 || h.F0 != t.f0 ||
		h.GStep != tableGStep || h.AStep != tableAStep || h.FStep != tableLnFStep {
		return nil, fmt.Errorf("strings: %s: grid layout differs from this version's", name)
	}
	if len(b) != hs+4*len(t.data)+4 {
		return nil, fmt.Errorf("strings: %s: %d bytes, want %d", name, len(b), hs+4*len(t.data)+4)
	}
	raw := b[hs : len(b)-4]
	for i := range t.data {
		v := math.Float32frombits(binary.LittleEndian.Uint32(raw[4*i:]))
		if math.IsNaN(float64(v)) || math.IsInf(float64(v), 0) {
			return nil, fmt.Errorf("strings: %s: non-finite value at index %d", name, i)
		}
		t.data[i] = v
	}
	t.cert = Certificate{MaxErr: h.MaxErr, P99Err: h.P99Err, Points: int(h.Points), BandLo: h.BandLo, BandHi: h.BandHi, Worst: h.Worst, Seed: h.Seed}
	return t, nil
}

// ReadTable reads a table file and checks that it was built for s.
func ReadTable(path string, s Settings) (*Table, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("strings: %w", err)
	}
	return decodeTable(path, b, s)
}

// WriteFile writes the table to path atomically (temporary file, fsync,
// rename), creating its folder if needed.
func (t *Table) WriteFile(path string) error {
	b, err := t.MarshalBinary()
	if err != nil {
		return fmt.Errorf("strings: %s: %w", path, err)
	}
	return writeFileAtomic(path, b)
}

// CachePath returns where LoadTable caches the table for s under cacheDir
// (os.UserCacheDir()/tautline when cacheDir is empty); the name depends on
// s.TableHash, so all values of Kappa share one file.
func CachePath(s Settings, cacheDir string) (string, error) {
	return cacheFile(cacheDir, "strings-"+s.TableHash()[:16]+".tbl")
}

// LoadTable returns the table for s: the one compiled into the binary when
// s has the default settings' TableHash (any Kappa), else the cached file under cacheDir
// (see CachePath), else a freshly built and certified table, which it then
// caches. A cached file that is corrupt or built for other settings is
// rebuilt. If only the caching fails, including when there is no user cache
// directory (HOME unset), it returns the table together with an error
// wrapping ErrCacheWrite.
func LoadTable(s Settings, cacheDir string, build BuildOptions) (*Table, error) {
	return loadTable(s, cacheDir, build, BuildTable)
}

// loadTable is LoadTable with the builder as a parameter, so that tests can
// exercise the cache logic without a minute-long build.
func loadTable(s Settings, cacheDir string, build BuildOptions, builder func(Settings, BuildOptions) (*Table, error)) (*Table, error) {
	if err := s.Validate(); err != nil {
		return nil, err
	}
	if s.CEff == CEffStep {
		return nil, errStepTable
	}
	path, pathErr := CachePath(s, cacheDir)
	return loadOrBuild(embeddedTable, build.NoEmbedded, path, pathErr,
		func(name string, b []byte) (*Table, error) { return decodeTable(name, b, s) },
		func() (*Table, error) { return builder(s, build) },
		(*Table).MarshalBinary)
}
