package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/json"
	"flag"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

var updateGolden = flag.Bool("update-golden", false, "rewrite testdata/golden.txt from this build's outputs")

// goldenRuns are the command lines whose outputs must not change when code
// moves between packages: fit and compare on both demos, a compare split into
// two tasks and merged, and report on each. OUT stands for the test's folder.
var goldenRuns = [][]string{
	{"fit", "--data", "demo:smbhb", "--steps", "300", "--walkers", "16", "--seed", "3", "--out", "OUT/fit-smbhb"},
	{"fit", "--model", "strings", "--steps", "300", "--walkers", "16", "--seed", "3", "--out", "OUT/fit-strings"},
	{"compare", "--data", "demo:smbhb", "--models", "smbhb,strings", "--steps", "200", "--rungs", "6", "--walkers", "16", "--seed", "5", "--out", "OUT/cmp-smbhb"},
	{"compare", "--steps", "200", "--rungs", "6", "--walkers", "16", "--seed", "5", "--out", "OUT/cmp-strings"},
	{"compare", "--models", "smbhb,strings", "--steps", "200", "--rungs", "6", "--walkers", "16", "--seed", "5", "--rung-blocks", "2", "--tasks", "2", "--task", "0", "--out", "OUT/split"},
	{"compare", "--models", "smbhb,strings", "--steps", "200", "--rungs", "6", "--walkers", "16", "--seed", "5", "--rung-blocks", "2", "--tasks", "2", "--task", "1", "--out", "OUT/split"},
	{"merge", "--out", "OUT/merged", "OUT/split"},
	{"report", "OUT/fit-smbhb", "--formats", "png", "--out", "OUT/rep-fit-smbhb"},
	{"report", "OUT/fit-strings", "--formats", "png", "--out", "OUT/rep-fit-strings"},
	{"report", "OUT/cmp-strings", "--formats", "png", "--out", "OUT/rep-cmp-strings"},
	{"report", "OUT/merged", "--formats", "png", "--out", "OUT/rep-merged"},
}

// volatileKeys are JSON members that record when and how a run was started,
// not what it computed; they are dropped before hashing.
var volatileKeys = map[string]bool{
	"start": true, "end": true, "timings": true, "command_line": true,
	"seconds": true, "wall_seconds": true, "elapsed_seconds": true,
}

// TestGoldenOutputs checks that the same seeds give the same results, file
// by file, as the build that wrote testdata/golden.txt: data files (CSV,
// .npy, LaTeX) by their bytes, JSON files after dropping timings and the
// output folder's path and sorting keys. Figures are left out: their
// rendering is allowed to change. Regenerate with
// `go test ./cmd/tautline -run TestGoldenOutputs -update-golden`.
func TestGoldenOutputs(t *testing.T) {
	if testing.Short() {
		t.Skip("golden outputs run fit, compare, merge and report in full")
	}
	out := t.TempDir()
	for _, args := range goldenRuns {
		a := make([]string, len(args))
		for i, s := range args {
			a[i] = strings.ReplaceAll(s, "OUT", out)
		}
		if code, _, errs := runCLI(t, a...); code != 0 {
			t.Fatalf("tautline %s: exit %d\n%s", strings.Join(args, " "), code, errs)
		}
	}
	got := goldenManifest(t, out)
	path := filepath.Join("testdata", "golden.txt")
	if *updateGolden {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if got != string(want) {
		t.Errorf("outputs differ from %s:\n%s", path, lineDiff(string(want), got))
	}
}

// goldenManifest lists "sha256  path" for every non-figure file under dir.
func goldenManifest(t *testing.T, dir string) string {
	t.Helper()
	var lines []string
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		switch filepath.Ext(p) {
		case ".png", ".svg", ".pdf", ".bin":
			return nil
		}
		raw, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		if filepath.Ext(p) == ".json" {
			raw = canonicalJSON(t, rel, raw, dir)
		}
		lines = append(lines, fmt.Sprintf("%x  %s", sha256.Sum256(raw), filepath.ToSlash(rel)))
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	sort.Strings(lines)
	return strings.Join(lines, "\n") + "\n"
}

// canonicalJSON decodes raw, drops volatile members and figure files from
// file lists, replaces the output folder's path by OUT, and re-encodes with
// sorted keys.
func canonicalJSON(t *testing.T, name string, raw []byte, dir string) []byte {
	t.Helper()
	var v any
	d := json.NewDecoder(bytes.NewReader(raw))
	d.UseNumber()
	if err := d.Decode(&v); err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	v = scrub(v, dir)
	b, err := json.MarshalIndent(v, "", " ")
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func scrub(v any, dir string) any {
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			if volatileKeys[k] {
				delete(x, k)
				continue
			}
			x[k] = scrub(e, dir)
		}
		return x
	case []any:
		var keep []any
		for _, e := range x {
			if s, ok := e.(string); ok && isFigure(s) {
				continue
			}
			if m, ok := e.(map[string]any); ok {
				if s, ok := m["file"].(string); ok && isFigure(s) {
					continue
				}
			}
			keep = append(keep, scrub(e, dir))
		}
		return keep
	case string:
		return strings.ReplaceAll(x, dir, "OUT")
	}
	return v
}

func isFigure(s string) bool {
	switch filepath.Ext(s) {
	case ".png", ".svg", ".pdf":
		return true
	}
	return false
}

// lineDiff lists the lines only one of a and b has.
func lineDiff(a, b string) string {
	in := func(s string) map[string]bool {
		m := map[string]bool{}
		for _, l := range strings.Split(s, "\n") {
			m[l] = true
		}
		return m
	}
	ma, mb := in(a), in(b)
	var out []string
	for _, l := range strings.Split(a, "\n") {
		if !mb[l] {
			out = append(out, "- "+l)
		}
	}
	for _, l := range strings.Split(b, "\n") {
		if !ma[l] {
			out = append(out, "+ "+l)
		}
	}
	return strings.Join(out, "\n")
}
