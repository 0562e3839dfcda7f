package report

import (
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"tautline/stats"
	"time"

	"github.com/sirupsen/logrus"

	"tautline/chains"
	"tautline/likelihood"
	"tautline/models"
	"tautline/priors"
	"tautline/rundir"
)

// RunOptions configure WriteRun.
type RunOptions struct {
	// Out is the report folder.
	Out string
	// Formats and DPI are the figures' formats and PNG resolution.
	Formats []string
	DPI     int
	// Masses are the credible masses of the 2-D contours (nil: 68 % and
	// 95 %); SmoothedMass places them by the smoothed density's mass.
	Masses       []float64
	SmoothedMass bool
	// Truths marks true parameter values in the corner figures.
	Truths map[string]float64
	// Draws are the posterior draws pushed through each model for the
	// posterior-predictive spectrum; BinDraws the quantile samples per bin
	// of a data set given as a grid or a normal summary.
	Draws, BinDraws int
	// Sig is the significant figures of the smaller error in LaTeX tables.
	Sig int
	// Slices and LimitMass set the exclusion curve: slices of log10_alpha
	// and the credible mass of the upper limit on log10_Gmu.
	Slices    int
	LimitMass float64
	// Version is the program version recorded in every JSON file.
	Version string
	// Log receives progress and warnings.
	Log *logrus.Logger
	// Rebuild, if not nil, rebuilds each model's data set and posterior
	// for the spectrum figure; Params, if not nil, gives the parameters'
	// labels and units otherwise.
	Rebuild Rebuilder
	Params  func(m *rundir.Model) ([]models.Param, error)
}

// A Rebuilder rebuilds a run's data sets and posteriors from the
// configuration the run recorded.
type Rebuilder interface {
	// DataSpec names the model's data sets as its configuration gives them.
	DataSpec(m *rundir.Model) string
	// Problem rebuilds the model's data sets and, for each, its posterior.
	Problem(m *rundir.Model) (Rebuilt, error)
}

// Rebuilt is a run's problem rebuilt for the spectrum figure: the data
// sets in the run's order (bins selected as in the run), each one's
// posterior, and the digest the run recorded for such data (its
// DataSHA256), to tell whether the files have changed since.
type Rebuilt struct {
	Data   []*likelihood.Dataset
	Posts  []*likelihood.Posterior
	SHA256 string
}

// WriteRun writes the report of run into o.Out: per model the summaries,
// marginals, LaTeX table, samples, corner, trace or ln L-versus-beta
// figures and exclusion curve; for the run the spectrum with every model's
// posterior-predictive band, the exclusion figure, the comparison table and
// json. It returns the files written, relative to o.Out.
func WriteRun(run *rundir.Run, o RunOptions) ([]string, error) {
	w := &reportWriter{lg: o.Log, o: o, run: run, smoothed: o.SmoothedMass}
	if err := w.write(); err != nil {
		return nil, err
	}
	return w.files, nil
}

// reportWriter writes one run's
type reportWriter struct {
	lg       *logrus.Logger
	o        RunOptions
	run      *rundir.Run
	smoothed bool
	files    []string          // written, relative to o.out
	bands    [][]ModelBand     // [model][data set]
	excl     []*exclusionGroup // one figure per slicing parameter, in the order first seen
	data     []*likelihood.Dataset
}

// exclusionGroup collects the exclusion curves of the models that slice
// log10_Gmu by the same parameter, which share one figure.
type exclusionGroup struct {
	x      string // the slicing parameter
	curves []NamedExclusion
	top    float64
	labels [2]string
}

func (w *reportWriter) add(paths ...string) {
	for _, p := range paths {
		if r, err := filepath.Rel(w.o.Out, p); err == nil {
			p = r
		}
		w.files = append(w.files, filepath.ToSlash(p))
	}
}

func (w *reportWriter) figOpts() FigureOptions {
	return FigureOptions{Formats: w.o.Formats, DPI: w.o.DPI}
}

// stepLog returns a progress function that logs at most every 10 s and at
// the end.
func (w *reportWriter) stepLog(model, what string) func(done, total int) {
	last := time.Now()
	return func(done, total int) {
		if done < total && time.Since(last) < 10*time.Second {
			return
		}
		last = time.Now()
		w.lg.WithFields(logrus.Fields{"model": model, "done": done, "of": total}).Info(what)
	}
}

