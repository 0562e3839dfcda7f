package cosmicstrings

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// BOS table layout: nodes every 0.2 in log10 Gmu and 0.1 in ln f, one node
// beyond each edge, as for Table.
var (
	bosAxisG = gridAxis{Lo: tableGLo - tableGStep, Step: tableGStep, N: uint32(math.Round((tableGHi-tableGLo)/tableGStep)) + 3}
	bosAxisF = gridAxis{Lo: math.Log(tableFLo) - tableLnFStep, Step: tableLnFStep, N: uint32(math.Ceil((math.Log(tableFHi)-math.Log(tableFLo))/tableLnFStep)) + 3}
	bosMagic = [8]byte{'T', 'L', 'S', 'B', 'O', 'S', '0', '1'}
)

// A BOSTable holds ln Omega_GW at P = 1 of the Blanco-Pillado, Olum &
// Shlaer loop distribution on a grid in (log10 Gmu, ln f) (bicubic
// interpolation; the loop distribution has no other parameter), for fixed
// BOSSettings; P enters exactly as -Kappa ln P. It is immutable and safe
// for concurrent use.
type BOSTable struct {
	gridTable
	s BOSSettings
}

func newBOSTable(s BOSSettings) *BOSTable {
	return &BOSTable{s: s, gridTable: gridTable{magic: bosMagic, hash: s.TableHash(), g: newGrid(bosAxisG, bosAxisF)}}
}

// Settings returns the settings the table was built or loaded for.
func (t *BOSTable) Settings() BOSSettings { return t.s }

// Domain returns the ranges of log10 Gmu and of frequency the table covers.
func (t *BOSTable) Domain() (log10GmuLo, log10GmuHi, fLo, fHi float64) {
	return tableGLo, tableGHi, tableFLo, tableFHi
}

// BuildBOSTable computes the table for s with the direct path on
// opt.Workers goroutines and certifies it at opt.CertPoints random
// (default 200) and all cell-centre values of log10 Gmu, 8 frequencies
// each, failing (wrapping ErrCertification) if any error of ln Omega in
// 1e-10..1e-6 Hz exceeds 0.01.
func BuildBOSTable(s BOSSettings, opt BuildOptions) (*BOSTable, error) {
	proto, err := NewBOSDirect(s)
	if err != nil {
		return nil, err
	}
	t := newBOSTable(s)
	nrow, m := t.g.rows()
	fn := make([]float64, m)
	for i := range fn {
		fn[i] = math.Exp(bosAxisF.Lo + float64(i)*bosAxisF.Step)
	}
	err = parallel(opt.Workers, nrow, proto.Clone, func(d *BOSDirect, i int) error {
		out := make([]float64, m)
		gmu := math.Pow(10, bosAxisG.Lo+float64(i)*bosAxisG.Step)
		if err := d.Omega(fn, gmu, 1, out); err != nil {
			return err
		}
		for j, v := range out {
			if !(v > 0) {
				return fmt.Errorf("strings: BOS table: Omega = %g at Gmu = %g, f = %g", v, gmu, fn[j])
			}
			t.g.data[i*m+j] = float32(math.Log(v))
		}
		return nil
	}, opt.Progress)
	if err != nil {
		return nil, err
	}
	t.cert, err = t.certify(proto, opt)
	if err != nil {
		return nil, err
	}
	return t, nil
}

func (t *BOSTable) certify(proto *BOSDirect, opt BuildOptions) (GridCertificate, error) {
	n := opt.CertPoints
	if n <= 0 {
		n = 200
	}
	rng := rand.New(rand.NewPCG(opt.Seed, 0x626f7363657274))
	var lgs []float64
	for range n {
		lgs = append(lgs, tableGLo+(tableGHi-tableGLo)*rng.Float64())
	}
	for i := range int(math.Round((tableGHi - tableGLo) / tableGStep)) {
		lgs = append(lgs, tableGLo+(float64(i)+0.5)*tableGStep)
	}
	freqs := make([][]float64, len(lgs))
	for i := range freqs {
		freqs[i] = bandFreqs(rng)
	}
	return certifyAt(opt, proto.Clone, freqs, func(i int) [2]float64 { return [2]float64{lgs[i], 0} },
		func(d *BOSDirect, i int, f, out []float64) error { return d.Omega(f, math.Pow(10, lgs[i]), 1, out) },
		func(i int, f float64) (float64, error) { return t.LnOmega(lgs[i], 0, f) })
}

// LnOmega interpolates ln Omega_GW at one point; BOSModel uses a faster
// per-frequency path.
func (t *BOSTable) LnOmega(log10Gmu, log10P, f float64) (float64, error) {
	if !(log10Gmu >= tableGLo && log10Gmu <= tableGHi && log10P <= 0 && log10P > -math.MaxFloat64) {
		return 0, ErrOutsideTable
	}
	if !(f >= tableFLo && f <= tableFHi) {
		return 0, frequencyError{f}
	}
	ig, wg := bosAxisG.index(log10Gmu)
	jf, wf := bosAxisF.index(math.Log(f))
	_, m := t.g.rows()
	var v float64
	for a := range 4 {
		row := t.g.data[(ig+a)*m+jf:]
		v += wg[a] * (wf[0]*float64(row[0]) + wf[1]*float64(row[1]) + wf[2]*float64(row[2]) + wf[3]*float64(row[3]))
	}
	return v - t.s.Kappa*math.Ln10*log10P, nil
}

func decodeBOSTable(name string, b []byte, s BOSSettings) (*BOSTable, error) {
	t := newBOSTable(s)
	if err := t.decode(name, b); err != nil {
		return nil, err
	}
	return t, nil
}

// BOSCachePath returns where LoadBOSTable caches the table for s.
func BOSCachePath(s BOSSettings, cacheDir string) (string, error) {
	return cacheFile(cacheDir, "strings-bos-"+s.TableHash()[:16]+".tbl")
}

// LoadBOSTable returns the table for s: the compiled-in one for the
// default settings (any Kappa), else the cached file, else a freshly built
// and certified one, which it caches (see LoadTable for the error rules).
func LoadBOSTable(s BOSSettings, cacheDir string, opt BuildOptions) (*BOSTable, error) {
	if err := s.Validate(); err != nil {
		return nil, err
	}
	path, pathErr := BOSCachePath(s, cacheDir)
	return loadOrBuild(embeddedBOSTable, opt.NoEmbedded, path, pathErr,
		func(name string, b []byte) (*BOSTable, error) { return decodeBOSTable(name, b, s) },
		func() (*BOSTable, error) { return BuildBOSTable(s, opt) },
		(*BOSTable).MarshalBinary)
}
