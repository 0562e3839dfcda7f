package main

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/sirupsen/logrus"

	"tautline/chains"
	"tautline/likelihood"
	"tautline/models/registry"
	"tautline/priors"
	"tautline/report"
	"tautline/rundir"
	"tautline/sampler/evidence"
)

const reportHelp = `
Turns the folder of a finished 'tautline fit' or 'tautline compare' run into
the tables, data files and figures of a paper, written under --out (one
sub-folder per model):

  per model: summary.csv/json (median, mean, std, 68 % and 95 % equal-tailed
  and highest-density intervals, one-sided 95 % limits where the posterior
  rails against a prior edge), marginal1d_P.csv/json for every parameter and
  marginal2d_P__Q.csv/json for every pair (density grids, contour levels),
  summary.tex (LaTeX table), posterior.npy with posterior.json naming its
  columns, corner.png/svg, trace.png/svg (fit runs: every walker against
  step), lnl_beta.png/svg (compare runs: mean ln L against beta^(1/5)) and,
  when the model has log10_Gmu and log10_alpha, the upper limit on log10_Gmu
  against log10_alpha as exclusion_log10_Gmu_vs_log10_alpha.csv/json;

  for the run: spectrum.png/svg and spectrum.csv/json (each bin's log10 rho
  posterior with each model's posterior-predictive 68 % and 95 % bands),
  exclusion.png/svg (when a model has the exclusion curve), for compare runs
  comparison.tex/csv/json (ln Z by TI and SS with errors, ln B as compare.json
  gives it), and report.json listing every file.

Every JSON file carries a "metadata" block naming the run, model, data set
and tautline version. The data set and model are rebuilt from the run's
configuration for the spectrum figure, so run the report from the folder the
run was started in when the data set was given by a relative path.`

// reportOpts are report's options.
type reportOpts struct {
	out        string
	formats    []string
	dpi        int
	masses     []float64
	truths     map[string]float64
	draws      int
	binDraws   int
	sig        int
	slices     int
	limitMass  float64
	noSpectrum bool
}

func runReport(_ context.Context, e *env, args []string) error {
	fs := newFlagSet(e, "report", "RUNDIR [options]", reportHelp)
	var (
		o                  reportOpts
		formats, masses    string
		sigma2d            bool
		truths             multiFlag
		logLevel, logFrmt  string
		smoothed, noTraces bool
	)
	fs.StringVar(&o.out, "out", "", "folder for the report (default RUNDIR/report)")
	fs.StringVar(&formats, "formats", "png,svg", "comma-separated figure formats among png, svg, pdf")
	fs.IntVar(&o.dpi, "dpi", 300, "resolution of PNG figures, dots per inch")
	fs.StringVar(&masses, "masses", "", "comma-separated credible masses of the 2-D contours, as fractions or percentages (default 0.68,0.95)")
	fs.BoolVar(&sigma2d, "sigma2d", false, "draw the 2-D \"1 and 2 sigma\" regions, masses 0.393 and 0.865, instead of 68 % and 95 %")
	fs.BoolVar(&smoothed, "smoothed-mass", false, "place contour levels by the mass of the smoothed density instead of the mass of the samples")
	fs.Var(&truths, "truth", "NAME=VALUE: mark a true (injected) parameter value in the corner figure; repeatable")
	fs.IntVar(&o.draws, "draws", 400, "posterior draws pushed through each model for the posterior-predictive spectrum")
	fs.IntVar(&o.binDraws, "bin-draws", 400, "quantile samples per frequency bin drawn for bins given as a grid or a normal summary")
	fs.IntVar(&o.sig, "sig", 2, "significant figures of the smaller error in LaTeX tables")
	fs.IntVar(&o.slices, "slices", 16, "slices of log10_alpha in the exclusion curve")
	fs.Float64Var(&o.limitMass, "limit-mass", 0.95, "credible mass of the exclusion curve's upper limit on log10_Gmu")
	fs.BoolVar(&o.noSpectrum, "no-spectrum", false, "skip the spectrum figure (which rebuilds the data set and model)")
	fs.BoolVar(&noTraces, "no-trace", false, "skip the trace figure of fit runs (which reads the whole chain.csv)")
	fs.StringVar(&logLevel, "log-level", "info", "progress messages on stderr: debug, info, warn or error")
	fs.StringVar(&logFrmt, "log-format", "text", "progress message format: text or json")

	// Flags may come before or after RUNDIR.
	var pos []string
	for {
		if err := parseFlags(fs, args); err != nil {
			return err
		}
		if fs.NArg() == 0 {
			break
		}
		pos = append(pos, fs.Arg(0))
		args = fs.Args()[1:]
	}
	if len(pos) != 1 {
		return fmt.Errorf("%w: want exactly one run folder, got %d arguments", errUsage, len(pos))
	}
	dir := filepath.Clean(pos[0])
	if o.out == "" {
		o.out = filepath.Join(dir, "report")
	}
	for _, f := range splitList(formats) {
		switch f {
		case "png", "svg", "pdf":
			o.formats = append(o.formats, f)
		default:
			return fmt.Errorf("%w: --formats: %q is not png, svg or pdf", errUsage, f)
		}
	}
	if len(o.formats) == 0 {
		return fmt.Errorf("%w: --formats: name at least one of png, svg, pdf", errUsage)
	}
	var err error
	if o.masses, err = reportParseMasses(masses); err != nil {
		return err
	}
	if sigma2d {
		if masses != "" {
			return fmt.Errorf("%w: --sigma2d and --masses both set the contour masses; give one", errUsage)
		}
		o.masses = []float64{report.Mass1Sigma2D, report.Mass2Sigma2D}
	}
	if o.truths, err = reportParseTruths(truths); err != nil {
		return err
	}
	switch {
	case o.dpi < 30 || o.dpi > 2400:
		return fmt.Errorf("%w: --dpi must be between 30 and 2400, got %d", errUsage, o.dpi)
	case o.draws < 1:
		return fmt.Errorf("%w: --draws must be >= 1, got %d", errUsage, o.draws)
	case o.binDraws < 2:
		return fmt.Errorf("%w: --bin-draws must be >= 2, got %d", errUsage, o.binDraws)
	case o.slices < 1:
		return fmt.Errorf("%w: --slices must be >= 1, got %d", errUsage, o.slices)
	case !(o.limitMass > 0 && o.limitMass < 1):
		return fmt.Errorf("%w: --limit-mass must be in (0, 1), got %g", errUsage, o.limitMass)
	case o.sig < 1 || o.sig > 6:
		return fmt.Errorf("%w: --sig must be between 1 and 6, got %d", errUsage, o.sig)
	}
	lg, err := newLogger(e.stderr, logLevel, logFrmt)
	if err != nil {
		return err
	}
	run, err := loadReportRun(dir, !noTraces)
	if err != nil {
		return err
	}
	w := &reportWriter{e: e, lg: lg, o: o, run: run, start: time.Now(), smoothed: smoothed}
	if err := w.write(); err != nil {
		return err
	}
	w.printSummary()
	return nil
}

