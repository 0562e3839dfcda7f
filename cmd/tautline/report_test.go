package main

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"errors"
	"image/png"
	"io"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"tautline/chains"
	"tautline/report"
	"tautline/runconfig"
	"tautline/rundir"
)

// reportFiles lists every regular file under dir, relative to it, with
// forward slashes.
func reportFiles(t *testing.T, dir string) []string {
	t.Helper()
	var out []string
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		r, _ := filepath.Rel(dir, p)
		out = append(out, filepath.ToSlash(r))
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	slices.Sort(out)
	return out
}

// checkReportFiles checks the products a report promises: every expected
// file exists; report.json lists exactly the files on disk; PNGs decode
// and are not blank; SVGs are well-formed XML with an svg root; every
// JSON file carries the metadata block naming the run.
func checkReportFiles(t *testing.T, out, run string, want []string) {
	t.Helper()
	got := reportFiles(t, out)
	for _, w := range want {
		if !slices.Contains(got, w) {
			t.Errorf("report lacks %s (has %v)", w, got)
		}
	}
	var idx struct {
		Files []string `json:"files"`
	}
	readJSONFile(t, filepath.Join(out, "report.json"), &idx)
	slices.Sort(idx.Files)
	if !slices.Equal(idx.Files, got) {
		t.Errorf("report.json lists %v, the folder holds %v", idx.Files, got)
	}
	absRun, _ := filepath.Abs(run)
	for _, f := range got {
		p := filepath.Join(out, f)
		switch filepath.Ext(f) {
		case ".png":
			checkPNG(t, p)
		case ".svg":
			checkSVG(t, p)
		case ".json":
			var m struct {
				Meta *report.Metadata `json:"metadata"`
			}
			readJSONFile(t, p, &m)
			if m.Meta == nil || m.Meta.Run != absRun || m.Meta.Model == "" || m.Meta.Dataset == "" || m.Meta.Version == "" {
				t.Errorf("%s: metadata block %+v does not name run %s, model, data set and version", f, m.Meta, absRun)
			}
		}
	}
}

func readJSONFile(t *testing.T, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}

// checkPNG decodes a PNG and requires at least 1 % of its pixels to differ
// from the background of its top-left corner: axes, labels and curves
// cover far more than that (common practice for "not blank" checks).
func checkPNG(t *testing.T, path string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Errorf("%s: %v", path, err)
		return
	}
	b := img.Bounds()
	bg := img.At(b.Min.X, b.Min.Y)
	br, bgc, bb, _ := bg.RGBA()
	ink := 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			if r != br || g != bgc || bl != bb {
				ink++
			}
		}
	}
	if frac := float64(ink) / float64(b.Dx()*b.Dy()); frac < 0.01 {
		t.Errorf("%s: only %.4f of the pixels are drawn", path, frac)
	}
}

// checkSVG parses an SVG file as XML to the end.
func checkSVG(t *testing.T, path string) {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	dec := xml.NewDecoder(bytes.NewReader(raw))
	root, elems := "", 0
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Errorf("%s: not well-formed XML: %v", path, err)
			return
		}
		if se, ok := tok.(xml.StartElement); ok {
			if root == "" {
				root = se.Name.Local
			}
			elems++
		}
	}
	if root != "svg" || elems < 10 {
		t.Errorf("%s: root element %q with %d elements, want an svg drawing", path, root, elems)
	}
}

func sameNPY(t *testing.T, a, b string) {
	t.Helper()
	ra, ca, da, err := chains.ReadNPY(a)
	if err != nil {
		t.Fatal(err)
	}
	rb, cb, db, err := chains.ReadNPY(b)
	if err != nil {
		t.Fatal(err)
	}
	if ra != rb || ca != cb || !slices.Equal(da, db) {
		t.Errorf("%s (%d x %d) and %s (%d x %d) hold different samples", a, ra, ca, b, rb, cb)
	}
}

