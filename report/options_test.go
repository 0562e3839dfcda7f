package report

import (
	"slices"
	"strings"
	"testing"

	"tautline/rundir"
	"tautline/stats"
)

// TestSetFigures checks the format and contour-mass options and their
// refusals.
func TestSetFigures(t *testing.T) {
	var o RunOptions
	if err := o.SetFigures(" svg,,pdf ", "95,0.68", false); err != nil || !slices.Equal(o.Formats, []string{"svg", "pdf"}) || !slices.Equal(o.Masses, []float64{0.68, 0.95}) {
		t.Errorf("got %v %v, %v", o.Formats, o.Masses, err)
	}
	if err := o.SetFigures("png", "", true); err != nil || !slices.Equal(o.Masses, []float64{stats.Mass1Sigma2D, stats.Mass2Sigma2D}) {
		t.Errorf("--sigma2d: got %v, %v", o.Masses, err)
	}
	for _, c := range []struct {
		formats, masses string
		sigma2d         bool
		want            string
	}{
		{"png,gif", "", false, `--formats: "gif" is not png, svg or pdf`},
		{" , ", "", false, "--formats: name at least one of png, svg, pdf"},
		{"png", "100", false, "--masses: "},
		{"png", "0.5", true, "--sigma2d and --masses both set the contour masses; give one"},
	} {
		if err := o.SetFigures(c.formats, c.masses, c.sigma2d); err == nil || !strings.HasPrefix(err.Error(), c.want) {
			t.Errorf("SetFigures(%q, %q, %v): %v, want %q", c.formats, c.masses, c.sigma2d, err, c.want)
		}
	}
}

// TestCheckOptions checks each numeric bound of Check and the refusal of
// a true value of a parameter no model has.
func TestCheckOptions(t *testing.T) {
	ok := RunOptions{DPI: 300, Draws: 400, BinDraws: 400, Sig: 2, Slices: 16, LimitMass: 0.95}
	if err := ok.Check(); err != nil {
		t.Fatal(err)
	}
	for want, edit := range map[string]func(*RunOptions){
		"--dpi must be between 30 and 2400": func(o *RunOptions) { o.DPI = 29 },
		"--draws must be >= 1":              func(o *RunOptions) { o.Draws = 0 },
		"--bin-draws must be >= 2":          func(o *RunOptions) { o.BinDraws = 1 },
		"--slices must be >= 1":             func(o *RunOptions) { o.Slices = 0 },
		"--limit-mass must be in (0, 1)":    func(o *RunOptions) { o.LimitMass = 1 },
		"--sig must be between 1 and 6":     func(o *RunOptions) { o.Sig = 7 },
	} {
		o := ok
		edit(&o)
		if err := o.Check(); err == nil || !strings.HasPrefix(err.Error(), want) {
			t.Errorf("got %v, want %q", err, want)
		}
	}
	run := &rundir.Run{Models: []*rundir.Model{{Names: []string{"gamma", "log10_A"}}, {Names: []string{"log10_A"}}}}
	ok.Truths = map[string]float64{"log10_A": -15}
	if err := ok.CheckTruths(run); err != nil {
		t.Error(err)
	}
	ok.Truths["log10_Gmu"] = -10
	if err := ok.CheckTruths(run); err == nil || err.Error() != "--truth log10_Gmu: no model of the run has that parameter; they have gamma, log10_A" {
		t.Errorf("got %v", err)
	}
}