// reportParseMasses reads a comma-separated list of credible masses, each a
// fraction in (0, 1) or a percentage in [1, 100).
func reportParseMasses(s string) ([]float64, error) {
	var out []float64
	for _, f := range splitList(s) {
		v, err := strconv.ParseFloat(f, 64)
		if err != nil {
			return nil, fmt.Errorf("%w: --masses: %q is not a number", errUsage, f)
		}
		if v >= 1 {
			v /= 100
		}
		if !(v > 0 && v < 1) {
			return nil, fmt.Errorf("%w: --masses: %q is not a mass in (0, 1) or a percentage below 100", errUsage, f)
		}
		out = append(out, v)
	}
	slices.Sort(out)
	return slices.Compact(out), nil
}

// reportParseTruths reads NAME=VALUE pairs; VALUE may be a fraction such as 13/3.
func reportParseTruths(list []string) (map[string]float64, error) {
	out := map[string]float64{}
	for _, s := range list {
		name, val, ok := strings.Cut(s, "=")
		name, val = strings.TrimSpace(name), strings.TrimSpace(val)
		if !ok || name == "" || val == "" {
			return nil, fmt.Errorf("%w: --truth %q: want NAME=VALUE", errUsage, s)
		}
		v, err := registry.ParseNumber(val)
		if err != nil {
			return nil, fmt.Errorf("%w: --truth %s: %v", errUsage, name, err)
		}
		out[name] = v
	}
	return out, nil
}

// reportModel is one model's posterior as a run folder holds it.
type reportModel struct {
	name, stem string
	cfg        Config
	data       string // data set name
	dataSHA    string
	names      []string // sampled parameters, in the column order of samples
	priors     []string // their priors, in the syntax of priors.Parse
	labels     []string // LaTeX labels (empty: unknown)
	units      []string
	rows, cols int
	samples    []float64 // rows x cols, row-major
	npyPath    string
	chainPath  string // fit runs: chain.csv ("" when absent)
	steps      int    // fit runs: steps per walker in chain.csv (0: unknown)
	evPath     string // compare runs: evidence.json ("" when absent)
	curvePath  string // compare runs: lnl_beta.csv ("" when absent)
}

