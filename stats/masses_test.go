package stats

import (
	"slices"
	"strings"
	"testing"
)

// TestParseMasses covers fractions, percentages, order, repeats and the
// refusals.
func TestParseMasses(t *testing.T) {
	for _, c := range []struct {
		in   string
		want []float64
		err  string
	}{
		{"", nil, ""},
		{"0.95, 68", []float64{0.68, 0.95}, ""},
		{"0.5,50,,", []float64{0.5}, ""},
		{"x", nil, `"x" is not a number`},
		{"100", nil, `"100" is not a mass in (0, 1) or a percentage below 100`},
		{"-1", nil, "is not a mass"},
		{"nan", nil, "is not a mass"},
	} {
		got, err := ParseMasses(c.in)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("ParseMasses(%q) error %v, want %q", c.in, err, c.err)
			}
			continue
		}
		if err != nil || !slices.Equal(got, c.want) {
			t.Errorf("ParseMasses(%q) = %v, %v; want %v", c.in, got, err, c.want)
		}
	}
}

// FuzzParseMasses checks that ParseMasses never panics and that what it
// accepts is a sorted list of distinct masses in (0, 1).
func FuzzParseMasses(f *testing.F) {
	for _, s := range []string{"0.68,0.95", "68,95", "0.393,0.865", "", ",", "1", "100", "-1", "nan", "inf", "0.5,0.5", "1e-300"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		ms, err := ParseMasses(s)
		if err != nil {
			return
		}
		for i, m := range ms {
			if !(m > 0 && m < 1) || (i > 0 && !(m > ms[i-1])) {
				t.Fatalf("%q gave masses %v", s, ms)
			}
		}
	})
}
