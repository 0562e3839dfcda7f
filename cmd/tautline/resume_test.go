package main

import (
	"bytes"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"syscall"
	"testing"
	"time"
)

// buildBinary compiles tautline into a temporary folder for tests that need
// a real process (signals, kill -9).
func buildBinary(t *testing.T) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "tautline")
	cmd := exec.Command("go", "build", "-o", bin, ".")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// killAndResume runs the fit args(dir) as a subprocess, kills it with
// SIGKILL at a random moment after its first checkpoint, resumes it with
// --resume, and requires the chain and posterior to be byte-identical to
// those of a run that was never interrupted.
func killAndResume(t *testing.T, bin string, args func(dir string) []string, maxDelay time.Duration) {
	t.Helper()
	ref := t.TempDir()
	if out, err := exec.Command(bin, args(ref)...).CombinedOutput(); err != nil {
		t.Fatalf("uninterrupted run: %v\n%s", err, out)
	}

	killed := t.TempDir()
	seed := uint64(time.Now().UnixNano())
	delay := time.Duration(rand.New(rand.NewPCG(seed, 1)).Int64N(int64(maxDelay)))
	t.Logf("kill delay after the first checkpoint: %v (seed %d)", delay, seed)
	cmd := exec.Command(bin, args(killed)...)
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	waitForFile(t, cmd, filepath.Join(killed, "checkpoint.bin"))
	time.Sleep(delay)
	_ = cmd.Process.Kill() // SIGKILL
	finished := (<-done) == nil
	if finished {
		t.Log("the run finished before it could be killed; resuming a finished run must still reproduce it")
	}
	if out, err := exec.Command(bin, append(args(killed), "--resume")...).CombinedOutput(); err != nil {
		t.Fatalf("resumed run: %v\n%s", err, out)
	}
	for _, f := range []string{"chain.csv", "posterior.npy", "summary.json"} {
		a, err1 := os.ReadFile(filepath.Join(ref, f))
		b, err2 := os.ReadFile(filepath.Join(killed, f))
		if err1 != nil || err2 != nil {
			t.Fatalf("%s: %v %v", f, err1, err2)
		}
		if !bytes.Equal(a, b) {
			t.Errorf("%s differs between the uninterrupted and the killed-and-resumed run (%d vs %d bytes)", f, len(a), len(b))
		}
	}
}

// waitForFile waits up to 60 s for path to appear while cmd runs.
func waitForFile(t *testing.T, cmd *exec.Cmd, path string) {
	t.Helper()
	for deadline := time.Now().Add(60 * time.Second); ; time.Sleep(time.Millisecond) {
		if _, err := os.Stat(path); err == nil {
			return
		}
		if time.Now().After(deadline) {
			_ = cmd.Process.Kill()
			t.Fatalf("no %s appeared within 60 s", filepath.Base(path))
		}
	}
}

// TestKillAndResume: kill -9 and --resume of a short fit. --flush-every 1
// makes every step reach the disk (and slows the run enough to be killed
// mid-way).
func TestKillAndResume(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary and runs three fits")
	}
	bin := buildBinary(t)
	killAndResume(t, bin, func(dir string) []string {
		return []string{"fit", "--steps", "1500", "--walkers", "16", "--seed", "5",
			"--checkpoint-every", "100", "--flush-every", "1", "--log-level", "warn", "--out", dir}
	}, 400*time.Millisecond)
}

// TestKillAndResumeLong: kill -9 and --resume of a 20000-step fit, whose
// resume reads a history of thousands of steps back from chain.csv (the
// checkpoint holds none of it), and whose chain is flushed only at the
// checkpoints, so that the killed run leaves rows after the checkpoint's
// offset for --resume to cut.
func TestKillAndResumeLong(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary and runs three fits")
	}
	bin := buildBinary(t)
	killAndResume(t, bin, func(dir string) []string {
		return []string{"fit", "--steps", "20000", "--walkers", "16", "--seed", "11",
			"--checkpoint-every", "1000", "--log-level", "warn", "--out", dir}
	}, 500*time.Millisecond)
}

