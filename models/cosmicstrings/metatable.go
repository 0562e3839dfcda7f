package cosmicstrings

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"tautline/models/cosmology"
)

// Metastable table layout. The spectrum depends on sqrt(kappa) only through
// t_s, so the table's axes are log10 Gmu, y = log10(t_s/s) and
// v = ln(f/f_*), f_* = 2 a(t_s)/(alpha t_s) being the frequency below which
// Omega vanishes. In these coordinates the edge and the onsets of the
// harmonics (at v = ln k) stay put as t_s moves. The table stores
// R = ln Omega - ln(1 - e^-v), which removes the logarithmic singularity
// of the linear onset of the fundamental mode at v = 0.
const (
	metaGStep   = 0.5
	metaYLo     = -7.0 // log10 t_s: f_* is above 1e-5 Hz below it
	metaYStep   = 0.25
	metaVStep   = 0.2
	metaVMax    = 26.5 // ln(1e-5 Hz / f_*) for t_s = t0 is 26.1
	metaFMargin = 3.0  // rows are computed for f within e^3 of the band
	// DefaultSqrtKappaLo and DefaultSqrtKappaHi bound the default prior of
	// sqrt(kappa): below 7 the cutoff lies above the timing band for most
	// tensions, above 9.5 t_s is later than today for every Gmu >= 1e-14.
	DefaultSqrtKappaLo = 7.0
	DefaultSqrtKappaHi = 9.5
)

var metaMagic = [8]byte{'T', 'L', 'S', 'M', 'E', 'T', 'A', '1'}

// metaAxes returns the table's axes. The t_s axis ends on a node exactly at
// log10 t0: for t_s >= t0 nothing decays before today and the spectrum is
// the stable one, so the spectrum has a kink in t_s at t0 (its derivative
// is non-zero just below and zero above). Rows beyond t0 would put that
// kink inside interpolation stencils; with the last node at t0, the
// stencils near the top use nodes at or below t0 only (the stencil start
// is clamped at the end of the axis), and lnOmega clamps t_s to t0, where
// the interpolation returns the top row, the stable spectrum, exactly.
func metaAxes(lnT0 float64) []gridAxis {
	yHi := lnT0 / math.Ln10
	nY := uint32(math.Ceil((yHi-metaYLo)/metaYStep)) + 2 // one node below metaYLo
	return []gridAxis{
		{Lo: tableGLo - metaGStep, Step: metaGStep, N: uint32(math.Round((tableGHi-tableGLo)/metaGStep)) + 3},
		{Lo: yHi - float64(nY-1)*metaYStep, Step: metaYStep, N: nY},
		{Lo: metaVStep / 2, Step: metaVStep, N: uint32(math.Ceil(metaVMax / metaVStep))},
	}
}

// A MetastableTable holds the metastable spectrum on the grid above for
// fixed MetastableSettings. It is immutable and safe for concurrent use.
type MetastableTable struct {
	gridTable
	s            MetastableSettings
	bg           *cosmology.Background
	lnTLo, lnTHi float64
}

// Settings returns the settings the table was built or loaded for.
func (t *MetastableTable) Settings() MetastableSettings { return t.s }

func newMetaTable(s MetastableSettings) (*MetastableTable, error) {
	bg, err := newBackground(s, s.Cosmology)
	if err != nil {
		return nil, err
	}
	if s.CEff == CEffStep {
		return nil, errStepTable
	}
	t := &MetastableTable{s: s, bg: bg}
	t.lnTLo, t.lnTHi = bg.LnTimeRange()
	t.gridTable = gridTable{magic: metaMagic, hash: s.TableHash(), g: newGrid(metaAxes(t.lnTHi)...)}
	return t, nil
}

// lnCutoff returns ln f_* at ln t_s (clamped to today).
func (t *MetastableTable) lnCutoff(lts float64) float64 {
	lts = math.Min(lts, t.lnTHi)
	lnA, _ := t.bg.LnAHT(lts)
	return math.Ln2 + lnA - lts - math.Log(t.s.Alpha)
}

