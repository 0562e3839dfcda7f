package sampler

import (
	"fmt"
	"math"
)

// GeometricLadder returns n inverse temperatures spaced geometrically from
// 1 down to betaMin, cold rung first:
//
//	beta_r = betaMin^(r/(n-1)),  r = 0, ..., n-1.
//
// n = 1 gives {1}. betaMin must be in (0, 1).
func GeometricLadder(n int, betaMin float64) ([]float64, error) {
	if n < 1 {
		return nil, fmt.Errorf("sampler: ladder needs at least 1 rung, got %d", n)
	}
	if n == 1 {
		return []float64{1}, nil
	}
	if !(betaMin > 0 && betaMin < 1) {
		return nil, fmt.Errorf("sampler: geometric ladder betaMin must be in (0, 1), got %v", betaMin)
	}
	b := make([]float64, n)
	for r := range n {
		b[r] = math.Exp(float64(r) / float64(n-1) * math.Log(betaMin))
	}
	b[0], b[n-1] = 1, betaMin
	return b, nil
}

// PowerLadder returns n inverse temperatures following a power law, cold
// rung first and ending exactly at beta = 0:
//
//	beta_r = ((n-1-r)/(n-1))^exponent,  r = 0, ..., n-1,
//
// which for exponent 5 is the ladder dense near beta = 0 recommended for
// thermodynamic integration (Friel & Pettitt 2008). n must be >= 2 and
// exponent > 0.
func PowerLadder(n int, exponent float64) ([]float64, error) {
	if n < 2 {
		return nil, fmt.Errorf("sampler: power ladder needs at least 2 rungs, got %d", n)
	}
	if !(exponent > 0) || math.IsInf(exponent, 0) {
		return nil, fmt.Errorf("sampler: power ladder exponent must be finite and > 0, got %v", exponent)
	}
	b := make([]float64, n)
	for r := range n {
		b[r] = math.Pow(float64(n-1-r)/float64(n-1), exponent)
	}
	b[0], b[n-1] = 1, 0
	return b, nil
}

// checkLadder verifies that betas lies in (0, 1] at its start and strictly
// decreases to a value >= 0. A ladder usually starts at the cold rung
// beta = 1; one that does not is a block of a longer ladder run as its own
// ensemble (no swaps reach the rungs outside it).
func checkLadder(betas []float64) error {
	if len(betas) == 0 {
		return fmt.Errorf("sampler: Betas is empty (nil means the single rung {1})")
	}
	if !(betas[0] > 0 && betas[0] <= 1) {
		return fmt.Errorf("sampler: Betas[0] must be in (0, 1] (1 is the cold rung), got %v", betas[0])
	}
	for i := 1; i < len(betas); i++ {
		if !(betas[i] < betas[i-1]) || !(betas[i] >= 0) {
			return fmt.Errorf("sampler: Betas must decrease strictly to a value >= 0; Betas[%d] = %v after Betas[%d] = %v",
				i, betas[i], i-1, betas[i-1])
		}
	}
	return nil
}

// Ladder adaptation constants of Vousden, Farr & Mandel (2016), eq. (13):
// kappa(t) = (1/adaptNu) * adaptT0/(t + adaptT0). The values are common
// practice: the relaxation takes about adaptNu swap rounds and decays on a
// time scale adaptT0.
const (
	adaptNu = 100.0
	adaptT0 = 1000.0
)

// adaptLadder moves the interior temperatures by the dynamics of Vousden,
// Farr & Mandel (2016), eq. (12)-(13): with T = 1/beta and
// S_k = ln(T_{k+1} - T_k),
//
//	dS_k = kappa(t) (A_k - A_{k+1}),
//
// where A_k is the swap acceptance between rungs k and k+1 in this round.
// The coldest (beta = 1) and hottest rungs stay fixed; the update is skipped
// if it would move an interior rung past the hottest one.
func adaptLadder(betas, acc, scratch []float64, t int) {
	n := len(betas)
	if n < 3 {
		return
	}
	kappa := adaptT0 / (float64(t) + adaptT0) / adaptNu
	// scratch[k] holds the new T_{k+1} for k = 0..n-3.
	T := 1 / betas[0]
	for k := 0; k < n-2; k++ {
		gap := 1/betas[k+1] - 1/betas[k]
		gap *= math.Exp(kappa * (acc[k] - acc[k+1]))
		T += gap
		scratch[k] = T
	}
	if betas[n-1] > 0 && !(scratch[n-3] < 1/betas[n-1]) {
		return
	}
	for k := 0; k < n-2; k++ {
		if !(scratch[k] > 1) || math.IsInf(scratch[k], 0) {
			return
		}
	}
	for k := 0; k < n-2; k++ {
		betas[k+1] = 1 / scratch[k]
	}
}
