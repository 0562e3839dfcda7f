package main

import (
	"context"
	"encoding/json"
	"fmt"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"tautline/cmd/tautline/internal/cli"
	"tautline/likelihood"
	"tautline/models"
	"tautline/models/registry"
	"tautline/report"
	"tautline/runconfig"
	"tautline/rundir"
	"tautline/stats"
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
		truths             cli.Multi
		logLevel, logFrmt  string
		smoothed, noTraces bool
	)
	fs.StringVar(&o.out, "out", "", "folder for the report (default RUNDIR/report)")
	fs.StringVar(&formats, "formats", "png,svg", "comma-separated figure formats among png, svg, pdf")
	fs.IntVar(&o.dpi, "dpi", 300, "resolution of PNG figures, dots per inch")
	fs.StringVar(&masses, "masses", "", "comma-separated credible masses of the 2-D contours, as fractions or percentages (default 68 % and 95 %: 0.682689,0.95)")
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
		if err := cli.Parse(fs, args); err != nil {
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
	for _, f := range cli.SplitList(formats) {
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
	if o.masses, err = stats.ParseMasses(masses); err != nil {
		return fmt.Errorf("%w: --masses: %v", errUsage, err)
	}
	if sigma2d {
		if masses != "" {
			return fmt.Errorf("%w: --sigma2d and --masses both set the contour masses; give one", errUsage)
		}
		o.masses = []float64{stats.Mass1Sigma2D, stats.Mass2Sigma2D}
	}
	if o.truths, err = registry.ParseAssignments(truths); err != nil {
		return fmt.Errorf("%w: --truth %v", errUsage, err)
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
	lg, err := cli.NewLogger(e.stderr, logLevel, logFrmt)
	if err != nil {
		return err
	}
	start := time.Now()
	run, err := rundir.Load(dir, rundir.Options{Traces: !noTraces})
	if err != nil {
		return err
	}
	cfgs, err := reportConfigs(run)
	if err != nil {
		return err
	}
	var known []string
	for _, m := range run.Models {
		known = append(known, m.Names...)
	}
	for name := range o.truths {
		if !slices.Contains(known, name) {
			return fmt.Errorf("%w: --truth %s: no model of the run has that parameter; they have %s", errUsage, name, strings.Join(slices.Compact(slices.Sorted(slices.Values(known))), ", "))
		}
	}
	ro := report.RunOptions{
		Out: o.out, Formats: o.formats, DPI: o.dpi, Masses: o.masses, SmoothedMass: smoothed, Truths: o.truths,
		Draws: o.draws, BinDraws: o.binDraws, Sig: o.sig, Slices: o.slices, LimitMass: o.limitMass,
		Version: versionString(), Log: lg,
		Params: func(m *rundir.Model) ([]models.Param, error) {
			md, err := buildModel(cfgs[m], lg.Debugf)
			if err != nil {
				return nil, err
			}
			return md.Params(), nil
		},
	}
	if !o.noSpectrum {
		ro.Rebuild = reportRebuild{cfgs: cfgs, logf: lg.Infof}
	}
	files, err := report.WriteRun(run, ro)
	if err != nil {
		return err
	}
	printReportSummary(e, run, o.out, files, start)
	return nil
}

// reportRebuild rebuilds a run's models from the configurations the run
// recorded.
type reportRebuild struct {
	cfgs map[*rundir.Model]runconfig.Config
	logf func(string, ...any)
}

func (r reportRebuild) DataSpec(m *rundir.Model) string { return r.cfgs[m].Data }

func (r reportRebuild) Problem(m *rundir.Model) (*likelihood.Dataset, *likelihood.Posterior, error) {
	pb, err := buildProblem(r.cfgs[m], r.logf)
	if err != nil {
		return nil, nil, err
	}
	return pb.data, pb.post, nil
}

// reportConfigs decodes the configuration each model of run recorded.
func reportConfigs(run *rundir.Run) (map[*rundir.Model]runconfig.Config, error) {
	out := map[*rundir.Model]runconfig.Config{}
	for _, m := range run.Models {
		cfg := runconfig.Default()
		if err := json.Unmarshal(m.Config, &cfg); err != nil {
			if run.Kind == rundir.KindFit {
				return nil, fmt.Errorf("%s: config: %w", filepath.Join(run.Dir, rundir.MetaFile), err)
			}
			return nil, fmt.Errorf("%s: part.json of model %s: config: %w", run.Dir, m.Name, err)
		}
		out[m] = cfg
	}
	return out, nil
}

// printReportSummary lists on stdout what was written, folder by folder.
func printReportSummary(e *env, run *rundir.Run, out string, files []string, start time.Time) {
	fmt.Fprintf(e.stdout, "\nReport of %s run %s (%s) in %s: %d files, %.1f s\n", run.Kind, run.Dir,
		strings.Join(run.ModelNames(), ", "), out, len(files), time.Since(start).Seconds())
	groups := map[string][]string{}
	var order []string
	for _, f := range files {
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
		fmt.Fprintf(e.stdout, "  %s\n", name)
		for _, l := range cli.Wrap(strings.Join(groups[d], " "), 74) {
			fmt.Fprintf(e.stdout, "      %s\n", l)
		}
	}
	fmt.Fprintln(e.stdout, "report.json lists every file; each JSON file names the run, model, data set and tautline version.")
}
