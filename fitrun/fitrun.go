// Package fitrun drives one fit: it runs the affine-invariant ensemble
// sampler (Goodman & Weare 2010, with optional parallel tempering) on a
// target, appends every walker's state to chain.csv as it goes, writes a
// checkpoint every so many steps and on interruption, resumes a stopped run
// to the same chain bytes as a run that never stopped, and at the end
// writes the burned-in, thinned posterior samples, their summary and the
// run's metadata into a fit folder laid out as rundir describes.
//
// It knows neither models nor data sets: it samples a sampler.Target and
// records what the caller says about it.
package fitrun

import (
	"context"
	"errors"
	"fmt"
	"os"
	"strings"
	"time"

	"tautline/chains"
	"tautline/internal/safeio"
	"tautline/rundir"
	"tautline/sampler"
)

// Problem is what a fit samples and what its metadata says about it.
type Problem struct {
	// Target is the posterior; its free parameters are the chain columns.
	Target sampler.Target
	// Names are the free parameters' names, in the Target's order.
	Names []string
	// Meta is the run's metadata as known before sampling (version,
	// command line, configuration, seed, data set, model, start time,
	// outputs). Run fills the status, end time, timings, diagnostics and
	// the sampling record; Meta.Start is the start of the "total" timing.
	Meta chains.Meta
	// Likelihood describes the densities behind the Target, for the
	// sampling record of meta.json.
	Likelihood Likelihood
}

// Likelihood is how the free-spectrum densities of a fit were built.
type Likelihood struct {
	BandwidthRule     string
	Bandwidths        []float64
	AboveRangePenalty float64
}

// Settings say how long to sample and how often to write.
type Settings struct {
	// Sampler configures the ensemble: walkers, seed, moves, workers, the
	// tempering ladder, and the fingerprint that a checkpoint must match.
	Sampler sampler.Config
	// Steps is the cap on ensemble steps; Burn and Thin are as in
	// sampler.RunOptions (-1 and 0 choose them).
	Steps, Burn, Thin int
	// Until are the convergence criteria (none: run Steps steps) and
	// UntilSpec the text they were given as, recorded in meta.json.
	Until     sampler.Criteria
	UntilSpec string
	// CheckpointEvery and FlushEvery are the steps between checkpoints and
	// between chain flushes (0: never, except at the end).
	CheckpointEvery, FlushEvery int
	// Out is the fit folder; it must exist.
	Out string
	// Resume continues the run in Out from its checkpoint.
	Resume bool
	// Reporter receives progress; every member may be nil.
	Reporter Reporter
}

// Reporter receives a fit's progress.
type Reporter struct {
	// Infof receives log lines, Warnf warnings.
	Infof, Warnf func(format string, args ...any)
	// Step is called after every step with the ensemble's step count.
	Step func(steps int)
	// Check is called after every convergence check.
	Check func(sampler.Progress)
}

// Result is a finished fit.
type Result struct {
	// Sampler is the sampler's result: status, steps, burn-in, thinning,
	// diagnostics.
	Sampler sampler.Result
	// Summary summarises each free parameter's posterior samples.
	Summary []rundir.ParamSummary
	// Samples is the number of posterior samples written.
	Samples int
}

// checkEvery is the interval between convergence checks of a run of steps
// steps: a tenth of the run, at least 100 and at most 500.
func checkEvery(steps int) int { return max(100, min(500, steps/10)) }