func (w *reportWriter) meta(model string) Metadata {
	run, err := filepath.Abs(w.run.Dir)
	if err != nil {
		run = w.run.Dir
	}
	data, sha := "", ""
	if len(w.run.Models) > 0 {
		data, sha = w.run.Models[0].Data, w.run.Models[0].DataSHA256
	}
	for _, m := range w.run.Models {
		if m.Name == model {
			data, sha = m.Data, m.DataSHA256
		}
	}
	return Metadata{Run: run, Model: model, Dataset: data, Version: w.o.Version,
		Extra: map[string]string{"run_kind": w.run.Kind, "data_sha256": sha}}
}

func (w *reportWriter) write() error {
	if err := os.MkdirAll(w.o.Out, 0o755); err != nil {
		return fmt.Errorf("report folder: %w", err)
	}
	w.lg.WithFields(logrus.Fields{"run": w.run.Dir, "kind": w.run.Kind, "models": len(w.run.Models), "out": w.o.Out}).Info("report")
	for _, m := range w.run.Models {
		if err := w.writeModel(m); err != nil {
			return fmt.Errorf("model %s: %w", m.Name, err)
		}
	}
	if w.data != nil && len(w.bands) > 0 {
		if err := w.writeSpectrum(); err != nil {
			return err
		}
	}
	for _, g := range w.excl {
		stem := "exclusion"
		if g.x != exclusionX[0] {
			stem += "_" + FileStem(g.x)
		}
		files, err := ExclusionFigure(filepath.Join(w.o.Out, stem), g.labels[0], g.labels[1], g.curves, g.top, w.figOpts())
		if err != nil {
			return err
		}
		w.add(files...)
	}
	if w.run.Comparison != nil {
		if err := w.writeComparison(); err != nil {
			return err
		}
	}
	return w.writeIndex()
}

// reportExclY is the parameter whose one-sided upper limit the exclusion
// curve gives, in slices of the first of exclusionX that the model samples:
// the loop size of the one-scale model, the decay parameter of metastable
// strings, the reconnection probability of the calibrated-loop model.
const reportExclY = "log10_Gmu"

var exclusionX = [...]string{"log10_alpha", "sqrt_kappa_m", "log10_P"}

