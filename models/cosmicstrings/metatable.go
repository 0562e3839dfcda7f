package cosmicstrings

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"tautline/models/cosmicstrings/internal/vec"

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
	// Set by prepare.
	lnTwoPi, lnPlanckTime, lnAlpha, shift float64
	invStep                               [3]float64
	lfsTop, fsTop                         float64 // ln f_* and f_* for t_s >= t0
	lnAT0, lnAStep                        float64 // the background's ln a(ln t) nodes
	lnANodes                              []lnANode
	logTab                                vec.LogTable
	expTab                                expTable
	// data holds the grid's values as float64 (set by widen): lnOmega
	// adds 16 rows of it per call, with one conversion less per value.
	data []float64
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
	t.prepare()
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
	t.widen()
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

// prepare sets what lnOmega takes from the settings and the axes once: the
// logarithms of the constants in t_s and f_*, the -Kappa ln P shift, the
// inverse steps of the axes and the table of the edge term.
func (t *MetastableTable) prepare() {
	t.lnTwoPi = math.Log(2 * math.Pi)
	t.lnPlanckTime = math.Log(PlanckTime)
	t.lnAlpha = math.Log(t.s.Alpha)
	t.shift = -t.s.Kappa * math.Log(t.s.P)
	for i, a := range t.g.axes {
		t.invStep[i] = 1 / a.Step
	}
	lnA, _ := t.bg.LnAHT(t.lnTHi)
	t.lfsTop = math.Ln2 + lnA - t.lnTHi - t.lnAlpha
	t.fsTop = math.Exp(t.lfsTop)
	var nodeLnA, nodeHT []float64
	t.lnAT0, t.lnAStep, nodeLnA, nodeHT = t.bg.LnATable()
	t.lnANodes = make([]lnANode, len(nodeLnA))
	for i := range nodeLnA {
		t.lnANodes[i] = lnANode{nodeLnA[i], t.lnAStep * nodeHT[i]}
	}
	t.logTab.Init()
	t.expTab.init()
}

// A lnANode is ln a at a node of the background's ln t grid and its
// derivative in ln t times the step (the Hermite data of LnAHT).
type lnANode struct{ p, m float64 }

// lnA is the background's LnAHT for ln a alone, inlined: the same
// operations on the same nodes (so the same value, tested), without the
// call, the derivative it also returns and its division.
func (t *MetastableTable) lnA(lnt float64) float64 {
	s := (lnt - t.lnAT0) / t.lnAStep
	nodes := t.lnANodes
	i := int(s)
	if s < 0 {
		i = 0
	}
	if i > len(nodes)-2 {
		i = len(nodes) - 2
	}
	u := s - float64(i)
	u = max(0, min(1, u))
	a, b := nodes[i], nodes[i+1]
	u2 := u * u
	u3 := u2 * u
	return (2*u3-3*u2+1)*a.p + (u3-2*u2+u)*a.m + (-2*u3+3*u2)*b.p + (u3-u2)*b.m
}

// widen copies the grid's values into t.data; it is called once the grid
// is built or decoded.
func (t *MetastableTable) widen() {
	t.data = make([]float64, len(t.g.data))
	for i, v := range t.g.data {
		t.data[i] = float64(v)
	}
}

// ErrOutsideMetastableTable is returned when log10 Gmu is outside
// [-14, -6] or sqrt(kappa) is negative or not finite.
var ErrOutsideMetastableTable = errors.New("strings: metastable: parameters outside the tabulated domain (log10_Gmu in [-14, -6], sqrt_kappa_m >= 0)")

// LnOmega interpolates ln Omega_GW at one point (-Inf where Omega
// vanishes); MetastableModel uses the same arithmetic for many frequencies.
func (t *MetastableTable) LnOmega(log10Gmu, sqrtKappa, f float64) (float64, error) {
	if !(f >= tableFLo && f <= tableFHi) {
		return 0, frequencyError{f}
	}
	var out [1]float64
	if err := t.lnOmega(log10Gmu, sqrtKappa, t.newFreqs([]float64{f}), out[:]); err != nil {
		return 0, err
	}
	return out[0], nil
}

// A metaFreqs is one set of frequencies prepared for lnOmega, with the
// scratch lnOmega needs; it serves one goroutine at a time.
type metaFreqs struct {
	lnf, invF []float64 // ln f and 1/f in ascending order of f
	xs        []float64 // ln f over the step of the v axis
	// perm[k] is the index in the caller's order of the k-th lowest
	// frequency, nil when the caller's frequencies ascend.
	perm []int
	row  []float64         // the combined row, one entry per v node
	cf   *[metaSlots]cubic // the cubic of each stencil of the row
	tmp  []float64         // results in ascending order, when perm is not nil
}