func TestReportFit(t *testing.T) {
	run := t.TempDir()
	if code, _, errs := runCLI(t, "fit", "--steps", "400", "--walkers", "16", "--out", run, "--log-level", "warn"); code != 0 {
		t.Fatalf("fit exit %d: %s", code, errs)
	}
	code, out, errs := runCLI(t, "report", run, "--dpi", "60", "--truth", "log10_A=-14.6", "--truth", "gamma=13/3", "--draws", "100")
	if code != 0 {
		t.Fatalf("report exit %d: %s", code, errs)
	}
	for _, want := range []string{"Report of fit run", "smbhb/", "corner.png", "report.json"} {
		if !strings.Contains(out, want) {
			t.Errorf("summary lacks %q:\n%s", want, out)
		}
	}
	if !strings.Contains(errs, "level=info msg=\"corner figure\"") {
		t.Errorf("no progress line for the corner figure on stderr:\n%s", errs)
	}
	rep := filepath.Join(run, "report")
	var want []string
	for _, f := range []string{"summary.csv", "summary.json", "summary.tex", "marginal1d_log10_A.csv", "marginal1d_log10_A.json",
		"marginal1d_gamma.csv", "marginal1d_gamma.json", "marginal2d_log10_A__gamma.csv", "marginal2d_log10_A__gamma.json",
		"posterior.npy", "posterior.json", "corner.png", "corner.svg", "trace.png", "trace.svg"} {
		want = append(want, "smbhb/"+f)
	}
	want = append(want, "spectrum.png", "spectrum.svg", "spectrum.csv", "spectrum.json", "report.json")
	checkReportFiles(t, rep, run, want)
	sameNPY(t, filepath.Join(run, "posterior.npy"), filepath.Join(rep, "smbhb", "posterior.npy"))

	// The equal-tailed 68 % interval must hold 68 % of the samples, up to
	// the 2/n that the interpolation between order statistics can move
	// (Hyndman & Fan 1996, definition 7); the column order is the one
	// posterior.json names.
	n, d, data, err := chains.ReadNPY(filepath.Join(run, "posterior.npy"))
	if err != nil {
		t.Fatal(err)
	}
	var pj struct {
		Columns []string `json:"columns"`
	}
	readJSONFile(t, filepath.Join(rep, "smbhb", "posterior.json"), &pj)
	if !slices.Equal(pj.Columns, []string{"log10_A", "gamma"}) {
		t.Errorf("posterior.json columns %v", pj.Columns)
	}
	var sj struct {
		Params []struct {
			Name string             `json:"name"`
			ET68 map[string]float64 `json:"equal_tailed_68"`
		} `json:"parameters"`
	}
	readJSONFile(t, filepath.Join(rep, "smbhb", "summary.json"), &sj)
	if len(sj.Params) != d {
		t.Fatalf("summary.json has %d parameters, posterior.npy %d columns", len(sj.Params), d)
	}
	for k, p := range sj.Params {
		in := 0
		for i := range n {
			if v := data[i*d+k]; v >= p.ET68["lo"] && v <= p.ET68["hi"] {
				in++
			}
		}
		if frac := float64(in) / float64(n); math.Abs(frac-0.68) > 2/float64(n)+1e-12 {
			t.Errorf("%s: the 68 %% interval holds %.4f of %d samples", p.Name, frac, n)
		}
	}
	tex, err := os.ReadFile(filepath.Join(rep, "smbhb", "summary.tex"))
	if err != nil || !bytes.Contains(tex, []byte(`$\log_{10} A$ &`)) {
		t.Errorf("summary.tex lacks the log10_A row (%v):\n%s", err, tex)
	}

	// --sigma2d puts the 2-D masses 1 - exp(-k^2/2), k = 1, 2, into the
	// marginal files; --formats and --out are obeyed.
	alt := filepath.Join(t.TempDir(), "alt")
	if code, _, errs := runCLI(t, "report", "--sigma2d", "--formats", "svg", "--no-spectrum", "--no-trace", "--out", alt, run, "--log-level", "warn"); code != 0 {
		t.Fatalf("report --sigma2d exit %d: %s", code, errs)
	}
	var m2 struct {
		Masses []float64 `json:"credible_masses"`
		Levels []float64 `json:"density_levels"`
	}
	readJSONFile(t, filepath.Join(alt, "smbhb", "marginal2d_log10_A__gamma.json"), &m2)
	if len(m2.Masses) != 2 || math.Abs(m2.Masses[0]-(1-math.Exp(-0.5))) > 1e-15 || math.Abs(m2.Masses[1]-(1-math.Exp(-2))) > 1e-15 || len(m2.Levels) != 2 {
		t.Errorf("--sigma2d: masses %v, levels %v", m2.Masses, m2.Levels)
	}
	if got := reportFiles(t, alt); slices.ContainsFunc(got, func(s string) bool {
		return strings.HasSuffix(s, ".png") || strings.Contains(s, "spectrum") || strings.Contains(s, "trace")
	}) {
		t.Errorf("--formats svg --no-spectrum --no-trace still wrote %v", got)
	}

	t.Run("errors", func(t *testing.T) {
		empty := t.TempDir()
		unfinished := t.TempDir()
		raw, err := os.ReadFile(filepath.Join(run, "meta.json"))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(unfinished, "meta.json"), raw, 0o644); err != nil {
			t.Fatal(err)
		}
		cases := []struct {
			args []string
			code int
			want string
		}{
			{[]string{"report"}, 2, "want exactly one run folder, got 0"},
			{[]string{"report", empty}, 1, "is neither a fit run (no meta.json) nor a compare run (no compare.json)"},
			{[]string{"report", filepath.Join(empty, "nope")}, 1, "run folder " + filepath.Join(empty, "nope") + ": no such file or directory"},
			{[]string{"report", unfinished}, 1, "posterior.npy is missing"},
			{[]string{"report", run, "--masses", "0.68,150"}, 2, `--masses: "150" is not a mass`},
			{[]string{"report", run, "--masses", "0.5", "--sigma2d"}, 2, "give one"},
			{[]string{"report", run, "--formats", "gif"}, 2, `--formats: "gif" is not png, svg or pdf`},
			{[]string{"report", run, "--truth", "log10_Gmu=-10"}, 2, "--truth log10_Gmu: no model of the run has that parameter; they have gamma, log10_A"},
			{[]string{"report", run, "--truth", "gamma"}, 2, "want NAME=VALUE"},
			{[]string{"report", "--help"}, 0, "--sigma2d"},
			{[]string{"report", "--help"}, 0, "(default png,svg)"},
		}
		for _, c := range cases {
			code, out, errs := runCLI(t, c.args...)
			if code != c.code || !strings.Contains(out+errs, c.want) {
				t.Errorf("tautline %s: exit %d (want %d), output lacks %q:\n%s%s", strings.Join(c.args, " "), code, c.code, c.want, out, errs)
			}
		}
	})
}