func (w *reportWriter) writeModel(m *rundir.Model) error {
	dir := filepath.Join(w.o.Out, m.Stem)
	meta := w.meta(m.Name)
	var rb *Rebuilt
	if w.o.Rebuild != nil {
		w.lg.WithFields(logrus.Fields{"model": m.Name, "data": w.o.Rebuild.DataSpec(m)}).Info("rebuilding data set and model for the spectrum")
		r, err := w.o.Rebuild.Problem(m)
		if err != nil {
			return fmt.Errorf("rebuilding the run's data set and model (use --no-spectrum to skip the spectrum): %w", err)
		}
		if len(r.Posts) == 0 || len(r.Posts) != len(r.Data) {
			return fmt.Errorf("rebuilding the run's data set and model: %d posteriors for %d data sets", len(r.Posts), len(r.Data))
		}
		rb = &r
		like := r.Posts[0]
		if got := like.FreeNames(); !slices.Equal(got, m.Names) {
			return fmt.Errorf("the configuration now builds parameters %s but the run sampled %s", strings.Join(got, ", "), strings.Join(m.Names, ", "))
		}
		if m.DataSHA256 != "" && r.SHA256 != m.DataSHA256 {
			w.lg.WithField("model", m.Name).Warnf("data set %s has changed since the run (checksum differs); the spectrum shows the current file", w.o.Rebuild.DataSpec(m))
		}
		for i, p := range like.FreeParams() {
			if m.Labels[i] == "" {
				m.Labels[i] = p.Label
			}
			if m.Units[i] == "" {
				m.Units[i] = p.Unit
			}
		}
		if w.data == nil {
			w.data = r.Data
		}
	}
	if rb == nil && slices.Contains(m.Labels, "") && w.o.Params != nil {
		// Labels and units only: the model without data or likelihood.
		if params, err := w.o.Params(m); err == nil {
			for _, p := range params {
				if k := slices.Index(m.Names, p.Name); k >= 0 && m.Labels[k] == "" {
					m.Labels[k], m.Units[k] = p.Label, p.Unit
				}
			}
		}
	}
	ps := make([]stats.Param, m.Cols)
	for k := range ps {
		pr, err := priors.Parse(m.Priors[k])
		if err != nil {
			return fmt.Errorf("parameter %s: prior %q: %w", m.Names[k], m.Priors[k], err)
		}
		lo, hi := pr.Bounds()
		col := make([]float64, m.Rows)
		for i := range col {
			col[i] = m.Samples[i*m.Cols+k]
		}
		ps[k] = stats.Param{Name: m.Names[k], Label: m.Labels[k], Unit: m.Units[k], Bounds: [2]float64{lo, hi}, Samples: col}
	}
	post, err := stats.Analyze(ps, stats.Options{Masses: w.o.Masses, SmoothedMass: w.smoothed}, w.stepLog(m.Name, "marginals"))
	if err != nil {
		return err
	}
	if err := WritePosterior(dir, meta, post, nil); err != nil {
		return err
	}
	w.add(filepath.Join(dir, "summary.csv"), filepath.Join(dir, "summary.json"))
	for _, p := range ps {
		s := "marginal1d_" + FileStem(p.Name)
		w.add(filepath.Join(dir, s+".csv"), filepath.Join(dir, s+".json"))
	}
	for _, q := range post.Pairs {
		s := "marginal2d_" + FileStem(ps[q.I].Name) + "__" + FileStem(ps[q.J].Name)
		w.add(filepath.Join(dir, s+".csv"), filepath.Join(dir, s+".json"))
	}
	if err := WriteSummaryTable(dir, post.Summaries(), w.o.Sig); err != nil {
		return err
	}
	w.add(filepath.Join(dir, "summary.tex"))
	if err := w.writeSamples(dir, meta, m); err != nil {
		return err
	}
	var truths []float64
	if len(w.o.Truths) > 0 {
		truths = make([]float64, m.Cols)
		for k, n := range m.Names {
			truths[k] = math.NaN()
			if v, ok := w.o.Truths[n]; ok {
				truths[k] = v
			}
		}
	}
	w.lg.WithField("model", m.Name).Info("corner figure")
	files, err := CornerFigure(filepath.Join(dir, "corner"), post, truths, w.figOpts(), nil)
	if err != nil {
		return err
	}
	w.add(files...)
	if err := w.writeExclusion(dir, meta, m, ps); err != nil {
		return err
	}
	if m.ChainPath != "" {
		if err := w.writeTrace(dir, m); err != nil {
			return err
		}
	}
	if m.EvidencePath != "" || m.CurvePath != "" {
		if err := w.writeLnLBeta(dir, m); err != nil {
			return err
		}
	} else if w.run.Kind == "compare" {
		w.lg.WithField("model", m.Name).Warn("no evidence.json or lnl_beta.csv: skipping the ln L-versus-beta figure")
	}
	if rb != nil {
		if err := w.addBands(m, *rb); err != nil {
			return err
		}
	}
	return nil
}

// writeSamples writes the thinned, burned-in samples as posterior.npy and
// names their columns in posterior.json.
func (w *reportWriter) writeSamples(dir string, meta Metadata, m *rundir.Model) error {
	npy := filepath.Join(dir, "posterior.npy")
	if err := chains.WriteNPY(npy, m.Rows, m.Cols, m.Samples); err != nil {
		return err
	}
	js := filepath.Join(dir, "posterior.json")
	if err := rundir.WriteJSON(js, struct {
		Meta    Metadata `json:"metadata"`
		File    string   `json:"file"`
		Source  string   `json:"source"`
		Rows    int      `json:"rows"`
		Columns []string `json:"columns"`
		Labels  []string `json:"labels"`
		Units   []string `json:"units"`
		Priors  []string `json:"priors"`
		Note    string   `json:"note"`
	}{meta, "posterior.npy", m.SamplesPath, m.Rows, m.Names, m.Labels, m.Units, m.Priors,
		"float64, one row per retained draw (burned-in and thinned), columns in the order listed"}); err != nil {
		return err
	}
	w.add(npy, js)
	return nil
}

