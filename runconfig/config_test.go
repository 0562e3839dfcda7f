package runconfig

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
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
