package models

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"tautline/internal/numeric"
)

// Sum returns the model whose spectrum is the sum of the parts' spectra,
//
//	Omega_GW(f; theta_1, ..., theta_n) = sum_k Omega_k(f; theta_k),
//
// computed in log space as a log-sum-exp of the parts' ln Omega (shifted by
// the largest term, so that spectra many decades apart neither overflow nor
// underflow). The parameters are the parts' parameters concatenated in
// order; their names must be unique. An empty name means the parts' names
// joined by "+".
func Sum(name string, ms ...Model) (Model, error) {
	if len(ms) == 0 {
		return nil, errors.New("models: Sum needs at least one model")
	}
	s := &sum{parts: ms, sizes: make([]int, len(ms))}
	seen := make(map[string]string)
	var names []string
	for k, m := range ms {
		if m == nil {
			return nil, fmt.Errorf("models: Sum: model %d is nil", k)
		}
		names = append(names, m.Name())
		ps := m.Params()
		s.sizes[k] = len(ps)
		for _, p := range ps {
			if prev, dup := seen[p.Name]; dup {
				return nil, fmt.Errorf("models: Sum: parameter %q appears in both %q and %q; names must be unique", p.Name, prev, m.Name())
			}
			seen[p.Name] = m.Name()
			s.params = append(s.params, p)
		}
	}
	if name == "" {
		name = strings.Join(names, "+")
	}
	s.name = name
	return s, nil
}

type sum struct {
	name   string
	parts  []Model
	sizes  []int // number of parameters of each part
	params []Param
}

func (s *sum) Name() string { return s.name }

func (s *sum) Params() []Param { return append([]Param(nil), s.params...) }

// Domain implements Bounded: it concatenates the parts' domains; a part
// that is not Bounded (or whose Domain has the wrong length) accepts every
// value.
func (s *sum) Domain() [][2]float64 {
	var out [][2]float64
	for k, m := range s.parts {
		if d, ok := m.(Bounded); ok {
			if dom := d.Domain(); len(dom) == s.sizes[k] {
				out = append(out, dom...)
				continue
			}
		}
		for range s.sizes[k] {
			out = append(out, [2]float64{math.Inf(-1), math.Inf(1)})
		}
	}
	return out
}

func (s *sum) At(f []float64) (Spectrum, error) {
	sp := &sumSpectrum{
		sizes:   s.sizes,
		nparam:  len(s.params),
		parts:   make([]Spectrum, len(s.parts)),
		scratch: make([][]float64, len(s.parts)),
	}
	for k, m := range s.parts {
		p, err := m.At(f)
		if err != nil {
			return nil, fmt.Errorf("models: %s: part %q: %w", s.name, m.Name(), err)
		}
		sp.parts[k] = p
		sp.scratch[k] = make([]float64, len(f))
	}
	return sp, nil
}

var (
	errSumTheta = errors.New("models: sum: wrong number of parameters")
	errSumOut   = errors.New("models: sum: output length differs from the number of frequencies")
)

type sumSpectrum struct {
	sizes   []int
	nparam  int
	parts   []Spectrum
	scratch [][]float64 // per-part ln Omega; scratch[0] is unused (out serves)
}

func (s *sumSpectrum) LnOmega(theta, out []float64) error {
	if len(theta) != s.nparam {
		return errSumTheta
	}
	if len(out) != len(s.scratch[0]) {
		return errSumOut
	}
	off := 0
	for k, p := range s.parts {
		dst := s.scratch[k]
		if k == 0 {
			dst = out
		}
		if err := p.LnOmega(theta[off:off+s.sizes[k]:off+s.sizes[k]], dst); err != nil {
			return err
		}
		off += s.sizes[k]
	}
	// out holds part 0; fold in the others one frequency at a time:
	// ln(sum_k e^{x_k}) = m + ln(sum_k e^{x_k - m}), m = max_k x_k.
	if len(s.parts) == 2 {
		// Two parts (the usual case): m + ln(1 + e^{-|a-b|}), the
		// softplus by table (numeric.Softplus, a few ulp).
		b := s.scratch[1]
		for i, a := range out {
			m, d := a, b[i]-a
			if d > 0 {
				m, d = b[i], -d
			}
			if math.IsInf(m, 0) || math.IsNaN(d) {
				out[i] = math.Max(a, b[i]) // zero spectra, or an Inf/NaN part
				continue
			}
			out[i] = m + numeric.Softplus(d)
		}
		return nil
	}
	for i := range out {
		m := out[i]
		for k := 1; k < len(s.parts); k++ {
			m = math.Max(m, s.scratch[k][i])
		}
		if math.IsInf(m, 0) || math.IsNaN(m) {
			// All parts -Inf (zero spectrum), or one +Inf/NaN: the sum is m.
			out[i] = m
			continue
		}
		t := math.Exp(out[i] - m)
		for k := 1; k < len(s.parts); k++ {
			t += math.Exp(s.scratch[k][i] - m)
		}
		out[i] = m + math.Log(t)
	}
	return nil
}
