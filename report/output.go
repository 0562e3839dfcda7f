package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"tautline/chains"
	"tautline/stats"
)

// Metadata identifies the run a product comes from; it is copied into every
// JSON file.
type Metadata struct {
	Run     string            `json:"run"`
	Model   string            `json:"model"`
	Dataset string            `json:"dataset"`
	Version string            `json:"tautline_version"`
	Extra   map[string]string `json:"extra,omitempty"`
}

// Num is a float64 that encodes NaN and ±Inf as JSON null (JSON has no
// non-finite numbers); every JSON file of the report uses it.
type Num float64

// MarshalJSON implements json.Marshaler.
func (v Num) MarshalJSON() ([]byte, error) {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

func nums(x []float64) []Num {
	out := make([]Num, len(x))
	for i, v := range x {
		out[i] = Num(v)
	}
	return out
}

// ffmt formats a value for CSV; NaN and ±Inf are written as "nan", "inf",
// "-inf".
func ffmt(v float64) string {
	switch {
	case math.IsNaN(v):
		return "nan"
	case math.IsInf(v, 1):
		return "inf"
	case math.IsInf(v, -1):
		return "-inf"
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// writeFileAtomic writes data to path through chains.WriteFileAtomic
// (temporary file, fsync, rename), so that readers never see a partial file.
func writeFileAtomic(path string, data []byte) error {
	if err := chains.WriteFileAtomic(path, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	}); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	return nil
}

// jsonFile is the set of layouts writeJSON accepts: every JSON file of the
// report is one of these typed structs.
type jsonFile interface {
	summaryFile | marginal1DFile | marginal2DFile | exclusionFile | comparisonFile
}

func writeJSON[T jsonFile](path string, v T) error {
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return fmt.Errorf("report: encoding %s: %w", path, err)
	}
	return writeFileAtomic(path, append(b, '\n'))
}

func writeCSV(path string, header []string, rows [][]string) error {
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	w.Write(header)
	w.WriteAll(rows)
	if err := w.Error(); err != nil {
		return fmt.Errorf("report: encoding %s: %w", path, err)
	}
	return writeFileAtomic(path, buf.Bytes())
}

// FileStem turns a parameter name into a file-name-safe stem: characters
// other than letters, digits, '-', '_' and '.' become '_'.
func FileStem(name string) string {
	s := strings.Map(func(r rune) rune {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '-', r == '_', r == '.':
			return r
		}
		return '_'
	}, name)
	if s == "" || s == "." || s == ".." {
		s = "_"
	}
	return s
}

type intervalJSON struct {
	Lo Num `json:"lo"`
	Hi Num `json:"hi"`
}

func ivj(iv stats.Interval) intervalJSON { return intervalJSON{Num(iv.Lo), Num(iv.Hi)} }

type summaryJSON struct {
	Name      string       `json:"name"`
	Label     string       `json:"label,omitempty"`
	Unit      string       `json:"unit,omitempty"`
	N         int          `json:"n"`
	Median    Num          `json:"median"`
	Mean      Num          `json:"mean"`
	Std       Num          `json:"std"`
	Mode      Num          `json:"mode"`
	ET68      intervalJSON `json:"equal_tailed_68"`
	ET95      intervalJSON `json:"equal_tailed_95"`
	HDI68     intervalJSON `json:"hdi_68"`
	HDI95     intervalJSON `json:"hdi_95"`
	EdgeRatio [2]Num       `json:"edge_density_ratio"`
	Rails     string       `json:"rails"`
	Limit     Num          `json:"limit"`
	LimitKind string       `json:"limit_kind"`
	LimitMass Num          `json:"limit_mass"`
}

// WriteSummaries writes summary.csv and summary.json into dir.
func WriteSummaries(dir string, meta Metadata, ss []stats.Summary) error {
	header := []string{"name", "n", "median", "mean", "std", "mode",
		"et68_lo", "et68_hi", "et95_lo", "et95_hi", "hdi68_lo", "hdi68_hi", "hdi95_lo", "hdi95_hi",
		"edge_ratio_lo", "edge_ratio_hi", "rails", "limit_kind", "limit", "limit_mass"}
	rows := make([][]string, len(ss))
	js := make([]summaryJSON, len(ss))
	for i, s := range ss {
		rows[i] = []string{s.Name, strconv.Itoa(s.N), ffmt(s.Median), ffmt(s.Mean), ffmt(s.Std), ffmt(s.Mode),
			ffmt(s.ET68.Lo), ffmt(s.ET68.Hi), ffmt(s.ET95.Lo), ffmt(s.ET95.Hi),
			ffmt(s.HDI68.Lo), ffmt(s.HDI68.Hi), ffmt(s.HDI95.Lo), ffmt(s.HDI95.Hi),
			ffmt(s.EdgeRatio[0]), ffmt(s.EdgeRatio[1]), s.Rails.String(), s.LimitKind(), ffmt(s.Limit), ffmt(s.LimitMass)}
		js[i] = summaryJSON{Name: s.Name, Label: s.Label, Unit: s.Unit, N: s.N, Median: Num(s.Median), Mean: Num(s.Mean),
			Std: Num(s.Std), Mode: Num(s.Mode), ET68: ivj(s.ET68), ET95: ivj(s.ET95), HDI68: ivj(s.HDI68), HDI95: ivj(s.HDI95),
			EdgeRatio: [2]Num{Num(s.EdgeRatio[0]), Num(s.EdgeRatio[1])}, Rails: s.Rails.String(),
			Limit: Num(s.Limit), LimitKind: s.LimitKind(), LimitMass: Num(s.LimitMass)}
	}
	if err := writeCSV(filepath.Join(dir, "summary.csv"), header, rows); err != nil {
		return err
	}
	return writeJSON(filepath.Join(dir, "summary.json"), summaryFile{meta, js})
}