// edgeTerm is ln(1 - e^-v), the onset of the fundamental mode.
func edgeTerm(v float64) float64 {
	if v > 12 { // below 6e-6 in magnitude
		return -math.Exp(-v)
	}
	return math.Log(-math.Expm1(-v))
}

// BuildMetastableTable computes and certifies the table for s (see
// BuildTable for the options).
func BuildMetastableTable(s MetastableSettings, opt BuildOptions) (*MetastableTable, error) {
	t, err := newMetaTable(s)
	if err != nil {
		return nil, err
	}
	proto, err := NewMetastableDirect(s)
	if err != nil {
		return nil, err
	}
	// The rows hold ln Omega at P = 1 (lnOmega adds -Kappa ln P), so they
	// are computed with P = 1; certification uses s itself.
	s1 := s
	s1.P = 1
	ax := t.g.axes
	nrow, m := t.g.rows()
	nY := int(ax[1].N)
	err = parallel(opt.Workers, nrow, func() *MetastableDirect { return proto.n.metastable(s1) }, func(d *MetastableDirect, r int) error {
		lg := ax[0].Lo + float64(r/nY)*ax[0].Step
		lts := (ax[1].Lo + float64(r%nY)*ax[1].Step) * math.Ln10
		lfs := t.lnCutoff(lts)
		// Only nodes whose frequency lies within e^3 of the table's band
		// can enter an interpolation stencil there; the others copy the
		// nearest computed node.
		var idx []int
		var f []float64
		for j := range m {
			v := ax[2].Lo + float64(j)*ax[2].Step
			if lf := lfs + v; lf > math.Log(tableFLo)-metaFMargin && lf < math.Log(tableFHi)+metaFMargin {
				idx = append(idx, j)
				f = append(f, math.Exp(lf))
			}
		}
		row := t.g.data[r*m : (r+1)*m]
		if len(idx) == 0 {
			return nil // never used
		}
		out := make([]float64, len(f))
		if err := d.OmegaTs(f, math.Pow(10, lg), math.Exp(lts), out); err != nil {
			return err
		}
		for k, j := range idx {
			if !(out[k] > 0) {
				return fmt.Errorf("strings: metastable table: Omega = %g at log10 Gmu = %g, t_s = %g s, f = %g", out[k], lg, math.Exp(lts), f[k])
			}
			row[j] = float32(math.Log(out[k]) - edgeTerm(ax[2].Lo+float64(j)*ax[2].Step))
		}
		for j := range idx[0] {
			row[j] = row[idx[0]]
		}
		for j := idx[len(idx)-1] + 1; j < m; j++ {
			row[j] = row[idx[len(idx)-1]]
		}
		return nil
	}, opt.Progress)
	if err != nil {
		return nil, err
	}
	if opt.CertPoints < 0 {
		return t, nil // uncertified, for tests of the layout
	}
	t.cert, err = t.certify(proto, opt)
	if err != nil {
		return nil, err
	}
	return t, nil
}

// sqrtKappaOf inverts lnDecayTime.
func sqrtKappaOf(gmu, lts float64) float64 {
	k := (lts - 0.5*math.Log(2*math.Pi/gmu) - math.Log(PlanckTime)) / (0.5 * math.Pi)
	return math.Sqrt(math.Max(k, 0))
}