// reportRun is a fit or compare run folder.
type reportRun struct {
	kind   string // "fit" or "compare"
	dir    string
	models []*reportModel
	cmp    *rundir.Comparison
}

// loadReportRun reads a run folder: meta.json for a fit, compare.json for
// a comparison.
func loadReportRun(dir string, traces bool) (*reportRun, error) {
	fi, err := os.Stat(dir)
	switch {
	case err != nil:
		return nil, fmt.Errorf("run folder %s: %w", dir, errors.Unwrap(err))
	case !fi.IsDir():
		return nil, fmt.Errorf("run folder %s is a file, not a folder", dir)
	}
	metaPath, cmpPath := filepath.Join(dir, "meta.json"), filepath.Join(dir, "compare.json")
	if reportExists(metaPath) {
		return loadFitRun(dir, metaPath, traces)
	}
	if reportExists(cmpPath) {
		return loadCompareRun(dir, cmpPath)
	}
	return nil, fmt.Errorf("%s is neither a fit run (no meta.json) nor a compare run (no compare.json)", dir)
}

func reportExists(path string) bool {
	_, err := os.Stat(path)
	return err == nil
}

func loadFitRun(dir, metaPath string, traces bool) (*reportRun, error) {
	m, err := chains.ReadMeta(metaPath)
	if err != nil {
		return nil, err
	}
	var status struct {
		Status   string `json:"status"`
		Sampling struct {
			Steps int `json:"steps"`
		} `json:"sampling"`
	}
	if raw, err := os.ReadFile(metaPath); err == nil {
		_ = json.Unmarshal(raw, &status)
	}
	cfg, err := reportConfig(m.Config)
	if err != nil {
		return nil, fmt.Errorf("%s: config: %w", metaPath, err)
	}
	rm := &reportModel{name: m.Model.Name, stem: reportStem(m.Model.Name), cfg: cfg, data: m.Data.Name, dataSHA: m.Data.SHA256,
		npyPath: filepath.Join(dir, "posterior.npy")}
	for _, p := range m.Model.Params {
		if !p.Fixed {
			rm.names = append(rm.names, p.Name)
			rm.priors = append(rm.priors, p.Prior)
			rm.labels = append(rm.labels, p.Label)
			rm.units = append(rm.units, p.Unit)
		}
	}
	if !reportExists(rm.npyPath) {
		if status.Status == "running" || status.Status == "interrupted" {
			return nil, fmt.Errorf("%s: no posterior.npy: the fit has not finished (status %s); continue it with 'tautline fit --resume --out %s'", dir, status.Status, dir)
		}
		return nil, fmt.Errorf("%s: posterior.npy is missing: the fit run is incomplete", dir)
	}
	if err := rm.readSamples(); err != nil {
		return nil, err
	}
	if c := filepath.Join(dir, "chain.csv"); traces && reportExists(c) {
		rm.chainPath, rm.steps = c, status.Sampling.Steps
	}
	return &reportRun{kind: "fit", dir: dir, models: []*reportModel{rm}}, nil
}

// reportConfig turns the generic JSON of meta.json's config back into a
// Config (whose JSON field names are its Go names).
func reportConfig(v any) (Config, error) {
	cfg := defaultConfig()
	raw, err := json.Marshal(v)
	if err != nil {
		return cfg, err
	}
	if err := json.Unmarshal(raw, &cfg); err != nil {
		return cfg, err
	}
	return cfg, nil
}

func reportStem(name string) string { return strings.ReplaceAll(name, "+", "-") }

func (rm *reportModel) readSamples() error {
	r, c, data, err := chains.ReadNPY(rm.npyPath)
	if err != nil {
		return err
	}
	if c != len(rm.names) {
		return fmt.Errorf("%s has %d columns but the run sampled %d parameters (%s)", rm.npyPath, c, len(rm.names), strings.Join(rm.names, ", "))
	}
	if r < 2 {
		return fmt.Errorf("%s holds %d posterior samples; a report needs at least 2", rm.npyPath, r)
	}
	rm.rows, rm.cols, rm.samples = r, c, data
	return nil
}

