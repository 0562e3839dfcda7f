package main

import (
	"context"
	"fmt"
	"path/filepath"
	"strings"
	"time"

	"tautline/cmd/tautline/internal/cli"
	"tautline/models"
	"tautline/models/registry"
	"tautline/report"
	"tautline/runconfig"
	"tautline/rundir"
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
  posterior with each model's posterior-predictive 68 % and 95 % bands; for
  a run on several data sets, each data set's bins in its own colour with
  the bands at its frequencies, and a dataset column),
  exclusion.png/svg (when a model has the exclusion curve), for compare runs
  comparison.tex/csv/json (ln Z by TI and SS with errors, ln B as compare.json
  gives it), and report.json listing every file.

Every JSON file carries a "metadata" block naming the run, model, data set
and tautline version. The data set and model are rebuilt from the run's
configuration for the spectrum figure, so run the report from the folder the
run was started in when the data set was given by a relative path.`

func runReport(_ context.Context, e *env, args []string) error {
	fs := newFlagSet(e, "report", "RUNDIR [options]", reportHelp)
	var (
		o                             report.RunOptions
		formats, masses               string
		sigma2d, noSpectrum, noTraces bool
		truths                        cli.Multi
		logLevel, logFrmt             string
	)
	fs.StringVar(&o.Out, "out", "", "folder for the report (default RUNDIR/report)")
	fs.StringVar(&formats, "formats", "png,svg", "comma-separated figure formats among png, svg, pdf")
	fs.IntVar(&o.DPI, "dpi", 300, "resolution of PNG figures, dots per inch")
	fs.StringVar(&masses, "masses", "", "comma-separated credible masses of the 2-D contours, as fractions or percentages (default 68 % and 95 %: 0.682689,0.95)")
	fs.BoolVar(&sigma2d, "sigma2d", false, "draw the 2-D \"1 and 2 sigma\" regions, masses 0.393 and 0.865, instead of 68 % and 95 %")
	fs.BoolVar(&o.SmoothedMass, "smoothed-mass", false, "place contour levels by the mass of the smoothed density instead of the mass of the samples")
	fs.Var(&truths, "truth", "NAME=VALUE: mark a true (injected) parameter value in the corner figure; repeatable")
	fs.IntVar(&o.Draws, "draws", 400, "posterior draws pushed through each model for the posterior-predictive spectrum")
	fs.IntVar(&o.BinDraws, "bin-draws", 400, "quantile samples per frequency bin drawn for bins given as a grid or a normal summary")
	fs.IntVar(&o.Sig, "sig", 2, "significant figures of the smaller error in LaTeX tables")
	fs.IntVar(&o.Slices, "slices", 16, "slices of log10_alpha in the exclusion curve")
	fs.Float64Var(&o.LimitMass, "limit-mass", 0.95, "credible mass of the exclusion curve's upper limit on log10_Gmu")
	fs.BoolVar(&noSpectrum, "no-spectrum", false, "skip the spectrum figure (which rebuilds the data set and model)")
	fs.BoolVar(&noTraces, "no-trace", false, "skip the trace figure of fit runs (which reads the whole chain.csv)")
	fs.StringVar(&logLevel, "log-level", "info", "progress messages on stderr: debug, info, warn or error")
	fs.StringVar(&logFrmt, "log-format", "text", "progress message format: text or json")

	// Flags may come before or after RUNDIR.
	pos, err := cli.ParseInterspersed(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return fmt.Errorf("%w: want exactly one run folder, got %d arguments", errUsage, len(pos))
	}
	dir := filepath.Clean(pos[0])
	if o.Out == "" {
		o.Out = filepath.Join(dir, "report")
	}
	if err := o.SetFigures(formats, masses, sigma2d); err != nil {
		return fmt.Errorf("%w: %v", errUsage, err)
	}
	if o.Truths, err = registry.ParseAssignments(truths); err != nil {
		return fmt.Errorf("%w: --truth %v", errUsage, err)
	}
	if err := o.Check(); err != nil {
		return fmt.Errorf("%w: %v", errUsage, err)
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
	cfgs, err := runconfig.RunConfigs(run)
	if err != nil {
		return err
	}
	if err := o.CheckTruths(run); err != nil {
		return fmt.Errorf("%w: %v", errUsage, err)
	}
	o.Version, o.Log = versionString(), lg
	o.Params = func(m *rundir.Model) ([]models.Param, error) {
		md, err := registry.Build(cfgs[m].ModelSettings(), lg.Debugf)
		if err != nil {
			return nil, err
		}
		return md.Params(), nil
	}
	if !noSpectrum {
		o.Rebuild = reportRebuild{cfgs: cfgs, logf: lg.Infof}
	}
	files, err := report.WriteRun(run, o)
	if err != nil {
		return err
	}
	printReportSummary(e, run, o.Out, files, start)
	return nil
}

// reportRebuild rebuilds a run's models from the configurations the run
// recorded.
type reportRebuild struct {
	cfgs map[*rundir.Model]runconfig.Config
	logf func(string, ...any)
}

func (r reportRebuild) DataSpec(m *rundir.Model) string { return r.cfgs[m].Data.String() }

func (r reportRebuild) Problem(m *rundir.Model) (report.Rebuilt, error) {
	pb, err := buildProblem(r.cfgs[m], r.logf)
	if err != nil {
		return report.Rebuilt{}, err
	}
	out := report.Rebuilt{Posts: pb.Target.Parts(), SHA256: runconfig.DataIdentity(pb.Data).SHA256}
	for _, d := range pb.Data {
		out.Data = append(out.Data, d.Set)
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
