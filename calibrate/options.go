package calibrate

import (
	"errors"
	"fmt"
	"strings"
)

// ParseFormats reads a comma-separated list of figure formats, png and
// svg; "none" and empty entries add nothing. The result is never nil, so
// that a list naming no format asks for no figures (see
// Settings.FigureFormats). The message names the calibrate command's
// --formats option.
func ParseFormats(list string) ([]string, error) {
	figs := []string{}
	for _, f := range strings.Split(list, ",") {
		switch f = strings.TrimSpace(f); f {
		case "none", "":
		case "png", "svg":
			figs = append(figs, f)
		default:
			return nil, fmt.Errorf("--formats %q: want png, svg or none", list)
		}
	}
	return figs, nil
}

// CheckOptions refuses, before anything is built, settings and an array or
// data grid of p that Run would refuse or that could only fail later. Its
// messages name the options of the calibrate command, which sets each
// field from the option of the same name; Run's own checks stay phrased
// by field for other callers.
func CheckOptions(p Problem, s Settings) error {
	a, g := p.Array, p.Grid
	switch {
	case s.Replicates < 1:
		return fmt.Errorf("--replicates must be >= 1, got %d", s.Replicates)
	case s.Draws < 1:
		return fmt.Errorf("--draws must be >= 1, got %d", s.Draws)
	case s.Steps < 1 || s.Burn < -1 || s.Burn >= s.Steps:
		return fmt.Errorf("need --steps >= 1 and --burn -1 or below --steps, got %d and %d", s.Steps, s.Burn)
	case s.Thin < 0:
		return fmt.Errorf("--thin must be >= 0, got %d", s.Thin)
	case !(s.Level > 0 && s.Level < 1):
		return fmt.Errorf("--level must be in (0, 1), got %g", s.Level)
	case s.RankBins != 0 && (s.RankBins < 2 || (s.Draws+1)%s.RankBins != 0):
		return fmt.Errorf("--rank-bins must divide --draws + 1 = %d and be >= 2, got %d", s.Draws+1, s.RankBins)
	case s.RankBins == 0 && AutoBins(s.Replicates, s.Draws) == 0:
		return fmt.Errorf("%d replicates are too few for a rank histogram of %d draws (at least 2 bins of 10 expected replicates); give more --replicates", s.Replicates, s.Draws)
	case a.Pulsars < 1 || a.Bins < 1 || !(a.Span > 0) || !(a.Cadence > 0) || !(a.Sigma >= 0):
		return errors.New("need --pulsars >= 1, --bins >= 1, --span-yr > 0, --cadence-days > 0 and --sigma-ns >= 0")
	case !(g.Min < g.Max) || g.Points < 2:
		return errors.New("need --log10-rho-min < --log10-rho-max and --grid-points >= 2")
	}
	return nil
}