func loadCompareRun(dir, cmpPath string) (*reportRun, error) {
	raw, err := os.ReadFile(cmpPath)
	if err != nil {
		return nil, err
	}
	var res rundir.Comparison
	if err := json.Unmarshal(raw, &res); err != nil {
		return nil, fmt.Errorf("%s: %w", cmpPath, err)
	}
	if len(res.Rows) == 0 {
		return nil, fmt.Errorf("%s lists no models", cmpPath)
	}
	run := &reportRun{kind: "compare", dir: dir, cmp: &res}
	for _, row := range res.Rows {
		stem := reportStem(row.Model)
		pm, err := reportFindPart(dir, row.Model)
		if err != nil {
			return nil, err
		}
		md := filepath.Join(dir, "models", stem)
		cfg := defaultConfig()
		if err := json.Unmarshal(pm.Config, &cfg); err != nil {
			return nil, fmt.Errorf("%s: part.json of model %s: config: %w", dir, row.Model, err)
		}
		rm := &reportModel{name: row.Model, stem: stem, cfg: cfg, data: res.Data, dataSHA: res.DataSHA256,
			names: pm.Params, priors: pm.Priors, npyPath: filepath.Join(md, "posterior.npy")}
		rm.labels, rm.units = make([]string, len(rm.names)), make([]string, len(rm.names))
		if len(rm.priors) != len(rm.names) {
			return nil, fmt.Errorf("%s: part.json of model %s lists %d priors for %d parameters", dir, row.Model, len(rm.priors), len(rm.names))
		}
		if !reportExists(rm.npyPath) {
			return nil, fmt.Errorf("%s is missing: the comparison of model %s is incomplete (rerun 'tautline merge')", rm.npyPath, row.Model)
		}
		if err := rm.readSamples(); err != nil {
			return nil, err
		}
		if p := filepath.Join(md, "evidence.json"); reportExists(p) {
			rm.evPath = p
		}
		if p := filepath.Join(md, "lnl_beta.csv"); reportExists(p) {
			rm.curvePath = p
		}
		run.models = append(run.models, rm)
	}
	return run, nil
}

// reportFindPart returns the part.json of any rung block of model (they share
// parameters, priors and configuration).
func reportFindPart(dir, model string) (*rundir.Part, error) {
	matches, _ := filepath.Glob(filepath.Join(dir, "parts", "*", "part.json"))
	for _, m := range matches {
		raw, err := os.ReadFile(m)
		if err != nil {
			return nil, err
		}
		var pm rundir.Part
		if err := json.Unmarshal(raw, &pm); err != nil {
			return nil, fmt.Errorf("%s: %w", m, err)
		}
		if pm.Unit.Model == model {
			return &pm, nil
		}
	}
	return nil, fmt.Errorf("%s: no parts/*/part.json for model %s: its priors and configuration are unknown", dir, model)
}

// reportWriter writes one run's report.
type reportWriter struct {
	e        *env
	lg       *logrus.Logger
	o        reportOpts
	run      *reportRun
	start    time.Time
	smoothed bool
	files    []string // written, relative to o.out
	bands    []report.ModelBand
	excl     []report.NamedExclusion
	exclTop  float64
	data     *likelihood.Dataset
	exclLbl  [2]string
}

func (w *reportWriter) add(paths ...string) {
	for _, p := range paths {
		if r, err := filepath.Rel(w.o.out, p); err == nil {
			p = r
		}
		w.files = append(w.files, filepath.ToSlash(p))
	}
}