// Run samples p into the fit folder s.Out and writes chain.csv,
// checkpoint.bin, posterior.npy, summary.json, meta.json and, with
// tempering, rungs_lnl.bin. When ctx is
// cancelled it saves a checkpoint, marks meta.json interrupted and returns
// an error saying how to resume.
func Run(ctx context.Context, p Problem, s Settings) (*Result, error) {
	paths := rundir.FitPaths(s.Out)
	if err := removeStale(s, time.Now()); err != nil {
		return nil, err
	}
	columns := append([]string{"step", "walker", "ln_post", "ln_like"}, p.Names...)
	ens, w, hot, err := open(p, s, paths, columns)
	if err != nil {
		return nil, err
	}
	defer ens.Close()
	defer w.Close()
	defer hot.Close()

	meta := &rundir.Meta{Meta: p.Meta}
	if hot != nil {
		meta.Outputs = append(meta.Outputs[:len(meta.Outputs):len(meta.Outputs)], rundir.RungsOutput())
	}
	meta.Status = "running"
	if err := rundir.WriteMeta(paths.Meta, meta); err != nil {
		return nil, err
	}
	rep := s.Reporter
	dim := len(p.Names)
	writeCheckpoint := func(en *sampler.Ensemble) error {
		off, err := w.Flush()
		if err != nil {
			return err
		}
		if hot != nil {
			if err := hot.flush(); err != nil {
				return err
			}
		}
		state, err := en.MarshalBinary()
		if err != nil {
			return err
		}
		return rundir.WriteCheckpoint(paths.Checkpoint, rundir.Checkpoint{ChainOffset: off, State: state})
	}
	onStep := func(en *sampler.Ensemble) error {
		// One row per walker: step, walker, ln_post, ln_like, position.
		if err := w.AppendEnsemble(en.Steps(), en.LnPost(0), en.LnLike(0), en.Positions(0)); err != nil {
			return err
		}
		if hot != nil {
			if err := hot.append(en); err != nil {
				return err
			}
		}
		n := en.Steps()
		if ce := s.CheckpointEvery; ce > 0 && n%ce == 0 {
			if err := writeCheckpoint(en); err != nil {
				return fmt.Errorf("checkpoint: %w", err)
			}
		} else if fe := s.FlushEvery; fe == 1 {
			// Every step on disk before the next one starts.
			if _, err := w.Flush(); err != nil {
				return err
			}
		} else if fe > 1 && n%fe == 0 {
			// Without waiting, and without an fsync, which at a fast
			// model's pace costs more than the steps between flushes: the
			// rows are written and reach the disk while the next steps run
			// (chains.Writer.StartFlush: when its goroutine is behind, a
			// crash also loses what it has not written yet, a few MB at
			// most), and its errors come back from a later Append, Flush or
			// Close. A checkpoint, which records the chain's length, fsyncs
			// and waits (Flush): resume truncates the chain to that length,
			// so an fsync between checkpoints would keep only rows that a
			// resume drops.
			if err := w.StartFlush(); err != nil {
				return err
			}
		}
		if rep.Step != nil {
			rep.Step(n)
		}
		return nil
	}
	sampleStart := time.Now()
	res, runErr := sampler.Run(ctx, ens, sampler.RunOptions{
		MaxSteps: s.Steps, Burn: s.Burn, Thin: s.Thin, Until: s.Until,
		CheckEvery: checkEvery(s.Steps), OnStep: onStep, OnCheck: rep.Check,
		// The writer's goroutine formats on the core the diagnostics'
		// second goroutine wants while the ensemble waits for them; it
		// catches up while the ensemble samples, and after the final
		// report while the posterior's files are written (below).
		Diagnosing: func(on bool) {
			if on {
				w.Hold()
			} else {
				w.Release()
			}
		},
	})
	sampled := time.Now()
	if runErr != nil && !errors.Is(runErr, context.Canceled) {
		return nil, runErr
	}
	var post []float64
	var n int
	var sum []rundir.ParamSummary
	if runErr == nil {
		// The posterior's files first: meanwhile the writer's goroutine
		// writes the chain's last rows, which it held during the final
		// report, and the checkpoint below waits for it.
		if err := w.StartFlush(); err != nil {
			return nil, err
		}
		post, n = rundir.PosteriorSamples(res, dim)
		if err := chains.WriteNPY(paths.Posterior, n, dim, post); err != nil {
			return nil, err
		}
		sum = FitSummary(p.Names, post, n, dim)
		if err := rundir.WriteJSON(paths.Summary, rundir.Summary{Params: sum, Samples: n, Burn: res.Burn, Thin: res.Thin}); err != nil {
			return nil, err
		}
	}
	if err := writeCheckpoint(ens); err != nil {
		return nil, fmt.Errorf("checkpoint: %w", err)
	}
	if err := w.Close(); err != nil {
		return nil, err
	}
	if err := hot.Close(); err != nil {
		return nil, err
	}
	if runErr != nil {
		meta.Status = "interrupted"
		meta.End = time.Now()
		_ = rundir.WriteMeta(paths.Meta, meta)
		return nil, fmt.Errorf("interrupted at step %d; the checkpoint is saved: continue with the same command and --resume", ens.Steps())
	}

	meta.Status = res.Status.String()
	meta.End = time.Now()
	meta.Diagnostics = res.Report
	meta.Timings = append(meta.Timings, chains.Timing{Phase: "sampling", Seconds: sampled.Sub(sampleStart).Seconds()},
		chains.Timing{Phase: "diagnostics", Seconds: res.DiagnosticsTime.Seconds()},
		chains.Timing{Phase: "total", Seconds: time.Since(p.Meta.Start).Seconds()})
	meta.Sampling = &chains.Sampling{Steps: res.Steps, Burn: res.Burn, Thin: res.Thin, PosteriorSamples: n,
		Acceptance: ens.AcceptanceFractions(0), BandwidthRule: p.Likelihood.BandwidthRule, Bandwidths: p.Likelihood.Bandwidths,
		AboveRangePenalty: p.Likelihood.AboveRangePenalty, Until: s.UntilSpec}
	if err := rundir.WriteMeta(paths.Meta, meta); err != nil {
		return nil, err
	}
	return &Result{Sampler: res, Summary: sum, Samples: n}, nil
}

