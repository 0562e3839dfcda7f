package stats

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// ParseMasses reads a comma-separated list of credible masses, each a
// fraction in (0, 1) or a percentage in [1, 100), and returns them sorted
// without repeats (empty items are skipped). An error names the item at
// fault.
func ParseMasses(s string) ([]float64, error) {
	var out []float64
	for _, f := range strings.Split(s, ",") {
		if f = strings.TrimSpace(f); f == "" {
			continue
		}
		v, err := strconv.ParseFloat(f, 64)
		if err != nil {
			return nil, fmt.Errorf("%q is not a number", f)
		}
		if v >= 1 {
			v /= 100
		}
		if !(v > 0 && v < 1) {
			return nil, fmt.Errorf("%q is not a mass in (0, 1) or a percentage below 100", f)
		}
		out = append(out, v)
	}
	slices.Sort(out)
	return slices.Compact(out), nil
}