func (w *reportWriter) figOpts() report.FigureOptions {
	return report.FigureOptions{Formats: w.o.formats, DPI: w.o.dpi}
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

func (w *reportWriter) meta(model string) report.Metadata {
	run, err := filepath.Abs(w.run.dir)
	if err != nil {
		run = w.run.dir
	}
	data, sha := "", ""
	if len(w.run.models) > 0 {
		data, sha = w.run.models[0].data, w.run.models[0].dataSHA
	}
	for _, m := range w.run.models {
		if m.name == model {
			data, sha = m.data, m.dataSHA
		}
	}
	return report.Metadata{Run: run, Model: model, Dataset: data, Version: versionString(),
		Extra: map[string]string{"run_kind": w.run.kind, "data_sha256": sha}}
}

func (w *reportWriter) write() error {
	if err := os.MkdirAll(w.o.out, 0o755); err != nil {
		return fmt.Errorf("report folder: %w", err)
	}
	var known []string
	for _, m := range w.run.models {
		known = append(known, m.names...)
	}
	for name := range w.o.truths {
		if !slices.Contains(known, name) {
			return fmt.Errorf("%w: --truth %s: no model of the run has that parameter; they have %s", errUsage, name, strings.Join(slices.Compact(slices.Sorted(slices.Values(known))), ", "))
		}
	}
	w.lg.WithFields(logrus.Fields{"run": w.run.dir, "kind": w.run.kind, "models": len(w.run.models), "out": w.o.out}).Info("report")
	for _, m := range w.run.models {
		if err := w.writeModel(m); err != nil {
			return fmt.Errorf("model %s: %w", m.name, err)
		}
	}
	if w.data != nil && len(w.bands) > 0 {
		if err := w.writeSpectrum(); err != nil {
			return err
		}
	}
	if len(w.excl) > 0 {
		files, err := report.ExclusionFigure(filepath.Join(w.o.out, "exclusion"), w.exclLbl[0], w.exclLbl[1], w.excl, w.exclTop, w.figOpts())
		if err != nil {
			return err
		}
		w.add(files...)
	}
	if w.run.cmp != nil {
		if err := w.writeComparison(); err != nil {
			return err
		}
	}
	return w.writeIndex()
}

// Names of the parameters of the exclusion curve.
const (
	reportExclY = "log10_Gmu"
	reportExclX = "log10_alpha"
)

func (w *reportWriter) writeModel(m *reportModel) error {
	dir := filepath.Join(w.o.out, m.stem)
	meta := w.meta(m.name)
	var pb *problem
	if !w.o.noSpectrum {
		w.lg.WithFields(logrus.Fields{"model": m.name, "data": m.cfg.Data}).Info("rebuilding data set and model for the spectrum")
		var err error
		if pb, err = buildProblem(m.cfg, w.lg.Infof); err != nil {
			return fmt.Errorf("rebuilding the run's data set and model (use --no-spectrum to skip the spectrum): %w", err)
		}
		if got := pb.post.FreeNames(); !slices.Equal(got, m.names) {
			return fmt.Errorf("the configuration now builds parameters %s but the run sampled %s", strings.Join(got, ", "), strings.Join(m.names, ", "))
		}
		if m.dataSHA != "" && pb.data.SHA256 != m.dataSHA {
			w.lg.WithField("model", m.name).Warnf("data set %s has changed since the run (checksum differs); the spectrum shows the current file", m.cfg.Data)
		}
		for i, p := range pb.post.FreeParams() {
			if m.labels[i] == "" {
				m.labels[i] = p.Label
			}
			if m.units[i] == "" {
				m.units[i] = p.Unit
			}
		}
		if w.data == nil {
			w.data = pb.data
		}
	}
	if pb == nil && slices.Contains(m.labels, "") {
		// Labels and units only: the model without data or likelihood.
		if md, err := buildModel(m.cfg, w.lg.Debugf); err == nil {
			for _, p := range md.Params() {
				if k := slices.Index(m.names, p.Name); k >= 0 && m.labels[k] == "" {
					m.labels[k], m.units[k] = p.Label, p.Unit
				}
			}
		}
	}
	ps := make([]report.Param, m.cols)
	for k := range ps {
		pr, err := priors.Parse(m.priors[k])
		if err != nil {
			return fmt.Errorf("parameter %s: prior %q: %w", m.names[k], m.priors[k], err)
		}
		lo, hi := pr.Bounds()
		col := make([]float64, m.rows)
		for i := range col {
			col[i] = m.samples[i*m.cols+k]
		}
		ps[k] = report.Param{Name: m.names[k], Label: m.labels[k], Unit: m.units[k], Bounds: [2]float64{lo, hi}, Samples: col}
	}
	post, err := report.Analyze(ps, report.Options{Masses: w.o.masses, SmoothedMass: w.smoothed}, w.stepLog(m.name, "marginals"))
	if err != nil {
		return err
	}
	if err := post.Write(dir, meta, nil); err != nil {
		return err
	}
	w.add(filepath.Join(dir, "summary.csv"), filepath.Join(dir, "summary.json"))
	for _, p := range ps {
		s := "marginal1d_" + report.FileStem(p.Name)
		w.add(filepath.Join(dir, s+".csv"), filepath.Join(dir, s+".json"))
	}
	for _, q := range post.Pairs {
		s := "marginal2d_" + report.FileStem(ps[q.I].Name) + "__" + report.FileStem(ps[q.J].Name)
		w.add(filepath.Join(dir, s+".csv"), filepath.Join(dir, s+".json"))
	}
	if err := report.WriteSummaryTable(dir, post.Summaries(), w.o.sig); err != nil {
		return err
	}
	w.add(filepath.Join(dir, "summary.tex"))
	if err := w.writeSamples(dir, meta, m); err != nil {
		return err
	}
	var truths []float64
	if len(w.o.truths) > 0 {
		truths = make([]float64, m.cols)
		for k, n := range m.names {
			truths[k] = math.NaN()
			if v, ok := w.o.truths[n]; ok {
				truths[k] = v
			}
		}
	}
	w.lg.WithField("model", m.name).Info("corner figure")
	files, err := report.CornerFigure(filepath.Join(dir, "corner"), post, truths, w.figOpts(), nil)
	if err != nil {
		return err
	}
	w.add(files...)
	if err := w.writeExclusion(dir, meta, m, ps); err != nil {
		return err
	}
	if m.chainPath != "" {
		if err := w.writeTrace(dir, m); err != nil {
			return err
		}
	}
	if m.evPath != "" || m.curvePath != "" {
		if err := w.writeLnLBeta(dir, m); err != nil {
			return err
		}
	} else if w.run.kind == "compare" {
		w.lg.WithField("model", m.name).Warn("no evidence.json or lnl_beta.csv: skipping the ln L-versus-beta figure")
	}
	if pb != nil {
		if err := w.addBand(m, pb); err != nil {
			return err
		}
	}
	return nil
}

// writeSamples writes the thinned, burned-in samples as posterior.npy and
// names their columns in posterior.json.
func (w *reportWriter) writeSamples(dir string, meta report.Metadata, m *reportModel) error {
	npy := filepath.Join(dir, "posterior.npy")
	if err := chains.WriteNPY(npy, m.rows, m.cols, m.samples); err != nil {
		return err
	}
	js := filepath.Join(dir, "posterior.json")
	if err := writeJSON(js, struct {
		Meta    report.Metadata `json:"metadata"`
		File    string          `json:"file"`
		Source  string          `json:"source"`
		Rows    int             `json:"rows"`
		Columns []string        `json:"columns"`
		Labels  []string        `json:"labels"`
		Units   []string        `json:"units"`
		Priors  []string        `json:"priors"`
		Note    string          `json:"note"`
	}{meta, "posterior.npy", m.npyPath, m.rows, m.names, m.labels, m.units, m.priors,
		"float64, one row per retained draw (burned-in and thinned), columns in the order listed"}); err != nil {
		return err
	}
	w.add(npy, js)
	return nil
}

// writeExclusion writes the conditional upper limit on log10_Gmu in slices
// of log10_alpha when the model has both.
func (w *reportWriter) writeExclusion(dir string, meta report.Metadata, m *reportModel, ps []report.Param) error {
	ix, iy := slices.Index(m.names, reportExclX), slices.Index(m.names, reportExclY)
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
	pts, err := report.ExclusionCurve(x.Samples, y.Samples, report.LinearEdges(lo, hi, w.o.slices), w.o.limitMass, 0)
	if err != nil {
		return err
	}
	if err := report.WriteExclusion(dir, meta, reportExclX, reportExclY, w.o.limitMass, pts); err != nil {
		return err
	}
	s := "exclusion_" + report.FileStem(reportExclY) + "_vs_" + report.FileStem(reportExclX)
	w.add(filepath.Join(dir, s+".csv"), filepath.Join(dir, s+".json"))
	usable := 0
	for _, p := range pts {
		if !math.IsNaN(p.Limit) {
			usable++
		}
	}
	if usable == 0 {
		w.lg.WithField("model", m.name).Warnf("exclusion curve: no slice of %s holds enough samples for a limit; no figure", reportExclX)
		return nil
	}
	w.excl = append(w.excl, report.NamedExclusion{Name: m.name, Points: pts})
	w.exclTop = y.Bounds[1]
	w.exclLbl = [2]string{report.AxisLabel(reportLabel(x.Label, x.Name), x.Unit), report.AxisLabel(reportLabel(y.Label, y.Name), y.Unit)}
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
func (w *reportWriter) writeTrace(dir string, m *reportModel) error {
	w.lg.WithField("model", m.name).Info("reading chain.csv for the trace figure")
	every := max(1, (m.steps+reportTracePoints-1)/reportTracePoints)
	traces, err := reportReadTraces(m.chainPath, m.names, every)
	if err != nil {
		return err
	}
	for k := range traces {
		traces[k].Label, traces[k].Unit = reportLabel(m.labels[k], m.names[k]), m.units[k]
	}
	files, err := report.TraceFigure(filepath.Join(dir, "trace"), traces, w.figOpts(), nil)
	if err != nil {
		return err
	}
	w.add(files...)
	return nil
}

// reportReadTraces reads the columns names of a chain file written by
// chains.Writer (header "# step,walker,..."), keeping steps 1, 1+every,
// 1+2 every, ... of every walker.
func reportReadTraces(path string, names []string, every int) ([]report.Trace, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
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
	traces := make([]report.Trace, len(names))
	for k := range traces {
		traces[k].Every = every
	}
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
			for len(traces[k].Walkers) <= wk {
				traces[k].Walkers = append(traces[k].Walkers, nil)
			}
			traces[k].Walkers[wk] = append(traces[k].Walkers[wk], v)
		}
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s: line %d: %w", path, line+1, err)
	}
	if len(names) > 0 && len(traces[0].Walkers) == 0 {
		return nil, fmt.Errorf("%s: no rows", path)
	}
	return traces, nil
}

