// Command bench measures tautline's performance ratios on this machine in
// one run and prints them: the share of a fit's wall time spent on
// convergence diagnostics and on writing chain.csv, the KDE table build,
// the likelihood against hand-written lookups, the sampler's overhead per
// walker-step, (with -e2e) the end-to-end effective samples per second of
// the command against a vectorized NumPy stretch-move fit
// (scripts/bench/numpy_fit.py) and the share of diagnostics in
// `fit --until` runs, and (with -compare) the default `compare`
// run of this tree against the one of commit -before, built in a temporary
// git worktree under the system temporary folder and removed afterwards.
// It is not part of `go test ./...`.
//
// Usage, from the repository root:
//
//	go run ./scripts/bench [-steps 20000] [-e2e] [-python python3] [-compare] [-before 8a37ded]
package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"time"

	"tautline/chains"
	"tautline/likelihood"
	"tautline/models"
	"tautline/models/binaries"
	"tautline/models/cosmicstrings"
	"tautline/models/gw"
	"tautline/rundir"
	"tautline/sampler"
)

func main() {
	steps := flag.Int("steps", 20000, "steps of the fits timed")
	e2e := flag.Bool("e2e", true, "also time the command and the NumPy fit end to end")
	py := flag.String("python", "python3", "Python interpreter with NumPy for the end-to-end comparison")
	cmp := flag.Bool("compare", true, "also time the default compare run against the commit -before")
	before := flag.String("before", "8a37ded", "commit whose compare is the reference")
	flag.Parse()
	if err := run(*steps, *e2e, *py, *cmp, *before); err != nil {
		fmt.Fprintln(os.Stderr, "bench:", err)
		os.Exit(1)
	}
}

const h0kms = 67.4

func run(steps int, e2e bool, py string, cmp bool, before string) error {
	fmt.Printf("tautline benchmarks on %s/%s, %d CPUs, GOMAXPROCS %d\n\n", runtime.GOOS, runtime.GOARCH, runtime.NumCPU(), runtime.GOMAXPROCS(0))
	smbhb, err := likelihood.Load("cmd/tautline/demo/smbhb/smbhb.yaml")
	if err != nil {
		return fmt.Errorf("%w (run from the repository root)", err)
	}
	strData, err := likelihood.Load("cmd/tautline/demo/strings/strings.yaml")
	if err != nil {
		return err
	}

	// KDE tables: 30 bins x 2000 samples.
	kdeMs := timeKDE()
	fmt.Printf("KDE table build, 30 bins x 2000 samples:      %7.1f ms   (goal <= 50 ms)\n", kdeMs)

	// Likelihoods against hand-written lookups.
	h0 := gw.H0SI(h0kms)
	bm, _ := binaries.New(binaries.Options{H0: h0})
	pS, fsS, err := posterior(smbhb, bm, h0)
	if err != nil {
		return err
	}
	xs := []float64{-14.6, 13.0 / 3}
	hand := handPowerLaw(smbhb, fsS, h0)
	lk := bestOf(5,
		func() float64 { return nsPer(func() { pS.LogLike(xs) }) },
		func() float64 { return nsPer(func() { hand.logLike(xs) }) })
	full, hv := lk[0], lk[1]
	fmt.Printf("SMBHB likelihood, 30 bins:                    %7.1f ns   hand-written lookup %5.1f ns: ratio %.2f (goal <= 3; best of 5 alternated runs each)\n", full, hv, full/hv)

	tab, err := cosmicstrings.LoadTable(cosmicstrings.DefaultSettings(), "", cosmicstrings.BuildOptions{Workers: runtime.NumCPU(), Seed: 1})
	if err != nil {
		return err
	}
	sm := cosmicstrings.NewModel(tab)
	pT, _, err := posterior(strData, sm, h0)
	if err != nil {
		return err
	}
	xt := midPrior(pT)
	so := bestOf(5,
		func() float64 { return nsPer(func() { pT.LogLike(xt) }) },
		func() float64 { return samplerOverhead(pT.Dim()) })
	strNs, over := so[0], so[1]
	fmt.Printf("string likelihood, 30 bins:                   %7.1f ns\n", strNs)
	fmt.Printf("sampler overhead per walker-step:             %7.1f ns   %.1f %% of a string likelihood (goal <= 10 %%; best of 5 alternated runs each)\n", over, 100*over/strNs)

	// In-process replica of `fit --workers 1` on both demos: shares of time.
	csvAdded := map[string]float64{} // seconds of wall time chain.csv adds
	for _, c := range []struct {
		name string
		post *likelihood.Posterior
	}{{"smbhb", pS}, {"strings", pT}} {
		sh, err := fitShares(c.post, steps)
		if err != nil {
			return err
		}
		fmt.Printf("fit %-8s %d steps x 32 walkers: %.2f s; diagnostics %.1f %% of this run of the sampler and posterior.npy (stricter than the goal, which counts the whole command), chain.csv %.1f %% of the caller's time, %.1f %% added wall time (best of %d runs with and %d without, alternated; goal <= 10 %%)\n",
			c.name, steps, sh.total, 100*sh.diag/sh.total, 100*sh.csv/sh.total, 100*sh.csvWall/sh.total, fitPairs, fitPairs)
		csvAdded[c.name] = sh.csvWall
	}
	if e2e {
		fmt.Println()
		if err := endToEnd(steps, py, smbhb, sm, strData, h0, csvAdded); err != nil {
			return err
		}
	}
	if cmp {
		fmt.Println()
		return compareBeforeAfter(before)
	}
	return nil
}