func (t *MetastableTable) certify(proto *MetastableDirect, opt BuildOptions) (GridCertificate, error) {
	n := opt.CertPoints
	if n <= 0 {
		n = 300
	}
	rng := rand.New(rand.NewPCG(opt.Seed, 0x6d65746163657274))
	type point struct{ lg, sk float64 }
	var pts []point
	for range n {
		pts = append(pts, point{tableGLo + (tableGHi-tableGLo)*rng.Float64(), DefaultSqrtKappaLo + (DefaultSqrtKappaHi-DefaultSqrtKappaLo)*rng.Float64()})
	}
	// Cell centres in (log10 Gmu, log10 t_s) inside the box.
	ax := t.g.axes
	for i := range int(ax[0].N) - 1 {
		for j := range int(ax[1].N) - 1 {
			lg := ax[0].Lo + (float64(i)+0.5)*ax[0].Step
			y := ax[1].Lo + (float64(j)+0.5)*ax[1].Step
			sk := sqrtKappaOf(math.Pow(10, lg), y*math.Ln10)
			if lg >= tableGLo && lg <= tableGHi && sk >= DefaultSqrtKappaLo && sk <= DefaultSqrtKappaHi && y*math.Ln10 < t.lnTHi {
				pts = append(pts, point{lg, sk})
			}
		}
	}
	freqs := make([][]float64, len(pts))
	for i := range freqs {
		freqs[i] = bandFreqs(rng)
	}
	return certifyAt(opt, proto.Clone, freqs, func(i int) [2]float64 { return [2]float64{pts[i].lg, pts[i].sk} },
		func(d *MetastableDirect, i int, f, out []float64) error {
			return d.Omega(f, math.Pow(10, pts[i].lg), pts[i].sk, out)
		},
		func(i int, f float64) (float64, error) { return t.LnOmega(pts[i].lg, pts[i].sk, f) })
}

// ErrOutsideMetastableTable is returned when log10 Gmu is outside
// [-14, -6] or sqrt(kappa) is negative or not finite.
var ErrOutsideMetastableTable = errors.New("strings: metastable: parameters outside the tabulated domain (log10_Gmu in [-14, -6], sqrt_kappa_m >= 0)")

// position returns the row coordinates of (log10 Gmu, sqrt(kappa)) and
// ln f_*, and whether t_s precedes the network (Omega = 0 everywhere).
func (t *MetastableTable) position(lg, sk float64) (y, lfs float64, none bool, err error) {
	if !(lg >= tableGLo && lg <= tableGHi && sk >= 0 && sk < math.Inf(1)) {
		return 0, 0, false, ErrOutsideMetastableTable
	}
	// lnDecayTime with ln Gmu = lg ln 10 (no power of ten needed).
	lts := 0.5*(math.Log(2*math.Pi)-lg*math.Ln10) + 0.5*math.Pi*sk*sk + math.Log(PlanckTime)
	if lts <= t.lnTLo {
		return 0, 0, true, nil
	}
	lts = math.Min(lts, t.lnTHi)
	return lts / math.Ln10, t.lnCutoff(lts), false, nil
}

// LnOmega interpolates ln Omega_GW at one point (-Inf where Omega
// vanishes); MetastableModel uses the same arithmetic for many frequencies.
func (t *MetastableTable) LnOmega(log10Gmu, sqrtKappa, f float64) (float64, error) {
	if !(f >= tableFLo && f <= tableFHi) {
		return 0, frequencyError{f}
	}
	var out [1]float64
	lf, inv := [1]float64{math.Log(f)}, [1]float64{1 / f}
	if err := t.lnOmega(log10Gmu, sqrtKappa, lf[:], inv[:], out[:], make([]float64, t.g.axes[2].N)); err != nil {
		return 0, err
	}
	return out[0], nil
}

