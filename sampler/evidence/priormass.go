package evidence

import (
	"errors"
	"fmt"
	"math"
)

// PriorMass is the prior probability P_prior(R) of the region R where the
// likelihood is non-zero, estimated from independent prior draws. When the
// likelihood vanishes on part of the prior (a model above the data's prior
// range, docs/physics.md section 5), tempered runs started inside R sample
// the prior restricted to R and estimate Z_R; the evidence is
//
//	Z = P_prior(R) Z_R,   ln Z = ln Z_R + ln p,   p = Inside / Draws,
//
// with the binomial standard error of ln p by the delta method,
//
//	sd(ln p) = sqrt((1 - p) / (p Draws)).
type PriorMass struct {
	Draws  int     `json:"draws"`
	Inside int     `json:"inside"`
	LnP    float64 `json:"lnP"`
	Err    float64 `json:"err"`
}

// ErrNoPriorMass is returned when no prior draw has a non-zero likelihood.
var ErrNoPriorMass = errors.New("evidence: no prior draw has a non-zero likelihood")

// NewPriorMass returns the estimate from inside of draws prior draws. It
// refuses inside = 0, where ln p would be -Inf and its error undefined.
func NewPriorMass(draws, inside int) (PriorMass, error) {
	if draws < 1 || inside < 0 || inside > draws {
		return PriorMass{}, fmt.Errorf("evidence: prior mass: need 0 <= inside <= draws and draws >= 1, got %d of %d", inside, draws)
	}
	if inside == 0 {
		return PriorMass{}, fmt.Errorf("%w (0 of %d draws)", ErrNoPriorMass, draws)
	}
	p := float64(inside) / float64(draws)
	return PriorMass{Draws: draws, Inside: inside, LnP: math.Log(p), Err: math.Sqrt((1 - p) / (p * float64(draws)))}, nil
}

// apply adds ln p to the estimate and its error to the error budget.
func (m PriorMass) apply(e *Estimate) {
	e.LnZ += m.LnP
	e.PriorMassErr = m.Err
	e.Total += m.Err
}