// writeExclusion writes the conditional upper limit on log10_Gmu in slices
// of the model's slicing parameter (exclusionX) when it samples both.
func (w *reportWriter) writeExclusion(dir string, meta Metadata, m *rundir.Model, ps []stats.Param) error {
	iy := slices.Index(m.Names, reportExclY)
	ix, reportExclX := -1, ""
	for _, name := range exclusionX {
		if ix = slices.Index(m.Names, name); ix >= 0 {
			reportExclX = name
			break
		}
	}
	if ix < 0 || iy < 0 {
		return nil
	}
	x, y := ps[ix], ps[iy]
	lo, hi := x.Bounds[0], x.Bounds[1]
	if math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		lo, hi = slices.Min(x.Samples), slices.Max(x.Samples)
	}
	if !(hi > lo) {
		return fmt.Errorf("exclusion curve: %s has no spread", reportExclX)
	}
	pts, err := stats.ExclusionCurve(x.Samples, y.Samples, stats.LinearEdges(lo, hi, w.o.Slices), w.o.LimitMass, 0)
	if err != nil {
		return err
	}
	if err := WriteExclusion(dir, meta, reportExclX, reportExclY, w.o.LimitMass, pts); err != nil {
		return err
	}
	s := "exclusion_" + FileStem(reportExclY) + "_vs_" + FileStem(reportExclX)
	w.add(filepath.Join(dir, s+".csv"), filepath.Join(dir, s+".json"))
	usable := 0
	for _, p := range pts {
		if !math.IsNaN(p.Limit) {
			usable++
		}
	}
	if usable == 0 {
		w.lg.WithField("model", m.Name).Warnf("exclusion curve: no slice of %s holds enough samples for a limit; no figure", reportExclX)
		return nil
	}
	var g *exclusionGroup
	for _, e := range w.excl {
		if e.x == reportExclX {
			g = e
		}
	}
	if g == nil {
		g = &exclusionGroup{x: reportExclX}
		w.excl = append(w.excl, g)
	}
	g.curves = append(g.curves, NamedExclusion{Name: m.Name, Points: pts, Mass: w.o.LimitMass, Prior: m.Priors[iy]})
	g.top = y.Bounds[1]
	g.labels = [2]string{AxisLabel(reportLabel(x.Label, x.Name), x.Unit), AxisLabel(reportLabel(y.Label, y.Name), y.Unit)}
	return nil
}

func reportLabel(label, name string) string {
	if label != "" {
		return label
	}
	return name
}

// reportTracePoints is about how many steps per walker the trace figure
// keeps; the chain is thinned while it is read, so a long run's chain.csv
// is never held in memory whole.
const reportTracePoints = 1500

// writeTrace draws every walker of chain.csv against step.
func (w *reportWriter) writeTrace(dir string, m *rundir.Model) error {
	w.lg.WithField("model", m.Name).Info("reading chain.csv for the trace figure")
	every := max(1, (m.Steps+reportTracePoints-1)/reportTracePoints)
	walkers, err := rundir.ReadTraces(m.ChainPath, m.Names, every)
	if err != nil {
		return err
	}
	traces := make([]Trace, len(walkers))
	for k := range traces {
		traces[k] = Trace{Label: reportLabel(m.Labels[k], m.Names[k]), Unit: m.Units[k], Walkers: walkers[k], Every: every}
	}
	files, err := TraceFigure(filepath.Join(dir, "trace"), traces, w.figOpts(), nil)
	if err != nil {
		return err
	}
	w.add(files...)
	return nil
}

// writeLnLBeta draws the ln L-versus-beta curve from evidence.json, or from
// lnl_beta.csv when that is all there is.
func (w *reportWriter) writeLnLBeta(dir string, m *rundir.Model) error {
	var beta, mean, se []float64
	if m.EvidencePath != "" {
		var err error
		if beta, mean, se, err = rundir.ReadEvidenceCurve(m.EvidencePath); err != nil {
			return err
		}
	} else {
		var err error
		if beta, mean, se, err = rundir.ReadCurve(m.CurvePath); err != nil {
			return err
		}
	}
	files, err := LnLBetaFigure(filepath.Join(dir, "lnl_beta"), beta, mean, se, BetaFifthRoot, w.figOpts())
	if err != nil {
		return err
	}
	w.add(files...)
	return nil
}