// newFreqs prepares the frequencies f (Hz, positive and finite, in any
// order).
func (t *MetastableTable) newFreqs(f []float64) *metaFreqs {
	m := int(t.g.axes[2].N)
	fr := &metaFreqs{row: make([]float64, m), cf: new([metaSlots]cubic)}
	if !slices.IsSorted(f) {
		fr.perm = make([]int, len(f))
		for i := range fr.perm {
			fr.perm[i] = i
		}
		slices.SortStableFunc(fr.perm, func(i, j int) int { return cmp.Compare(f[i], f[j]) })
		fr.tmp = make([]float64, len(f))
	}
	fr.lnf, fr.invF, fr.xs = make([]float64, len(f)), make([]float64, len(f)), make([]float64, len(f))
	for k := range f {
		v := f[k]
		if fr.perm != nil {
			v = f[fr.perm[k]]
		}
		fr.lnf[k], fr.invF[k] = math.Log(v), 1/v
		fr.xs[k] = fr.lnf[k] * t.invStep[2]
	}
	return fr
}

// lnOmega writes ln Omega at the frequencies fr into out (in the order
// newFreqs was given them) without allocating. Everything that depends on
// (Gmu, t_s) alone is done once: the position, f_* (kept for t_s at or
// after today), the first frequency above f_*, the combination of the
// stencil's 16 (Gmu, t_s) rows into one row over the v nodes the
// frequencies need (4 rows when t_s is at or after today, where the t_s
// weights are 0, 0, 0, 1), and the cubic of each 4-node stencil of that
// row, with the -Kappa ln P shift added. What is left per frequency is
// the evaluation of its stencil's cubic and the edge term
// ln(1 - f_*/f); the frequencies ascend, so those below f_* come first,
// then those where the edge term takes the table, then those where it
// takes the series to x^5, then to x^2, each run in a loop of its own.
func (t *MetastableTable) lnOmega(lg, sk float64, fr *metaFreqs, out []float64) error {
	if !(lg >= tableGLo && lg <= tableGHi && sk >= 0 && sk < math.Inf(1)) {
		return ErrOutsideMetastableTable
	}
	lnf := fr.lnf
	n := len(lnf)
	invF := fr.invF[:n]
	dst := out[:n]
	if fr.perm != nil {
		dst = fr.tmp[:n]
	}
	// lnDecayTime with ln Gmu = lg ln 10 (no power of ten needed).
	lts := 0.5*(t.lnTwoPi-lg*math.Ln10) + 0.5*math.Pi*sk*sk + t.lnPlanckTime
	if lts <= t.lnTLo { // t_s precedes the network: Omega = 0
		fillNegInf(out[:n])
		return nil
	}
	// lnCutoff, with ln alpha taken once and its value at today kept.
	top := lts >= t.lnTHi
	lfs := t.lfsTop
	if top {
		lts = t.lnTHi
	} else {
		lfs = math.Ln2 + t.lnA(lts) - lts - t.lnAlpha
	}
	// lnf ascends: every frequency is at or below f_* exactly when the
	// last one is.
	if n == 0 || !(lnf[n-1] > lfs) {
		fillNegInf(out[:n])
		return nil
	}
	y := lts / math.Ln10
	if y < metaYLo {
		return ErrOutsideMetastableTable
	}
	k0 := 0 // the first frequency above f_*
	for !(lnf[k0] > lfs) {
		k0++
	}
	// f_*: math.Exp when the first frequency above it is within a factor
	// 2 of it, where the edge term ln(1 - f_*/f) amplifies the relative
	// error of f_* by f_*/(f - f_*), else expTab's reduction (within
	// 2 ulp of math.Exp, tested), whose error the edge term then scales
	// by less than 1.
	fs := t.fsTop
	if !top {
		if lnf[k0]-lfs >= math.Ln2 {
			fs = t.expTab.exp(lfs)
		} else {
			fs = math.Exp(lfs)
		}
	}
	ax := t.g.axes[:3]
	nY, m := int(ax[1].N), int(ax[2].N)
	// Both coordinates are above their axes' first nodes (lg >= -14,
	// y >= metaYLo), so int truncates like floor.
	ig, wg := lagrangeWeights((lg-ax[0].Lo)*t.invStep[0], int(ax[0].N))
	iy, wy := lagrangeWeights((y-ax[1].Lo)*t.invStep[1], nY)
	// The stencil in v of a frequency is that of Lagrange4Weights, at
	// x = (v - v0)/step = xs[k] - c; v > 0 makes x > -1/2, where int(x) - 1
	// clamps to the same node as floor(x) - 1. The stencils of all
	// frequencies above f_* lie in [jLo, jHi), since the stencil does not
	// move down as x grows.
	xs := fr.xs[:n]
	last := m - 4
	c := (lfs + ax[2].Lo) * t.invStep[2]
	jLo := min(max(int(xs[k0]-c)-1, 0), last)
	jHi := min(max(int(xs[n-1]-c)-1, 0), last) + 4
	t.combine(fr.row, ig, iy, wg, wy, top, jLo, jHi)
	cf := fr.cf
	vec.Cubics(cf[jLo+1:], fr.row[jLo:jHi], t.shift)
	fillNegInf(dst[:k0])
	// The edge term ln(1 - f_*/f): the table for the frequencies where
	// f_*/f >= 2^-10, the first ones above f_*, then the series.
	k1 := k0 + t.logTab.Run(dst[k0:], invF[k0:], fs)
	vec.AddClamped(dst[k0:k1], xs[k0:k1], cf, c, last)
	if k1 < n && int(xs[k1]-c) >= 1 && int(xs[n-1]-c) <= last+1 {
		// No stencil from k1 on clamps (they do not move down as x
		// grows): the common case, since f > 1024 f_* puts x above 34.
		// The series: to x^5 while x >= 2^-18, to x^2 below.
		k2 := k1
		for k2 < n && fs*invF[k2] >= log1mxShort {
			k2++
		}
		if k2 > k1 {
			f2 := fs * fs
			f4 := f2 * f2
			vec.Series5(dst[k1:k2], xs[k1:k2], invF[k1:k2], cf, c, &[5]float64{-fs, f2 * (-1.0 / 2), (f2 * fs) * (-1.0 / 3), f4 * (-1.0 / 4), (f4 * fs) * (-1.0 / 5)})
		}
		vec.Series2(dst[k2:], xs[k2:], invF[k2:], cf, c, -fs, (fs*fs)*(-1.0/2))
	} else {
		tab := cf[:]
		for k := k1; k < n; k++ {
			x := xs[k] - c
			s := min(max(int(x)-1, 0), last) + 1
			dst[k] = tab[s&(metaSlots-1)].at(x-float64(s)) + log1mxSeries(fs*invF[k])
		}
	}
	if fr.perm != nil {
		for k, i := range fr.perm[:n] {
			out[i] = dst[k]
		}
	}
	return nil
}

