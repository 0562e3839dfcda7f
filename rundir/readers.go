package rundir

import (
	"bufio"
	"encoding/json"
	"fmt"
	"slices"
	"strconv"
	"strings"

	"tautline/internal/safeio"
	"tautline/sampler/evidence"
)

// ReadTraces reads the columns names of a chain file written by
// chains.Writer (header "# step,walker,..."), keeping steps 1, 1+every,
// 1+2 every, ... of every walker. The result is indexed [parameter][walker]
// and holds the kept values in step order.
func ReadTraces(path string, names []string, every int) ([][][]float64, error) {
	f, err := safeio.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	every = max(every, 1)
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<16), 1<<24)
	if !sc.Scan() {
		return nil, fmt.Errorf("%s: line 1: empty file, want a header", path)
	}
	head := sc.Text()
	if !strings.HasPrefix(head, "#") {
		return nil, fmt.Errorf("%s: line 1: header must start with '#'", path)
	}
	cols := strings.Split(strings.TrimSpace(head[1:]), ",")
	is, iw := slices.Index(cols, "step"), slices.Index(cols, "walker")
	if is < 0 || iw < 0 {
		return nil, fmt.Errorf("%s: line 1: no step or walker column", path)
	}
	idx := make([]int, len(names))
	for k, n := range names {
		if idx[k] = slices.Index(cols, n); idx[k] < 0 {
			return nil, fmt.Errorf("%s: line 1: no column %s", path, n)
		}
	}
	traces := make([][][]float64, len(names))
	line := 1
	for sc.Scan() {
		line++
		fields := strings.Split(sc.Text(), ",")
		if len(fields) != len(cols) {
			return nil, fmt.Errorf("%s: line %d: %d fields, want %d", path, line, len(fields), len(cols))
		}
		step, err1 := strconv.Atoi(fields[is])
		wk, err2 := strconv.Atoi(fields[iw])
		if err1 != nil || err2 != nil || step < 1 || wk < 0 || wk > 1<<20 {
			return nil, fmt.Errorf("%s: line %d: bad step or walker", path, line)
		}
		if (step-1)%every != 0 {
			continue
		}
		for k, c := range idx {
			v, err := strconv.ParseFloat(fields[c], 64)
			if err != nil {
				return nil, fmt.Errorf("%s: line %d: %s: %q is not a number", path, line, names[k], fields[c])
			}
			for len(traces[k]) <= wk {
				traces[k] = append(traces[k], nil)
			}
			traces[k][wk] = append(traces[k][wk], v)
		}
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s: line %d: %w", path, line+1, err)
	}
	if len(names) > 0 && len(traces[0]) == 0 {
		return nil, fmt.Errorf("%s: no rows", path)
	}
	return traces, nil
}

// ReadEvidenceCurve reads the ln L-versus-beta curve of an evidence.json:
// beta, the mean of ln L and its standard error per rung.
func ReadEvidenceCurve(path string) (beta, mean, se []float64, err error) {
	raw, err := safeio.ReadFile(path, safeio.LimitJSON)
	if err != nil {
		return nil, nil, nil, err
	}
	var ev evidence.Result
	if err := json.Unmarshal(raw, &ev); err != nil {
		return nil, nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	for _, c := range ev.Curve {
		beta, mean, se = append(beta, c.Beta), append(mean, c.Mean), append(se, c.MeanErr)
	}
	return beta, mean, se, nil
}

// ReadCurve reads the beta, mean_ln_like and mean_err columns of
// lnl_beta.csv.
func ReadCurve(path string) (beta, mean, se []float64, err error) {
	// lnl_beta.csv holds one short row per rung: the JSON metadata's
	// limit is ample for it.
	raw, err := safeio.ReadFile(path, safeio.LimitJSON)
	if err != nil {
		return nil, nil, nil, err
	}
	return ParseCurve(path, raw)
}

// ParseCurve parses the bytes of lnl_beta.csv; path names it in errors.
func ParseCurve(path string, raw []byte) (beta, mean, se []float64, err error) {
	lines := strings.Split(strings.TrimSpace(string(raw)), "\n")
	if len(lines) < 2 {
		return nil, nil, nil, fmt.Errorf("%s: no rungs", path)
	}
	head := strings.Split(strings.TrimSpace(lines[0]), ",")
	ib, im, ie := slices.Index(head, "beta"), slices.Index(head, "mean_ln_like"), slices.Index(head, "mean_err")
	if ib < 0 || im < 0 || ie < 0 {
		return nil, nil, nil, fmt.Errorf("%s: line 1: want columns beta, mean_ln_like, mean_err", path)
	}
	for i, l := range lines[1:] {
		f := strings.Split(strings.TrimSpace(l), ",")
		if len(f) != len(head) {
			return nil, nil, nil, fmt.Errorf("%s: line %d: %d fields, want %d", path, i+2, len(f), len(head))
		}
		var v [3]float64
		for j, c := range []int{ib, im, ie} {
			if v[j], err = strconv.ParseFloat(f[c], 64); err != nil {
				return nil, nil, nil, fmt.Errorf("%s: line %d: %s: %q is not a number", path, i+2, head[c], f[c])
			}
		}
		beta, mean, se = append(beta, v[0]), append(mean, v[1]), append(se, v[2])
	}
	return beta, mean, se, nil
}
