package priors

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"tautline/internal/numeric"
)

// shapes lists the prior shapes Parse knows, in the order error messages
// show them, with their argument names.
var shapes = []struct {
	name string
	args []string
}{
	{"uniform", []string{"min", "max"}},
	{"log-uniform", []string{"min", "max"}},
	{"normal", []string{"mu", "sigma"}},
	{"truncnormal", []string{"mu", "sigma", "min", "max"}},
	{"fixed", []string{"value"}},
}

func shapeList() string {
	names := make([]string, len(shapes))
	for i, s := range shapes {
		names[i] = s.name
	}
	return strings.Join(names, ", ")
}

// Parse reads a prior in the syntax String writes:
//
//	uniform(min, max)
//	log-uniform(min, max)             min > 0
//	normal(mu, sigma)                 sigma > 0
//	truncnormal(mu, sigma, min, max)  sigma > 0; min or max may be -inf, inf
//	fixed(value)
//
// A bare number means fixed(number). Numbers are Go/JSON-style floating
// point literals or a fraction of two of them ("13/3"). Whitespace around
// tokens is ignored and shape names are case-insensitive. Every number must
// be finite, except truncnormal's bounds, and min < max.
func Parse(s string) (Prior, error) {
	p, err := parse(s)
	if err != nil {
		return nil, fmt.Errorf("priors: %q: %w", s, err)
	}
	return p, nil
}

func parse(s string) (Prior, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return nil, errors.New("empty prior")
	}
	open := strings.IndexByte(t, '(')
	if open < 0 {
		v, err := parseNum(t)
		if err != nil {
			return nil, fmt.Errorf("neither a number nor shape(args): %w", err)
		}
		if math.IsInf(v, 0) {
			return nil, errors.New("fixed value must be finite")
		}
		return Fixed{v}, nil
	}
	if !strings.HasSuffix(t, ")") {
		return nil, errors.New(`missing ")" at the end`)
	}
	name := strings.ToLower(strings.TrimSpace(t[:open]))
	body := t[open+1 : len(t)-1]
	if strings.ContainsAny(body, "()") {
		return nil, errors.New("unbalanced parentheses")
	}
	var want []string
	for _, sh := range shapes {
		if sh.name == name {
			want = sh.args
		}
	}
	if want == nil {
		return nil, fmt.Errorf("unknown shape %q; want one of %s", name, shapeList())
	}
	fields := strings.Split(body, ",")
	if strings.TrimSpace(body) == "" {
		fields = nil
	}
	if len(fields) != len(want) {
		return nil, fmt.Errorf("%s takes %d arguments (%s), got %d",
			name, len(want), strings.Join(want, ", "), len(fields))
	}
	v := make([]float64, len(fields))
	for i, f := range fields {
		x, err := parseNum(strings.TrimSpace(f))
		if err != nil {
			return nil, fmt.Errorf("%s argument %d (%s): %w", name, i+1, want[i], err)
		}
		bound := name == "truncnormal" && i >= 2
		if math.IsInf(x, 0) && !bound {
			return nil, fmt.Errorf("%s argument %d (%s): must be finite, got %s", name, i+1, want[i], fmtNum(x))
		}
		v[i] = x
	}
	var p Prior
	switch name {
	case "uniform":
		p = Uniform{v[0], v[1]}
	case "log-uniform":
		p = LogUniform{v[0], v[1]}
	case "normal":
		p = Normal{v[0], v[1]}
	case "truncnormal":
		p = TruncNormal{v[0], v[1], v[2], v[3]}
	case "fixed":
		p = Fixed{v[0]}
	}
	if err := Validate(p); err != nil {
		return nil, err
	}
	return p, nil
}

