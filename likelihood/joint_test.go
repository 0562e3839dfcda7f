package likelihood

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"tautline/models/gw"
	"tautline/priors"
)

// jointParts returns two data sets that differ in everything a data set
// can differ in: span, number of bins, representation and prior range.
func jointParts(t testing.TB) []Part {
	t.Helper()
	a := gaussData(6) // 15 yr, 6 Gaussian bins, prior [-10, -4]
	a.Name = "a"
	b := &Dataset{Name: "b", Provenance: "invented for tests", Span: 11 * gw.JulianYear, PriorMin: -9, PriorMax: -3}
	r := rand.New(rand.NewPCG(7, 8))
	for i := range 9 {
		b.Freqs = append(b.Freqs, float64(i+1)/b.Span)
		s := make([]float64, 400)
		for k := range s {
			s[k] = math.Min(math.Max(-7.2+0.05*float64(i)+0.4*r.NormFloat64(), -9), -3)
		}
		b.Bins = append(b.Bins, Bin{Kind: Samples, Samples: s})
	}
	var parts []Part
	for _, ds := range []*Dataset{a, b} {
		fs, err := NewFreeSpectrum(ds, Options{})
		if err != nil {
			t.Fatal(err)
		}
		parts = append(parts, Part{Data: ds, FS: fs})
	}
	return parts
}

// TestJointIsSum checks ln L(a and b) = ln L(a) + ln L(b) at 100 random
// points. The joint sum adds the parts' values in order starting from 0, and
// 0 + x = x exactly in IEEE arithmetic, so for two data sets the result must
// be bitwise equal to the separately computed sum: no tolerance.
func TestJointIsSum(t *testing.T) {
	parts := jointParts(t)
	m := powerLaw{pri: []priors.Prior{uniform{-18, -12}, uniform{0, 7}}}
	j, err := NewJoint(m, nil, parts, testH0)
	if err != nil {
		t.Fatal(err)
	}
	var single []*Posterior
	for _, p := range parts {
		post, err := NewPosterior(m, nil, p.Data, p.FS, testH0)
		if err != nil {
			t.Fatal(err)
		}
		single = append(single, post)
	}
	r := rand.New(rand.NewPCG(1, 2))
	x := make([]float64, j.Dim())
	finite := 0
	for range 100 {
		j.Draw(r, x)
		want := single[0].LogLike(x) + single[1].LogLike(x)
		got := j.LogLike(x)
		if math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("LogLike(%v) = %.17g, want %.17g", x, got, want)
		}
		if !math.IsInf(got, 0) {
			finite++
		} else if !aboveRange(t, single, x) {
			t.Errorf("LogLike(%v) = %g, but no part's model lies above its prior range", x, got)
		}
		if ex := j.LogLikeExact(x); math.Float64bits(ex) != math.Float64bits(got) {
			t.Errorf("LogLikeExact(%v) = %g, LogLike %g: equal without a penalty", x, ex, got)
		}
		if lp := j.LogPrior(x); lp != single[0].LogPrior(x) {
			t.Fatalf("LogPrior(%v) = %g, want %g", x, lp, single[0].LogPrior(x))
		}
	}
	// Above-range draws have zero likelihood; most of this prior is in range.
	if finite < 50 {
		t.Errorf("only %d of 100 prior draws scored finitely", finite)
	}
	if got := j.LogLike([]float64{-14, 8}); !math.IsInf(got, -1) {
		t.Errorf("LogLike outside the domain = %g, want -Inf", got)
	}
	if j.Dim() != 2 || strings.Join(j.FreeNames(), ",") != "log10_A,gamma" || len(j.Parts()) != 2 {
		t.Errorf("Dim %d, FreeNames %v, %d parts", j.Dim(), j.FreeNames(), len(j.Parts()))
	}
	if a := testing.AllocsPerRun(200, func() { j.LogLike(x) }); a != 0 && !raceEnabled {
		t.Errorf("Joint.LogLike allocates %g times per call, want 0", a)
	}
}

// aboveRange reports whether x puts some part's model above that part's
// prior range of log10 rho in a bin.
func aboveRange(t *testing.T, parts []*Posterior, x []float64) bool {
	t.Helper()
	for _, p := range parts {
		rho, err := p.Log10Rho(x, nil)
		if err != nil {
			t.Fatal(err)
		}
		_, hi := p.FreeSpectrum().Range()
		for _, r := range rho {
			if r > hi {
				return true
			}
		}
	}
	return false
}

func TestNewJointRefuses(t *testing.T) {
	parts := jointParts(t)
	m := powerLaw{pri: []priors.Prior{uniform{-18, -12}, uniform{0, 7}}}
	twice := []Part{parts[0], parts[0]}
	sameDigest := []Part{parts[0], {Data: &Dataset{}, FS: parts[1].FS}}
	*sameDigest[1].Data = *parts[1].Data
	sameDigest[0].Data = &Dataset{}
	*sameDigest[0].Data = *parts[0].Data
	sameDigest[0].Data.SHA256, sameDigest[1].Data.SHA256 = "ab12", "ab12"
	for _, c := range []struct {
		parts []Part
		want  string
	}{
		{nil, "likelihood: joint analysis needs at least one data set"},
		{[]Part{{Data: parts[0].Data}}, "likelihood: joint analysis: data set 1: needs a data set and its free spectrum"},
		{twice, `likelihood: joint analysis: data sets 1 and 2 are both named "a"; give each data set once (and distinct names)`},
		{sameDigest, `likelihood: joint analysis: data sets 1 ("a") and 2 ("b") have the same digest ab12; the same data would count twice`},
		{[]Part{parts[0], {Data: parts[1].Data, FS: parts[0].FS}}, `likelihood: joint analysis: data set "b": likelihood: free spectrum has 6 bins but data set "b" has 9`},
	} {
		_, err := NewJoint(m, nil, c.parts, testH0)
		if err == nil || err.Error() != c.want {
			t.Errorf("got %v\nwant %s", err, c.want)
		}
	}
}

func BenchmarkJointLogLike(b *testing.B) {
	parts := jointParts(b)
	m := powerLaw{pri: []priors.Prior{uniform{-18, -12}, uniform{0, 7}}}
	j, err := NewJoint(m, nil, parts, testH0)
	if err != nil {
		b.Fatal(err)
	}
	x := []float64{-14.5, 4}
	b.ReportAllocs()
	s := 0.0
	for b.Loop() {
		s += j.LogLike(x)
	}
	if math.IsNaN(s) {
		b.Fatal("NaN")
	}
}