func posterior(ds *likelihood.Dataset, m models.Model, h0 float64) (*likelihood.Posterior, *likelihood.FreeSpectrum, error) {
	fs, err := likelihood.NewFreeSpectrum(ds, likelihood.Options{})
	if err != nil {
		return nil, nil, err
	}
	p, err := likelihood.NewPosterior(m, nil, ds, fs, h0)
	return p, fs, err
}

func midPrior(p *likelihood.Posterior) []float64 {
	var x []float64
	for _, par := range p.FreeParams() {
		lo, hi := par.Prior.Bounds()
		x = append(x, 0.5*(lo+hi))
	}
	return x
}

// bestOf runs the measurements ms in turn k times and returns the smallest
// value of each: alternating them puts a change in the machine's load on
// all of them alike, and the smallest is the run least disturbed by other
// work.
func bestOf(k int, ms ...func() float64) []float64 {
	best := make([]float64, len(ms))
	for i := range best {
		best[i] = math.Inf(1)
	}
	for range k {
		for i, m := range ms {
			best[i] = math.Min(best[i], m())
		}
	}
	return best
}

// nsPer returns the mean time of f over about 0.2 s, in ns.
func nsPer(f func()) float64 {
	n := 1000
	for {
		t := time.Now()
		for range n {
			f()
		}
		if d := time.Since(t); d > 200*time.Millisecond {
			return float64(d.Nanoseconds()) / float64(n)
		}
		n *= 4
	}
}

func timeKDE() float64 {
	const lo, hi = -10.0, -4.0
	ds := &likelihood.Dataset{Name: "b", Span: 5e8, PriorMin: lo, PriorMax: hi}
	r := rand.New(rand.NewPCG(1, 2))
	for i := range 30 {
		ds.Freqs = append(ds.Freqs, float64(i+1)/ds.Span)
		mu, sd := -6.5-0.12*float64(i), 0.05+0.03*float64(i)
		var s []float64
		for len(s) < 2000 {
			if v := mu + sd*r.NormFloat64(); v >= lo && v <= hi {
				s = append(s, v)
			}
		}
		ds.Bins = append(ds.Bins, likelihood.Bin{Kind: likelihood.Samples, Samples: s})
	}
	best := math.Inf(1)
	for range 5 {
		t := time.Now()
		if _, err := likelihood.NewFreeSpectrum(ds, likelihood.Options{}); err != nil {
			panic(err)
		}
		best = math.Min(best, float64(time.Since(t).Microseconds())/1e3)
	}
	return best
}

// handLookup is the SMBHB likelihood written out by hand: log10 rho_i is
// linear in (log10 A, gamma), and the tables (the same values as the
// FreeSpectrum's, read at its nodes) are interpolated inline.
type handLookup struct {
	a, b, c []float64 // log10 rho_i = a_i + b_i log10A + c_i gamma
	lo, inv float64
	m       int
	table   []float64
}

