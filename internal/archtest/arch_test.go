package archtest

import (
	"bufio"
	"errors"
	"fmt"
	"go/build"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"testing"
)

// A rule limits what packages matching From may import. Patterns are
// package paths relative to the module; "p/..." matches p and everything
// below it.
type rule struct {
	From []string
	// Only, if not nil, lists everything From may import of the module;
	// Never lists what it must not import.
	Only, Never []string
	// OnlyBy, if not nil, lists the only packages that may import From.
	OnlyBy []string
	Why    string
}

// rules are the import rules of ARCHITECTURE.md, section "Rules".
var rules = []rule{
	{From: []string{"models/..."}, Only: []string{"models/...", "priors", "internal/..."},
		Why: "nothing in models knows about sampling, data, chains or reports"},
	{From: []string{"sampler/..."}, Only: []string{"sampler/...", "internal/..."},
		Why: "the sampler sees only its Target"},
	{From: []string{"stats", "priors", "internal/...", "models/gw", "sampler/internal/acf", "sampler/internal/scores", "cmd/tautline/internal/cli"}, Only: []string{"internal/..."},
		Why: "leaves: plain numbers and slices in, plain numbers out"},
	{From: []string{"likelihood/..."}, Never: []string{"models/binaries", "models/cosmicstrings", "models/cosmology", "models/registry", "sampler/...", "compare", "chains", "rundir"},
		Why: "the likelihood depends on the models interfaces, never on a concrete model, and knows no sampling"},
	{From: []string{"compare", "fitrun"}, Never: []string{"models/...", "likelihood/...", "priors", "report", "runconfig"},
		Why: "compare and fitrun receive a sampler.Target, so they import no model, data set or report"},
	{From: []string{"report", "stats"}, Never: []string{"sampler/...", "compare", "fitrun"},
		Why: "report and stats take samples and run folders, and know no sampler"},
	{From: []string{"rundir", "chains"}, Never: []string{"models/...", "likelihood/...", "compare", "fitrun", "report", "runconfig", "calibrate"},
		Why: "the file layouts know the results they hold, not the code that made them"},
	{From: []string{"runconfig", "report", "fitrun", "calibrate", "likelihood/importer", "cmd/tautline/internal/cli"}, OnlyBy: []string{"cmd/tautline"},
		Why: "only the command wires configuration, runs and reports together"},
}

// match reports whether pkg matches pattern.
func match(pattern, pkg string) bool {
	if p, ok := strings.CutSuffix(pattern, "/..."); ok {
		return pkg == p || strings.HasPrefix(pkg, p+"/")
	}
	return pkg == pattern
}

func matchAny(patterns []string, pkg string) bool {
	return slices.ContainsFunc(patterns, func(p string) bool { return match(p, pkg) })
}

// violations lists every broken rule of graph (package -> the module
// packages it imports) with layers (package -> layer number): an import
// not to a lower layer, a package without a layer, and the rules above.
func violations(graph map[string][]string, layers map[string]int) []string {
	var out []string
	for _, from := range sortedKeys(graph) {
		lf, ok := layers[from]
		if !ok {
			out = append(out, fmt.Sprintf("%s has no layer in the package table", from))
		}
		for _, to := range graph[from] {
			if lt, ok := layers[to]; ok && lf <= lt {
				out = append(out, fmt.Sprintf("%s (layer %d) imports %s (layer %d): imports go down only", from, lf, to, lt))
			}
			for _, r := range rules {
				switch {
				case matchAny(r.From, from) && r.Only != nil && !matchAny(r.Only, to),
					matchAny(r.From, from) && matchAny(r.Never, to),
					r.OnlyBy != nil && matchAny(r.From, to) && !matchAny(r.OnlyBy, from):
					out = append(out, fmt.Sprintf("%s imports %s: %s", from, to, r.Why))
				}
			}
		}
	}
	return out
}

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

// moduleRoot returns the folder of go.mod above the test's folder and the
// module path it declares.
func moduleRoot(t *testing.T) (string, string) {
	t.Helper()
	dir, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	for {
		raw, err := os.ReadFile(filepath.Join(dir, "go.mod"))
		if err == nil {
			for _, l := range strings.Split(string(raw), "\n") {
				if m, ok := strings.CutPrefix(strings.TrimSpace(l), "module "); ok {
					return dir, strings.TrimSpace(m)
				}
			}
			t.Fatalf("%s/go.mod names no module", dir)
		}
		up := filepath.Dir(dir)
		if up == dir {
			t.Fatal("no go.mod above the test's folder")
		}
		dir = up
	}
}