// addBands pushes evenly spaced posterior draws through the model, at
// the frequencies of each data set.
func (w *reportWriter) addBands(m *rundir.Model, r Rebuilt) error {
	if len(r.Data) != len(w.data) {
		return fmt.Errorf("it was run on %d data sets, the other models on %d", len(r.Data), len(w.data))
	}
	var bands []ModelBand
	for i, ds := range r.Data {
		post := r.Posts[i]
		band, failed, err := PredictiveBand(m.Name, ds.Freqs, m.Samples, m.Rows, m.Cols, w.o.Draws,
			func(theta []float64) ([]float64, error) { return post.Log10Rho(theta, nil) })
		if failed > 0 {
			w.lg.WithField("model", m.Name).Warnf("%d of %d posterior draws lie outside the model's domain; left out of the band", failed, min(w.o.Draws, m.Rows))
		}
		if err != nil {
			return err
		}
		if !slices.Equal(band.Freq, w.data[i].Freqs) {
			return errors.New("its data set's frequencies differ from the other models'")
		}
		bands = append(bands, band)
	}
	w.bands = append(w.bands, bands)
	return nil
}

// reportProbs are the quantiles of the spectrum files: the 95 % and 68 %
// central intervals (stats.P95Lo ... stats.P95Hi) and the median.
var reportProbs = bandProbs[:]

// spectrumSet is one data set's bins and the models' bands at its
// frequencies, for SpectrumFigure.
func (w *reportWriter) spectrumSet(i int) SpectrumData {
	ds := w.data[i]
	mq := w.o.BinDraws
	ps := make([]float64, mq)
	for j := range ps {
		ps[j] = (float64(j) + 0.5) / float64(mq)
	}
	sd := SpectrumData{Name: ds.Name, Freq: ds.Freqs, BinBounds: [2]float64{ds.PriorMin, ds.PriorMax}}
	for _, b := range w.bands {
		sd.Models = append(sd.Models, b[i])
	}
	for k := range ds.Bins {
		b := &ds.Bins[k]
		var s []float64
		if b.Kind == likelihood.Samples {
			for _, v := range b.Samples {
				if !math.IsNaN(v) && !math.IsInf(v, 0) {
					s = append(s, v)
				}
			}
		} else {
			s = b.Quantiles(ds.PriorMin, ds.PriorMax, ps, nil)
		}
		sd.BinSamples = append(sd.BinSamples, s)
	}
	return sd
}

// writeSpectrum draws the data's per-bin posteriors with every model's
// band and writes both as spectrum.csv/json; with several data sets, each
// row names its data set.
func (w *reportWriter) writeSpectrum() error {
	sd := w.spectrumSet(0)
	for i := 1; i < len(w.data); i++ {
		sd.Others = append(sd.Others, w.spectrumSet(i))
	}
	w.lg.Info("spectrum figure")
	files, err := SpectrumFigure(filepath.Join(w.o.Out, "spectrum"), sd, w.figOpts())
	if err != nil {
		return err
	}
	w.add(files...)
	// The same quantiles as numbers: one row per (data set, source,
	// frequency).
	type rowJSON struct {
		Dataset   string  `json:"dataset,omitempty"`
		Source    string  `json:"source"`
		Freq      float64 `json:"frequency_hz"`
		Quantiles []Num   `json:"log10_rho_quantiles"`
	}
	multi := len(w.data) > 1
	var rows []rowJSON
	for _, set := range append([]SpectrumData{sd}, sd.Others...) {
		name := ""
		if multi {
			name = set.Name
		}
		quant := func(src string, k int, vals []float64) {
			v := slices.Clone(vals)
			v = slices.DeleteFunc(v, func(x float64) bool { return math.IsNaN(x) || math.IsInf(x, 0) })
			slices.Sort(v)
			q := make([]Num, len(reportProbs))
			for i, p := range reportProbs {
				q[i] = Num(math.NaN())
				if len(v) > 0 {
					q[i] = Num(stats.Quantile(v, p))
				}
			}
			rows = append(rows, rowJSON{name, src, set.Freq[k], q})
		}
		for k, s := range set.BinSamples {
			quant("data", k, s)
		}
		for _, b := range set.Models {
			col := make([]float64, len(b.Curves))
			for k := range b.Freq {
				for d, c := range b.Curves {
					col[d] = c[k]
				}
				quant(b.Name, k, col)
			}
		}
	}
	header := []string{"source", "frequency_hz", "q02.5", "q16", "q50", "q84", "q97.5"}
	if multi {
		header = append([]string{"dataset"}, header...)
	}
	csvRows := make([][]string, len(rows))
	for i, r := range rows {
		if multi {
			csvRows[i] = []string{r.Dataset}
		}
		csvRows[i] = append(csvRows[i], r.Source, strconv.FormatFloat(r.Freq, 'g', -1, 64))
		for _, q := range r.Quantiles {
			csvRows[i] = append(csvRows[i], strconv.FormatFloat(float64(q), 'g', -1, 64))
		}
	}
	cp := filepath.Join(w.o.Out, "spectrum.csv")
	if err := reportWriteCSV(cp, header, csvRows); err != nil {
		return err
	}
	note := "source \"data\": the data set's per-bin posterior; otherwise a model's posterior-predictive log10 rho (s)"
	if multi {
		note += "; dataset: the data set of the row (each has its own frequencies and log10 rho offset)"
	}
	jp := filepath.Join(w.o.Out, "spectrum.json")
	if err := rundir.WriteJSON(jp, struct {
		Meta   Metadata   `json:"metadata"`
		Probs  []float64  `json:"probabilities"`
		Draws  int        `json:"model_draws"`
		BinQ   int        `json:"bin_quantile_samples"`
		Prior  [2]float64 `json:"bin_prior_log10_rho"`
		Rows   []rowJSON  `json:"rows"`
		Source string     `json:"note"`
	}{w.meta(strings.Join(w.run.ModelNames(), ",")), reportProbs, w.o.Draws, w.o.BinDraws, sd.BinBounds, rows, note}); err != nil {
		return err
	}
	w.add(cp, jp)
	return nil
}

