package sampler

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat/distuv"
)

func TestRunConverges(t *testing.T) {
	g := newGaussTarget(t, []float64{2, -1}, [][]float64{{1, 0.8}, {0.8, 1}})
	e, err := New(g, Config{Walkers: 16, Seed: 12})
	if err != nil {
		t.Fatal(err)
	}
	var checks []Progress
	onStep := 0
	until := Criteria{ESS: 1000, TauMultiple: 50, Rhat: 1.01}
	res, err := Run(context.Background(), e, RunOptions{
		MaxSteps: 50000, Burn: -1, CheckEvery: 1000, Until: until,
		OnStep:  func(*Ensemble) error { onStep++; return nil },
		OnCheck: func(p Progress) { checks = append(checks, p) },
	})
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != Converged {
		t.Fatalf("status %v after %d steps, report %+v", res.Status, res.Steps, res.Report)
	}
	// A check at most every 1000 steps (those that decide nothing only
	// within their share of the time), the last one deciding.
	if last := checks[len(checks)-1]; onStep != res.Steps || len(checks) > res.Steps/1000 || !last.Converged || !last.decides {
		t.Errorf("OnStep called %d times, OnCheck %d times for %d steps, the last %+v", onStep, len(checks), res.Steps, last)
	}
	rep := res.Report
	t.Logf("converged after %d steps: burn %d, thin %d, tau %.3g, ESS %.4g, R-hat %.4f", res.Steps, res.Burn, res.Thin, rep.MaxTau, rep.MinESS, rep.MaxRhat)
	if rep.MinESS < until.ESS || rep.MaxRhat > until.Rhat || float64(res.Steps-res.Burn) < until.TauMultiple*rep.MaxTau {
		t.Errorf("converged but criteria fail: %+v", rep)
	}
	// Burn-in of 5 tau (of the whole chain at the last check) and
	// thinning floor(tau/2), as documented.
	if res.Burn < int(4*rep.MaxTau) || res.Thin != max(1, int(rep.MaxTau/2)) {
		t.Errorf("burn %d thin %d for tau %.3g", res.Burn, res.Thin, rep.MaxTau)
	}
	// The retained history samples the target: x0 ~ N(2, 1) (KS against
	// gonum distuv.Normal, thinned by tau).
	x := thin(res.History.Param(0, res.BurnIndex), 16, int(math.Ceil(rep.MaxTau)))
	if D, p := ksPValue(x, distuv.Normal{Mu: 2, Sigma: 1}.CDF); p < ksAlpha {
		t.Errorf("retained x0: KS D = %.4g with %d draws, p = %.2g", D, len(x), p)
	}
	if n := res.History.Len() - res.BurnIndex; len(res.History.LnLike(0, res.BurnIndex)) != n*16 {
		t.Errorf("LnLike history has %d values, want %d", len(res.History.LnLike(0, res.BurnIndex)), n*16)
	}
	if checks[0].ETA < 0 && !checks[0].Converged {
		t.Logf("first check had no ETA: %+v", checks[0])
	}
}

