package runconfig

import (
	"flag"
	"io"
	"testing"
)

// TestBind: flags write into their keys, defaults come from the
// configuration bound, and compare has no flag for the keys it ignores.
func TestBind(t *testing.T) {
	cfg := CompareDefault()
	fs := flag.NewFlagSet("fit", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	BindFit(fs, &cfg)
	if d := fs.Lookup("steps").DefValue; d != "3000" {
		t.Errorf("--steps default %s, want the bound configuration's 3000", d)
	}
	if err := fs.Parse([]string{"--walkers", "8", "--q", "2", "--until", "ess=10", "--h0", "70", "--out", "x", "--direct"}); err != nil {
		t.Fatal(err)
	}
	if cfg.Sampler.Walkers != 8 || cfg.Model.Strings.Q != 2 || cfg.Sampler.Until != "ess=10" || cfg.Cosmology.H0 != 70 ||
		cfg.Output.Dir != "x" || !cfg.Model.Strings.Direct {
		t.Errorf("flags not written into the configuration: %+v", cfg)
	}
	cs := flag.NewFlagSet("compare", flag.ContinueOnError)
	BindCompare(cs, &cfg)
	for _, name := range []string{"model", "until", "moves", "checkpoint-every", "flush-every", "temperatures"} {
		if cs.Lookup(name) != nil {
			t.Errorf("compare has --%s", name)
		}
	}
	ms := flag.NewFlagSet("spectrum", flag.ContinueOnError)
	BindModel(ms, &cfg)
	if ms.Lookup("model") == nil || ms.Lookup("steps") != nil {
		t.Error("BindModel binds the model flags only")
	}
}
