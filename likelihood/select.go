package likelihood

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// Select returns a new data set holding only the bins numbered in bins
// (1-based, as in the tables), in increasing order of frequency whatever
// the order given. The bins' data are copied, so the result shares nothing
// with ds. Its name gets the suffix "[bins L]" and its provenance records
// the selection and the parent's name and digest, so that run metadata say
// which part of which data set was used; its SHA256 is empty because no
// file holds it.
//
// Selecting the lowest n bins of a harmonic data set keeps f_i = i/T; any
// other selection is marked Irregular (its first bin is no longer 1/T).
// Empty lists, duplicates and numbers outside 1..n are errors.
func (ds *Dataset) Select(bins []int) (*Dataset, error) {
	n := len(ds.Bins)
	if len(bins) == 0 {
		return nil, fmt.Errorf("likelihood: data set %q: bin selection is empty; name at least one of the bins 1..%d", ds.Name, n)
	}
	sel := slices.Clone(bins)
	for k, b := range sel {
		if b < 1 || b > n {
			return nil, fmt.Errorf("likelihood: data set %q: bin selection: entry %d: bin %d does not exist; the data set has bins 1..%d", ds.Name, k+1, b, n)
		}
	}
	slices.Sort(sel)
	for k := 1; k < len(sel); k++ {
		if sel[k] == sel[k-1] {
			return nil, fmt.Errorf("likelihood: data set %q: bin selection: bin %d is named twice", ds.Name, sel[k])
		}
	}
	if len(ds.Freqs) != n {
		return nil, fmt.Errorf("likelihood: data set %q: %d bins for %d frequencies", ds.Name, n, len(ds.Freqs))
	}
	lowest := sel[len(sel)-1] == len(sel)
	label := binList(sel)
	out := &Dataset{
		Name:      ds.Name + "[bins " + label + "]",
		Span:      ds.Span,
		Freqs:     make([]float64, len(sel)),
		Irregular: ds.Irregular || !lowest,
		PriorMin:  ds.PriorMin,
		PriorMax:  ds.PriorMax,
		Bins:      make([]Bin, len(sel)),
	}
	parent := fmt.Sprintf("%q", ds.Name)
	if ds.SHA256 != "" {
		parent += " (sha256 " + ds.SHA256 + ")"
	}
	out.Provenance = fmt.Sprintf("%s; bins %s of the %d bins of data set %s", ds.Provenance, label, n, parent)
	for k, b := range sel {
		out.Freqs[k] = ds.Freqs[b-1]
		src := ds.Bins[b-1]
		out.Bins[k] = Bin{
			Kind:    src.Kind,
			Samples: slices.Clone(src.Samples),
			Grid:    slices.Clone(src.Grid),
			Density: slices.Clone(src.Density),
			Mean:    src.Mean,
			SD:      src.SD,
		}
	}
	return out, nil
}

// SelectLowest returns the data set of the lowest n bins (Select of
// 1..n).
func (ds *Dataset) SelectLowest(n int) (*Dataset, error) {
	if n < 1 || n > len(ds.Bins) {
		return nil, fmt.Errorf("likelihood: data set %q: lowest %d bins: need 1..%d", ds.Name, n, len(ds.Bins))
	}
	bins := make([]int, n)
	for i := range bins {
		bins[i] = i + 1
	}
	return ds.Select(bins)
}

// ParseBins reads a bin selection such as "1-5", "1,3,7-9" or "lowest:5"
// (the lowest five) for a data set of n bins. Bin numbers are 1-based.
// Ranges are inclusive; the result is in the order written, checked by
// Select.
func ParseBins(s string, n int) ([]int, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return nil, fmt.Errorf("likelihood: bin selection is empty; write e.g. \"1-5\", \"1,3,7-9\" or \"lowest:5\"")
	}
	if rest, ok := strings.CutPrefix(s, "lowest:"); ok {
		k, err := strconv.Atoi(strings.TrimSpace(rest))
		if err != nil || k < 1 {
			return nil, fmt.Errorf("likelihood: bin selection %q: lowest: needs a whole number >= 1", s)
		}
		if k > n {
			return nil, fmt.Errorf("likelihood: bin selection %q: the data set has only %d bins", s, n)
		}
		out := make([]int, k)
		for i := range out {
			out[i] = i + 1
		}
		return out, nil
	}
	var out []int
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		a, b, isRange := strings.Cut(part, "-")
		lo, err := strconv.Atoi(strings.TrimSpace(a))
		if err != nil {
			return nil, fmt.Errorf("likelihood: bin selection %q: %q is not a bin number or range", s, part)
		}
		hi := lo
		if isRange {
			if hi, err = strconv.Atoi(strings.TrimSpace(b)); err != nil {
				return nil, fmt.Errorf("likelihood: bin selection %q: %q is not a bin number or range", s, part)
			}
			if hi < lo {
				return nil, fmt.Errorf("likelihood: bin selection %q: range %q runs backwards", s, part)
			}
		}
		if lo < 1 || hi > n {
			return nil, fmt.Errorf("likelihood: bin selection %q: %q reaches outside the bins 1..%d", s, part, n)
		}
		for b := lo; b <= hi; b++ {
			out = append(out, b)
		}
	}
	return out, nil
}

// binList writes sorted bin numbers compactly: "1-5", "2,4,7-9".
func binList(s []int) string {
	var b strings.Builder
	for k := 0; k < len(s); {
		e := k
		for e+1 < len(s) && s[e+1] == s[e]+1 {
			e++
		}
		if b.Len() > 0 {
			b.WriteByte(',')
		}
		b.WriteString(strconv.Itoa(s[k]))
		if e > k {
			b.WriteByte('-')
			b.WriteString(strconv.Itoa(s[e]))
		}
		k = e + 1
	}
	return b.String()
}