// TestResumeRefusesOtherConfig: a checkpoint from one configuration is not
// continued with another, and a damaged checkpoint is refused.
func TestResumeRefusals(t *testing.T) {
	dir := t.TempDir()
	base := []string{"fit", "--steps", "200", "--walkers", "16", "--seed", "5", "--checkpoint-every", "100", "--log-level", "warn", "--out", dir}
	if code, _, errs := runCLI(t, base...); code != 0 {
		t.Fatalf("fit: %s", errs)
	}
	if code, _, errs := runCLI(t, base...); code != 1 || !bytes.Contains([]byte(errs), []byte("continue it with --resume")) {
		t.Errorf("second run into the same folder: exit %d, %s", code, errs)
	}
	other := append(append([]string{}, base...), "--resume", "--seed", "6")
	if code, _, errs := runCLI(t, other...); code != 1 || !bytes.Contains([]byte(errs), []byte("fingerprint")) {
		t.Errorf("resume with another seed: exit %d, %s", code, errs)
	}
	ck := filepath.Join(dir, "checkpoint.bin")
	raw, err := os.ReadFile(ck)
	if err != nil {
		t.Fatal(err)
	}
	for name, damaged := range map[string][]byte{
		"truncated":   raw[:len(raw)/2],
		"bit-flipped": flipBit(raw, len(raw)/3),
	} {
		if err := os.WriteFile(ck, damaged, 0o644); err != nil {
			t.Fatal(err)
		}
		code, _, errs := runCLI(t, append(append([]string{}, base...), "--resume")...)
		if code != 1 || !bytes.Contains([]byte(errs), []byte("checkpoint is corrupt")) {
			t.Errorf("%s checkpoint: exit %d, %s", name, code, errs)
		}
	}
}

func flipBit(b []byte, i int) []byte {
	c := append([]byte(nil), b...)
	c[i] ^= 0x10
	return c
}

// TestInterruptWritesCheckpoint sends SIGTERM to a running fit once its
// first checkpoint (step 100 of 30000) exists: it must exit with status 1
// after writing a checkpoint, and --resume must finish the run with the
// same chain as an uninterrupted one. The run is long enough (about 300
// times the steps before the signal) that finishing first is a failure.
func TestInterruptWritesCheckpoint(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary and runs three fits")
	}
	bin := buildBinary(t)
	args := func(dir string) []string {
		return []string{"fit", "--steps", "30000", "--walkers", "16", "--seed", "9",
			"--checkpoint-every", "100", "--log-level", "warn", "--out", dir}
	}
	ref := t.TempDir()
	if out, err := exec.Command(bin, args(ref)...).CombinedOutput(); err != nil {
		t.Fatalf("uninterrupted run: %v\n%s", err, out)
	}
	dir := t.TempDir()
	cmd := exec.Command(bin, args(dir)...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	waitForFile(t, cmd, filepath.Join(dir, "checkpoint.bin"))
	_ = cmd.Process.Signal(syscall.SIGTERM)
	err := cmd.Wait()
	if err == nil {
		t.Fatal("the run finished before SIGTERM interrupted it")
	}
	if ee, ok := err.(*exec.ExitError); !ok || ee.ExitCode() != 1 || !bytes.Contains(stderr.Bytes(), []byte("--resume")) {
		t.Fatalf("interrupted run: %v, stderr %s", err, stderr.String())
	}
	if out, err := exec.Command(bin, append(args(dir), "--resume")...).CombinedOutput(); err != nil {
		t.Fatalf("resumed run: %v\n%s", err, out)
	}
	a, _ := os.ReadFile(filepath.Join(ref, "chain.csv"))
	b, _ := os.ReadFile(filepath.Join(dir, "chain.csv"))
	if !bytes.Equal(a, b) {
		t.Errorf("chain after SIGTERM and --resume differs from the uninterrupted one (%d vs %d bytes)", len(a), len(b))
	}
}
