package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"text/tabwriter"

	"tautline/cmd/tautline/internal/cli"
	"tautline/internal/numeric"
	"tautline/models/cosmicstrings"
)

const convertHelp = `
Converts a cosmic-string tension between its common forms: the
dimensionless Gmu (c = 1), the mass per unit length mu in kg/m, the
symmetry-breaking scale eta in GeV (Gmu ~ (eta/M_Planck)^2, an
order-of-magnitude relation; the caveat is printed), the conical deficit
angle 8 pi Gmu, and the largest separation of the two images of a source
lensed by a straight string (8 pi Gmu at the geometric maximum,
D_ls/D_s sin i = 1). Give exactly one of the inputs.`

// conversion is the output of `convert --json`.
type conversion struct {
	Gmu             float64 `json:"gmu"`
	MuKgPerM        float64 `json:"mu_kg_per_m"`
	EtaGeV          float64 `json:"eta_gev"`
	DeficitRad      float64 `json:"deficit_angle_rad"`
	DeficitArcsec   float64 `json:"deficit_angle_arcsec"`
	MaxSeparationMs float64 `json:"max_image_separation_mas"`
	Caveat          string  `json:"eta_caveat"`
}

func runConvert(_ context.Context, e *env, args []string) error {
	fs := newFlagSet(e, "convert", "(--gmu X | --mu X | --eta X | --separation X) [--json]", convertHelp)
	gmu := fs.Float64("gmu", 0, "string tension Gmu (dimensionless)")
	mu := fs.Float64("mu", 0, "mass per unit length mu in kg/m")
	eta := fs.Float64("eta", 0, "symmetry-breaking scale eta in GeV")
	sep := fs.Float64("separation", 0, "maximum lensing image separation in milliarcseconds")
	asJSON := fs.Bool("json", false, "print JSON")
	if err := cli.Parse(fs, args); err != nil {
		return err
	}
	var given []string
	fs.Visit(func(f *flag.Flag) {
		if f.Name != "json" {
			given = append(given, f.Name)
		}
	})
	if len(given) != 1 || fs.NArg() != 0 {
		return fmt.Errorf("%w: give exactly one of --gmu, --mu, --eta, --separation", errUsage)
	}
	var g float64
	switch given[0] {
	case "gmu":
		g = *gmu
	case "mu":
		g = cosmicstrings.GmuFromMassPerLength(*mu)
	case "eta":
		g = cosmicstrings.GmuFromScale(*eta)
	case "separation":
		g = cosmicstrings.GmuFromImageSeparationMas(*sep)
	}
	if !(g > 0) || !numeric.Finite(g) {
		return fmt.Errorf("%w: --%s must be a positive finite number", errUsage, given[0])
	} else if g >= 1 {
		return fmt.Errorf("%w: --%s must be below 1 as a tension Gmu (the conversions assume Gmu << 1), got Gmu = %g", errUsage, given[0], g)
	}
	c := conversion{
		Gmu: g, MuKgPerM: cosmicstrings.MassPerLength(g), EtaGeV: cosmicstrings.SymmetryBreakingScale(g),
		DeficitRad: cosmicstrings.DeficitAngle(g), DeficitArcsec: cosmicstrings.DeficitAngleArcsec(g),
		MaxSeparationMs: cosmicstrings.MaxImageSeparationMas(g), Caveat: cosmicstrings.ScaleCaveat,
	}
	if *asJSON {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(c)
	}
	tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "Gmu\t%.6g\t(dimensionless, log10 = %.4f)\n", c.Gmu, math.Log10(c.Gmu))
	fmt.Fprintf(tw, "mu\t%.6g\tkg/m\n", c.MuKgPerM)
	fmt.Fprintf(tw, "eta\t%.4g\tGeV (order of magnitude, see below)\n", c.EtaGeV)
	fmt.Fprintf(tw, "deficit angle\t%.6g\trad = %.6g arcsec\n", c.DeficitRad, c.DeficitArcsec)
	fmt.Fprintf(tw, "max image separation\t%.6g\tmas (geometric maximum, D_ls/D_s sin i = 1)\n", c.MaxSeparationMs)
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "\nNote: %s\n", c.Caveat)
	return nil
}