// writeLnLBeta draws the ln L-versus-beta curve from evidence.json, or from
// lnl_beta.csv when that is all there is.
func (w *reportWriter) writeLnLBeta(dir string, m *reportModel) error {
	var beta, mean, se []float64
	if m.evPath != "" {
		raw, err := os.ReadFile(m.evPath)
		if err != nil {
			return err
		}
		var ev evidence.Result
		if err := json.Unmarshal(raw, &ev); err != nil {
			return fmt.Errorf("%s: %w", m.evPath, err)
		}
		for _, c := range ev.Curve {
			beta, mean, se = append(beta, c.Beta), append(mean, c.Mean), append(se, c.MeanErr)
		}
	} else {
		var err error
		if beta, mean, se, err = reportReadCurve(m.curvePath); err != nil {
			return err
		}
	}
	files, err := report.LnLBetaFigure(filepath.Join(dir, "lnl_beta"), beta, mean, se, report.BetaFifthRoot, w.figOpts())
	if err != nil {
		return err
	}
	w.add(files...)
	return nil
}

// reportReadCurve reads the beta, mean_ln_like and mean_err columns of
// lnl_beta.csv.
func reportReadCurve(path string) (beta, mean, se []float64, err error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, nil, nil, err
	}
	return reportParseCurve(path, raw)
}