// TestReportCompare reports a comparison. A second model "alt" is added
// to the run's compare.json with an ln B (and error) chosen to differ from
// what the stepping-stone evidences give, so the test fails if the report
// recomputes ln B instead of quoting compare.json.
func TestReportCompare(t *testing.T) {
	run := t.TempDir()
	if code, _, errs := runCLI(t, "compare", "--models", "smbhb", "--data", "demo:smbhb", "--rungs", "8", "--steps", "600",
		"--walkers", "16", "--out", run, "--log-level", "warn"); code != 0 {
		t.Fatalf("compare exit %d: %s", code, errs)
	}
	cmpPath := filepath.Join(run, "compare.json")
	var res rundir.Comparison
	readJSONFile(t, cmpPath, &res)
	if len(res.Rows) != 1 {
		t.Fatalf("compare.json has %d rows", len(res.Rows))
	}
	alt := res.Rows[0]
	alt.Model = "alt"
	alt.TI.LnZ += 2.5
	alt.SS.LnZ += 0.7
	alt.LnB, alt.LnBErr = 2.5, math.Hypot(res.Rows[0].TI.Total, alt.TI.Total)
	alt.Reading = "positive support for alt_model"
	res.Rows = append(res.Rows, alt)
	if err := rundir.WriteJSON(cmpPath, res); err != nil {
		t.Fatal(err)
	}
	if err := os.CopyFS(filepath.Join(run, "models", "alt"), os.DirFS(filepath.Join(run, "models", "smbhb"))); err != nil {
		t.Fatal(err)
	}
	var pm map[string]any
	readJSONFile(t, filepath.Join(run, "parts", "smbhb.block0", "part.json"), &pm)
	pm["unit"].(map[string]any)["model"] = "alt"
	if err := os.MkdirAll(filepath.Join(run, "parts", "alt.block0"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := rundir.WriteJSON(filepath.Join(run, "parts", "alt.block0", "part.json"), pm); err != nil {
		t.Fatal(err)
	}

	code, out, errs := runCLI(t, "report", run, "--dpi", "60", "--draws", "50", "--log-level", "warn")
	if code != 0 {
		t.Fatalf("report exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "Report of compare run") {
		t.Errorf("summary:\n%s", out)
	}
	rep := filepath.Join(run, "report")
	var want []string
	for _, m := range []string{"smbhb", "alt"} {
		for _, f := range []string{"summary.json", "summary.tex", "posterior.npy", "posterior.json", "corner.png", "corner.svg", "lnl_beta.png", "lnl_beta.svg"} {
			want = append(want, m+"/"+f)
		}
	}
	want = append(want, "comparison.tex", "comparison.csv", "comparison.json", "spectrum.png", "spectrum.svg", "report.json")
	checkReportFiles(t, rep, run, want)
	sameNPY(t, filepath.Join(run, "models", "smbhb", "posterior.npy"), filepath.Join(rep, "smbhb", "posterior.npy"))

	tex, err := os.ReadFile(filepath.Join(rep, "comparison.tex"))
	if err != nil {
		t.Fatal(err)
	}
	cell := "$" + report.FormatPM(alt.LnB, alt.LnBErr, 2) + "$"
	ss := "$" + report.FormatPM(alt.SS.LnZ-res.Rows[0].SS.LnZ, math.Hypot(alt.SS.Total, res.Rows[0].SS.Total), 2) + "$"
	if !bytes.Contains(tex, []byte(cell+` & positive support for alt\_model \\`)) || bytes.Contains(tex, []byte(ss)) {
		t.Errorf("comparison.tex does not quote compare.json's ln B %s (stepping-stone would give %s):\n%s", cell, ss, tex)
	}
	var cj struct {
		Models []struct {
			Model  string  `json:"model"`
			LnB    float64 `json:"ln_b"`
			LnBErr float64 `json:"ln_b_err"`
		} `json:"models"`
	}
	readJSONFile(t, filepath.Join(rep, "comparison.json"), &cj)
	for i, r := range cj.Models {
		if i >= len(res.Rows) || r.Model != res.Rows[i].Model || r.LnB != res.Rows[i].LnB || r.LnBErr != res.Rows[i].LnBErr {
			t.Errorf("comparison.json row %d: %+v; compare.json has %s %v ± %v", i, r, res.Rows[i].Model, res.Rows[i].LnB, res.Rows[i].LnBErr)
		}
	}
}

// TestReportExclusion writes a fit-like folder for a model with log10_Gmu
// and log10_alpha whose samples are independent, log10_Gmu uniform on
// [-12, -8]: its 95 % limit in every slice of log10_alpha is then the
// uniform quantile -12 + 0.95 * 4 = -8.2.
func TestReportExclusion(t *testing.T) {
	run := t.TempDir()
	cfg := runconfig.Default()
	cfg.Model.Name = "strings"
	m := &chains.Meta{Version: version, Config: cfg, Data: chains.DataSet{Name: "invented", SHA256: "0"},
		Model: chains.ModelInfo{Name: "strings", Params: []chains.ParamInfo{
			{Name: "log10_Gmu", Label: `\log_{10} G\mu`, Prior: "uniform(-12, -8)"},
			{Name: "log10_alpha", Label: `\log_{10} \alpha`, Prior: "uniform(-3, 0)"},
			{Name: "log10_P", Prior: "fixed(0)", Fixed: true},
		}}}
	if err := chains.WriteMeta(filepath.Join(run, "meta.json"), m); err != nil {
		t.Fatal(err)
	}
	const n = 16000
	r := rand.New(rand.NewPCG(3, 4))
	data := make([]float64, 2*n)
	for i := range n {
		data[2*i], data[2*i+1] = -12+4*r.Float64(), -3+3*r.Float64()
	}
	if err := chains.WriteNPY(filepath.Join(run, "posterior.npy"), n, 2, data); err != nil {
		t.Fatal(err)
	}
	code, _, errs := runCLI(t, "report", run, "--no-spectrum", "--slices", "8", "--dpi", "60", "--log-level", "warn")
	if code != 0 {
		t.Fatalf("report exit %d: %s", code, errs)
	}
	rep := filepath.Join(run, "report")
	checkReportFiles(t, rep, run, []string{"strings/exclusion_log10_Gmu_vs_log10_alpha.csv", "strings/exclusion_log10_Gmu_vs_log10_alpha.json",
		"exclusion.png", "exclusion.svg", "strings/corner.png"})
	var ex struct {
		Mass   float64 `json:"limit_mass"`
		Slices []struct {
			N     int     `json:"n"`
			Limit float64 `json:"limit"`
		} `json:"slices"`
	}
	readJSONFile(t, filepath.Join(rep, "strings", "exclusion_log10_Gmu_vs_log10_alpha.json"), &ex)
	if len(ex.Slices) != 8 || ex.Mass != 0.95 {
		t.Fatalf("exclusion: mass %v, %d slices", ex.Mass, len(ex.Slices))
	}
	for i, s := range ex.Slices {
		// The p-quantile of N uniform samples on a width-4 range has
		// standard deviation 4 sqrt(p (1-p) / N) (asymptotic normality of
		// sample quantiles), about 0.018 for N = 2000; allow 5 of them.
		tol := 5 * 4 * math.Sqrt(0.95*0.05/float64(s.N))
		if math.Abs(s.Limit-(-8.2)) > tol {
			t.Errorf("slice %d (%d samples): limit %.4f, want -8.2 ± %.3f", i, s.N, s.Limit, tol)
		}
	}
}
