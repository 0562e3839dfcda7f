package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

func calibrateCLI(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(context.Background(), &env{stdout: &out, stderr: &errb}, append([]string{"calibrate"}, args...))
	return code, out.String(), errb.String()
}

// small is a fast calibration: the SMBHB power law with gamma fixed (one
// sampled parameter), 40 replicates of 39 draws on a 10-bin array.
func small(out string, extra ...string) []string {
	return append([]string{"--fix-gamma", "--prior", "log10_A=uniform(-15.5,-13.5)", "--replicates", "40", "--draws", "39",
		"--walkers", "8", "--steps", "300", "--burn", "100", "--seed", "5", "--bins", "10", "--pulsars", "20",
		"--log10-rho-min", "-11", "--log10-rho-max", "-3", "--grid-points", "801", "--formats", "png", "--out", out}, extra...)
}

// TestCalibrateCommand runs the command on a correct setup and on a
// deliberately mis-specified one (fits under a prior a quarter as wide as
// the one the truths come from, and off its centre).
//
// Statistical rationale: under a correct setup the ranks are uniform and
// the uniformity p-value is uniform on (0, 1), so the level-0.01 test
// flags it with probability 0.01; the seed is fixed (not searched), so the
// outcome is deterministic, and a failure would much more likely mean a
// real bias than that 1 % chance. Under the narrow prior about three
// quarters of the truths lie outside the fits' support, their ranks are 0
// or L, and the chi-squared statistic (of order a hundred for 3 degrees of
// freedom, critical value 11.3) cannot miss it.
func TestCalibrateCommand(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good")
	code, out, errs := calibrateCLI(t, small(good)...)
	if code != 0 {
		t.Fatalf("exit %d: %s%s", code, out, errs)
	}
	for _, want := range []string{"simulation-based calibration of smbhb: 40 replicates, 39 draws each", "log10_A", "ranks uniform", "ranks.csv"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "FLAGGED") {
		t.Errorf("correct setup flagged:\n%s", out)
	}
	if !strings.Contains(errs, "calibrate: 40/40 replicates") {
		t.Errorf("no progress on stderr:\n%s", errs)
	}
	for _, f := range []string{"ranks.csv", "coverage.csv", "coverage.json", "uniformity.csv", "summary.json", "rank_log10_A.png", "calibration.json", "replicates/rep-000039.json"} {
		if _, err := os.Stat(filepath.Join(good, f)); err != nil {
			t.Errorf("missing %s: %v", f, err)
		}
	}
	// ranks.csv is numbers only after the # header: replicate, seed,
	// truth, rank with the rank in 0..39, as numpy.loadtxt reads it.
	raw, err := os.ReadFile(filepath.Join(good, "ranks.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(raw)), "\n")
	if lines[0] != "# replicate,seed,true_log10_A,rank_log10_A" || len(lines) != 41 {
		t.Fatalf("ranks.csv header %q and %d lines", lines[0], len(lines))
	}
	for _, l := range lines[1:] {
		f := strings.Split(l, ",")
		for _, x := range f {
			if _, err := strconv.ParseFloat(x, 64); err != nil {
				t.Fatalf("ranks.csv line %q: %v", l, err)
			}
		}
		if k, _ := strconv.Atoi(f[3]); k < 0 || k > 39 {
			t.Errorf("rank %d outside 0..39", k)
		}
	}

	code, out, errs = calibrateCLI(t, small(filepath.Join(dir, "bad"), "--fit-prior", "log10_A=uniform(-15,-14.5)")...)
	if code != 0 {
		t.Fatalf("exit %d: %s%s", code, out, errs)
	}
	if !strings.Contains(out, "FLAGGED: ranks not uniform at level 0.01") {
		t.Errorf("mis-specified prior not flagged:\n%s", out)
	}

	// A rerun into the same folder is refused without --resume, and with
	// it finds every replicate and rewrites the same bytes.
	before, err := os.ReadFile(filepath.Join(good, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	if code, _, errs := calibrateCLI(t, small(good)...); code != 1 || !strings.Contains(errs, "resume") {
		t.Errorf("rerun without --resume: exit %d, %s", code, errs)
	}
	if code, _, errs := calibrateCLI(t, small(good, "--resume")...); code != 0 || !strings.Contains(errs, "40 of 40 replicates already") {
		t.Errorf("resume: exit %d, %s", code, errs)
	}
	after, _ := os.ReadFile(filepath.Join(good, "summary.json"))
	if !bytes.Equal(before, after) {
		t.Error("resumed run rewrote summary.json differently")
	}
}

func TestCalibrateUsage(t *testing.T) {
	code, out, _ := calibrateCLI(t, "--help")
	if code != 0 {
		t.Fatalf("--help: exit %d", code)
	}
	for _, want := range []string{"--replicates", "--draws", "--fit-prior", "--sigma-ns", "nanoseconds", "km/s/Mpc", "(default 99)", "--resume", "--workers"} {
		if !strings.Contains(out, want) {
			t.Errorf("--help lacks %q", want)
		}
	}
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"--replicates", "0"}, "--replicates must be >= 1"},
		{[]string{"--replicates", "10"}, "too few for a rank histogram"},
		{[]string{"--rank-bins", "7"}, "--rank-bins must divide --draws + 1 = 100"},
		{[]string{"--prior", "log10_A"}, "want NAME=SPEC"},
		{[]string{"--prior", "nope=uniform(0,1)"}, `"nope" is not a parameter of model smbhb`},
		{[]string{"--formats", "gif"}, "--formats"},
		{[]string{"--log10-rho-min", "0", "--log10-rho-max", "-1"}, "--log10-rho-min < --log10-rho-max"},
		{[]string{"--model", "none"}, "unknown"},
	} {
		code, _, errs := calibrateCLI(t, append(tc.args, "--out", t.TempDir())...)
		if code != 2 || !strings.Contains(errs, tc.want) {
			t.Errorf("%v: exit %d, stderr %q, want 2 and %q", tc.args, code, errs, tc.want)
		}
	}
}
