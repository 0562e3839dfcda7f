package main

import (
	"bytes"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// splitOpts is a comparison small enough to run several times in a test:
// two models, each ladder cut into two rung blocks; of the four units, three
// tasks get two, one and one, so a task holds units of both models.
var splitOpts = []string{
	"--models", "smbhb,strings", "--data", "demo:smbhb", "--rungs", "12", "--rung-blocks", "2",
	"--steps", "600", "--walkers", "16", "--seed", "3", "--log-level", "warn",
}

const splitTasks = 3

// splitEnv is the test process's environment without the batch system's
// task index (the test may itself run inside a job array task).
func splitEnv(extra ...string) []string {
	var env []string
	for _, kv := range os.Environ() {
		if !strings.HasPrefix(kv, "SLURM_ARRAY_TASK_ID=") {
			env = append(env, kv)
		}
	}
	return append(env, extra...)
}

// runTasks starts `compare --task i --tasks n` for every i as concurrent
// processes, task i writing into outs[i], and waits for all of them. The
// last task takes its index from SLURM_ARRAY_TASK_ID instead of --task, as
// under a job array.
func runTasks(t *testing.T, bin string, outs []string, opts []string) {
	t.Helper()
	n := len(outs)
	cmds := make([]*exec.Cmd, n)
	logs := make([]bytes.Buffer, n)
	for i := range n {
		args := append(append([]string{"compare"}, opts...), "--tasks", strconv.Itoa(n), "--out", outs[i])
		env := splitEnv("GOMAXPROCS=1") // results must not depend on the CPUs a task gets
		if i == n-1 {
			env = append(env, "SLURM_ARRAY_TASK_ID="+strconv.Itoa(i))
		} else {
			args = append(args, "--task", strconv.Itoa(i))
		}
		cmds[i] = exec.Command(bin, args...)
		cmds[i].Env = env
		cmds[i].Stdout, cmds[i].Stderr = &logs[i], &logs[i]
		if err := cmds[i].Start(); err != nil {
			t.Fatal(err)
		}
	}
	for i, c := range cmds {
		if err := c.Wait(); err != nil {
			t.Errorf("task %d: %v\n%s", i, err, logs[i].String())
		}
	}
	for i := range n {
		if !strings.Contains(logs[i].String(), "task "+strconv.Itoa(i)+" of "+strconv.Itoa(n)+" done") {
			t.Errorf("task %d did not report its slice done:\n%s", i, logs[i].String())
		}
	}
	if t.Failed() {
		t.FailNow()
	}
}

// tl runs the binary and returns its exit status and combined output.
func tl(t *testing.T, bin string, args ...string) (int, string) {
	t.Helper()
	cmd := exec.Command(bin, args...)
	cmd.Env = splitEnv()
	out, err := cmd.CombinedOutput()
	if ee, ok := err.(*exec.ExitError); ok {
		return ee.ExitCode(), string(out)
	}
	if err != nil {
		t.Fatal(err)
	}
	return 0, string(out)
}

// resultFiles lists compare.json, compare.csv and every file under models/
// of a comparison folder, relative to it.
func resultFiles(t *testing.T, dir string) []string {
	t.Helper()
	files := []string{"compare.json", "compare.csv"}
	err := filepath.WalkDir(filepath.Join(dir, "models"), func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, err := filepath.Rel(dir, p)
		files = append(files, rel)
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	slices.Sort(files)
	return files
}

// sameResults requires got to hold exactly want's result files, byte for
// byte: merge promises the output of one process, not an approximation.
func sameResults(t *testing.T, want, got string) {
	t.Helper()
	wf, gf := resultFiles(t, want), resultFiles(t, got)
	if !slices.Equal(wf, gf) {
		t.Fatalf("merged folder holds %v, one process wrote %v", gf, wf)
	}
	for _, m := range []string{"smbhb", "strings"} {
		if f := filepath.Join("models", m, "evidence.json"); !slices.Contains(wf, f) {
			t.Fatalf("one process wrote no %s: %v", f, wf)
		}
	}
	for _, f := range wf {
		a, err1 := os.ReadFile(filepath.Join(want, f))
		b, err2 := os.ReadFile(filepath.Join(got, f))
		if err1 != nil || err2 != nil {
			t.Fatalf("%s: %v, %v", f, err1, err2)
		}
		if !bytes.Equal(a, b) {
			t.Errorf("%s differs between the merged tasks and one process (%d vs %d bytes)", f, len(b), len(a))
		}
	}
}

// TestSplitMatchesOneProcess runs a comparison as separate concurrent task
// processes, merges their parts and requires the result files to be
// byte-identical to those of one process; then checks that merge refuses
// incomplete or mixed sets of parts and writes no result when it does.
func TestSplitMatchesOneProcess(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary and runs a comparison three times over")
	}
	bin := buildBinary(t)
	root := t.TempDir()
	at := func(name string) string { return filepath.Join(root, name) }

	if code, out := tl(t, bin, append(append([]string{"compare"}, splitOpts...), "--out", at("single"))...); code != 0 {
		t.Fatalf("one-process compare: exit %d\n%s", code, out)
	}

	// As on a cluster: every task writes into one shared folder.
	shared := make([]string, splitTasks)
	for i := range shared {
		shared[i] = at("shared")
	}
	runTasks(t, bin, shared, splitOpts)
	if code, out := tl(t, bin, "merge", "--out", at("merged"), at("shared")); code != 0 {
		t.Fatalf("merge of the shared folder: exit %d\n%s", code, out)
	}
	sameResults(t, at("single"), at("merged"))

	// Merging into the parts folder itself gives the same files.
	if code, out := tl(t, bin, "merge", "--out", at("shared"), at("shared")); code != 0 {
		t.Fatalf("merge into the parts folder: exit %d\n%s", code, out)
	}
	sameResults(t, at("single"), at("shared"))

	// One folder per task, merged from the list of folders.
	own := []string{at("t0"), at("t1"), at("t2")}
	runTasks(t, bin, own, splitOpts)
	if code, out := tl(t, bin, "merge", "--out", at("merged-own"), own[0], own[1], own[2]); code != 0 {
		t.Fatalf("merge of per-task folders: exit %d\n%s", code, out)
	}
	sameResults(t, at("single"), at("merged-own"))

	// Task 1 again with another seed, and with another ladder, each into a
	// folder of its own.
	for _, v := range []struct{ dir, flag, value string }{
		{"other-seed", "--seed", "4"},
		{"other-ladder", "--rungs", "15"},
	} {
		opts := slices.Clone(splitOpts)
		opts[slices.Index(opts, v.flag)+1] = v.value
		args := append(append([]string{"compare"}, opts...), "--task", "1", "--tasks", strconv.Itoa(splitTasks), "--out", at(v.dir))
		if code, out := tl(t, bin, args...); code != 0 {
			t.Fatalf("task 1 with %s %s: exit %d\n%s", v.flag, v.value, code, out)
		}
	}

	refusals := []struct {
		name string
		dirs []string
		want string // a phrase of merge's error that tells the user what to do
	}{
		{"task 1 missing", []string{own[0], own[2]}, "run every task before merging"},
		{"task 0 missing", []string{own[1], own[2]}, "run every task before merging"},
		{"task 1 from another seed", []string{own[0], at("other-seed"), own[2]}, "belongs to another comparison"},
		// The same unit twice, from two seeds, in either order.
		{"another seed's task 1 before all tasks", []string{at("other-seed"), own[0], own[1], own[2]}, "from different comparisons"},
		{"another seed's task 1 after all tasks", []string{own[0], own[1], own[2], at("other-seed")}, "from different comparisons"},
		{"task 1 with another ladder", []string{own[0], at("other-ladder"), own[2]}, "belongs to another comparison"},
	}
	for i, c := range refusals {
		t.Run(c.name, func(t *testing.T) {
			out := at("refused" + strconv.Itoa(i))
			code, msg := tl(t, bin, append([]string{"merge", "--out", out}, c.dirs...)...)
			if code != 1 || !strings.Contains(msg, c.want) {
				t.Errorf("merge %v: exit %d, want 1 and %q in:\n%s", c.dirs, code, c.want, msg)
			}
			for _, f := range []string{"compare.json", "compare.csv", "models", "parts"} {
				if _, err := os.Stat(filepath.Join(out, f)); err == nil {
					t.Errorf("refused merge left %s in its output folder", f)
				}
			}
		})
	}
}