// WritePosterior writes the summaries of post and every 1-D and 2-D marginal as CSV and JSON
// into dir, creating it if needed. progress, when not nil, is called after
// each file pair.
func WritePosterior(dir string, meta Metadata, p *stats.Posterior, progress func(done, total int)) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	total := 1 + len(p.Marginals) + len(p.Pairs)
	done := 0
	step := func() {
		done++
		if progress != nil {
			progress(done, total)
		}
	}
	if err := WriteSummaries(dir, meta, p.Summaries()); err != nil {
		return err
	}
	step()
	for i, m := range p.Marginals {
		if err := WriteMarginal1D(dir, meta, p.Params[i].Name, m.Density); err != nil {
			return err
		}
		step()
	}
	for _, q := range p.Pairs {
		if err := WriteMarginal2D(dir, meta, p.Params[q.I].Name, p.Params[q.J].Name, q.Density, p.Masses, q.Levels); err != nil {
			return err
		}
		step()
	}
	return nil
}

// WriteMarginal1D writes marginal1d_<name>.csv (columns x, density) and
// marginal1d_<name>.json (grid, histogram, bandwidth) into dir.
func WriteMarginal1D(dir string, meta Metadata, name string, d stats.Density1D) error {
	stem := "marginal1d_" + FileStem(name)
	rows := make([][]string, len(d.X))
	for i := range d.X {
		rows[i] = []string{ffmt(d.X[i]), ffmt(d.P[i])}
	}
	if err := writeCSV(filepath.Join(dir, stem+".csv"), []string{"x", "density"}, rows); err != nil {
		return err
	}
	return writeJSON(filepath.Join(dir, stem+".json"), marginal1DFile{meta, name, nums(d.X), nums(d.P), Num(d.Bandwidth), d.Rule, d.Reflect, nums(d.Edges), nums(d.Hist), d.N, d.Dropped})
}

// WriteMarginal2D writes marginal2d_<x>__<y>.csv (long format: x, y,
// density) and marginal2d_<x>__<y>.json (grid, density rows, credible
// masses and their density levels) into dir.
func WriteMarginal2D(dir string, meta Metadata, nameX, nameY string, d stats.Density2D, masses, levels []float64) error {
	if len(masses) != len(levels) {
		return fmt.Errorf("report: %d credible masses but %d levels", len(masses), len(levels))
	}
	stem := "marginal2d_" + FileStem(nameX) + "__" + FileStem(nameY)
	nx := len(d.X)
	rows := make([][]string, 0, len(d.P))
	grid := make([][]Num, len(d.Y))
	for r, y := range d.Y {
		grid[r] = nums(d.P[r*nx : (r+1)*nx])
		for c, x := range d.X {
			rows = append(rows, []string{ffmt(x), ffmt(y), ffmt(d.P[r*nx+c])})
		}
	}
	if err := writeCSV(filepath.Join(dir, stem+".csv"), []string{"x", "y", "density"}, rows); err != nil {
		return err
	}
	return writeJSON(filepath.Join(dir, stem+".json"), marginal2DFile{Meta: meta, NameX: nameX, NameY: nameY, GX: nums(d.X), GY: nums(d.Y), Density: grid,
		H: [3]Num{Num(d.H[0]), Num(d.H[1]), Num(d.H[2])}, Rule: d.Rule, Reflect: d.Reflect,
		Masses: nums(masses), Levels: nums(levels), N: d.N})
}

// WriteExclusion writes exclusion_<y>_vs_<x>.csv and .json into dir.
func WriteExclusion(dir string, meta Metadata, nameX, nameY string, mass float64, pts []stats.ExclusionPoint) error {
	stem := "exclusion_" + FileStem(nameY) + "_vs_" + FileStem(nameX)
	rows := make([][]string, len(pts))
	js := make([]slicePointJSON, len(pts))
	for i, p := range pts {
		rows[i] = []string{ffmt(p.X), ffmt(p.Lo), ffmt(p.Hi), strconv.Itoa(p.N), ffmt(p.Limit)}
		js[i] = slicePointJSON{Num(p.X), Num(p.Lo), Num(p.Hi), p.N, Num(p.Limit)}
	}
	if err := writeCSV(filepath.Join(dir, stem+".csv"), []string{"x", "slice_lo", "slice_hi", "n", "limit"}, rows); err != nil {
		return err
	}
	return writeJSON(filepath.Join(dir, stem+".json"), exclusionFile{meta, nameX, nameY, Num(mass), js})
}