func handPowerLaw(ds *likelihood.Dataset, fs *likelihood.FreeSpectrum, h0 float64) *handLookup {
	const m = likelihood.DefaultTableSize
	lo, hi := fs.Range()
	h := &handLookup{lo: lo, inv: float64(m-1) / (hi - lo), m: m}
	for i, f := range ds.Freqs {
		off := 0.5 * math.Log10(h0*h0/(8*math.Pow(math.Pi, 4)*math.Pow(f, 5)*ds.Span))
		lnC := math.Log(2 * math.Pi * math.Pi / (3 * h0 * h0))
		lnx := math.Log(f / gw.FYear)
		// log10 rho = off + (lnC + 2 ln f + 2 ln10 log10A + (3-gamma) lnx) / (2 ln10)
		h.a = append(h.a, off+(lnC+2*math.Log(f)+3*lnx)/(2*math.Ln10))
		h.b = append(h.b, 1)
		h.c = append(h.c, -lnx/(2*math.Ln10))
		for k := range m {
			x := lo + float64(k)*(hi-lo)/float64(m-1)
			h.table = append(h.table, fs.LnDensity(i, math.Min(x, hi)))
		}
	}
	return h
}

func (h *handLookup) logLike(x []float64) float64 {
	s := 0.0
	for i := range h.a {
		v := h.a[i] + h.b[i]*x[0] + h.c[i]*x[1]
		u := (v - h.lo) * h.inv
		k := min(max(int(u), 0), h.m-2)
		w := u - float64(k)
		r := h.table[i*h.m+k : i*h.m+k+2]
		s += r[0] + w*(r[1]-r[0])
	}
	return s
}

// noop is a target whose density costs nothing.
type noop struct{ d int }

func (n noop) Dim() int { return n.d }
func (n noop) Draw(r *rand.Rand, x []float64) {
	for i := range x {
		x[i] = r.Float64()
	}
}
func (noop) LogPrior([]float64) float64 { return 0 }
func (noop) LogLike([]float64) float64  { return 0 }

func samplerOverhead(dim int) float64 {
	e, err := sampler.New(noop{dim}, sampler.Config{Walkers: 32, Seed: 1, Workers: 1})
	if err != nil {
		panic(err)
	}
	defer e.Close()
	return nsPer(func() { e.Step() }) / 32
}

type shares struct{ total, diag, csv, csvWall float64 }

// fitPairs is the number of runs of the fit replica with the chain.csv
// writer and without it that fitShares alternates. flushEvery is the
// default of the command's --flush-every (runconfig's Output.FlushEvery),
// which the bench does not import.
const (
	fitPairs   = 5
	flushEvery = 100
)

// fitShares runs what `fit --workers 1 --checkpoint-every 0` runs for the
// sampling phase and posterior.npy, Run with a chain.csv writer on
// every step (and a non-waiting flush every flushEvery steps, as by
// default, the writer held during the diagnostics), and the same run
// without the writer, fitPairs times each in alternation. It returns
// the shares of the fastest run with the writer: csv is the time spent in
// the writer's calls, csvWall the wall time the writer adds, that run's
// time less the fastest run's without the writer (the writer formats and
// writes back in the background, on another core when one is free). The
// fastest run of each kind is the one least slowed by other work on the
// machine, which moves single runs by tens of percent.
func fitShares(p *likelihood.Posterior, steps int) (shares, error) {
	best := shares{total: math.Inf(1)}
	bare := math.Inf(1)
	for range fitPairs {
		sh, err := fitSharesOnce(p, steps, true)
		if err != nil {
			return sh, err
		}
		if sh.total < best.total {
			best = sh
		}
		without, err := fitSharesOnce(p, steps, false)
		if err != nil {
			return sh, err
		}
		bare = math.Min(bare, without.total)
	}
	best.csvWall = math.Max(best.total-bare, 0)
	return best, nil
}

