package main

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"tautline/models/gw"
	"tautline/rundir"
	"testing"
)

// runCLI runs the command line in-process and returns its exit status,
// stdout and stderr.
func runCLI(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(context.Background(), &env{stdout: &out, stderr: &errb}, args)
	return code, out.String(), errb.String()
}

func TestHelpVersionAndExitCodes(t *testing.T) {
	cases := []struct {
		args []string
		code int
		want string // substring of stdout+stderr
	}{
		{[]string{"--help"}, 0, "Commands:"},
		{[]string{"--version"}, 0, "tautline " + version},
		{[]string{}, 2, "Usage:"},
		{[]string{"frobnicate"}, 2, `unknown command "frobnicate"`},
		{[]string{"fit", "--help"}, 0, "--walkers int"},
		{[]string{"fit", "--no-such-flag"}, 2, "flag provided but not defined"},
		{[]string{"inspect", "--help"}, 0, "--json"},
		{[]string{"simulate", "--help"}, 0, "--pulsars int"},
		{[]string{"spectrum", "--help"}, 0, "--span-yr float"},
		{[]string{"convert", "--help"}, 0, "--gmu"},
		{[]string{"inspect"}, 2, "want at least one data set, got 0 arguments"},
		{[]string{"fit", "--until", "ess=lots"}, 2, "ess must be a positive number"},
		{[]string{"fit", "--prior", "log10_A"}, 2, "want NAME=SPEC"},
		{[]string{"fit", "--burn", "500", "--steps", "100"}, 2, "--burn 500 keeps none of --steps 100"},
		{[]string{"fit", "--thin", "-1"}, 2, "--thin must be >= 0"},
		{[]string{"fit", "--h0", "-1"}, 2, "0 < --h0 < 1000 km/s/Mpc"},
		{[]string{"compare", "--models", "foo"}, 2, `--models: unknown model "foo"`},
		{[]string{"fit", "--turnover", "fixed"}, 2, "--turnover fixed needs --f-bend > 0"},
		{[]string{"fit", "--turnover", "maybe"}, 2, `--turnover "maybe": want none, fixed or fit`},
		{[]string{"compare", "--help"}, 0, "ensemble steps of every rung (default 3000)"},
		{[]string{"compare", "--until", "ess=10"}, 2, "flag provided but not defined: -until"},
	}
	for _, c := range cases {
		code, out, errs := runCLI(t, c.args...)
		if code != c.code || !strings.Contains(out+errs, c.want) {
			t.Errorf("tautline %s: exit %d, want %d; output does not contain %q:\n%s%s",
				strings.Join(c.args, " "), code, c.code, c.want, out, errs)
		}
	}
}

// TestHelpShowsDefaultsAndUnits checks that every option of fit is
// documented with its default where it has one.
func TestHelpShowsDefaults(t *testing.T) {
	_, out, _ := runCLI(t, "fit", "--help")
	for _, want := range []string{"(default 32)", "(default 4000)", "(default smbhb)", "km/s/Mpc", "(default 1)"} {
		if !strings.Contains(out, want) {
			t.Errorf("fit --help lacks %q", want)
		}
	}
}

// TestConfigErrors checks the exact message each malformed configuration
// file in testdata/config produces, and that the exit status is non-zero.
func TestConfigErrors(t *testing.T) {
	dir := filepath.Join("..", "..", "testdata", "config")
	cases := []struct {
		file string
		code int
		want string
	}{
		{"bad-unknown-top.yaml", 1, `bad-unknown-top.yaml: line 2: unknown key "samplr"; known keys here: bins, cosmology, data, likelihood, model, output, sampler`},
		{"bad-unknown-nested.yaml", 1, `bad-unknown-nested.yaml: line 5: unknown key "sampler.stepz"; known keys here: beta_min, burn, checkpoint_every, moves, seed, steps, temperatures, thin, until, walkers, workers`},
		{"bad-type.yaml", 1, "bad-type.yaml: line 2: cannot unmarshal !!str `many` into int"},
		{"bad-syntax.yaml", 1, "bad-syntax.yaml: line 2: did not find expected key"},
		{"bad-not-mapping.yaml", 1, "bad-not-mapping.yaml: line 1: sampler: want a mapping of keys"},
		{"bad-prior.yaml", 1, `model.priors.log10_A: priors: "unifrom(-18, -11)": unknown shape "unifrom"`},
		{"bad-prior-param.yaml", 2, `model.priors: "log10_Gmu" is not a parameter of model smbhb; its parameters are log10_A, gamma`},
		{"bad-model.yaml", 2, `model "axions": unknown; want one of smbhb, strings, strings+smbhb`},
		{"bad-prior-domain.yaml", 1, `prior uniform(-16, -6) of log10_Gmu reaches outside the model's domain [-14, -6]`},
	}
	for _, c := range cases {
		path := filepath.Join(dir, c.file)
		code, out, errs := runCLI(t, "fit", "--config", path, "--out", t.TempDir())
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%s: exit %d (want %d), stderr:\n%s\nwant it to contain:\n%s\n(stdout %q)", c.file, code, c.code, errs, c.want, out)
		}
	}
}

