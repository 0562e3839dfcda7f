package numeric

// The probability levels of every interval tautline reports (stated in
// docs/physics.md section 8): an interval called "68 %" runs from the
// Phi(-1) to the Phi(1) quantile, the +-1 sigma range of a normal, and
// holds mass Phi(1) - Phi(-1) = erf(1/sqrt 2); one called "95 %" runs from
// the 0.025 to the 0.975 quantile. Sample quantiles are Quantile's
// (Hyndman & Fan 1996, definition 7).
const (
	// P68Lo is Phi(-1) = erfc(1/sqrt 2) / 2, the lower end of "68 %".
	P68Lo = 0.15865525393145705141
	// P68Hi is Phi(1) = 1 - Phi(-1), the upper end of "68 %".
	P68Hi = 1 - P68Lo
	// Mass68 is Phi(1) - Phi(-1) = erf(1/sqrt 2), the mass of "68 %".
	Mass68 = P68Hi - P68Lo
	// P95Lo and P95Hi are the ends of "95 %", of mass Mass95.
	P95Lo, P95Hi = 0.025, 0.975
	// Mass95 is the mass of "95 %".
	Mass95 = P95Hi - P95Lo
)
