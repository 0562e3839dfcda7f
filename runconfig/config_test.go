package runconfig

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"tautline/internal/safeio"
)

// FuzzDecodeConfig feeds arbitrary bytes to the configuration reader: it
// must return a configuration or an error naming the file, never panic.
func FuzzDecodeConfig(f *testing.F) {
	files, _ := filepath.Glob(filepath.Join("..", "testdata", "config", "*.yaml"))
	for _, p := range files {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte("sampler: {walkers: [1, 2]}\n"))
	f.Add([]byte("model:\n  priors:\n    x: 3\n"))
	f.Add([]byte("data: [a.yaml, demo:pair-b]\nbins: {a: lowest:3, 2: \"1,4\"}\n"))
	f.Add([]byte("bins: lowest:5\ndata: [[1]]\n"))
	f.Fuzz(func(t *testing.T, raw []byte) {
		cfg := Default()
		if err := Decode("fuzz.yaml", raw, &cfg); err != nil && !strings.HasPrefix(err.Error(), "fuzz.yaml") {
			t.Errorf("error does not name the file: %v", err)
		}
	})
}

// TestDecode: keys land in their fields over the defaults, and each kind of
// mistake is refused with the file, the line and the key.
func TestDecode(t *testing.T) {
	cases := []struct {
		name, in string
		check    func(Config) bool
		err      string
	}{
		{"empty keeps defaults", "", func(c Config) bool { return c.Sampler.Walkers == 32 && c.Model.Name == "smbhb" }, ""},
		{"nested key", "sampler:\n  walkers: 8\nmodel:\n  strings:\n    q: 2\n",
			func(c Config) bool {
				return c.Sampler.Walkers == 8 && c.Model.Strings.Q == 2 && c.Sampler.Steps == 4000
			}, ""},
		{"priors map", "model:\n  priors:\n    gamma: fixed(3)\n", func(c Config) bool { return c.Model.Priors["gamma"] == "fixed(3)" }, ""},
		{"unknown top", "sampler:\n  walkers: 8\nsamplr: {}\n", nil, `c.yaml: line 3: unknown key "samplr"; known keys here: bins, cosmology, data, likelihood, model, output, sampler`},
		{"unknown nested", "model:\n  strings:\n    qq: 1\n", nil, `c.yaml: line 3: unknown key "model.strings.qq"`},
		{"not a mapping", "sampler: 3\n", nil, "c.yaml: line 1: sampler: want a mapping of keys"},
		{"top not a mapping", "- 1\n", nil, "c.yaml: line 1: the top level: want a mapping of keys"},
		{"wrong type", "sampler:\n  walkers: many\n", nil, "c.yaml: line 2: cannot unmarshal"},
		{"syntax", "sampler: [\n", nil, "c.yaml: line"},
		{"fraction into int", "sampler:\n  steps: 1.5\n", nil, "c.yaml: line 2: cannot unmarshal !!float `1.5` into int: sampler.steps must be a whole number"},
		{"fraction into uint64", "\nsampler:\n  seed: 1.5\n", nil, "c.yaml: line 3: cannot unmarshal !!float `1.5` into uint64: sampler.seed"},
		{"exponent into int", "model:\n  strings:\n    modes: 1e5\n", nil, "c.yaml: line 3: cannot unmarshal !!float `1e5` into int: model.strings.modes"},
		{"fraction through an alias", "sampler:\n  beta_min: &b 0.5\n  steps: *b\n", nil, "c.yaml: line 2: cannot unmarshal !!float `0.5` into int: sampler.steps"},
		{"float into a float key", "sampler:\n  beta_min: 1e-4\n", func(c Config) bool { return c.Sampler.BetaMin == 1e-4 }, ""},
		{"integer into a float key", "model:\n  strings:\n    q: 2\n", func(c Config) bool { return c.Model.Strings.Q == 2 }, ""},
	}
	for _, c := range cases {
		cfg := Default()
		err := Decode("c.yaml", []byte(c.in), &cfg)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("%s: error %v, want %q", c.name, err, c.err)
			}
			continue
		}
		if err != nil || !c.check(cfg) {
			t.Errorf("%s: %v, %+v", c.name, err, cfg)
		}
	}
}

// TestLoadRefusesSpecialFiles: a device, a named pipe, a link to a device
// and a file over the 1 MiB cap are refused at once, before any decoding,
// with the path and what is wrong; a sound file loads.
func TestLoadRefusesSpecialFiles(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe.yaml")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("cannot make a named pipe here: %v", err)
	}
	link := filepath.Join(dir, "link.yaml")
	if err := os.Symlink("/dev/zero", link); err != nil {
		t.Fatal(err)
	}
	big := filepath.Join(dir, "big.yaml")
	if err := os.WriteFile(big, append([]byte("# "), make([]byte, safeio.LimitConfig)...), 0o644); err != nil {
		t.Fatal(err)
	}
	good := filepath.Join(dir, "good.yaml")
	if err := os.WriteFile(good, []byte("sampler:\n  walkers: 12\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		path, want string
		is         error
	}{
		{"/dev/zero", "/dev/zero: is a character device, not a regular file", safeio.ErrNotRegular},
		{fifo, "pipe.yaml: is a named pipe (FIFO)", safeio.ErrNotRegular},
		{link, "link.yaml: is a character device", safeio.ErrNotRegular},
		{big, "is more than the 1 MiB limit", safeio.ErrTooLarge},
		{dir, "is a directory", safeio.ErrNotRegular},
	}
	for _, c := range cases {
		cfg := Default()
		err := Load(c.path, &cfg)
		if err == nil || !strings.Contains(err.Error(), c.want) || !errors.Is(err, c.is) {
			t.Errorf("Load(%s): %v, want %q", c.path, err, c.want)
		}
	}
	cfg := Default()
	if err := Load(good, &cfg); err != nil || cfg.Sampler.Walkers != 12 {
		t.Errorf("Load(good): %v, walkers %d", err, cfg.Sampler.Walkers)
	}
}

// TestMarshalRoundTrip: the rendering that metadata stores decodes back to
// the same configuration.
func TestMarshalRoundTrip(t *testing.T) {
	in := CompareDefault()
	in.Model.Priors = map[string]string{"log10_A": "uniform(-18, -11)"}
	in.Sampler.Until = "ess=100"
	out := Default()
	if err := Decode("m.yaml", []byte(Marshal(in)), &out); err != nil {
		t.Fatal(err)
	}
	if Marshal(out) != Marshal(in) {
		t.Errorf("round trip changed the configuration:\n%s\nvs\n%s", Marshal(in), Marshal(out))
	}
}

// TestFingerprint: only keys that decide the chain change the fingerprint.
func TestFingerprint(t *testing.T) {
	base := Default()
	fp := base.Fingerprint("abc")
	same := base
	same.Sampler.Steps, same.Sampler.Until, same.Sampler.Workers = 10, "ess=5", 3
	same.Sampler.CheckpointEvery, same.Output.FlushEvery, same.Output.Dir = 7, 7, "elsewhere"
	if same.Fingerprint("abc") != fp {
		t.Error("run length, writing cadence, folder or workers changed the fingerprint")
	}
	seed := base
	seed.Sampler.Seed = 2
	for name, got := range map[string]string{"seed": seed.Fingerprint("abc"), "data": base.Fingerprint("abd")} {
		if got == fp {
			t.Errorf("a different %s kept the fingerprint", name)
		}
	}
}