func fitSharesOnce(p *likelihood.Posterior, steps int, write bool) (shares, error) {
	dir, err := os.MkdirTemp("", "tautline-bench")
	if err != nil {
		return shares{}, err
	}
	defer os.RemoveAll(dir)
	t0 := time.Now()
	e, err := sampler.New(p, sampler.Config{Walkers: 32, Seed: 1, Workers: 1})
	if err != nil {
		return shares{}, err
	}
	defer e.Close()
	var w *chains.Writer
	if write {
		if w, err = chains.Create(filepath.Join(dir, "chain.csv"), append([]string{"step", "walker", "ln_post", "ln_like"}, p.FreeNames()...)); err != nil {
			return shares{}, err
		}
	}
	var csv time.Duration
	res, err := sampler.Run(context.Background(), e, sampler.RunOptions{
		MaxSteps: steps, Burn: -1, CheckEvery: max(100, min(500, steps/10)),
		OnCheck: func(sampler.Progress) {}, // fit always reports progress
		Diagnosing: func(on bool) { // as fitrun holds its writer
			switch {
			case !write:
			case on:
				w.Hold()
			default:
				w.Release()
			}
		},
		OnStep: func(en *sampler.Ensemble) error {
			if !write {
				return nil
			}
			// What fitrun's onStep does with --checkpoint-every 0.
			t := time.Now()
			if err := w.AppendEnsemble(en.Steps(), en.LnPost(0), en.LnLike(0), en.Positions(0)); err != nil {
				return err
			}
			if en.Steps()%flushEvery == 0 {
				if err := w.StartFlush(); err != nil {
					return err
				}
			}
			csv += time.Since(t)
			return nil
		},
	})
	if err != nil {
		return shares{}, err
	}
	// What fitrun does next: ask the writer to flush without waiting,
	// write the posterior's files (with or without the writer alike;
	// here posterior.npy, the larger part, fitrun's summary being the
	// command's own), then wait for the writer (its checkpoint's flush,
	// and Close).
	if write {
		t := time.Now()
		err = w.StartFlush()
		csv += time.Since(t)
	}
	if err == nil {
		dim := len(p.FreeNames())
		post, n := rundir.PosteriorSamples(res, dim)
		err = chains.WriteNPY(filepath.Join(dir, "posterior.npy"), n, dim, post)
	}
	if write {
		t := time.Now()
		if cerr := w.Close(); err == nil && cerr != nil {
			err = cerr
		}
		csv += time.Since(t)
	}
	if err != nil {
		return shares{}, err
	}
	total := time.Since(t0).Seconds()
	d := res.DiagnosticsTime.Seconds()
	return shares{total: total, diag: d, csv: csv.Seconds()}, nil
}

// compareBeforeAfter builds the command at commit before in a temporary
// git worktree and this tree's command, runs the default `compare` (three
// models, each with its own default ladder) with each, twice in
// alternation, and prints the faster wall time of each and the largest
// total ln Z (TI) error of each.
func compareBeforeAfter(before string) error {
	tmp, err := os.MkdirTemp("", "tautline-bench-cmp")
	if err != nil {
		return err
	}
	defer os.RemoveAll(tmp)
	wt := filepath.Join(tmp, "before")
	if out, err := exec.Command("git", "worktree", "add", "--detach", wt, before).CombinedOutput(); err != nil {
		return fmt.Errorf("git worktree add: %v\n%s", err, out)
	}
	defer exec.Command("git", "worktree", "remove", "--force", wt).Run()
	bins := map[string]string{"before": filepath.Join(tmp, "tautline-before"), "after": filepath.Join(tmp, "tautline-after")}
	build := exec.Command("go", "build", "-o", bins["before"], "./cmd/tautline")
	build.Dir = wt
	if out, err := build.CombinedOutput(); err != nil {
		return fmt.Errorf("go build at %s: %v\n%s", before, err, out)
	}
	if out, err := exec.Command("go", "build", "-o", bins["after"], "./cmd/tautline").CombinedOutput(); err != nil {
		return fmt.Errorf("go build: %v\n%s", err, out)
	}
	best := map[string]float64{"before": math.Inf(1), "after": math.Inf(1)}
	maxErr := map[string]float64{}
	for i := range 2 {
		for _, k := range []string{"before", "after"} {
			out := filepath.Join(tmp, fmt.Sprintf("cmp-%s-%d", k, i))
			t := time.Now()
			if b, err := exec.Command(bins[k], "compare", "--out", out).CombinedOutput(); err != nil {
				return fmt.Errorf("%s compare: %v\n%s", k, err, b)
			}
			best[k] = math.Min(best[k], time.Since(t).Seconds())
			e, err := maxTotalError(filepath.Join(out, "compare.json"))
			if err != nil {
				return err
			}
			maxErr[k] = e
		}
	}
	fmt.Printf("compare (default, 3 models): %s %.2f s, largest ln Z error %.3f; now %.2f s, largest error %.3f: %.2fx faster (goal >= 2x at equal or better error)\n",
		before, best["before"], maxErr["before"], best["after"], maxErr["after"], best["before"]/best["after"])
	return nil
}