func TestPrintConfig(t *testing.T) {
	path := filepath.Join("..", "..", "testdata", "config", "good.yaml")
	code, out, errs := runCLI(t, "fit", "--config", path, "--walkers", "24", "--prior", "gamma=fixed(13/3)", "--print-config")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"walkers: 24", "seed: 7", "bandwidth: silverman", "log10_A: uniform(-18, -12)", "gamma: fixed(13/3)", "q: 1.3333333333333333", "h0: 67.4"} {
		if !strings.Contains(out, want) {
			t.Errorf("--print-config lacks %q:\n%s", want, out)
		}
	}
}

// TestFitDeterministic runs the same short fit twice with different worker
// counts: the chain files must be byte-identical.
func TestFitDeterministic(t *testing.T) {
	var chains [2][]byte
	for i, workers := range []string{"1", "2"} {
		dir := t.TempDir()
		code, _, errs := runCLI(t, "fit", "--steps", "300", "--walkers", "16", "--seed", "11", "--workers", workers, "--out", dir, "--log-level", "warn")
		if code != 0 {
			t.Fatalf("fit exit %d: %s", code, errs)
		}
		b, err := os.ReadFile(filepath.Join(dir, "chain.csv"))
		if err != nil {
			t.Fatal(err)
		}
		chains[i] = b
		for _, f := range []string{"meta.json", "posterior.npy", "summary.json", "checkpoint.bin"} {
			if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
				t.Errorf("missing output %s", f)
			}
		}
	}
	if !bytes.Equal(chains[0], chains[1]) {
		t.Fatal("chains differ between --workers 1 and 2")
	}
	if n := bytes.Count(chains[0], []byte("\n")); n != 1+300*16 {
		t.Errorf("chain.csv has %d lines, want header + 300 x 16", n)
	}
}

// TestConvert checks the conversions the command prints against values
// computed here from the constants: mu = Gmu c^2 / G, the deficit angle
// 8 pi Gmu (Vilenkin 1981) in milliarcseconds, eta = M_Planck sqrt(Gmu)
// (common practice), with c = 299792458 m/s (exact by the SI definition),
// G = 6.67430e-11 m^3 kg^-1 s^-2 and M_Planck = sqrt(hbar c / G) =
// 1.220890e19 GeV (CODATA 2018), and each inverse conversion; then the
// check values of docs/physics.md sections 1 and 9 to the digits quoted
// there (1.35e17 kg/m and 0.52 mas at Gmu = 1e-10), and that the caveat is
// printed.
func TestConvert(t *testing.T) {
	const (
		cLight      = 299792458.0 // m/s, exact (SI)
		gNewton     = 6.67430e-11 // m^3 kg^-1 s^-2, CODATA 2018
		mPlanckGeV  = 1.220890e19 // GeV, CODATA 2018
		masPerRad   = 180 / math.Pi * 3600 * 1e3
		relTol      = 1e-12 // a few float64 roundings of each formula
		gmuChecked  = 1e-10
		muQuoted    = 1.35e17 // kg/m at Gmu = 1e-10, docs/physics.md section 1, 3 digits
		sepQuoted   = 0.52    // mas at Gmu = 1e-10, docs/physics.md section 9, 2 digits
		gmuOfEtaRef = 1e-6
	)
	convert := func(args ...string) conversion {
		t.Helper()
		code, out, errs := runCLI(t, append(append([]string{"convert"}, args...), "--json")...)
		if code != 0 {
			t.Fatalf("convert %v: exit %d: %s", args, code, errs)
		}
		var c conversion
		if err := json.Unmarshal([]byte(out), &c); err != nil {
			t.Fatalf("convert %v: %v\n%s", args, err, out)
		}
		return c
	}
	near := func(what string, got, want, tol float64) {
		t.Helper()
		if !(math.Abs(got-want) <= tol*math.Abs(want)) {
			t.Errorf("%s = %.10g, want %.10g (relative tolerance %g)", what, got, want, tol)
		}
	}
	g := gmuChecked
	c := convert("--gmu", "1e-10")
	near("mu", c.MuKgPerM, g*cLight*cLight/gNewton, relTol)
	near("deficit angle", c.DeficitRad, 8*math.Pi*g, relTol)
	near("image separation", c.MaxSeparationMs, 8*math.Pi*g*masPerRad, relTol)
	near("eta", c.EtaGeV, mPlanckGeV*math.Sqrt(g), relTol)
	near("mu (quoted value)", c.MuKgPerM, muQuoted, 0.005)
	near("image separation (quoted value)", c.MaxSeparationMs, sepQuoted, 0.01)
	// The inverses, from inputs computed with the same constants.
	mu := g * cLight * cLight / gNewton
	sep := 8 * math.Pi * g * masPerRad
	eta := mPlanckGeV * math.Sqrt(gmuOfEtaRef)
	near("Gmu from mu", convert("--mu", strconv.FormatFloat(mu, 'g', -1, 64)).Gmu, g, relTol)
	near("Gmu from separation", convert("--separation", strconv.FormatFloat(sep, 'g', -1, 64)).Gmu, g, relTol)
	near("Gmu from eta", convert("--eta", strconv.FormatFloat(eta, 'g', -1, 64)).Gmu, gmuOfEtaRef, relTol)
	if c.Caveat == "" {
		t.Error("convert --json has no eta caveat")
	}
	if code, out, errs := runCLI(t, "convert", "--gmu", "1e-10"); code != 0 || !strings.Contains(out, "order-of-magnitude") {
		t.Errorf("convert --gmu 1e-10: exit %d, no caveat in\n%s%s", code, out, errs)
	}
	if code, _, errs := runCLI(t, "convert", "--gmu", "1e-10", "--mu", "3"); code != 2 || !strings.Contains(errs, "exactly one") {
		t.Errorf("two inputs: exit %d, %s", code, errs)
	}
}