// lnOmega writes ln Omega at ln f = lnf[i] (1/f = invF[i]) into out,
// using buf (one entry per node of the v axis) as scratch; it does not
// allocate. It first combines the 16 (Gmu, t_s) rows of the stencil into
// one row over the v nodes the frequencies need, then interpolates that
// row in v at each frequency.
func (t *MetastableTable) lnOmega(lg, sk float64, lnf, invF, out, buf []float64) error {
	y, lfs, none, err := t.position(lg, sk)
	if err != nil {
		return err
	}
	shift := -t.s.Kappa * math.Log(t.s.P)
	ax := t.g.axes
	vMin, vMax := math.Inf(1), math.Inf(-1)
	for _, l := range lnf {
		if v := l - lfs; v > 0 {
			if v < vMin {
				vMin = v
			}
			if v > vMax {
				vMax = v
			}
		}
	}
	if none || y < metaYLo || !(vMax > 0) {
		if !none && vMax > 0 {
			return ErrOutsideMetastableTable
		}
		for i := range out[:len(lnf)] {
			out[i] = math.Inf(-1)
		}
		return nil
	}
	ig, wg := ax[0].index(lg)
	iy, wy := ax[1].index(y)
	jLo, _ := ax[2].index(vMin)
	jHi, _ := ax[2].index(vMax)
	jHi += 4
	nY, m := int(ax[1].N), int(ax[2].N)
	row := buf[jLo:jHi]
	clear(row)
	for a := range 4 {
		for b := range 4 {
			w := wg[a] * wy[b]
			base := ((ig+a)*nY+iy+b)*m + jLo
			src := t.g.data[base : base+len(row)]
			for j, d := range src {
				row[j] += w * float64(d)
			}
		}
	}
	fs := math.Exp(lfs)
	// The 4-point Lagrange weights of numeric.Lagrange4Weights, written
	// out with a multiplication by 1/step.
	v0, inv, last := ax[2].Lo, 1/ax[2].Step, m-4
	for i, l := range lnf {
		v := l - lfs
		if !(v > 0) {
			out[i] = math.Inf(-1)
			continue
		}
		x := (v - v0) * inv
		iv := int(math.Floor(x)) - 1
		if iv < 0 {
			iv = 0
		} else if iv > last {
			iv = last
		}
		u := x - float64(iv)
		r := buf[iv : iv+4 : iv+4]
		u1, u2, u3 := u-1, u-2, u-3
		lag := (-r[0]*u1*u2*u3+r[3]*u*u1*u2)/6 + (r[1]*u*u2*u3-r[2]*u*u1*u3)/2
		out[i] = lag + log1mx(fs*invF[i]) + shift
	}
	return nil
}

// log1mx returns ln(1 - x) for 0 <= x < 1 (the edge term ln(1 - f_*/f) =
// ln(1 - e^-v)): by its Taylor series -sum x^n/n to n = 8 below x = 0.05
// (remainder below x^9/(9 (1 - x)) = 2.3e-13), else math.Log1p.
func log1mx(x float64) float64 {
	if x < 0.05 {
		return -x * (1 + x*(1.0/2+x*(1.0/3+x*(1.0/4+x*(1.0/5+x*(1.0/6+x*(1.0/7+x*(1.0/8))))))))
	}
	return math.Log1p(-x)
}

func decodeMetaTable(name string, b []byte, s MetastableSettings) (*MetastableTable, error) {
	t, err := newMetaTable(s)
	if err != nil {
		return nil, err
	}
	if err := t.decode(name, b); err != nil {
		return nil, err
	}
	return t, nil
}

// MetastableCachePath returns where LoadMetastableTable caches the table.
func MetastableCachePath(s MetastableSettings, cacheDir string) (string, error) {
	return cacheFile(cacheDir, "strings-metastable-"+s.TableHash()[:16]+".tbl")
}

// LoadMetastableTable returns the table for s: the compiled-in one for
// DefaultMetastableSettings (any P and Kappa), else the cached file, else a freshly built and
// certified one, which it caches (see LoadTable for the error rules).
func LoadMetastableTable(s MetastableSettings, cacheDir string, opt BuildOptions) (*MetastableTable, error) {
	if _, err := newMetaTable(s); err != nil {
		return nil, err
	}
	path, pathErr := MetastableCachePath(s, cacheDir)
	return loadOrBuild(embeddedMetaTable, opt.NoEmbedded, path, pathErr,
		func(name string, b []byte) (*MetastableTable, error) { return decodeMetaTable(name, b, s) },
		func() (*MetastableTable, error) { return BuildMetastableTable(s, opt) },
		(*MetastableTable).MarshalBinary)
}