// combine sets row[jLo:jHi] to the stencil's 16 (Gmu, t_s) rows with the
// weights wg[a] wy[b] (4 rows with weights wg[a] when t_s is at or after
// today, where the t_s weights are 0, 0, 0, 1).
func (t *MetastableTable) combine(row []float64, ig, iy int, wg, wy [4]float64, top bool, jLo, jHi int) {
	nY, m := int(t.g.axes[1].N), int(t.g.axes[2].N)
	r := row[jLo:jHi]
	if top {
		vec.Sum4(r, t.data[((ig*nY+iy+3)*m+jLo):], nY*m, &wg)
		return
	}
	base := (ig*nY+iy)*m + jLo
	for a := 0; a < 4; a += 2 {
		w := [8]float64{
			wg[a] * wy[0], wg[a] * wy[1], wg[a] * wy[2], wg[a] * wy[3],
			wg[a+1] * wy[0], wg[a+1] * wy[1], wg[a+1] * wy[2], wg[a+1] * wy[3],
		}
		vec.Sum8(r, t.data[base+a*nY*m:], m, nY*m, &w, a > 0)
	}
}

// metaSlots is the size of a metaFreqs' table of cubics: a power of two
// above the number of v nodes, so that masking a slot with metaSlots - 1
// (a no-op for the slots lnOmega computes) lets the compiler drop the
// bounds check; vec's loops take the same table.
const metaSlots = vec.Slots

// A cubic holds (p(0), c1, c2, c3) of p(u) = p(0) + c1 u + c2 u^2 + c3 u^3.
type cubic [4]float64

// at evaluates the cubic (Estrin's order: a shorter chain).
func (q *cubic) at(u float64) float64 {
	return (q[0] + u*q[1]) + (u*u)*(q[2]+u*q[3])
}

