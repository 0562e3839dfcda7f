package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// The attack suite runs the real binary, built once per run of
// TestAttack, on hostile inputs: each case in its own process with a
// deadline (killed with SIGKILL, since tautline catches SIGTERM) and an
// address-space cap, so that a hang, a panic or a runaway allocation is
// seen for what it is rather than stalling or crashing the test binary.
//
// TAUTLINE_ATTACK_RECORD=1 logs what every case did.

// attack is one hostile input and what tautline must do with it.
type attack struct {
	name string
	// args is the command line; "@D", "@C", "@P" stand for the corpus
	// folders testdata/attack/{data,config,parts} and "@T" for the case's
	// own temporary folder.
	args []string
	// setup prepares @T (special files, earlier runs) before the run.
	setup func(t *testing.T, b *attackEnv)
	// code is the exit status wanted: 1 for a refused input, 2 for a
	// refused command line, 0 for an input accepted.
	code int
	// want are substrings of stdout+stderr: the refusal's message, or for
	// an accepted doubtful input the line that says what was assumed.
	want []string
	// check, if set, inspects @T after the run (no leftovers...).
	check func(t *testing.T, b *attackEnv) error
	// timeout overrides the default deadline.
	timeout time.Duration
}

// attackEnv is what a case's setup and check work with.
type attackEnv struct {
	bin, tmp, data, config, parts string
}

// run runs the built binary with args (placeholders expanded) under the
// deadline and returns the exit status (-1 when killed), the output, and
// whether the deadline passed.
func (b *attackEnv) run(ctx context.Context, timeout time.Duration, args ...string) (int, string, bool) {
	ctx, cancel := context.WithTimeout(ctx, timeout)
	defer cancel()
	// A 4 GiB address-space cap turns a runaway allocation into a crash
	// instead of swapping the shared machine; the Go runtime needs far
	// less to start.
	sh := append([]string{"-c", `ulimit -v 4194304 && exec "$0" "$@"`, b.bin}, b.expand(args)...)
	cmd := exec.CommandContext(ctx, "/bin/sh", sh...)
	cmd.Dir = b.tmp
	cmd.Env = append(os.Environ(), "GOMAXPROCS=1")
	cmd.Stdin = nil
	var out bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &out
	cmd.WaitDelay = time.Second
	err := cmd.Run()
	if ctx.Err() != nil {
		return -1, out.String(), true
	}
	var ee *exec.ExitError
	if errors.As(err, &ee) {
		return ee.ExitCode(), out.String(), false
	}
	if err != nil {
		return -1, out.String() + err.Error(), false
	}
	return 0, out.String(), false
}

func (b *attackEnv) expand(args []string) []string {
	r := strings.NewReplacer("@D", b.data, "@C", b.config, "@P", b.parts, "@T", b.tmp)
	out := make([]string, len(args))
	for i, a := range args {
		out[i] = r.Replace(a)
	}
	return out
}

// path joins elements under @T.
func (b *attackEnv) path(elem ...string) string {
	return filepath.Join(append([]string{b.tmp}, elem...)...)
}

// Small runs: enough steps for every output file, little time.
var (
	tinyFit     = []string{"--steps", "40", "--walkers", "8", "--log-level", "warn"}
	tinyCompare = []string{"--steps", "40", "--burn", "10", "--walkers", "8", "--rungs", "3", "--log-level", "warn"}
)

func fitArgs(extra ...string) []string {
	return append(append([]string{"fit"}, tinyFit...), extra...)
}

func inspect(file string) []string { return []string{"inspect", "@D/" + file} }

// mkfifo makes a named pipe at @T/name.
func mkfifo(name string) func(*testing.T, *attackEnv) {
	return func(t *testing.T, b *attackEnv) {
		if err := syscall.Mkfifo(b.path(name), 0o600); err != nil {
			t.Fatal(err)
		}
	}
}