// reportWriteCSV writes a header and rows as CSV, atomically.
func reportWriteCSV(path string, header []string, rows [][]string) error {
	var b strings.Builder
	b.WriteString(strings.Join(header, ",") + "\n")
	for _, r := range rows {
		b.WriteString(strings.Join(r, ",") + "\n")
	}
	return chains.WriteFileAtomic(path, func(wr io.Writer) error {
		_, err := io.WriteString(wr, b.String())
		return err
	})
}

// writeComparison writes the comparison table with the ln B that
// compare.json reports.
func (w *reportWriter) writeComparison() error {
	res := w.run.Comparison
	var rows []Evidence
	for _, r := range res.Rows {
		ev := Evidence{Model: r.Model, LnZTI: r.TI.LnZ, LnZTIErr: r.TI.Total, LnZSS: r.SS.LnZ, LnZSSErr: r.SS.Total,
			LnB: r.LnB, LnBErr: r.LnBErr}
		if r.Model != res.Reference {
			ev.Reading = r.Reading // compare.json's words, so the table reads as compare printed
		}
		rows = append(rows, ev)
	}
	meta := w.meta(strings.Join(w.run.ModelNames(), ","))
	meta.Extra["ln_z_ti"] = "derivative-corrected trapezoid (compare.json ln_z_ti), total error"
	meta.Extra["ln_b"] = "as in compare.json: TI difference, errors in quadrature"
	if err := WriteComparison(w.o.Out, meta, rows, res.Reference, w.o.Sig); err != nil {
		return err
	}
	for _, f := range []string{"comparison.tex", "comparison.csv", "comparison.json"} {
		w.add(filepath.Join(w.o.Out, f))
	}
	return nil
}

// writeIndex writes report.json, the list of every file written.
func (w *reportWriter) writeIndex() error {
	p := filepath.Join(w.o.Out, "report.json")
	w.add(p)
	return rundir.WriteJSON(p, struct {
		Meta    Metadata  `json:"metadata"`
		Masses  []float64 `json:"credible_masses_2d"`
		Formats []string  `json:"figure_formats"`
		Files   []string  `json:"files"`
	}{w.meta(strings.Join(w.run.ModelNames(), ",")), w.masses(), w.o.Formats, w.files})
}

func (w *reportWriter) masses() []float64 {
	if len(w.o.Masses) == 0 {
		return []float64{stats.Mass68, stats.Mass95}
	}
	return w.o.Masses
}