func maxTotalError(path string) (float64, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return 0, err
	}
	var c struct {
		Models []struct {
			TI struct {
				Total float64 `json:"total"`
			} `json:"ln_z_ti"`
		} `json:"models"`
	}
	if err := json.Unmarshal(raw, &c); err != nil {
		return 0, fmt.Errorf("%s: %w", path, err)
	}
	m := 0.0
	for _, r := range c.Models {
		m = math.Max(m, r.TI.Total)
	}
	return m, nil
}

// cmdRuns is the number of runs of each `fit` command endToEnd times (a
// single run moved by tens of percent on a shared machine); the NumPy fit,
// some 30 times slower, is run once. The throughput is the fastest run's;
// the share of the diagnostics the median of the runs' shares, since the
// fastest run by wall time is not the one whose diagnostics were least
// disturbed (the shares of three runs of one build spread over up to 3
// points here).
const cmdRuns = 5

// endToEnd times the command (process start to summary printed) and the
// NumPy fit on both demos and compares their effective samples per second
// (the smallest ESS over the parameters, each program's own estimate).
// It also gives the wall time chain.csv adds (csvAdded, seconds per demo,
// measured by fitShares) as a share of the command's wall time, the
// denominator of the goal, as for the diagnostics.
func endToEnd(steps int, py string, smbhbData *likelihood.Dataset, sm *cosmicstrings.Model, strData *likelihood.Dataset, h0 float64, csvAdded map[string]float64) error {
	tmp, err := os.MkdirTemp("", "tautline-bench")
	if err != nil {
		return err
	}
	defer os.RemoveAll(tmp)
	bin := filepath.Join(tmp, "tautline")
	if out, err := exec.Command("go", "build", "-o", bin, "./cmd/tautline").CombinedOutput(); err != nil {
		return fmt.Errorf("go build: %v\n%s", err, out)
	}
	hasNumPy := exec.Command(py, "-c", "import numpy").Run() == nil
	if !hasNumPy && py == "python3" && exec.Command("/usr/bin/python3", "-c", "import numpy").Run() == nil {
		py, hasNumPy = "/usr/bin/python3", true // the system interpreter, where apt installs NumPy
	}
	if !hasNumPy {
		fmt.Println("end to end: NumPy not available to", py, "- skipping the NumPy comparison (apt-get install -y python3-numpy)")
	}
	exported := map[string]string{"smbhb": filepath.Join(tmp, "np-smbhb"), "strings": filepath.Join(tmp, "np-strings")}
	if hasNumPy {
		if err := exportSMBHB(exported["smbhb"], smbhbData, h0); err != nil {
			return err
		}
		if err := exportStringGrid(exported["strings"], sm, strData, h0); err != nil {
			return err
		}
	}
	for _, demo := range []string{"smbhb", "strings"} {
		args := []string{"fit", "--data", "demo:" + demo, "--model", demo, "--steps", fmt.Sprint(steps), "--workers", "1", "--checkpoint-every", "0"}
		fit, err := fastestFit(bin, filepath.Join(tmp, "fit-"+demo), args)
		if err != nil {
			return err
		}
		fmt.Printf("tautline fit %-8s %d steps: %.2f s (fastest of %d runs), min ESS %.0f: %.0f ESS/s; diagnostics %.1f %% of the command's wall time (median of the runs; %.1f %% in the fastest), chain.csv %.1f %% (the replica's added wall time above; goals <= 10 %%)\n",
			demo, steps, fit.wall, cmdRuns, fit.minESS, fit.minESS/fit.wall, 100*fit.diagShare, 100*fit.diag/fit.wall, 100*csvAdded[demo]/fit.wall)
		for _, until := range untilRuns {
			args := []string{"fit", "--data", "demo:" + demo, "--model", demo, "--until", until, "--workers", "1", "--checkpoint-every", "0"}
			f, err := fastestFit(bin, filepath.Join(tmp, "until-"+demo), args)
			if err != nil {
				return err
			}
			fmt.Printf("tautline fit %-8s --until %s: %.2f s (fastest of %d runs), stopped at %d steps; diagnostics %.1f %% of the command's wall time (median of the runs; %.1f %% in the fastest; goal <= 10 %%)\n",
				demo, until, f.wall, cmdRuns, f.steps, 100*f.diagShare, 100*f.diag/f.wall)
		}
		if !hasNumPy {
			continue
		}
		pargs := []string{"scripts/bench/numpy_fit.py", "--steps", fmt.Sprint(steps), "--problem", exported[demo]}
		t := time.Now()
		b, err := exec.Command(py, pargs...).CombinedOutput()
		if err != nil {
			return fmt.Errorf("%s %s: %v\n%s", py, strings.Join(pargs, " "), err, b)
		}
		pwall := time.Since(t).Seconds()
		var pess float64
		for _, line := range strings.Split(string(b), "\n") {
			if v, ok := strings.CutPrefix(line, "min_ess "); ok {
				fmt.Sscan(v, &pess)
			}
		}
		fmt.Printf("numpy    fit %-8s %d steps: %.2f s, min ESS %.0f: %.0f ESS/s; tautline/NumPy = %.1fx (goal >= 20x)\n",
			demo, steps, pwall, pess, pess/pwall, (fit.minESS/fit.wall)/(pess/pwall))
	}
	return nil
}

