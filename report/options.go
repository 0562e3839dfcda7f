package report

import (
	"errors"
	"fmt"
	"slices"
	"strings"

	"tautline/rundir"
	"tautline/stats"
)

// The messages below name the options of the report command, which sets
// each RunOptions field from the option of the same name; the command
// reports them as command-line errors.

// SetFigures sets o.Formats from a comma-separated list of png, svg and
// pdf (at least one), and o.Masses from a comma-separated list of credible
// masses (stats.ParseMasses; empty: the default 68 % and 95 %) or, with
// sigma2d, the 2-D "1 and 2 sigma" masses, which a list may not also give.
func (o *RunOptions) SetFigures(formats, masses string, sigma2d bool) error {
	o.Formats = nil
	for _, f := range strings.Split(formats, ",") {
		switch f = strings.TrimSpace(f); f {
		case "":
		case "png", "svg", "pdf":
			o.Formats = append(o.Formats, f)
		default:
			return fmt.Errorf("--formats: %q is not png, svg or pdf", f)
		}
	}
	if len(o.Formats) == 0 {
		return errors.New("--formats: name at least one of png, svg, pdf")
	}
	var err error
	if o.Masses, err = stats.ParseMasses(masses); err != nil {
		return fmt.Errorf("--masses: %v", err)
	}
	if sigma2d {
		if masses != "" {
			return errors.New("--sigma2d and --masses both set the contour masses; give one")
		}
		o.Masses = []float64{stats.Mass1Sigma2D, stats.Mass2Sigma2D}
	}
	return nil
}

// Check refuses numeric options outside the range the tables and figures
// can use.
func (o RunOptions) Check() error {
	switch {
	case o.DPI < 30 || o.DPI > 2400:
		return fmt.Errorf("--dpi must be between 30 and 2400, got %d", o.DPI)
	case o.Draws < 1:
		return fmt.Errorf("--draws must be >= 1, got %d", o.Draws)
	case o.BinDraws < 2:
		return fmt.Errorf("--bin-draws must be >= 2, got %d", o.BinDraws)
	case o.Slices < 1:
		return fmt.Errorf("--slices must be >= 1, got %d", o.Slices)
	case !(o.LimitMass > 0 && o.LimitMass < 1):
		return fmt.Errorf("--limit-mass must be in (0, 1), got %g", o.LimitMass)
	case o.Sig < 1 || o.Sig > 6:
		return fmt.Errorf("--sig must be between 1 and 6, got %d", o.Sig)
	}
	return nil
}

// CheckTruths refuses a true value (--truth) of a parameter that no model
// of run has.
func (o RunOptions) CheckTruths(run *rundir.Run) error {
	var known []string
	for _, m := range run.Models {
		known = append(known, m.Names...)
	}
	for name := range o.Truths {
		if !slices.Contains(known, name) {
			return fmt.Errorf("--truth %s: no model of the run has that parameter; they have %s", name, strings.Join(slices.Compact(slices.Sorted(slices.Values(known))), ", "))
		}
	}
	return nil
}