// lagrangeWeights is numeric.Lagrange4Weights for s >= 0, with the
// divisions by 6 and 2 made multiplications.
func lagrangeWeights(s float64, n int) (int, [4]float64) {
	i := min(max(int(s)-1, 0), n-4)
	u := s - float64(i)
	u1, u2, u3 := u-1, u-2, u-3
	p01, p23 := u*u1, u2*u3
	return i, [4]float64{-u1 * p23 * (1.0 / 6), u * p23 * 0.5, -p01 * u3 * 0.5, p01 * u2 * (1.0 / 6)}
}

func fillNegInf(out []float64) {
	for i := range out {
		out[i] = math.Inf(-1)
	}
}

const (
	// ln 2 split as in the standard library's math.Log (fdlibm): ln2Hi
	// has 32 significant bits, so e ln2Hi is exact for the exponents here.
	ln2Hi = 6.93147180369123816490e-01
	ln2Lo = 1.90821492927058770002e-10
	// log1mxSwitch is where log1mx switches from its series to the table
	// (vec.LogTable).
	log1mxSwitch = vec.Log1mxSwitch
	// Below log1mxShort log1mxSeries drops from x^5 to x^2, below
	// log1mxTiny to x.
	log1mxShort = 0x1p-18
	log1mxTiny  = 0x1p-27
)

// log1mxSeries is ln(1 - x) for 0 <= x < 2^-10 by its Taylor series
// -(x + x^2/2 + ...), cut where the remainder, below x^(n+1)/(n (1 - x))
// after n terms, is under 2^-54 + 2^-53 |ln(1 - x)|: to x^5 above 2^-18,
// to x^2 down to 2^-27, then -x. The edge term is added to ln Omega, of
// magnitude above 1, so an absolute 2^-54 is below its rounding.
func log1mxSeries(x float64) float64 {
	switch {
	case x >= log1mxShort:
		return log1mxSeries5(x)
	case x >= log1mxTiny:
		return log1mxSeries2(x)
	}
	return -x
}

// log1mxSeries5 and log1mxSeries2 are sums of log1mxSeries, with the
// signs inside (one instruction less, the same value).
func log1mxSeries5(x float64) float64 {
	return x * (-1 + x*(-1.0/2+x*(-1.0/3+x*(-1.0/4+x*(-1.0/5)))))
}

func log1mxSeries2(x float64) float64 { return x * (-1 + x*(-1.0/2)) }

func decodeMetaTable(name string, b []byte, s MetastableSettings) (*MetastableTable, error) {
	t, err := newMetaTable(s)
	if err != nil {
		return nil, err
	}
	if err := t.decode(name, b); err != nil {
		return nil, err
	}
	t.widen()
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

// expTab's table: 2^(j/expTabN), j = 0..expTabN-1.
const (
	expTabBits = 6
	expTabN    = 1 << expTabBits
	// expShifter rounds to the nearest integer when added (ties to even):
	// 1.5 2^52, whose unit in the last place is 1.
	expShifter = 0x1.8p52
)

// An expTable holds the nodes of exp.
type expTable [expTabN]float64

func (tab *expTable) init() {
	for j := range tab {
		tab[j] = math.Exp2(float64(j) / expTabN)
	}
}

// exp is e^z for |z| <= 700 (math.Exp beyond) by the table-driven
// reduction of Tang 1989 (ACM TOMS 15, 144, from memory): with
// k = round(z expTabN/ln 2) and r = z - k ln2/expTabN, |r| <= ln2/128,
// e^z = 2^(k >> 6) 2^((k & 63)/64) e^r, e^r - 1 by its Taylor series to r^6
// (remainder below |r|^7/5040 < 1e-19). ln 2/64 is split as ln2Hi/64 +
// ln2Lo/64 (ln2Hi has 32 significant bits, so k ln2Hi/64 is exact for
// |k| < 2^21). The result is within 2 ulp of math.Exp (tested); there is
// no division and the chain is shorter than math.Exp's.
func (tab *expTable) exp(z float64) float64 {
	if !(z >= -700 && z <= 700) {
		return math.Exp(z)
	}
	kt := z*(expTabN/math.Ln2) + expShifter
	k := int64(math.Float64bits(kt)) - int64(math.Float64bits(expShifter))
	kf := kt - expShifter
	r := (z - kf*(ln2Hi/expTabN)) - kf*(ln2Lo/expTabN)
	r2 := r * r
	p := r + r2*((1.0/2+r*(1.0/6))+r2*((1.0/24+r*(1.0/120))+r2*(1.0/720)))
	sc := math.Float64frombits(math.Float64bits(tab[k&(expTabN-1)]) + uint64(k>>expTabBits)<<52)
	return sc + sc*p
}
