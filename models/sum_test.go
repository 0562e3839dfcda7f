package models

import (
	"errors"
	"math"
	"strings"
	"testing"

	"tautline/priors"
)

// toy is a test model: ln Omega = c + slope ln f, with parameters c and
// slope named prefix+"c", prefix+"slope".
type toy struct{ prefix string }

var errToyDomain = errors.New("toy: slope > 10")

func (m toy) Name() string { return "toy" + m.prefix }
func (m toy) Params() []Param {
	return []Param{
		{Name: m.prefix + "c", Prior: priors.Uniform{Min: -2000, Max: 10}},
		{Name: m.prefix + "slope", Prior: priors.Uniform{Min: -5, Max: 5}},
	}
}
func (m toy) At(f []float64) (Spectrum, error) {
	lnf := make([]float64, len(f))
	for i := range f {
		lnf[i] = math.Log(f[i])
	}
	return toySpec{lnf}, nil
}

type toySpec struct{ lnf []float64 }

func (s toySpec) LnOmega(theta, out []float64) error {
	if theta[1] > 10 {
		return errToyDomain
	}
	for i := range out {
		out[i] = theta[0] + theta[1]*s.lnf[i]
	}
	return nil
}

// TestSumClosedForm: the sum of e^{a + b ln f} and e^{c + d ln f} is
// a f^b + c' f^d, so ln Omega = ln(e^a f^b + e^c f^d) exactly. Where both
// terms are representable the reference is computed directly from that
// closed form; where they underflow it is max + ln(1 + e^{-|diff|}), the
// same closed form divided by the larger term. Tolerance 1e-13 relative
// on ln Omega of order 1-1000: a few ulp of float64.
func TestSumClosedForm(t *testing.T) {
	f := []float64{1e-9, 1e-8, 3e-8}
	m, err := Sum("", toy{"a_"}, toy{"b_"})
	if err != nil {
		t.Fatal(err)
	}
	if m.Name() != "toya_+toyb_" {
		t.Errorf("name %q", m.Name())
	}
	var names []string
	for _, p := range m.Params() {
		names = append(names, p.Name)
	}
	if got := strings.Join(names, ","); got != "a_c,a_slope,b_c,b_slope" {
		t.Errorf("params %s", got)
	}
	s, err := m.At(f)
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		theta []float64
		ref   func(f float64) float64
	}{
		{[]float64{-5, 0.5, -3, -0.2}, func(f float64) float64 {
			return math.Log(math.Exp(-5)*math.Pow(f, 0.5) + math.Exp(-3)*math.Pow(f, -0.2))
		}},
		{[]float64{1, 0, 1, 0}, func(float64) float64 { return 1 + math.Ln2 }},
		// Both terms near e^-1500: direct exp underflows to 0; reference is
		// the closed form scaled by e^1500: -1500 + ln(f^0 + e^{-1} f^0).
		{[]float64{-1500, 0, -1501, 0}, func(float64) float64 { return -1500 + math.Log1p(math.Exp(-1)) }},
		// One term negligible (e^-2000 next to ~e^-10): sum equals the
		// larger term to within e^-1990.
		{[]float64{-2000, 0, -10, 1}, func(f float64) float64 { return -10 + math.Log(f) }},
	}
	out := make([]float64, len(f))
	for _, c := range cases {
		if err := s.LnOmega(c.theta, out); err != nil {
			t.Fatal(err)
		}
		for i, fi := range f {
			if want := c.ref(fi); math.Abs(out[i]-want) > 1e-13*math.Max(1, math.Abs(want)) {
				t.Errorf("theta %v f=%g: ln Omega = %.16g, closed form %.16g", c.theta, fi, out[i], want)
			}
		}
	}
	// A part's domain error comes back unchanged.
	if err := s.LnOmega([]float64{0, 0, 0, 11}, out); !errors.Is(err, errToyDomain) {
		t.Errorf("domain error: got %v", err)
	}
	if err := s.LnOmega([]float64{0, 0, 0}, out); err == nil {
		t.Error("short theta accepted")
	}
	if n := testing.AllocsPerRun(100, func() { _ = s.LnOmega(cases[0].theta, out) }); n != 0 {
		t.Errorf("LnOmega allocates %v times", n)
	}
}

func TestSumErrors(t *testing.T) {
	if _, err := Sum("x"); err == nil {
		t.Error("empty Sum accepted")
	}
	_, err := Sum("x", toy{"a_"}, toy{"a_"})
	if err == nil || !strings.Contains(err.Error(), `"a_c"`) || !strings.HasPrefix(err.Error(), "models: ") {
		t.Errorf("duplicate names: %v", err)
	}
	m, err := Sum("joint", toy{"a_"})
	if err != nil || m.Name() != "joint" {
		t.Errorf("single part: %v, %v", m, err)
	}
}

func BenchmarkSumLnOmega30(b *testing.B) {
	f := make([]float64, 30)
	for i := range f {
		f[i] = float64(i+1) / (15 * 365.25 * 86400)
	}
	m, err := Sum("", toy{"a_"}, toy{"b_"})
	if err != nil {
		b.Fatal(err)
	}
	s, err := m.At(f)
	if err != nil {
		b.Fatal(err)
	}
	out := make([]float64, len(f))
	theta := []float64{-20, 0.6, -25, -1.2}
	b.ReportAllocs()
	for b.Loop() {
		if err := s.LnOmega(theta, out); err != nil {
			b.Fatal(err)
		}
	}
}

// boxed is toy with a declared domain: c in [-30, 0], slope in [-3, 3].
type boxed struct{ toy }

func (boxed) Domain() [][2]float64 { return [][2]float64{{-30, 0}, {-3, 3}} }

// badBox declares a domain of the wrong length, which Sum must ignore.
type badBox struct{ toy }

func (badBox) Domain() [][2]float64 { return [][2]float64{{0, 1}} }

// TestSumBounded: a sum is Bounded, with the Bounded parts' domains in
// parameter order and unbounded entries for the other parts.
func TestSumBounded(t *testing.T) {
	inf := math.Inf(1)
	cases := []struct {
		name  string
		parts []Model
		want  [][2]float64
	}{
		{"bounded then plain", []Model{boxed{toy{"a_"}}, toy{"b_"}},
			[][2]float64{{-30, 0}, {-3, 3}, {-inf, inf}, {-inf, inf}}},
		{"plain then bounded", []Model{toy{"a_"}, boxed{toy{"b_"}}},
			[][2]float64{{-inf, inf}, {-inf, inf}, {-30, 0}, {-3, 3}}},
		{"wrong length ignored", []Model{badBox{toy{"a_"}}, boxed{toy{"b_"}}},
			[][2]float64{{-inf, inf}, {-inf, inf}, {-30, 0}, {-3, 3}}},
	}
	for _, c := range cases {
		m, err := Sum("", c.parts...)
		if err != nil {
			t.Fatal(err)
		}
		b, ok := m.(Bounded)
		if !ok {
			t.Fatalf("%s: Sum is not Bounded", c.name)
		}
		got := b.Domain()
		if len(got) != len(c.want) {
			t.Fatalf("%s: domain %v, want %v", c.name, got, c.want)
		}
		for j := range got {
			if got[j] != c.want[j] {
				t.Errorf("%s: domain[%d] = %v, want %v", c.name, j, got[j], c.want[j])
			}
		}
	}
	if _, ok := Model(toy{}).(Bounded); ok {
		t.Error("toy, which has no Domain method, is Bounded")
	}
}