// reportParseCurve parses the bytes of lnl_beta.csv; path names it in
// errors.
func reportParseCurve(path string, raw []byte) (beta, mean, se []float64, err error) {
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

// addBand pushes evenly spaced posterior draws through the model.
func (w *reportWriter) addBand(m *reportModel, pb *problem) error {
	d := min(w.o.draws, m.rows)
	band := report.ModelBand{Name: m.name, Freq: pb.data.Freqs}
	failed := 0
	for i := range d {
		r := int((float64(i) + 0.5) * float64(m.rows) / float64(d))
		rho, err := pb.post.Log10Rho(m.samples[r*m.cols:(r+1)*m.cols], nil)
		if err != nil {
			failed++
			continue
		}
		band.Curves = append(band.Curves, rho)
	}
	if failed > 0 {
		w.lg.WithField("model", m.name).Warnf("%d of %d posterior draws lie outside the model's domain; left out of the band", failed, d)
	}
	if len(band.Curves) == 0 {
		return errors.New("no posterior draw gives a spectrum")
	}
	if w.data != nil && !slices.Equal(band.Freq, w.data.Freqs) {
		return errors.New("its data set's frequencies differ from the other models'")
	}
	w.bands = append(w.bands, band)
	return nil
}

// reportProbs are the quantiles of the spectrum files: the 95 % and 68 %
// central intervals and the median.
var reportProbs = []float64{0.025, 0.16, 0.5, 0.84, 0.975}

// writeSpectrum draws the data's per-bin posteriors with every model's
// band and writes both as spectrum.csv/json.
func (w *reportWriter) writeSpectrum() error {
	ds := w.data
	mq := w.o.binDraws
	ps := make([]float64, mq)
	for j := range ps {
		ps[j] = (float64(j) + 0.5) / float64(mq)
	}
	sd := report.SpectrumData{Freq: ds.Freqs, BinBounds: [2]float64{ds.PriorMin, ds.PriorMax}, Models: w.bands}
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
	w.lg.Info("spectrum figure")
	files, err := report.SpectrumFigure(filepath.Join(w.o.out, "spectrum"), sd, w.figOpts())
	if err != nil {
		return err
	}
	w.add(files...)
	// The same quantiles as numbers: one row per (source, frequency).
	type rowJSON struct {
		Source    string       `json:"source"`
		Freq      float64      `json:"frequency_hz"`
		Quantiles []report.Num `json:"log10_rho_quantiles"`
	}
	var rows []rowJSON
	quant := func(src string, k int, vals []float64) {
		v := slices.Clone(vals)
		v = slices.DeleteFunc(v, func(x float64) bool { return math.IsNaN(x) || math.IsInf(x, 0) })
		slices.Sort(v)
		q := make([]report.Num, len(reportProbs))
		for i, p := range reportProbs {
			q[i] = report.Num(math.NaN())
			if len(v) > 0 {
				q[i] = report.Num(report.Quantile(v, p))
			}
		}
		rows = append(rows, rowJSON{src, ds.Freqs[k], q})
	}
	for k, s := range sd.BinSamples {
		quant("data", k, s)
	}
	for _, b := range w.bands {
		col := make([]float64, len(b.Curves))
		for k := range b.Freq {
			for d, c := range b.Curves {
				col[d] = c[k]
			}
			quant(b.Name, k, col)
		}
	}
	csvRows := make([][]string, len(rows))
	for i, r := range rows {
		csvRows[i] = []string{r.Source, strconv.FormatFloat(r.Freq, 'g', -1, 64)}
		for _, q := range r.Quantiles {
			csvRows[i] = append(csvRows[i], strconv.FormatFloat(float64(q), 'g', -1, 64))
		}
	}
	cp := filepath.Join(w.o.out, "spectrum.csv")
	if err := reportWriteCSV(cp, []string{"source", "frequency_hz", "q02.5", "q16", "q50", "q84", "q97.5"}, csvRows); err != nil {
		return err
	}
	jp := filepath.Join(w.o.out, "spectrum.json")
	if err := writeJSON(jp, struct {
		Meta   report.Metadata `json:"metadata"`
		Probs  []float64       `json:"probabilities"`
		Draws  int             `json:"model_draws"`
		BinQ   int             `json:"bin_quantile_samples"`
		Prior  [2]float64      `json:"bin_prior_log10_rho"`
		Rows   []rowJSON       `json:"rows"`
		Source string          `json:"note"`
	}{w.meta(strings.Join(reportModelNames(w.run), ",")), reportProbs, w.o.draws, mq, sd.BinBounds, rows,
		"source \"data\": the data set's per-bin posterior; otherwise a model's posterior-predictive log10 rho (s)"}); err != nil {
		return err
	}
	w.add(cp, jp)
	return nil
}

func reportModelNames(run *reportRun) []string {
	var out []string
	for _, m := range run.models {
		out = append(out, m.name)
	}
	return out
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
	res := w.run.cmp
	var rows []report.Evidence
	for _, r := range res.Rows {
		ev := report.Evidence{Model: r.Model, LnZTI: r.TI.LnZ, LnZTIErr: r.TI.Total, LnZSS: r.SS.LnZ, LnZSSErr: r.SS.Total,
			LnB: r.LnB, LnBErr: r.LnBErr}
		if r.Model != res.Reference {
			ev.Reading = r.Reading // compare.json's words, so the table reads as compare printed
		}
		rows = append(rows, ev)
	}
	meta := w.meta(strings.Join(reportModelNames(w.run), ","))
	meta.Extra["ln_z_ti"] = "derivative-corrected trapezoid (compare.json ln_z_ti), total error"
	meta.Extra["ln_b"] = "as in compare.json: TI difference, errors in quadrature"
	if err := report.WriteComparison(w.o.out, meta, rows, res.Reference, w.o.sig); err != nil {
		return err
	}
	for _, f := range []string{"comparison.tex", "comparison.csv", "comparison.json"} {
		w.add(filepath.Join(w.o.out, f))
	}
	return nil
}

// writeIndex writes report.json, the list of every file written.
func (w *reportWriter) writeIndex() error {
	p := filepath.Join(w.o.out, "report.json")
	w.add(p)
	return writeJSON(p, struct {
		Meta    report.Metadata `json:"metadata"`
		Masses  []float64       `json:"credible_masses_2d"`
		Formats []string        `json:"figure_formats"`
		Files   []string        `json:"files"`
	}{w.meta(strings.Join(reportModelNames(w.run), ",")), w.masses(), w.o.formats, w.files})
}

func (w *reportWriter) masses() []float64 {
	if len(w.o.masses) == 0 {
		return []float64{0.68, 0.95}
	}
	return w.o.masses
}

// printSummary lists on stdout what was written, folder by folder.
func (w *reportWriter) printSummary() {
	fmt.Fprintf(w.e.stdout, "\nReport of %s run %s (%s) in %s: %d files, %.1f s\n", w.run.kind, w.run.dir,
		strings.Join(reportModelNames(w.run), ", "), w.o.out, len(w.files), time.Since(w.start).Seconds())
	groups := map[string][]string{}
	var order []string
	for _, f := range w.files {
		d, base := filepath.Split(f)
		if _, ok := groups[d]; !ok {
			order = append(order, d)
		}
		groups[d] = append(groups[d], base)
	}
	for _, d := range order {
		name := d
		if name == "" {
			name = "./"
		}
		fmt.Fprintf(w.e.stdout, "  %s\n", name)
		for _, l := range wrap(strings.Join(groups[d], " "), 74) {
			fmt.Fprintf(w.e.stdout, "      %s\n", l)
		}
	}
	fmt.Fprintln(w.e.stdout, "report.json lists every file; each JSON file names the run, model, data set and tautline version.")
}