func TestRunStops(t *testing.T) {
	g := newGaussTarget(t, []float64{0, 0}, [][]float64{{1, 0}, {0, 1}})
	newE := func() *Ensemble {
		e, err := New(g, Config{Walkers: 8, Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		return e
	}
	t.Run("max steps", func(t *testing.T) {
		res, err := Run(context.Background(), newE(), RunOptions{MaxSteps: 300, Burn: 50, Until: Criteria{ESS: 1e9}})
		if err != nil || res.Status != MaxStepsReached || res.Steps != 300 || res.Burn != 50 {
			t.Errorf("status %v, steps %d, burn %d, err %v", res.Status, res.Steps, res.Burn, err)
		}
		if !strings.Contains(res.Status.String(), "without convergence") {
			t.Errorf("status text %q", res.Status)
		}
	})
	t.Run("cancel", func(t *testing.T) {
		ctx, cancel := context.WithCancel(context.Background())
		defer cancel()
		e := newE()
		res, err := Run(ctx, e, RunOptions{MaxSteps: 1000, OnStep: func(e *Ensemble) error {
			if e.Steps() == 30 {
				cancel()
			}
			return nil
		}})
		if !errors.Is(err, context.Canceled) || res.Status != Interrupted || res.Steps != 30 || e.Steps() != 30 {
			t.Errorf("status %v, steps %d, err %v; want Interrupted after step 30", res.Status, res.Steps, err)
		}
	})
	t.Run("OnStep error", func(t *testing.T) {
		boom := errors.New("disk full")
		_, err := Run(context.Background(), newE(), RunOptions{MaxSteps: 10, OnStep: func(*Ensemble) error { return boom }})
		if !errors.Is(err, boom) || !strings.Contains(err.Error(), "step 1") {
			t.Errorf("error %v", err)
		}
	})
	t.Run("bad options", func(t *testing.T) {
		if _, err := Run(context.Background(), newE(), RunOptions{}); err == nil || !strings.Contains(err.Error(), "MaxSteps") {
			t.Errorf("error %v", err)
		}
	})
}

// TestHistoryMaxTau checks the thinned autocorrelation time used by Run's
// checks against the full-resolution estimate on the same AR(1) data.
func TestHistoryMaxTau(t *testing.T) {
	const steps, walkers = 40000, 8
	for _, phi := range []float64{0.5, 0.99} {
		a := ar1(phi, steps, walkers, 17)
		// Parameter 1 mixes fast (tau = 1.22), so parameter 0 sets the
		// maximum.
		b := ar1(0.1, steps, walkers, 18)
		h := &History{n: steps, walkers: walkers, dim: 2, rungs: 1, pos: make([]float64, steps*walkers*2)}
		for i := range a {
			h.pos[2*i], h.pos[2*i+1] = a[i], b[i]
		}
		full, _ := AutocorrTime(a, steps, walkers)
		got := h.maxTau(0)
		// Thinning by at most tau/10 changes the AR(1) value
		// (1+phi^k)/(1-phi^k) k by under 0.5 % (closed form); 3 % allows for
		// the estimators' different noise on the same data.
		if math.Abs(got-full) > 0.03*full {
			t.Errorf("phi = %v: thinned tau %.4g, full-resolution %.4g", phi, got, full)
		}
	}
}

func TestIsCheckStep(t *testing.T) {
	tests := []struct {
		every int
		steps []int
		want  []bool
	}{
		// Below 8 intervals every multiple is checked.
		{10, []int{0, 5, 10, 20, 70, 75}, []bool{false, false, true, true, true, false}},
		// From 8 to 16 intervals every second, from 16 to 32 every fourth.
		{10, []int{80, 90, 100, 160, 170, 180, 190, 200}, []bool{true, false, true, true, false, false, false, true}},
	}
	for _, tc := range tests {
		for i, s := range tc.steps {
			if got := isCheckStep(s, tc.every); got != tc.want[i] {
				t.Errorf("isCheckStep(%d, %d) = %v, want %v", s, tc.every, got, tc.want[i])
			}
		}
	}
	// 4 checks per doubling once the interval grows.
	n := 0
	for s := 3200; s < 6400; s++ {
		if isCheckStep(s, 10) {
			n++
		}
	}
	if n != 4 {
		t.Errorf("%d checks between steps 3200 and 6400, want 4", n)
	}
}

// maxTau is the largest autocorrelation time of recorded steps [from,
// Len()) with the final report's thinning (tau/10).
func (h *History) maxTau(from int) float64 {
	return h.maxTauThinned(from, finalThinning)
}

// TestRunUnreadChecksSkipped: without criteria the intermediate checks
// only feed OnCheck, so a run without OnCheck skips them; its result is
// the same, bit for bit, as that of a run whose checks were all read.
func TestRunUnreadChecksSkipped(t *testing.T) {
	g := newGaussTarget(t, []float64{2, -1}, [][]float64{{1, 0.8}, {0.8, 1}})
	run := func(onCheck func(Progress)) Result {
		e, err := New(g, Config{Walkers: 16, Seed: 5})
		if err != nil {
			t.Fatal(err)
		}
		defer e.Close()
		// Progress checks come at least progressInterval apart: a pause
		// before each check step lets every one of them run.
		pause := func(e *Ensemble) error {
			if isCheckStep(e.Steps(), 100) && e.Steps() < 400 {
				time.Sleep(progressInterval)
			}
			return nil
		}
		res, err := Run(context.Background(), e, RunOptions{MaxSteps: 400, Burn: -1, CheckEvery: 100, OnCheck: onCheck, OnStep: pause})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	checks := 0
	read := run(func(Progress) { checks++ })
	unread := run(nil)
	if checks < 4 { // at steps 100, 200, 300 and the final report's
		t.Fatalf("the run with OnCheck saw %d checks, want several", checks)
	}
	if fmt.Sprint(read.Report) != fmt.Sprint(unread.Report) || read.Burn != unread.Burn || read.Thin != unread.Thin || read.Status != unread.Status {
		t.Errorf("results differ:\nwith OnCheck    %v burn %d thin %d\nwithout OnCheck %v burn %d thin %d",
			read.Report, read.Burn, read.Thin, unread.Report, unread.Burn, unread.Thin)
	}
}

// TestDecideAtShownRhat: a deciding check whose conditions fail shows the
// R-hat a progress check shows; one whose conditions hold is replaced by
// the final report, R-hat and all, so it leaves its own R-hat out.
func TestDecideAtShownRhat(t *testing.T) {
	g := newGaussTarget(t, []float64{2, -1}, [][]float64{{1, 0.8}, {0.8, 1}})
	e, err := New(g, Config{Walkers: 16, Seed: 5})
	if err != nil {
		t.Fatal(err)
	}
	defer e.Close()
	e.hist = newHistory(e)
	for range 3000 {
		if err := e.Step(); err != nil {
			t.Fatal(err)
		}
	}
	for _, c := range []struct {
		ess       float64
		converged bool
	}{{1e9, false}, {10, true}} {
		opt := RunOptions{MaxSteps: 1 << 20, Burn: -1, Until: Criteria{ESS: c.ess}}
		ev, converged, _ := decideAt(stateOf(e), opt)
		if converged != c.converged {
			t.Fatalf("ESS %v: converged %v, want %v", c.ess, converged, c.converged)
		}
		want := evaluate(e, opt, converged) // a progress check's, or the final report's
		if got := ev.report.MaxRhat; math.IsNaN(got) || got != want.report.MaxRhat {
			t.Errorf("ESS %v: R-hat %v, want %v", c.ess, got, want.report.MaxRhat)
		}
	}
}

// TestRunDiagnosing: Run calls Diagnosing(true) before and
// Diagnosing(false) after every evaluation, in pairs, never with OnStep
// in between, and each OnCheck follows a pair; the run is the same as
// without the hook. A converging run (its last evaluation a deciding check
// with the final report), one that reaches MaxSteps (a final report of its
// own) and a resumed one (whose decisions are repeated) are followed.
func TestRunDiagnosing(t *testing.T) {
	g := newGaussTarget(t, []float64{0, 1}, [][]float64{{1, 0.5}, {0.5, 2}})
	for _, c := range []struct {
		name   string
		until  Criteria
		resume int // steps run first, then resumed; 0: one run
	}{
		{"converges", Criteria{ESS: 2000}, 0},
		{"max steps", Criteria{ESS: 1e9}, 0},
		{"no criteria", Criteria{}, 0},
		{"resumed", Criteria{ESS: 2000}, 3000},
	} {
		t.Run(c.name, func(t *testing.T) {
			resumedAt := 0 // events before the resumed Run
			run := func(hook bool) (Result, string) {
				e, err := New(g, Config{Walkers: 16, Seed: 3})
				if err != nil {
					t.Fatal(err)
				}
				defer e.Close()
				var events []byte
				opt := RunOptions{MaxSteps: 12000, Burn: -1, CheckEvery: 500, Until: c.until,
					OnStep:  func(*Ensemble) error { events = append(events, 's'); return nil },
					OnCheck: func(Progress) { events = append(events, 'c') },
				}
				if hook {
					opt.Diagnosing = func(on bool) {
						if on {
							events = append(events, '(')
						} else {
							events = append(events, ')')
						}
					}
				}
				if c.resume > 0 {
					first := opt
					first.MaxSteps = c.resume
					if _, err := Run(context.Background(), e, first); err != nil {
						t.Fatal(err)
					}
					if hook {
						resumedAt = len(events)
					}
				}
				res, err := Run(context.Background(), e, opt)
				if err != nil {
					t.Fatal(err)
				}
				return res, string(events)
			}
			res, events := run(true)
			plain, _ := run(false)
			if res.Steps != plain.Steps || res.Burn != plain.Burn || res.Report.MinESS != plain.Report.MinESS || res.Report.MaxRhat != plain.Report.MaxRhat {
				t.Errorf("with the hook: %d steps, burn %d, ESS %v, R-hat %v; without: %d, %d, %v, %v",
					res.Steps, res.Burn, res.Report.MinESS, res.Report.MaxRhat, plain.Steps, plain.Burn, plain.Report.MinESS, plain.Report.MaxRhat)
			}
			open, pairs := false, 0
			for i, ev := range events {
				switch ev {
				case '(':
					if open {
						t.Fatalf("event %d: Diagnosing(true) twice in a row: %s", i, events)
					}
					open = true
				case ')':
					if !open {
						t.Fatalf("event %d: Diagnosing(false) without Diagnosing(true): %s", i, events)
					}
					open = false
					pairs++
				case 's':
					if open {
						t.Fatalf("event %d: OnStep while diagnosing", i)
					}
				case 'c':
					if open || i == 0 || events[i-1] != ')' {
						t.Fatalf("event %d: OnCheck not right after an evaluation: %q", i, events[max(0, i-5):i+1])
					}
				}
			}
			checks := strings.Count(events, "c")
			if open || pairs < checks || pairs == 0 {
				t.Errorf("%d evaluations (open at the end: %v) for %d checks", pairs, open, checks)
			}
			// The resumed Run repeats its decisions before its first step.
			if c.resume > 0 && !strings.HasPrefix(events[resumedAt:], "()") {
				t.Errorf("the resumed run begins with %q, want its repeated decisions", events[resumedAt:min(len(events), resumedAt+8)])
			}
		})
	}
}