// untilRuns are the criteria of the --until fits timed: one stopping
// early (a few thousand steps on the SMBHB demo) and one that also asks
// for R-hat.
var untilRuns = []string{"ess=5000", "ess=20000,rhat=1.01"}

// A fitRun holds the figures of a fit the bench reads from its meta.json
// and its wall time.
type fitRun struct {
	wall   float64 // seconds
	minESS float64 // smallest ESS
	diag   float64 // seconds the convergence diagnostics took
	steps  int     // ensemble steps run
	// diagShare is, for fastestFit's result, the median over its runs of
	// diag / wall.
	diagShare float64
}

// fastestFit runs `tautline args --out out` cmdRuns times (the same seed,
// so the same chain), clearing out before each, and returns the fastest
// run's figures with the median share of the diagnostics.
func fastestFit(bin, out string, args []string) (fitRun, error) {
	best := fitRun{wall: math.Inf(1)}
	args = append(args, "--out", out)
	var shares []float64
	for range cmdRuns {
		if err := os.RemoveAll(out); err != nil {
			return best, err
		}
		t := time.Now()
		if b, err := exec.Command(bin, args...).CombinedOutput(); err != nil {
			return best, fmt.Errorf("tautline %s: %v\n%s", strings.Join(args, " "), err, b)
		}
		w := time.Since(t).Seconds()
		f, err := readFit(filepath.Join(out, "meta.json"))
		if err != nil {
			return best, err
		}
		shares = append(shares, f.diag/w)
		if f.wall = w; w < best.wall {
			best = f
		}
	}
	slices.Sort(shares)
	best.diagShare = (shares[(cmdRuns-1)/2] + shares[cmdRuns/2]) / 2
	return best, nil
}

// readFit returns the smallest ESS, the seconds the convergence
// diagnostics took and the steps of a fit, from its meta.json.
func readFit(meta string) (fitRun, error) {
	raw, err := os.ReadFile(meta)
	if err != nil {
		return fitRun{}, err
	}
	var m struct {
		Diagnostics struct {
			MinESS float64 `json:"min_ess"`
		} `json:"diagnostics"`
		Sampling struct {
			Steps int `json:"steps"`
		} `json:"sampling"`
		Timings []chains.Timing `json:"timings"`
	}
	if err := json.Unmarshal(raw, &m); err != nil {
		return fitRun{}, fmt.Errorf("%s: %w", meta, err)
	}
	f := fitRun{minESS: m.Diagnostics.MinESS, steps: m.Sampling.Steps}
	for _, t := range m.Timings {
		if t.Phase == "diagnostics" {
			f.diag = t.Seconds
		}
	}
	return f, nil
}

