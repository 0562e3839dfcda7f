package runconfig

import (
	"fmt"
	"strings"

	"tautline/models/gw"
	"tautline/models/registry"
)

// Frequencies returns the frequencies in Hz that list names, comma-separated
// and increasing (numbers as registry.ParseNumber reads them), or, for an
// empty list, n frequencies spaced logarithmically from fmin to fmax
// (gw.LogFrequencies, at most gw.MaxLogFrequencies). The messages name the
// spectrum command's --freqs, --fmin, --fmax and --n.
func Frequencies(list string, fmin, fmax float64, n int) ([]float64, error) {
	if strings.TrimSpace(list) != "" {
		var fs []float64
		for _, s := range strings.Split(list, ",") {
			f, err := registry.ParseNumber(s)
			if err != nil || f <= 0 {
				return nil, fmt.Errorf("--freqs: %q is not a positive frequency in Hz", s)
			}
			if len(fs) > 0 && f <= fs[len(fs)-1] {
				return nil, fmt.Errorf("--freqs: must increase, got %g after %g", f, fs[len(fs)-1])
			}
			fs = append(fs, f)
		}
		return fs, nil
	}
	if n > gw.MaxLogFrequencies {
		return nil, fmt.Errorf("--n %d is more than the %d frequencies a grid may have", n, gw.MaxLogFrequencies)
	}
	if !(fmin > 0) || !(fmax > fmin) || n < 1 {
		return nil, fmt.Errorf("want 0 < --fmin < --fmax and --n >= 1, got %g, %g, %d", fmin, fmax, n)
	}
	return gw.LogFrequencies(fmin, fmax, n), nil
}
