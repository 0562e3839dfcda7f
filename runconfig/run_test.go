package runconfig

import (
	"fmt"
	"strings"
	"testing"

	"tautline/compare"
	"tautline/rundir"
)

// TestComparisonIDText checks that ComparisonID hashes the text earlier
// versions hashed: the configuration, then the compare options printed
// with %+v from a struct of these field names and order, with the --tasks
// split and the command line cleared. Parts written before must keep
// their identity, so this text may not change.
func TestComparisonIDText(t *testing.T) {
	type compareOpts struct {
		models    string
		reference string
		rungs     int
		exponent  float64
		blocks    int
		target    float64
		maxSteps  int
		maxRungs  int
		task      int
		tasks     int
		swapEvery int
		adapt     bool
		cmdline   string
		// priorDraws is the last field, as it was.
		priorDraws int
	}
	cfg := CompareDefault()
	s := compare.DefaultSettings()
	s.Exponent, s.ErrorTarget, s.AdaptLadder, s.Task, s.Tasks = 4.5, 0.05, true, 1, 3
	o := compareOpts{models: "smbhb, strings", reference: "smbhb", rungs: s.Rungs, exponent: s.Exponent, blocks: s.Blocks,
		target: s.ErrorTarget, maxSteps: s.MaxSteps, maxRungs: s.MaxRungs, swapEvery: s.SwapEvery, adapt: s.AdaptLadder, priorDraws: s.PriorDraws}
	c := cfg
	c.Output, c.Sampler.Workers = OutputConfig{}, 0
	want := rundir.Fingerprint("abc", fmt.Sprintf("%s\n%+v", Marshal(c), o))
	if got := cfg.ComparisonID("smbhb, strings", "smbhb", s, "abc"); got != want {
		t.Errorf("ComparisonID = %s, want %s", got, want)
	}
	cfg.Output.Dir, cfg.Sampler.Workers, s.Task, s.Tasks, s.Workers = "elsewhere", 7, 0, 9, 3
	if got := cfg.ComparisonID("smbhb, strings", "smbhb", s, "abc"); got != want {
		t.Errorf("ComparisonID depends on the output folder, workers or task split: %s, want %s", got, want)
	}
	s.PriorDraws++
	if cfg.ComparisonID("smbhb, strings", "smbhb", s, "abc") == want {
		t.Error("ComparisonID does not depend on the prior draws")
	}
}

// TestCheckCompare checks that each refusal names the option at fault,
// in the order the compare command reports them.
func TestCheckCompare(t *testing.T) {
	cfg := CompareDefault()
	ok := compare.DefaultSettings()
	for _, c := range []struct {
		models    []string
		reference string
		edit      func(*compare.Settings, *Config)
		want      string
	}{
		{[]string{"smbhb", "strings"}, "smbhb", func(*compare.Settings, *Config) {}, ""},
		{[]string{"smbhb"}, "smbhb", func(s *compare.Settings, _ *Config) { s.ErrorTarget, s.Blocks = 0.1, 2 }, "--evidence-error needs"},
		{[]string{"smbhb", "nope"}, "smbhb", func(*compare.Settings, *Config) {}, `--models: unknown model "nope"`},
		{[]string{"smbhb"}, "smbhb", func(_ *compare.Settings, c *Config) { c.Sampler.Steps = 0 }, "--steps must be > 0"},
		{[]string{"smbhb"}, "strings", func(*compare.Settings, *Config) {}, `--reference "strings" is not among --models LIST`},
		{[]string{"smbhb"}, "smbhb", func(s *compare.Settings, _ *Config) { s.Rungs = 1 }, "--rungs/--ladder-exponent: "},
		{[]string{"smbhb"}, "smbhb", func(s *compare.Settings, _ *Config) { s.Blocks = s.Rungs + 1 }, "--rung-blocks must be between 1 and --rungs"},
	} {
		s, cf := ok, cfg
		c.edit(&s, &cf)
		err := cf.CheckCompare(c.models, "LIST", c.reference, s)
		if (c.want == "") != (err == nil) || (err != nil && !strings.HasPrefix(err.Error(), c.want)) {
			t.Errorf("%v against %s: got %v, want %q", c.models, c.reference, err, c.want)
		}
	}
}