// copyData copies the sound data set into @T/d and replaces its table
// tname with a special file made by mk.
func copyData(tname string, mk func(t *testing.T, path string)) func(*testing.T, *attackEnv) {
	return func(t *testing.T, b *attackEnv) {
		if err := os.MkdirAll(b.path("d"), 0o755); err != nil {
			t.Fatal(err)
		}
		for _, f := range []string{"ok.yaml", "samples.csv", "grid.csv", "gaussian.csv"} {
			raw, err := os.ReadFile(filepath.Join(b.data, f))
			if err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(b.path("d", f), raw, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		p := b.path("d", tname)
		if err := os.Remove(p); err != nil {
			t.Fatal(err)
		}
		mk(t, p)
	}
}

func fifoAt(t *testing.T, p string) {
	if err := syscall.Mkfifo(p, 0o600); err != nil {
		t.Fatal(err)
	}
}

func linkTo(target string) func(t *testing.T, p string) {
	return func(t *testing.T, p string) {
		if err := os.Symlink(target, p); err != nil {
			t.Fatal(err)
		}
	}
}

// sparse makes a file of the given size that takes no disk space.
func sparse(size int64) func(t *testing.T, p string) {
	return func(t *testing.T, p string) {
		f, err := os.Create(p)
		if err != nil {
			t.Fatal(err)
		}
		defer f.Close()
		if err := f.Truncate(size); err != nil {
			t.Fatal(err)
		}
	}
}

// oversizeDescription writes the sound description followed by a comment
// of n bytes: valid YAML, only too big.
func oversizeDescription(n int) func(*testing.T, *attackEnv) {
	return func(t *testing.T, b *attackEnv) {
		copyData("ok.yaml", func(t *testing.T, p string) {
			raw, err := os.ReadFile(filepath.Join(b.data, "ok.yaml"))
			if err != nil {
				t.Fatal(err)
			}
			raw = append(raw, "# "...)
			raw = append(raw, bytes.Repeat([]byte("x"), n)...)
			if err := os.WriteFile(p, append(raw, '\n'), 0o644); err != nil {
				t.Fatal(err)
			}
		})(t, b)
	}
}

// priorRun runs a tiny fit into @T/run, optionally stopping it as if
// killed: then the checkpoint is kept and the stale temporaries of a
// killed writer are planted beside it.
func priorRun(t *testing.T, b *attackEnv, plant bool) {
	code, out, hung := b.run(context.Background(), 30*time.Second, fitArgs("--data", "@D/ok.yaml", "--steps", "40", "--checkpoint-every", "20", "--out", "@T/run")...)
	if code != 0 || hung {
		t.Fatalf("setup fit: exit %d (hung %v): %s", code, hung, out)
	}
	if !plant {
		return
	}
	old := time.Now().Add(-time.Hour)
	for _, n := range []string{".checkpoint.bin.tmp-111", ".posterior.npy.tmp-222", ".summary.json.tmp-333", ".meta.json.tmp-444"} {
		p := b.path("run", n)
		if err := os.WriteFile(p, []byte("half-written"), 0o644); err != nil {
			t.Fatal(err)
		}
		if err := os.Chtimes(p, old, old); err != nil {
			t.Fatal(err)
		}
	}
}

// noTemporaries fails when a hidden temporary is left in @T/run.
func noTemporaries(t *testing.T, b *attackEnv) error {
	ents, err := os.ReadDir(b.path("run"))
	if err != nil {
		return err
	}
	var left []string
	for _, e := range ents {
		if strings.HasPrefix(e.Name(), ".") && strings.Contains(e.Name(), ".tmp-") {
			left = append(left, e.Name())
		}
	}
	if len(left) > 0 {
		return fmt.Errorf("stale temporaries left in the run folder: %v", left)
	}
	return nil
}

// comparePart runs a tiny two-model compare into @T/cmp and rewrites
// the first part.json found with edit.
func comparePart(edit func(pm map[string]any)) func(*testing.T, *attackEnv) {
	return func(t *testing.T, b *attackEnv) {
		args := append(append([]string{"compare"}, tinyCompare...), "--data", "@D/ok.yaml", "--models", "smbhb,strings", "--out", "@T/cmp")
		code, out, hung := b.run(context.Background(), 60*time.Second, args...)
		if code != 0 || hung {
			t.Fatalf("setup compare: exit %d (hung %v): %s", code, hung, out)
		}
		matches, _ := filepath.Glob(b.path("cmp", "parts", "*", "part.json"))
		if len(matches) == 0 {
			t.Fatal("setup compare wrote no part.json")
		}
		for _, m := range matches {
			raw, err := os.ReadFile(m)
			if err != nil {
				t.Fatal(err)
			}
			var pm map[string]any
			if err := json.Unmarshal(raw, &pm); err != nil {
				t.Fatal(err)
			}
			edit(pm)
			raw, _ = json.Marshal(pm)
			if err := os.WriteFile(m, raw, 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
}

func attacks() []attack {
	refuse := func(name string, args []string, want ...string) attack {
		return attack{name: name, args: args, code: 1, want: want}
	}
	usage := func(name string, args []string, want ...string) attack {
		return attack{name: name, args: args, code: 2, want: want}
	}
	accept := func(name string, args []string, want ...string) attack {
		return attack{name: name, args: args, code: 0, want: want}
	}
	quick := func(a attack, d time.Duration) attack {
		a.timeout = d
		return a
	}
	with := func(a attack, setup func(*testing.T, *attackEnv)) attack {
		a.setup = setup
		return a
	}
	return []attack{
		// 1. Sizes derived from input: the KDE table of a prior range.
		refuse("fit prior [-1e308, 1e308]", fitArgs("--data", "@D/prior-huge.yaml", "--out", "@T/run"), "prior-huge.yaml: line 7: log10_rho_prior: [-1e+308, 1e+308] is more than 1000 decades wide"),
		refuse("compare prior [-1e308, 1e308]", append(append([]string{"compare"}, tinyCompare...), "--data", "@D/prior-huge.yaml", "--models", "smbhb", "--out", "@T/cmp"), "prior-huge.yaml: line 7: log10_rho_prior"),
		refuse("fit prior [-1e300, 1e300]", fitArgs("--data", "@D/prior-1e300.yaml", "--out", "@T/run"), "prior-1e300.yaml: line 7: log10_rho_prior: [-1e+300, 1e+300] is more than 1000 decades wide"),
		quick(refuse("fit prior [-1e12, 1e12]", fitArgs("--data", "@D/prior-1e12.yaml", "--out", "@T/run"), "prior-1e12.yaml: line 7: log10_rho_prior: [-1e+12, 1e+12] is more than 1000 decades wide"), 10*time.Second),
		// The description parser refuses such a range, so inspect does too.
		refuse("inspect prior [-1e308, 1e308]", inspect("prior-huge.yaml"), "prior-huge.yaml: line 7: log10_rho_prior: [-1e+308, 1e+308] is more than 1000 decades wide"),
		accept("fit prior 1e-14 wide, gaussian bins", fitArgs("--data", "@D/prior-narrow.yaml", "--out", "@T/run"), "posterior samples"),

		// 2. Special files and unbounded reads.
		quick(refuse("inspect /dev/zero", []string{"inspect", "/dev/zero"}, "/dev/zero: is a character device, not a regular file"), 5*time.Second),
		quick(refuse("fit --data /dev/urandom", fitArgs("--data", "/dev/urandom", "--out", "@T/run"), "/dev/urandom: is a character device"), 5*time.Second),
		quick(refuse("fit --config /dev/zero", []string{"fit", "--config", "/dev/zero"}, "/dev/zero: is a character device"), 5*time.Second),
		quick(refuse("fit --config naming data: /dev/zero", fitArgs("--config", "@C/data-dev-zero.yaml", "--out", "@T/run"), "/dev/zero: is a character device"), 5*time.Second),
		quick(refuse("compare --data /dev/zero", []string{"compare", "--data", "/dev/zero", "--out", "@T/cmp"}, "/dev/zero: is a character device"), 5*time.Second),
		quick(with(refuse("inspect a FIFO", []string{"inspect", "@T/pipe.yaml"}, "pipe.yaml: is a named pipe (FIFO)"), mkfifo("pipe.yaml")), 5*time.Second),
		quick(with(refuse("fit --config a FIFO", []string{"fit", "--config", "@T/pipe.yaml"}, "pipe.yaml: is a named pipe (FIFO)"), mkfifo("pipe.yaml")), 5*time.Second),
		quick(with(refuse("samples table is a FIFO", []string{"inspect", "@T/d/ok.yaml"}, "samples.csv: is a named pipe (FIFO)"), copyData("samples.csv", fifoAt)), 5*time.Second),
		quick(with(refuse("samples table links to /dev/zero", []string{"inspect", "@T/d/ok.yaml"}, "samples.csv: is a character device"), copyData("samples.csv", linkTo("/dev/zero"))), 5*time.Second),
		quick(with(refuse("grid table is a FIFO", fitArgs("--data", "@T/d/ok.yaml", "--out", "@T/run"), "grid.csv: is a named pipe (FIFO)"), copyData("grid.csv", fifoAt)), 5*time.Second),
		quick(with(refuse("sparse 1 GiB samples table", []string{"inspect", "@T/d/ok.yaml"}, "samples.csv: 1 GiB is more than the 512 MiB limit"), copyData("samples.csv", sparse(1<<30))), 10*time.Second),
		with(refuse("description of 2 MiB", []string{"inspect", "@T/d/ok.yaml"}, "ok.yaml: 2.0 MiB is more than the 1 MiB limit"), oversizeDescription(2<<20)),
		quick(with(refuse("config links to /dev/zero", []string{"fit", "--config", "@T/c.yaml"}, "c.yaml: is a character device"), func(t *testing.T, b *attackEnv) { linkTo("/dev/zero")(t, b.path("c.yaml")) }), 5*time.Second),
		quick(with(refuse("resume from a FIFO checkpoint", fitArgs("--data", "@D/ok.yaml", "--resume", "--out", "@T/run"), "checkpoint.bin: is a named pipe (FIFO)"), func(t *testing.T, b *attackEnv) {
			priorRun(t, b, false)
			if err := os.Remove(b.path("run", "checkpoint.bin")); err != nil {
				t.Fatal(err)
			}
			fifoAt(t, b.path("run", "checkpoint.bin"))
		}), 5*time.Second),
		quick(with(refuse("resume from a sparse 8 GiB checkpoint", fitArgs("--data", "@D/ok.yaml", "--resume", "--out", "@T/run"), "checkpoint.bin: 8 GiB is more than the"), func(t *testing.T, b *attackEnv) {
			priorRun(t, b, false)
			sparse(8<<30)(t, b.path("run", "checkpoint.bin"))
		}), 10*time.Second),
		quick(with(refuse("merge a FIFO part.json", []string{"merge", "--out", "@T/m", "@T/p"}, "part.json: is a named pipe (FIFO)"), func(t *testing.T, b *attackEnv) {
			if err := os.MkdirAll(b.path("p", "parts", "u0"), 0o755); err != nil {
				t.Fatal(err)
			}
			fifoAt(t, b.path("p", "parts", "u0", "part.json"))
		}), 5*time.Second),
		refuse("inspect a directory", []string{"inspect", "@D"}, "is a directory"),
		refuse("fit --config a directory", []string{"fit", "--config", "@C"}, "is a directory"),
		refuse("samples table is a directory", inspect("tables-dir.yaml"), "is a directory"),
		quick(refuse("samples table is /dev/zero", inspect("tables-dev-zero.yaml"), "/dev/zero: is a character device"), 5*time.Second),
		refuse("samples table is /etc/passwd", inspect("tables-etc-passwd.yaml"), "/etc/passwd: line 1: header must be"),

		// 3. Sizes that cannot fit in memory or time.
		quick(usage("fit --walkers 1e9", fitArgs("--walkers", "1000000000", "--out", "@T/run"), "--walkers 1000000000"), 5*time.Second),
		quick(usage("fit walkers: 1e9 in the config", fitArgs("--config", "@C/walkers-huge.yaml", "--walkers", "1000000000", "--out", "@T/run"), "--walkers 1000000000"), 5*time.Second),
		quick(usage("fit --steps 1e12 without checkpoints", fitArgs("--steps", "1000000000000", "--checkpoint-every", "0", "--out", "@T/run"), "--steps 1000000000000"), 5*time.Second),
		quick(usage("simulate --bins 1e7", []string{"simulate", "--bins", "10000000", "--out", "@T/sim"}, "--bins 10000000"), 5*time.Second),
		quick(usage("fit --temperatures 100000", fitArgs("--temperatures", "100000", "--out", "@T/run"), "--temperatures 100000"), 5*time.Second),
		quick(usage("compare --rungs 1e6", []string{"compare", "--rungs", "1000000", "--steps", "40", "--out", "@T/cmp"}, "--rungs 1000000"), 5*time.Second),
		quick(usage("compare --walkers 1e9", []string{"compare", "--walkers", "1000000000", "--steps", "40", "--out", "@T/cmp"}, "--walkers 1000000000"), 5*time.Second),
		quick(usage("simulate --samples 1e9", []string{"simulate", "--samples", "1000000000", "--out", "@T/sim"}, "--samples 1000000000"), 5*time.Second),
		quick(usage("spectrum --n 1e9", []string{"spectrum", "--n", "1000000000"}, "--n 1000000000"), 5*time.Second),

		// 4. Stale temporaries after kill -9.
		with(attack{name: "resume removes stale temporaries", args: fitArgs("--data", "@D/ok.yaml", "--steps", "60", "--resume", "--out", "@T/run"), code: 0, want: []string{"posterior samples"}, check: noTemporaries},
			func(t *testing.T, b *attackEnv) { priorRun(t, b, true) }),
		with(attack{name: "a new run removes stale temporaries", args: fitArgs("--data", "@D/ok.yaml", "--out", "@T/run"), code: 0, want: []string{"posterior samples"}, check: noTemporaries},
			func(t *testing.T, b *attackEnv) {
				priorRun(t, b, true)
				for _, f := range []string{"checkpoint.bin", "chain.csv", "meta.json", "summary.json", "posterior.npy"} {
					_ = os.Remove(b.path("run", f))
				}
			}),
		with(attack{name: "a completed run leaves no temporaries", args: fitArgs("--data", "@D/ok.yaml", "--out", "@T/run"), code: 0, want: []string{"posterior samples"}, check: noTemporaries}, nil),

		// 5. Doubtful inputs: refuse, or accept and say what was assumed.
		refuse("span of 1e30 s", inspect("span-1e30.yaml"), "span-1e30.yaml: line 4: span_seconds: 1e+30 s is outside the supported range [86400 s (1 day), 3.15576e+10 s (1000 yr)]"),
		refuse("span of 1e-9 yr", inspect("span-tiny.yaml"), "span-tiny.yaml: line 4: span_years: 1e-09 yr is outside the supported range [0.002738 yr (1 day), 1000 yr]"),
		accept("hex span is a YAML integer", inspect("span-hex.yaml"), "(1e+08 s)"),
		accept("octal span is a YAML integer", inspect("span-octal.yaml"), "(1e+08 s)"),
		refuse("underscored span", inspect("span-underscore.yaml"), `span-underscore.yaml: line 4: span_seconds: must be a number, got "100_000_000": YAML readers disagree on "_" between digits (YAML 1.1 drops it, YAML 1.2 reads a string); write 100000000`),
		accept("grid bin of two points", inspect("grid-two.yaml"), "only 2 points"),
		accept("quoted CSV fields (RFC 4180)", inspect("csv-quoted.yaml"), "total: 3 bins"),
		refuse("empty CSV value", inspect("csv-empty-value.yaml"), `samples-empty-value.csv: line 6: log10_rho: must be a number, got ""`),
		// Outside the string table's band fit refuses and names the way out.
		refuse("strings fit above the table's band", fitArgs("--model", "strings", "--data", "@D/band-high.yaml", "--out", "@T/run"), "frequency 0.0001 Hz is outside the table's range [1e-11, 1e-05] Hz; evaluate it with the direct path (--direct)"),
		refuse("strings fit below the table's band", fitArgs("--model", "strings", "--data", "@D/band-low.yaml", "--out", "@T/run"), "frequency 1e-13 Hz is outside the table's range"),
		refuse("strings+smbhb fit above the band", fitArgs("--model", "strings+smbhb", "--data", "@D/band-high.yaml", "--out", "@T/run"), `part "strings": strings: frequency 0.0001 Hz is outside`),
		refuse("compare above the band", append(append([]string{"compare"}, tinyCompare...), "--data", "@D/band-high.yaml", "--models", "smbhb,strings", "--out", "@T/cmp"), "model strings", "--direct"),
		accept("smbhb fit above the strings band", fitArgs("--data", "@D/band-high.yaml", "--out", "@T/run"), "posterior samples"),

		// 6. merge on a part whose reference is not among its models.
		with(refuse("merge: reference not among models", []string{"merge", "--out", "@T/m", "@T/cmp"}, `part.json: reference "nosuchmodel" is not among models smbhb, strings`), comparePart(func(pm map[string]any) { pm["reference"] = "nosuchmodel" })),
		with(refuse("merge: empty model list", []string{"merge", "--out", "@T/m", "@T/cmp"}, "part.json: models: empty"), comparePart(func(pm map[string]any) { pm["models"] = []string{} })),
		with(refuse("merge: data checksum altered in one part", []string{"merge", "--out", "@T/m", "@T/cmp"}, "belongs to another comparison"), func(t *testing.T, b *attackEnv) {
			n := 0
			comparePart(func(pm map[string]any) {
				n++
				if n == 1 {
					pm["comparison"] = "0000"
				}
			})(t, b)
		}),
	}
}

// broadAttacks are the rest of the hostile inputs: each refusal with the
// message that must name the file, line and key at fault.
func broadAttacks() []attack {
	r := func(name string, args []string, want ...string) attack {
		return attack{name: name, args: args, code: 1, want: want}
	}
	u := func(name string, args []string, want ...string) attack {
		return attack{name: name, args: args, code: 2, want: want}
	}
	ok := func(name string, args []string, want ...string) attack {
		return attack{name: name, args: args, code: 0, want: want}
	}
	i := inspect
	return []attack{
		// spans
		r("span 0", i("span-zero.yaml"), "span-zero.yaml: line 4: span_seconds: must be > 0, got 0"),
		r("span negative", i("span-negative.yaml"), "span_seconds: must be > 0, got -1e+08"),
		r("span NaN", i("span-nan.yaml"), "span_seconds: must be finite, got NaN"),
		r("span +Inf", i("span-inf.yaml"), "span_seconds: must be finite, got +Inf"),
		r("span 1e309", i("span-overflow.yaml"), "span_seconds: must be"),
		r("span text", i("span-string.yaml"), `span_seconds: must be a number, got "ten years"`),
		r("span list", i("span-list.yaml"), "span_seconds: must be a number"),
		r("span mapping", i("span-map.yaml"), "span_seconds: must be a number"),
		r("span null", i("span-null.yaml"), "span_seconds: must be a number"),
		r("span true", i("span-bool.yaml"), "span_seconds: must be a number"),
		r("span missing", i("span-missing.yaml"), "span_seconds: missing"),
		r("span twice", i("span-both.yaml"), "give the span once"),
		r("span in Arabic-Indic digits", i("span-unicode-digits.yaml"), "span_seconds: must be a number"),
		r("span with a full-width digit", i("span-fullwidth.yaml"), "span_seconds: must be a number"),
		// frequencies
		r("harmonics 0", i("harm-zero.yaml"), `frequencies.harmonics: must be an integer >= 1, got "0"`),
		r("harmonics -3", i("harm-negative.yaml"), "frequencies.harmonics: must be an integer >= 1"),
		r("harmonics 2.5", i("harm-float.yaml"), `got "2.5"`),
		r("harmonics 3e0", i("harm-exp.yaml"), `got "3e0"`),
		r("harmonics 1e23", i("harm-huge.yaml"), "frequencies.harmonics: must be an integer >= 1"),
		r("harmonics 70000", i("harm-too-many.yaml"), "70000 bins is more than the 65536 supported"),
		r("harmonics text", i("harm-string.yaml"), `got "three"`),
		r("harmonics and hz", i("freq-both.yaml"), "give either frequencies.harmonics or frequencies.hz"),
		r("no frequencies", i("freq-none.yaml"), "frequencies: missing"),
		r("frequencies scalar", i("freq-not-map.yaml"), "frequencies: must be a mapping"),
		r("hz empty", i("freq-empty-list.yaml"), "frequencies.hz: must be a non-empty list"),
		r("hz NaN", i("freq-nan.yaml"), "frequencies.hz[1] (bin 2): must be finite, got NaN"),
		r("hz negative", i("freq-negative.yaml"), "frequencies.hz[0] (bin 1)"),
		r("hz duplicate (irregular)", i("freq-duplicate.yaml"), "frequencies.hz[1] (bin 2)"),
		r("irregular maybe", i("freq-irregular-bad.yaml"), `frequencies.irregular: must be true or false, got "maybe"`),
		r("unknown frequencies key", i("freq-unknown-key.yaml"), `unknown key "frequencies.cadence"`),
		// prior
		r("prior reversed", i("prior-reversed.yaml"), "log10_rho_prior: lo must be below hi, got [-5, -9]"),
		r("prior empty", i("prior-equal.yaml"), "lo must be below hi, got [-7, -7]"),
		r("prior one value", i("prior-one.yaml"), "log10_rho_prior: must be a list [lo, hi]"),
		r("prior three values", i("prior-three.yaml"), "log10_rho_prior: must be a list [lo, hi]"),
		r("prior text", i("prior-string.yaml"), "log10_rho_prior: must be a list [lo, hi]"),
		r("prior NaN", i("prior-nan.yaml"), "log10_rho_prior[0]: must be finite, got NaN"),
		r("prior infinite", i("prior-inf.yaml"), "log10_rho_prior[0]: must be finite, got -Inf"),
		r("prior missing", i("prior-missing.yaml"), "log10_rho_prior: missing"),
		r("prior nested lists", i("prior-nested.yaml"), "log10_rho_prior[0]: must be a number"),
		// tables
		r("no tables", i("tables-none.yaml"), "name at least one of tables.samples"),
		r("tables scalar", i("tables-not-map.yaml"), "tables: must be a mapping"),
		r("table file missing", i("tables-missing-file.yaml"), `tables.samples: cannot read table "no-such.csv"`),
		r("table list", i("tables-list.yaml"), "tables.samples: must be a non-empty string"),
		r("table name empty", i("tables-empty-name.yaml"), "tables.samples: must be a non-empty string"),
		r("unknown table kind", i("tables-unknown.yaml"), `unknown key "tables.histogram"`),
		r("bin in no table", i("tables-missing-bin.yaml"), "bin 2 (2e-08 Hz) appears in none of the tables"),
		r("one file as two kinds", i("tables-same-twice.yaml"), "samples.csv: line 1: header must be"),
		// CSV content
		r("CSV without header", i("samples-header-missing.yaml"), `samples-header-missing.csv: line 1: header must be "bin,log10_rho"`),
		r("CSV header only", i("samples-header-only.yaml"), "samples-header-only.csv: no rows after the header"),
		r("CSV wrong header", i("samples-header-wrong.yaml"), `header must be "bin,log10_rho", got "bin,rho"`),
		ok("CSV header after a BOM", i("samples-header-bom.yaml"), "total: 3 bins"),
		r("CSV extra column", i("samples-extra-column.yaml"), `samples-extra-column.csv: line 1: header must be "bin,log10_rho"`),
		ok("CSV with CRLF line ends", i("samples-crlf.yaml"), "total: 3 bins"),
		r("CSV bin 0", i("samples-bin-zero.yaml"), `samples-bin-zero.csv: line 2: bin: must be an integer >= 1, got "0"`),
		r("CSV bin -1", i("samples-bin-negative.yaml"), `bin: must be an integer >= 1, got "-1"`),
		r("CSV bin 1.0", i("samples-bin-float.yaml"), `bin: must be an integer >= 1, got "1.0"`),
		r("CSV bin 1e23", i("samples-bin-huge.yaml"), "bin: must be an integer >= 1"),
		r("CSV bin beyond the declared", i("samples-bin-beyond.yaml"), "bin: 4 exceeds the 3 bins declared"),
		r("CSV value inf", i("samples-value-inf.yaml"), "line 4: log10_rho: must be finite, got +Inf"),
		r("CSV value NaN", i("samples-value-nan.yaml"), "line 4: log10_rho: must be finite, got NaN"),
		r("CSV value -1e309", i("samples-value-overflow.yaml"), "line 4: log10_rho: must be a number"),
		r("CSV value text", i("samples-value-text.yaml"), `log10_rho: must be a number, got "minus seven"`),
		r("CSV too few samples", i("samples-few-samples.yaml"), "bin 1: 3 samples, need at least"),
		r("CSV equal samples", i("samples-equal-samples.yaml"), "bin 1: all samples are equal"),
		r("CSV sample outside prior", i("samples-outside-prior.yaml"), "log10_rho: -4 lies outside the prior range [-9, -5]"),
		r("CSV unterminated quote", i("samples-unterminated-quote.yaml"), "samples-unterminated-quote.csv: line 61: extraneous or missing \" in quoted-field"),
		r("CSV stray quote", i("samples-lone-quote.yaml"), "samples-lone-quote.csv: line 4"),
		r("CSV NUL byte", i("samples-nul-bytes.yaml"), "samples-nul-bytes.csv: line 4: log10_rho: must be a number"),
		r("CSV 200 kB field", i("samples-long-field.yaml"), "samples-long-field.csv: line 4: log10_rho: must be"),
		r("CSV comments only", i("samples-comments-only.yaml"), "samples-comments-only.csv: empty table"),
		r("CSV bin rows split", i("samples-non-contiguous.yaml"), "rows of a bin must be contiguous"),
		r("CSV empty file", i("samples-empty-file.yaml"), "samples-empty-file.csv: empty table"),
		r("CSV unicode minus", i("samples-unicode-minus.yaml"), "log10_rho: must be a number"),
		r("grid decreasing", i("grid-decreasing.yaml"), "the grid of bin 2 must be strictly increasing"),
		r("grid negative density", i("grid-negative-density.yaml"), "density: must be >= 0, got -0.5"),
		r("grid zero density", i("grid-zero-density.yaml"), "bin 2: the density has no positive mass"),
		r("grid NaN density", i("grid-nan-density.yaml"), "density: must be finite, got NaN"),
		r("grid one point", i("grid-one-point.yaml"), "bin 2: the grid needs at least 2 points, got 1"),
		r("gaussian sd 0", i("gauss-sd-zero.yaml"), "sd: must be > 0, got 0"),
		r("gaussian sd negative", i("gauss-sd-negative.yaml"), "sd: must be > 0, got -0.25"),
		r("gaussian mean outside prior", i("gauss-mean-outside.yaml"), "mean: -2 lies outside the prior range"),
		r("gaussian bin twice", i("gauss-duplicate.yaml"), "bin 3: already given on line 2"),
		// whole documents
		r("empty description", i("yaml-empty.yaml"), "yaml-empty.yaml: empty description"),
		r("description of comments", i("yaml-comments-only.yaml"), "empty description"),
		r("description is a list", i("yaml-list.yaml"), "the description must be a mapping"),
		r("description is a scalar", i("yaml-scalar.yaml"), "the description must be a mapping"),
		r("tab indentation", i("yaml-tab-indent.yaml"), "yaml-tab-indent.yaml: line"),
		r("unclosed quote", i("yaml-unclosed-quote.yaml"), "yaml-unclosed-quote.yaml: line"),
		r("duplicate key", i("yaml-duplicate-key.yaml"), `mapping key "name" already defined`),
		ok("description after a BOM", i("yaml-bom.yaml"), "total: 3 bins"),
		ok("unicode name, bidi controls", i("yaml-unicode-name.yaml"), "total: 3 bins"),
		r("invalid UTF-8", i("yaml-invalid-utf8.yaml"), "yaml-invalid-utf8.yaml"),
		r("NUL in the description", i("yaml-nul.yaml"), "yaml-nul.yaml"),
		r("name is a list", i("yaml-name-list.yaml"), "name: must be a non-empty string"),
		r("name empty", i("yaml-name-empty.yaml"), "name: must be a non-empty string"),
		r("unknown top-level key", i("yaml-unknown-key.yaml"), `unknown key "notes"`),
		r("alias bomb", i("yaml-alias-bomb.yaml"), "yaml-alias-bomb.yaml"),
		r("5000-deep nesting", i("yaml-deep-nesting.yaml"), "yaml-deep-nesting.yaml"),
		// configurations
		ok("empty configuration", []string{"fit", "--config", "@C/empty-doc.yaml", "--print-config"}, "walkers: 32"),
		u("walkers -1", fitArgs("--config", "@C/walkers-negative.yaml", "--walkers", "-1", "--out", "@T/run"), "--walkers must be at least"),
		r("walkers overflow int", fitArgs("--config", "@C/walkers-overflow.yaml", "--out", "@T/run"), "walkers-overflow.yaml: line 3"),
		r("steps text", fitArgs("--config", "@C/steps-string.yaml"), "steps-string.yaml: line 3: cannot unmarshal !!str `many` into int"),
		r("steps 1.5", fitArgs("--config", "@C/steps-float.yaml"), "steps-float.yaml: line 3: cannot unmarshal !!float `1.5` into int"),
		r("seed -1", fitArgs("--config", "@C/seed-negative.yaml"), "seed-negative.yaml: line 3"),
		r("seed 1.5", fitArgs("--config", "@C/seed-float.yaml"), "seed-float.yaml: line 3: cannot unmarshal !!float `1.5` into uint64"),
		u("beta_min 0", fitArgs("--config", "@C/beta-min-zero.yaml", "--out", "@T/run"), "--beta-min 0"),
		u("beta_min 2", fitArgs("--config", "@C/beta-min-above-one.yaml", "--out", "@T/run"), "--beta-min 2"),
		u("moves de:-1", fitArgs("--config", "@C/moves-negative.yaml", "--out", "@T/run"), "weight of de must be a positive number"),
		u("moves stretch:nan", fitArgs("--config", "@C/moves-nan.yaml", "--out", "@T/run"), "weight of stretch must be a positive number"),
		{name: "until ess=nan", args: fitArgs("--config", "@C/until-nan.yaml", "--out", "@T/run"), code: 2, want: []string{"ess must be a positive number"}},
		r("priors as a list", fitArgs("--config", "@C/priors-list.yaml"), "priors-list.yaml: line 3"),
		r("prior bounds reversed", fitArgs("--config", "@C/priors-bad-spec.yaml", "--out", "@T/run"), "log10_A"),
		r("prior bound NaN", fitArgs("--config", "@C/priors-nan.yaml", "--out", "@T/run"), "log10_A"),
		u("model name with a zero-width space", fitArgs("--config", "@C/model-unicode.yaml", "--out", "@T/run"), "unknown; want one of smbhb"),
		ok("model: null keeps the defaults", fitArgs("--config", "@C/model-null.yaml", "--print-config"), "name: smbhb"),
		r("data names its own config", fitArgs("--config", "@C/data-self.yaml", "--out", "@T/run"), "data-self.yaml"),
		u("h0 0", fitArgs("--config", "@C/h0-zero.yaml", "--out", "@T/run"), "0 < --h0 < 1000"),
		u("h0 NaN", fitArgs("--config", "@C/h0-nan.yaml", "--out", "@T/run"), "0 < --h0 < 1000"),
		u("omega_m 1", fitArgs("--config", "@C/omega-m-one.yaml", "--out", "@T/run"), "0 < --omega-m < 1"),
		r("bandwidth unknown", fitArgs("--config", "@C/bandwidth-unknown.yaml", "--out", "@T/run"), "widest"),
		r("modes -1", fitArgs("--config", "@C/modes-negative.yaml", "--out", "@T/run"), "Modes must be >= 0 (0 = infinite), got -1"),
		r("q 0", fitArgs("--config", "@C/q-zero.yaml", "--out", "@T/run"), "Q must be in (1, 10), got 0"),
		r("loop production unknown", fitArgs("--config", "@C/loop-production-unknown.yaml", "--out", "@T/run"), "guess"),
		r("dof unknown", fitArgs("--config", "@C/dof-unknown.yaml", "--out", "@T/run"), "many"),
		r("f_large 2", fitArgs("--config", "@C/f-large-above-one.yaml", "--out", "@T/run"), "f"),
		r("kappa NaN", fitArgs("--config", "@C/kappa-nan.yaml", "--out", "@T/run"), "Kappa must be in [0, 10), got NaN"),
		r("sampler is a list", fitArgs("--config", "@C/sampler-list.yaml"), "sampler-list.yaml: line 2: sampler: want a mapping of keys"),
		r("config is a list", fitArgs("--config", "@C/top-list.yaml"), "top-list.yaml: line 2: the top level: want a mapping of keys"),
		r("config tab indent", fitArgs("--config", "@C/tab-indent.yaml"), "tab-indent.yaml: line"),
		r("config duplicate key", fitArgs("--config", "@C/duplicate-key.yaml"), `mapping key "walkers" already defined`),
		r("config alias bomb", fitArgs("--config", "@C/alias-bomb.yaml"), "alias-bomb.yaml"),
		r("config 5000-deep nesting", fitArgs("--config", "@C/deep-nesting.yaml"), "deep-nesting.yaml"),
		r("config invalid UTF-8", fitArgs("--config", "@C/invalid-utf8.yaml"), "invalid-utf8.yaml"),
		r("config missing", fitArgs("--config", "@C/none.yaml"), "reading the configuration"),
		// command lines
		u("fit --steps -5", fitArgs("--steps", "-5"), "--steps must be > 0, got -5"),
		u("fit --steps 0", fitArgs("--steps", "0"), "--steps must be > 0, got 0"),
		u("fit --steps text", fitArgs("--steps", "lots"), `invalid value "lots" for flag -steps`),
		u("fit --steps 2^63", fitArgs("--steps", "9223372036854775808"), "value out of range"),
		u("fit --walkers 1", fitArgs("--walkers", "1"), "--walkers must be at least 2"),
		u("fit --seed -1", fitArgs("--seed", "-1"), `invalid value "-1" for flag -seed`),
		u("fit --burn -2", fitArgs("--burn", "-2"), "--burn must be >= 0, or -1"),
		u("fit --checkpoint-every -1", fitArgs("--checkpoint-every", "-1"), "--checkpoint-every and --flush-every must be >= 0"),
		u("fit --temperatures 0", fitArgs("--temperatures", "0", "--out", "@T/run"), "--temperatures must be >= 1"),
		u("fit --data demo:nothing", fitArgs("--data", "demo:nothing"), `no such demo`),
		r("fit --data missing", fitArgs("--data", "@T/none.yaml"), "none.yaml: no such file"),
		r("fit --out is a file", fitArgs("--out", "@D/ok.yaml"), "output folder"),
		r("fit --out under /proc", fitArgs("--out", "/proc/self/tautline-run"), "output folder"),
		u("fit --prior without =", fitArgs("--prior", "log10_A"), "want NAME=SPEC"),
		r("fit --prior reversed", fitArgs("--prior", "log10_A=uniform(-11,-18)", "--out", "@T/run"), "log10_A"),
		u("fit --prior unknown parameter", fitArgs("--prior", "nope=uniform(0,1)", "--out", "@T/run"), `"nope" is not a parameter of model smbhb`),
		u("fit --until rhat=1", fitArgs("--until", "rhat=1"), "rhat must be above 1"),
		u("fit --until junk", fitArgs("--until", "junk"), `is not KEY=VALUE`),
		u("fit --moves teleport", fitArgs("--moves", "teleport", "--out", "@T/run"), `unknown move "teleport"`),
		u("fit --log-level shout", fitArgs("--log-level", "shout", "--out", "@T/run"), "shout"),
		u("fit --log-format xml", fitArgs("--log-format", "xml", "--out", "@T/run"), "xml"),
		r("fit --resume without a checkpoint", fitArgs("--resume", "--out", "@T/run"), "no checkpoint to resume from"),
		with1(r("fit --resume from garbage", fitArgs("--data", "@D/ok.yaml", "--resume", "--out", "@T/run"), "checkpoint is corrupt"), func(t *testing.T, b *attackEnv) {
			priorRun(t, b, false)
			if err := os.WriteFile(b.path("run", "checkpoint.bin"), []byte("tautline-ckpt 1\ngarbage garbage garbage"), 0o644); err != nil {
				t.Fatal(err)
			}
		}),
		with1(r("fit --resume from a truncated checkpoint", fitArgs("--data", "@D/ok.yaml", "--resume", "--out", "@T/run"), "checkpoint is corrupt"), func(t *testing.T, b *attackEnv) {
			priorRun(t, b, false)
			p := b.path("run", "checkpoint.bin")
			raw, _ := os.ReadFile(p)
			if err := os.WriteFile(p, raw[:len(raw)/2], 0o644); err != nil {
				t.Fatal(err)
			}
		}),
		with1(r("fit --resume with other data", fitArgs("--data", "@D/span-hex.yaml", "--resume", "--out", "@T/run"), "was the configuration or data changed"), func(t *testing.T, b *attackEnv) {
			// span-hex is ok.yaml with the span spelled in hex: the same
			// numbers, but other bytes, so another data checksum.
			priorRun(t, b, false)
		}),
		with1(r("fit into a folder that holds a run", fitArgs("--data", "@D/ok.yaml", "--out", "@T/run"), "this folder holds a run already"), func(t *testing.T, b *attackEnv) { priorRun(t, b, false) }),
		r("inspect a good and a missing data set", []string{"inspect", "@D/ok.yaml", "@T/none.yaml"}, "none.yaml"),
		r("inspect a missing file", []string{"inspect", "@T/none.yaml"}, "none.yaml"),
		u("inspect demo:nothing", []string{"inspect", "demo:nothing"}, "no such demo"),
		r("simulate --pulsars 0", []string{"simulate", "--pulsars", "0", "--out", "@T/sim"}, "pulsars must be >= 1, got 0"),
		u("simulate --bins 0", []string{"simulate", "--bins", "0", "--out", "@T/sim"}, "--bins must be >= 1, got 0"),
		u("simulate --span-yr NaN", []string{"simulate", "--span-yr", "NaN", "--out", "@T/sim"}, "--span-yr must be a positive number of years, got NaN"),
		u("simulate --span-yr -1", []string{"simulate", "--span-yr", "-1", "--out", "@T/sim"}, "--span-yr must be a positive number of years, got -1"),
		u("convert --gmu -1", []string{"convert", "--gmu", "-1"}, "gmu"),
		u("convert --gmu NaN", []string{"convert", "--gmu", "NaN"}, "gmu"),
		u("convert --gmu 1e300", []string{"convert", "--gmu", "1e300"}, "--gmu must be below 1"),
		u("spectrum --freqs junk", []string{"spectrum", "--freqs", "junk"}, "junk"),
		u("spectrum --freqs negative", []string{"spectrum", "--freqs", "-1e-8"}, "-1e-8"),
		u("compare --models empty", []string{"compare", "--models", ",", "--out", "@T/cmp"}, "--models"),
		u("compare --reference outside --models", []string{"compare", "--models", "smbhb", "--reference", "strings", "--out", "@T/cmp"}, "--reference"),
		u("compare --task beyond --tasks", []string{"compare", "--task", "5", "--tasks", "2", "--out", "@T/cmp"}, "--task"),
		// merge
		u("merge without folders", []string{"merge", "--out", "@T/m"}, "want --out DIR and at least one folder of parts"),
		r("merge a folder with no parts", []string{"merge", "--out", "@T/m", "@D"}, "no parts found under"),
		r("merge garbage part", []string{"merge", "--out", "@T/m", "@P/garbage"}, "part.json: not a compare part"),
		r("merge array part", []string{"merge", "--out", "@T/m", "@P/array"}, "part.json: not a compare part"),
		r("merge empty part", []string{"merge", "--out", "@T/m", "@P/empty"}, "part.json: not a compare part"),
		r("merge null part", []string{"merge", "--out", "@T/m", "@P/null"}, "part.json: part schema 0, want 1"),
		r("merge schema 2", []string{"merge", "--out", "@T/m", "@P/schema-two"}, "part.json: part schema 2, want 1"),
		r("merge part without unit", []string{"merge", "--out", "@T/m", "@P/no-unit"}, "is malformed"),
		r("merge part with 0 blocks", []string{"merge", "--out", "@T/m", "@P/blocks-zero"}, "is malformed"),
		r("merge increasing betas", []string{"merge", "--out", "@T/m", "@P/betas-increasing"}, "betas must decrease within [0, 1]"),
		r("merge NaN beta", []string{"merge", "--out", "@T/m", "@P/betas-nan"}, "not a compare part"),
		r("merge 100000-deep JSON", []string{"merge", "--out", "@T/m", "@P/deep-nesting"}, "not a compare part"),
		r("merge schema 1e400", []string{"merge", "--out", "@T/m", "@P/huge-number"}, "not a compare part"),
		// report
		r("report a missing folder", []string{"report", "@T/none"}, "none"),
		r("report an empty folder", []string{"report", "@T"}, "@T"),
		r("report a data folder", []string{"report", "@D"}, "data"),
	}
}

// with1 sets a case's setup (a plain function so that broadAttacks reads
// as a table).
func with1(a attack, setup func(*testing.T, *attackEnv)) attack {
	a.setup = setup
	return a
}

// buildAttackBinary builds tautline into dir and returns its path.
func buildAttackBinary(t *testing.T, dir string) string {
	t.Helper()
	gobin, err := exec.LookPath("go")
	if err != nil {
		t.Fatalf("the attack suite builds the binary and needs the go command: %v", err)
	}
	bin := filepath.Join(dir, "tautline")
	cmd := exec.Command(gobin, "build", "-o", bin, ".")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// TestAttack runs every hostile input against the built binary. A case
// fails when the exit status or message differs from its expectation,
// when the process outlives its deadline (a hang), or when its output
// shows a Go panic or fatal runtime error, whatever the exit status.
func TestAttack(t *testing.T) {
	if _, err := os.Stat("/bin/sh"); err != nil {
		t.Skip("needs /bin/sh to cap the address space of each case")
	}
	root, err := filepath.Abs(filepath.Join("testdata", "attack"))
	if err != nil {
		t.Fatal(err)
	}
	bin := buildAttackBinary(t, t.TempDir())
	record := os.Getenv("TAUTLINE_ATTACK_RECORD") == "1"
	all := append(attacks(), broadAttacks()...)
	seen := map[string]bool{}
	for _, a := range all {
		if seen[a.name] {
			t.Fatalf("two cases named %q", a.name)
		}
		seen[a.name] = true
		t.Run(a.name, func(t *testing.T) {
			b := &attackEnv{bin: bin, tmp: t.TempDir(), data: filepath.Join(root, "data"), config: filepath.Join(root, "config"), parts: filepath.Join(root, "parts")}
			if a.setup != nil {
				a.setup(t, b)
			}
			timeout := a.timeout
			if timeout == 0 {
				timeout = 30 * time.Second
			}
			start := time.Now()
			code, out, hung := b.run(context.Background(), timeout, a.args...)
			if record {
				first, _, _ := strings.Cut(strings.TrimSpace(out), "\n")
				t.Logf("RECORD exit %d hung %v in %v: %.300s", code, hung, time.Since(start).Round(time.Millisecond), first)
			}
			cmdline := strings.Join(b.expand(a.args), " ")
			switch {
			case hung:
				t.Fatalf("hang: tautline %s still ran after %v (killed); output so far:\n%.2000s", cmdline, timeout, out)
			case strings.Contains(out, "panic:") || strings.Contains(out, "fatal error:") || strings.Contains(out, "goroutine "):
				t.Fatalf("crash: tautline %s exited %d with a Go panic or runtime error:\n%.2000s", cmdline, code, out)
			case code != a.code:
				t.Fatalf("tautline %s: exit %d, want %d; output:\n%.2000s", cmdline, code, a.code, out)
			}
			for _, w := range a.want {
				w = strings.ReplaceAll(w, "@T", b.tmp)
				if !strings.Contains(out, w) {
					t.Errorf("tautline %s: output lacks %q:\n%.2000s", cmdline, w, out)
				}
			}
			if a.check != nil {
				if err := a.check(t, b); err != nil {
					t.Error(err)
				}
			}
		})
	}
	if len(all) < 100 {
		t.Errorf("the attack table has %d cases, want at least 100", len(all))
	}
}