// importGraph reads, with go/build, the non-test imports of every package
// below root, as paths relative to the module.
func importGraph(t *testing.T, root, module string) map[string][]string {
	t.Helper()
	graph := map[string][]string{}
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil || !d.IsDir() {
			return err
		}
		if name := d.Name(); path != root && (name == "testdata" || strings.HasPrefix(name, ".") || strings.HasPrefix(name, "_")) {
			return filepath.SkipDir
		}
		pkg, err := build.Default.ImportDir(path, 0)
		var none *build.NoGoError
		if errors.As(err, &none) {
			return nil
		} else if err != nil {
			return err
		}
		rel, _ := filepath.Rel(root, path)
		deps := []string{}
		for _, imp := range pkg.Imports {
			if p, ok := strings.CutPrefix(imp, module+"/"); ok {
				deps = append(deps, p)
			}
		}
		sort.Strings(deps)
		graph[filepath.ToSlash(rel)] = deps
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return graph
}

var tableRow = regexp.MustCompile("^\\| `([^`]+)` \\| ([0-9]+) \\|")

// readArchitecture reads ARCHITECTURE.md's package table (package ->
// layer) and its import graph, the lines "pkg -> imports" between the
// markers "<!-- import graph -->" and "<!-- end import graph -->".
func readArchitecture(t *testing.T, path string) (map[string]int, map[string][]string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	layers, graph := map[string]int{}, map[string][]string{}
	in := false
	sc := bufio.NewScanner(f)
	for n := 1; sc.Scan(); n++ {
		l := sc.Text()
		switch {
		case strings.TrimSpace(l) == "<!-- import graph -->":
			in = true
		case strings.TrimSpace(l) == "<!-- end import graph -->":
			in = false
		case in && strings.Contains(l, "->"):
			from, to, _ := strings.Cut(l, "->")
			graph[strings.TrimSpace(from)] = strings.Fields(to)
		case tableRow.MatchString(l):
			m := tableRow.FindStringSubmatch(l)
			layer, _ := strconv.Atoi(m[2])
			if _, dup := layers[m[1]]; dup {
				t.Errorf("%s:%d: %s is listed twice", path, n, m[1])
			}
			layers[m[1]] = layer
		}
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return layers, graph
}

// TestArchitecture checks the module's imports against ARCHITECTURE.md:
// the rules, the layers of its package table, and its import graph line
// by line.
func TestArchitecture(t *testing.T) {
	root, module := moduleRoot(t)
	doc := filepath.Join(root, "ARCHITECTURE.md")
	layers, docGraph := readArchitecture(t, doc)
	graph := importGraph(t, root, module)
	if len(graph) < 10 {
		t.Fatalf("found only %d packages below %s", len(graph), root)
	}
	for _, v := range violations(graph, layers) {
		t.Error(v)
	}
	for _, p := range sortedKeys(layers) {
		if _, ok := graph[p]; !ok {
			t.Errorf("%s: the package table lists %s, which does not exist", doc, p)
		}
	}
	for _, p := range sortedKeys(graph) {
		if got, ok := docGraph[p]; !ok {
			t.Errorf("%s: the import graph has no line for %s (it imports %s)", doc, p, strings.Join(graph[p], " "))
		} else if !slices.Equal(got, graph[p]) {
			t.Errorf("%s: the import graph says %s -> %s; the code imports %s", doc, p, strings.Join(got, " "), strings.Join(graph[p], " "))
		}
	}
	for _, p := range sortedKeys(docGraph) {
		if _, ok := graph[p]; !ok {
			t.Errorf("%s: the import graph lists %s, which does not exist", doc, p)
		}
	}
}

// TestViolations checks that violations catches each kind of broken rule,
// on a small graph that obeys the rules until one import is added.
func TestViolations(t *testing.T) {
	layers := map[string]int{"internal/numeric": 0, "priors": 1, "sampler": 1, "models": 2, "models/gw": 0,
		"likelihood": 4, "models/registry": 4, "runconfig": 6, "report": 5, "fitrun": 5, "cmd/tautline": 7}
	ok := map[string][]string{
		"internal/numeric": {}, "models/gw": {}, "priors": {"internal/numeric"}, "sampler": {}, "models": {"priors"},
		"likelihood": {"models", "priors"}, "models/registry": {"models"}, "report": {}, "fitrun": {"sampler"},
		"runconfig": {"likelihood", "models/registry"}, "cmd/tautline": {"fitrun", "report", "runconfig"},
	}
	if v := violations(ok, layers); len(v) != 0 {
		t.Fatalf("a graph that keeps the rules gave %q", v)
	}
	for _, c := range []struct{ from, to, want string }{
		{"models", "sampler", "nothing in models knows about sampling"},
		{"sampler", "models", "the sampler sees only its Target"},
		{"likelihood", "models/registry", "never on a concrete model"},
		{"fitrun", "report", "import no model, data set or report"},
		{"report", "runconfig", "only the command wires"},
		{"priors", "models", "imports go down only"},
		{"models/gw", "priors", "leaves"},
		{"stats", "priors", "has no layer"},
	} {
		g := map[string][]string{}
		for k, v := range ok {
			g[k] = slices.Clone(v)
		}
		g[c.from] = append(g[c.from], c.to)
		v := violations(g, layers)
		if !slices.ContainsFunc(v, func(s string) bool { return strings.Contains(s, c.want) }) {
			t.Errorf("%s importing %s gave %q, want a violation saying %q", c.from, c.to, v, c.want)
		}
	}
}