// WriteSummaryTable writes the LaTeX table of SummaryTable to
// dir/summary.tex.
func WriteSummaryTable(dir string, ss []stats.Summary, sig int) error {
	return writeFileAtomic(filepath.Join(dir, "summary.tex"), []byte(SummaryTable(ss, sig)))
}

// WriteComparison writes the model comparison against the model named
// reference as comparison.csv, comparison.json and comparison.tex into dir,
// all three quoting the same ln B (see ComparisonTable).
func WriteComparison(dir string, meta Metadata, rows []Evidence, reference string, sig int) error {
	tex, err := ComparisonTable(rows, reference, sig)
	if err != nil {
		return err
	}
	js := make([]comparisonRowJSON, len(rows))
	recs := make([][]string, len(rows))
	for i, r := range rows {
		b, e, v := r.LnB, r.LnBErr, r.Reading
		if r.Model == reference {
			b, e, v = 0, 0, "reference"
		}
		js[i] = comparisonRowJSON{r.Model, Num(r.LnZTI), Num(r.LnZTIErr), Num(r.LnZSS), Num(r.LnZSSErr), Num(b), Num(e), v}
		recs[i] = []string{r.Model, ffmt(r.LnZTI), ffmt(r.LnZTIErr), ffmt(r.LnZSS), ffmt(r.LnZSSErr), ffmt(b), ffmt(e), v}
	}
	if err := writeCSV(filepath.Join(dir, "comparison.csv"),
		[]string{"model", "ln_z_ti", "ln_z_ti_err", "ln_z_ss", "ln_z_ss_err", "ln_b", "ln_b_err", "evidence"}, recs); err != nil {
		return err
	}
	if err := writeJSON(filepath.Join(dir, "comparison.json"), comparisonFile{meta, reference, js}); err != nil {
		return err
	}
	return writeFileAtomic(filepath.Join(dir, "comparison.tex"), []byte(tex))
}

// The layouts of the JSON files. Field order is the order in the files.
type (
	// summaryFile is summary.json.
	summaryFile struct {
		Meta       Metadata      `json:"metadata"`
		Parameters []summaryJSON `json:"parameters"`
	}
	// marginal1DFile is marginal1d_<name>.json.
	marginal1DFile struct {
		Meta      Metadata `json:"metadata"`
		Name      string   `json:"name"`
		X         []Num    `json:"x"`
		Density   []Num    `json:"density"`
		Bandwidth Num      `json:"bandwidth"`
		Rule      string   `json:"bandwidth_rule"`
		Reflect   [2]bool  `json:"reflected_at_bounds"`
		Edges     []Num    `json:"histogram_edges"`
		Hist      []Num    `json:"histogram_density"`
		N         int      `json:"n"`
		Dropped   int      `json:"dropped"`
	}
	// marginal2DFile is marginal2d_<x>__<y>.json.
	marginal2DFile struct {
		Meta    Metadata   `json:"metadata"`
		NameX   string     `json:"x_name"`
		NameY   string     `json:"y_name"`
		GX      []Num      `json:"x"`
		GY      []Num      `json:"y"`
		Density [][]Num    `json:"density_rows"`
		H       [3]Num     `json:"kernel_covariance_xx_xy_yy"`
		Rule    string     `json:"bandwidth_rule"`
		Reflect [2][2]bool `json:"reflected_at_bounds"`
		Masses  []Num      `json:"credible_masses"`
		Levels  []Num      `json:"density_levels"`
		N       int        `json:"n"`
	}
	// slicePointJSON is one slice of an exclusion curve.
	slicePointJSON struct {
		X     Num `json:"x"`
		Lo    Num `json:"slice_lo"`
		Hi    Num `json:"slice_hi"`
		N     int `json:"n"`
		Limit Num `json:"limit"`
	}
	// exclusionFile is exclusion_<y>_vs_<x>.json.
	exclusionFile struct {
		Meta   Metadata         `json:"metadata"`
		NameX  string           `json:"x_name"`
		NameY  string           `json:"y_name"`
		Mass   Num              `json:"limit_mass"`
		Points []slicePointJSON `json:"slices"`
	}
	// comparisonRowJSON is one model of comparison.json.
	comparisonRowJSON struct {
		Model    string `json:"model"`
		LnZTI    Num    `json:"ln_z_ti"`
		LnZTIErr Num    `json:"ln_z_ti_err"`
		LnZSS    Num    `json:"ln_z_ss"`
		LnZSSErr Num    `json:"ln_z_ss_err"`
		LnB      Num    `json:"ln_b"`
		LnBErr   Num    `json:"ln_b_err"`
		Verdict  string `json:"evidence"`
	}
	// comparisonFile is comparison.json.
	comparisonFile struct {
		Meta      Metadata            `json:"metadata"`
		Reference string              `json:"reference"`
		Models    []comparisonRowJSON `json:"models"`
	}
)