// Validate reports whether the parameters of one of this package's priors
// describe a proper, normalisable distribution. Priors of other types are
// accepted as they are. Parse calls Validate; code that builds priors as
// struct literals should too.
func Validate(p Prior) error {
	switch p := p.(type) {
	case Uniform:
		if !numeric.Finite(p.Min) || !numeric.Finite(p.Max) {
			return fmt.Errorf("uniform: bounds must be finite, got min %s, max %s", fmtNum(p.Min), fmtNum(p.Max))
		}
		if !(p.Min < p.Max) || math.IsInf(p.Max-p.Min, 0) {
			return fmt.Errorf("uniform: need min < max, got min %s, max %s", fmtNum(p.Min), fmtNum(p.Max))
		}
	case LogUniform:
		if !numeric.Finite(p.Min) || !numeric.Finite(p.Max) {
			return fmt.Errorf("log-uniform: bounds must be finite, got min %s, max %s", fmtNum(p.Min), fmtNum(p.Max))
		}
		if !(p.Min > 0) {
			return fmt.Errorf("log-uniform: need min > 0, got %s", fmtNum(p.Min))
		}
		if !(p.Min < p.Max) {
			return fmt.Errorf("log-uniform: need min < max, got min %s, max %s", fmtNum(p.Min), fmtNum(p.Max))
		}
	case Normal:
		if !numeric.Finite(p.Mu) || !numeric.Finite(p.Sigma) {
			return fmt.Errorf("normal: mu and sigma must be finite, got mu %s, sigma %s", fmtNum(p.Mu), fmtNum(p.Sigma))
		}
		if !(p.Sigma > 0) {
			return fmt.Errorf("normal: need sigma > 0, got %s", fmtNum(p.Sigma))
		}
	case TruncNormal:
		if !numeric.Finite(p.Mu) || !numeric.Finite(p.Sigma) {
			return fmt.Errorf("truncnormal: mu and sigma must be finite, got mu %s, sigma %s", fmtNum(p.Mu), fmtNum(p.Sigma))
		}
		if !(p.Sigma > 0) {
			return fmt.Errorf("truncnormal: need sigma > 0, got %s", fmtNum(p.Sigma))
		}
		if math.IsNaN(p.Min) || math.IsNaN(p.Max) || !(p.Min < p.Max) {
			return fmt.Errorf("truncnormal: need min < max, got min %s, max %s", fmtNum(p.Min), fmtNum(p.Max))
		}
		a, b := (p.Min-p.Mu)/p.Sigma, (p.Max-p.Mu)/p.Sigma
		if !(b > a) || math.IsInf(lnNormMass(a, b), 0) || math.IsNaN(lnNormMass(a, b)) {
			return fmt.Errorf("truncnormal: [min, max] = [%s, %s] is too narrow for sigma %s", fmtNum(p.Min), fmtNum(p.Max), fmtNum(p.Sigma))
		}
	case Fixed:
		if !numeric.Finite(p.Value) {
			return fmt.Errorf("fixed: value must be finite, got %s", fmtNum(p.Value))
		}
	}
	return nil
}

// parseNum reads a float64 literal or a fraction "a/b" of two of them.
// It accepts "inf" and "-inf" (callers decide where they are allowed) but
// never NaN.
func parseNum(s string) (float64, error) {
	if s == "" {
		return 0, errors.New("missing number")
	}
	if num, den, ok := strings.Cut(s, "/"); ok {
		a, err := parseNum(strings.TrimSpace(num))
		if err != nil {
			return 0, err
		}
		if strings.Contains(den, "/") {
			return 0, fmt.Errorf("%q: at most one '/' in a fraction", s)
		}
		b, err := parseNum(strings.TrimSpace(den))
		if err != nil {
			return 0, err
		}
		if b == 0 || math.IsInf(a, 0) || math.IsInf(b, 0) {
			return 0, fmt.Errorf("%q: fraction needs finite numerator and non-zero finite denominator", s)
		}
		return a / b, nil
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		var ne *strconv.NumError
		if errors.As(err, &ne) && ne.Err == strconv.ErrRange {
			return 0, fmt.Errorf("%q: out of float64 range", s)
		}
		return 0, fmt.Errorf("%q: not a number", s)
	}
	if math.IsNaN(v) {
		return 0, fmt.Errorf("%q: NaN is not allowed", s)
	}
	if strings.ContainsAny(s, "_xXpP") {
		// Go-only literal forms (underscores, hex floats) would not survive
		// a trip through other tools; keep the syntax plain.
		return 0, fmt.Errorf("%q: not a plain decimal number", s)
	}
	return v, nil
}
