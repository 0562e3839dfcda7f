package cosmicstrings

import "math"

// Constants for the conversions (CODATA 2018).
const (
	speedOfLight = 299792458.0 // m/s
	newtonG      = 6.67430e-11 // m^3 kg^-1 s^-2
	// PlanckMassGeV is the (non-reduced) Planck mass sqrt(hbar c / G)
	// in GeV, the M_Planck of Gmu ~ (eta/M_Planck)^2.
	PlanckMassGeV = 1.220890e19
	radToArcsec   = 180 * 3600 / math.Pi
)

// ScaleCaveat qualifies SymmetryBreakingScale; commands print it next to
// any quoted eta.
const ScaleCaveat = "eta from Gmu = (eta/M_Planck)^2 with the non-reduced Planck mass 1.22e19 GeV is an order-of-magnitude estimate: " +
	"the relation holds up to model-dependent factors of order one (for Abelian-Higgs strings near the BPS limit mu = 2 pi eta^2, " +
	"so eta would be lower by sqrt(2 pi) = 2.5), and the loop model's Gmu is itself an effective parameter."

// MassPerLength returns the string's mass per unit length mu = Gmu c^2 / G
// in kg/m (docs/physics.md section 1: 1.35e17 kg/m at Gmu = 1e-10).
func MassPerLength(gmu float64) float64 { return gmu * speedOfLight * speedOfLight / newtonG }

// GmuFromMassPerLength inverts MassPerLength (mu in kg/m).
func GmuFromMassPerLength(mu float64) float64 { return mu * newtonG / (speedOfLight * speedOfLight) }

// SymmetryBreakingScale returns eta = M_Planck sqrt(Gmu) in GeV (common
// practice; see ScaleCaveat).
func SymmetryBreakingScale(gmu float64) float64 { return PlanckMassGeV * math.Sqrt(gmu) }

// GmuFromScale inverts SymmetryBreakingScale (eta in GeV).
func GmuFromScale(eta float64) float64 { return (eta / PlanckMassGeV) * (eta / PlanckMassGeV) }

// DeficitAngle returns the conical deficit angle of a straight string,
// 8 pi Gmu, in radians (Vilenkin 1981).
func DeficitAngle(gmu float64) float64 { return 8 * math.Pi * gmu }

// DeficitAngleArcsec returns DeficitAngle in arcseconds.
func DeficitAngleArcsec(gmu float64) float64 { return DeficitAngle(gmu) * radToArcsec }

// MaxImageSeparationMas returns the largest separation of the two images
// of a source lensed by a straight string, 8 pi Gmu (D_ls/D_s) sin i at the
// geometric maximum D_ls/D_s = 1, sin i = 1, in milliarcseconds.
func MaxImageSeparationMas(gmu float64) float64 { return DeficitAngleArcsec(gmu) * 1e3 }

// GmuFromImageSeparationMas inverts MaxImageSeparationMas.
func GmuFromImageSeparationMas(mas float64) float64 { return mas / 1e3 / radToArcsec / (8 * math.Pi) }
