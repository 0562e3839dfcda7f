// Package gw is tautline's one home for the units of the gravitational-wave
// background and the conversions between the ways it is described: the energy-density spectrum Omega_GW(f), the
// characteristic strain h_c(f), the one-sided timing-residual power spectral
// density S(f), and the per-bin Fourier variance rho^2 of a timing array with
// time span T. The relations are exact (standard; see e.g. Phinney 2001 for
// h_c and Omega, and the free-spectrum convention of docs/physics.md
// section 5):
//
//	Omega_GW(f) = 2 pi^2 f^2 h_c^2 / (3 H0^2)
//	S(f)        = h_c^2 / (12 pi^2 f^3)            (s^3)
//	rho^2       = S(f) / T = H0^2 Omega_GW / (8 pi^4 f^5 T)   (s^2)
//
// Units are SI throughout: f in Hz, H0 in s^-1, T in s, S in s^3 (s^2/Hz),
// rho in s.
package gw

import "math"

// JulianYear is the Julian year, 365.25 days of 86400 s, in s: the year of
// f_yr, of spans given in years and of ages in Gyr.
const JulianYear = 365.25 * 86400

// FYear is the reference frequency f_yr = 1/yr, with yr the Julian year, in
// Hz.
const FYear = 1 / JulianYear

// Mpc is one megaparsec in metres (IAU 2015 Resolution B2 parsec,
// 648000/pi au, au = 149597870700 m).
const Mpc = 3.0856775814913673e22

// H0SI converts a Hubble constant in km/s/Mpc to s^-1.
func H0SI(kmPerSecPerMpc float64) float64 { return kmPerSecPerMpc * 1e3 / Mpc }

// OmegaFromHc returns Omega_GW = 2 pi^2 f^2 h_c^2 / (3 H0^2).
func OmegaFromHc(f, hc, h0 float64) float64 {
	return 2 * math.Pi * math.Pi * f * f * hc * hc / (3 * h0 * h0)
}

// HcFromOmega returns h_c = sqrt(3 H0^2 Omega / (2 pi^2 f^2)), the inverse
// of OmegaFromHc.
func HcFromOmega(f, omega, h0 float64) float64 {
	return h0 / (math.Pi * f) * math.Sqrt(1.5*omega)
}

// PSDFromHc returns the one-sided residual PSD S = h_c^2 / (12 pi^2 f^3).
func PSDFromHc(f, hc float64) float64 {
	return hc * hc / (12 * math.Pi * math.Pi * f * f * f)
}

// HcFromPSD returns h_c = sqrt(12 pi^2 f^3 S), the inverse of PSDFromHc.
func HcFromPSD(f, s float64) float64 {
	return math.Pi * math.Sqrt(12*f*f*f*s)
}

// Rho2FromPSD returns the per-bin Fourier variance rho^2 = S / T for an
// array with time span T (s).
func Rho2FromPSD(s, span float64) float64 { return s / span }

// PSDFromRho2 returns S = rho^2 T, the inverse of Rho2FromPSD.
func PSDFromRho2(rho2, span float64) float64 { return rho2 * span }

// Rho2FromOmega returns rho^2 = H0^2 Omega / (8 pi^4 f^5 T).
func Rho2FromOmega(f, omega, h0, span float64) float64 {
	return h0 * h0 * omega / (8 * math.Pow(math.Pi, 4) * math.Pow(f, 5) * span)
}

// OmegaFromRho2 returns Omega = 8 pi^4 f^5 T rho^2 / H0^2, the inverse of
// Rho2FromOmega.
func OmegaFromRho2(f, rho2, h0, span float64) float64 {
	return 8 * math.Pow(math.Pi, 4) * math.Pow(f, 5) * span * rho2 / (h0 * h0)
}

// Log10RhoOffset returns the constant c(f) with
//
//	log10 rho = ln Omega / (2 ln 10) + c(f),
//	c(f) = log10 rho^2(Omega = 1) / 2 = 0.5 log10(H0^2 / (8 pi^4 f^5 T)),
//
// so that a likelihood can precompute it once per frequency bin and convert
// with one multiply-add per call. It is formed from Rho2FromOmega, whose
// powers stay within float64 range for f between about 1e-60 and 1e30 Hz.
func Log10RhoOffset(f, h0, span float64) float64 {
	return 0.5 * math.Log10(Rho2FromOmega(f, 1, h0, span))
}

// ln8Pi4 is ln(8 pi^4) = ln 8 + 4 ln pi.
const ln8Pi4 = 6.658361085077436

// log10RhoOffsetLn is Log10RhoOffset summed in logarithms,
// (2 ln H0 - ln(8 pi^4) - 5 ln f - ln T) / (2 ln 10), finite for every
// positive f; it equals Log10RhoOffset to rounding.
func log10RhoOffsetLn(f, h0, span float64) float64 {
	return (2*math.Log(h0) - ln8Pi4 - 5*math.Log(f) - math.Log(span)) / (2 * math.Ln10)
}

// Log10RhoFromLnOmega returns log10 rho from ln Omega_GW in log space, so
// that spectra spanning many decades lose no precision:
//
//	log10 rho = ln Omega / (2 ln 10) + (2 ln H0 - ln(8 pi^4) - 5 ln f - ln T) / (2 ln 10).
func Log10RhoFromLnOmega(f, lnOmega, h0, span float64) float64 {
	return lnOmega/(2*math.Ln10) + log10RhoOffsetLn(f, h0, span)
}

// LnOmegaFromLog10Rho is the inverse of Log10RhoFromLnOmega.
func LnOmegaFromLog10Rho(f, log10Rho, h0, span float64) float64 {
	return 2 * math.Ln10 * (log10Rho - log10RhoOffsetLn(f, h0, span))
}