// removeStale deletes the temporaries (".NAME.tmp-*" older than started)
// that atomic writes of a killed run left in the fit folder, which this
// run owns, and logs them.
func removeStale(s Settings, started time.Time) error {
	names, err := safeio.RemoveStale(s.Out, safeio.TempsOf(rundir.CheckpointFile, rundir.PosteriorFile, rundir.SummaryFile, rundir.MetaFile, rundir.ChainFile), started)
	if len(names) > 0 && s.Reporter.Warnf != nil {
		s.Reporter.Warnf("removed %d stale temporaries of an interrupted run from %s: %s", len(names), s.Out, strings.Join(names, ", "))
	}
	if err != nil {
		return fmt.Errorf("output folder: %w", err)
	}
	return nil
}

// open starts the ensemble, the chain file and, with tempering, the rungs
// file: new ones, or, with s.Resume, the checkpoint's state with the
// history read back from the chain (and rungs) file, both files cut back
// to the length the checkpoint recorded.
func open(p Problem, s Settings, paths rundir.Fit, columns []string) (*sampler.Ensemble, *chains.Writer, *rungsFile, error) {
	if !s.Resume {
		if _, err := os.Stat(paths.Checkpoint); err == nil {
			return nil, nil, nil, fmt.Errorf("%s exists: this folder holds a run already; continue it with --resume or choose another --out", paths.Checkpoint)
		}
		t0 := time.Now()
		ens, err := sampler.New(p.Target, s.Sampler)
		if err != nil {
			return nil, nil, nil, err
		}
		// New evaluates every walker of every rung at least once.
		s.warnLong(len(p.Names), time.Since(t0)/time.Duration(ens.Walkers()*ens.Rungs()), 0)
		w, err := chains.Create(paths.Chain, columns)
		if err != nil {
			ens.Close()
			return nil, nil, nil, err
		}
		var hot *rungsFile
		if ens.Rungs() > 1 {
			if hot, err = createRungs(paths.Rungs, ens.Rungs()-1, ens.Walkers()); err != nil {
				w.Close()
				ens.Close()
				return nil, nil, nil, err
			}
		}
		return ens, w, hot, nil
	}
	ck, err := rundir.ReadCheckpointLimit(paths.Checkpoint, s.checkpointLimit(len(p.Names)))
	if err != nil {
		return nil, nil, nil, err
	}
	recorded := 0
	var loadErr error
	load := historyLoader(paths.Chain, paths.Rungs, ck.ChainOffset, columns, &recorded)
	ens, err := sampler.Restore(p.Target, s.Sampler, ck.State, func(h *sampler.History, steps int) error {
		loadErr = load(h, steps)
		return loadErr
	})
	if loadErr != nil {
		return nil, nil, nil, fmt.Errorf("resuming from %s: the run's history cannot be read back: %w", paths.Checkpoint, loadErr)
	}
	if err != nil {
		return nil, nil, nil, fmt.Errorf("%s: %w (was the configuration or data changed since the run started?)", paths.Checkpoint, err)
	}
	w, err := chains.Resume(paths.Chain, columns, ck.ChainOffset)
	if err != nil {
		ens.Close()
		return nil, nil, nil, err
	}
	var hot *rungsFile
	if ens.Rungs() > 1 {
		if hot, err = resumeRungs(paths.Rungs, ens.Rungs()-1, ens.Walkers(), recorded); err != nil {
			w.Close()
			ens.Close()
			return nil, nil, nil, err
		}
	}
	if s.Reporter.Infof != nil {
		s.Reporter.Infof("resuming from step %d (%s)", ens.Steps(), paths.Checkpoint)
	}
	return ens, w, hot, nil
}