// TestSpectrumSMBHB checks `spectrum` against the closed form of the power
// law (docs/physics.md section 4): at f = f_yr, h_c = A, and log10 rho follows
// from S = h_c^2/(12 pi^2 f^3), rho^2 = S/T (section 5), computed here by hand.
func TestSpectrumSMBHB(t *testing.T) {
	fyr := 1 / gw.JulianYear
	code, out, errs := runCLI(t, "spectrum", "--model", "smbhb", "--param", "log10_A=-15", "--param", "gamma=13/3",
		"--freqs", strconv.FormatFloat(fyr, 'g', -1, 64), "--span-yr", "10", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Rows []spectrumRow `json:"spectrum"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil || len(doc.Rows) != 1 {
		t.Fatalf("bad JSON (%v):\n%s", err, out)
	}
	r := doc.Rows[0]
	wantPSD := 1e-30 / (12 * math.Pi * math.Pi * fyr * fyr * fyr)
	wantRho := 0.5 * math.Log10(wantPSD/(10*gw.JulianYear))
	// Tolerance: the conversions are exact, so only rounding (1e-12) remains.
	if math.Abs(r.Hc-1e-15)/1e-15 > 1e-12 || math.Abs(r.PSD-wantPSD)/wantPSD > 1e-12 || math.Abs(r.Log10Rho-wantRho) > 1e-12 {
		t.Errorf("got h_c %g, S %g, log10 rho %g; want 1e-15, %g, %g", r.Hc, r.PSD, r.Log10Rho, wantPSD, wantRho)
	}
}

// TestFitStrings runs a short string-model fit on the string demo through
// the embedded table and checks the summary names the three parameters.
func TestFitStrings(t *testing.T) {
	dir := t.TempDir()
	code, out, errs := runCLI(t, "fit", "--model", "strings", "--steps", "300", "--walkers", "16", "--out", dir, "--log-level", "warn")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, w := range []string{"log10_Gmu", "log10_alpha", "log10_P", "Model strings on strings (30 bins)"} {
		if !strings.Contains(out, w) {
			t.Errorf("summary lacks %q:\n%s", w, out)
		}
	}
}

// TestCompareAdaptLadder: with --adapt-ladder the inner temperatures move
// during burn-in (Vousden, Farr & Mandel 2016) while both ends stay at 1
// and 0, and ln Z is integrated over the frozen ladder that part.json
// records.
func TestCompareAdaptLadder(t *testing.T) {
	dir := t.TempDir()
	code, _, errs := runCLI(t, "compare", "--models", "smbhb", "--data", "demo:smbhb", "--rungs", "8", "--steps", "800",
		"--walkers", "16", "--adapt-ladder", "--out", dir, "--log-level", "warn")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	raw, err := os.ReadFile(filepath.Join(dir, "parts", "smbhb.block0", "part.json"))
	if err != nil {
		t.Fatal(err)
	}
	var pm rundir.Part
	if err := json.Unmarshal(raw, &pm); err != nil {
		t.Fatal(err)
	}
	b := pm.Unit.Betas
	if len(b) != 8 || b[0] != 1 || b[7] != 0 {
		t.Fatalf("frozen ladder %v: want 8 rungs from 1 to 0", b)
	}
	moved := false
	for k := 1; k < 7; k++ {
		want := math.Pow(float64(7-k)/7, 5) // the power ladder it started from
		if math.Abs(b[k]-want) > 1e-9*want {
			moved = true
		}
	}
	if !moved {
		t.Errorf("ladder did not adapt: %v", b)
	}
	var ev struct {
		Curve []struct{ Beta float64 } `json:"curve"`
	}
	raw, _ = os.ReadFile(filepath.Join(dir, "models", "smbhb", "evidence.json"))
	if err := json.Unmarshal(raw, &ev); err != nil || len(ev.Curve) != 8 || ev.Curve[3].Beta != b[4] {
		t.Errorf("evidence curve does not use the frozen ladder (%v): %+v", err, ev.Curve)
	}
}

// TestCompareRefusesOtherComparison: a compare into a folder that holds
// another comparison's parts stops before sampling, with a message, and
// leaves the folder as it was.
func TestCompareRefusesOtherComparison(t *testing.T) {
	dir := t.TempDir()
	base := []string{"compare", "--models", "smbhb", "--data", "demo:smbhb", "--rungs", "6", "--steps", "300", "--walkers", "16", "--out", dir, "--log-level", "warn"}
	if code, _, errs := runCLI(t, base...); code != 0 {
		t.Fatalf("first compare: %s", errs)
	}
	before, _ := os.ReadFile(filepath.Join(dir, "compare.json"))
	if code, _, errs := runCLI(t, base...); code != 0 {
		t.Errorf("the same comparison again must be accepted: exit %d, %s", code, errs)
	}
	code, _, errs := runCLI(t, append(base, "--seed", "2")...)
	if code != 1 || !strings.Contains(errs, "holds the results of another comparison") {
		t.Errorf("another comparison into the same folder: exit %d, %s", code, errs)
	}
	after, _ := os.ReadFile(filepath.Join(dir, "compare.json"))
	if !bytes.Equal(before, after) {
		t.Error("the refused run changed compare.json")
	}
}

// TestFitTurnover: --turnover fit samples the bend frequency and shape of
// the SMBHB spectrum (docs/physics.md section 4) next to log10_A and gamma.
func TestFitTurnover(t *testing.T) {
	dir := t.TempDir()
	code, out, errs := runCLI(t, "fit", "--turnover", "fit", "--steps", "200", "--walkers", "16", "--out", dir, "--log-level", "warn")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, w := range []string{"log10_A", "gamma", "log10_fbend", "kappa"} {
		if !strings.Contains(out, w) {
			t.Errorf("summary lacks %q:\n%s", w, out)
		}
	}
}

// TestFitTempered: with --temperatures the cold rung's chain is written as
// usual, and the run is reproducible (same bytes for the same seed).
func TestFitTempered(t *testing.T) {
	var chain [2][]byte
	for i := range chain {
		dir := t.TempDir()
		code, _, errs := runCLI(t, "fit", "--temperatures", "4", "--beta-min", "0.01", "--steps", "200", "--walkers", "16",
			"--workers", strconv.Itoa(i+1), "--out", dir, "--log-level", "warn")
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		chain[i], _ = os.ReadFile(filepath.Join(dir, "chain.csv"))
	}
	if n := bytes.Count(chain[0], []byte("\n")); n != 1+200*16 {
		t.Errorf("chain.csv has %d lines, want header + 200 x 16 (the cold rung only)", n)
	}
	if !bytes.Equal(chain[0], chain[1]) {
		t.Error("tempered chains differ between --workers 1 and 2")
	}
	if code, _, errs := runCLI(t, "fit", "--temperatures", "4", "--beta-min", "2"); code != 2 || !strings.Contains(errs, "--beta-min 2") {
		t.Errorf("bad --beta-min: exit %d, %s", code, errs)
	}
}