// exportStringGrid writes what scripts/bench/numpy_fit.py needs for the
// string demo into dir (an .npz-like folder of .npy files and a JSON
// header): log10 rho_i on a regular (log10 Gmu, log10 alpha) grid at
// P = 1, the per-bin slope of log10 rho in log10 P (it enters as a power
// law, checked here), the free-spectrum tables at their nodes and the
// priors.
func exportStringGrid(dir string, sm *cosmicstrings.Model, ds *likelihood.Dataset, h0 float64) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	p, fs, err := posterior(ds, sm, h0)
	if err != nil {
		return err
	}
	fp := p.FreeParams()
	if len(fp) != 3 {
		return fmt.Errorf("string model has %d free parameters, want 3", len(fp))
	}
	var lo, hi [3]float64
	for k, par := range fp {
		lo[k], hi[k] = par.Prior.Bounds()
	}
	nb := len(ds.Freqs)
	rho := make([]float64, nb)
	at := func(x []float64) ([]float64, error) { return p.Log10Rho(x, rho) }
	// log10 P slope per bin, and a check that it is a power law.
	mid := []float64{0.5 * (lo[0] + hi[0]), 0.5 * (lo[1] + hi[1]), 0}
	r0, err := at(mid)
	if err != nil {
		return err
	}
	r0 = append([]float64(nil), r0...)
	slope := make([]float64, nb)
	mid[2] = lo[2]
	r1, err := at(mid)
	if err != nil {
		return err
	}
	for i := range slope {
		slope[i] = (r1[i] - r0[i]) / lo[2]
	}
	mid[2] = 0.5 * lo[2]
	r2, _ := at(mid)
	for i := range slope {
		if d := r2[i] - (r0[i] + slope[i]*mid[2]); math.Abs(d) > 1e-9 {
			return fmt.Errorf("log10 rho is not linear in log10 P at bin %d (off by %g)", i, d)
		}
	}
	const ng, na = 321, 201
	grid := make([]float64, 0, ng*na*nb)
	for a := range ng {
		for b := range na {
			x := []float64{lo[0] + (hi[0]-lo[0])*float64(a)/(ng-1), lo[1] + (hi[1]-lo[1])*float64(b)/(na-1), 0}
			r, err := at(x)
			if err != nil {
				return err
			}
			grid = append(grid, r...)
		}
	}
	if err := chains.WriteNPY(filepath.Join(dir, "grid.npy"), ng*na, nb, grid); err != nil {
		return err
	}
	return writeHeader(dir, fs, map[string]any{"model": "strings", "lo": lo, "hi": hi, "ng": ng, "na": na, "slope_log10P": slope})
}

// writeHeader writes the free-spectrum tables of fs at their nodes and a
// JSON header with the table range, the penalty and the entries of h.
func writeHeader(dir string, fs *likelihood.FreeSpectrum, h map[string]any) error {
	tlo, thi := fs.Range()
	const m = likelihood.DefaultTableSize
	nb := fs.NumBins()
	tab := make([]float64, 0, nb*m)
	for i := range nb {
		for k := range m {
			tab = append(tab, fs.LnDensity(i, math.Min(tlo+float64(k)*(thi-tlo)/(m-1), thi)))
		}
	}
	if err := chains.WriteNPY(filepath.Join(dir, "tables.npy"), nb, m, tab); err != nil {
		return err
	}
	h["table_lo"], h["table_hi"], h["penalty"] = tlo, thi, fs.Penalty()
	hdr, err := json.Marshal(h)
	if err != nil {
		return err
	}
	return os.WriteFile(filepath.Join(dir, "header.json"), hdr, 0o644)
}

// exportSMBHB writes the SMBHB demo's tables and what the power law needs:
// per bin log10 rho_i = a_i + log10 A + c_i gamma.
func exportSMBHB(dir string, ds *likelihood.Dataset, h0 float64) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	bm, err := binaries.New(binaries.Options{H0: h0})
	if err != nil {
		return err
	}
	_, fs, err := posterior(ds, bm, h0)
	if err != nil {
		return err
	}
	hand := handPowerLaw(ds, fs, h0)
	var lo, hi []float64
	for _, par := range bm.Params() {
		l, u := par.Prior.Bounds()
		lo, hi = append(lo, l), append(hi, u)
	}
	return writeHeader(dir, fs, map[string]any{"model": "smbhb", "a": hand.a, "c": hand.c, "lo": lo, "hi": hi})
}
