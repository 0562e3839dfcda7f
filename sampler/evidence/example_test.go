package evidence_test

import (
	"fmt"
	"math"
	"math/rand/v2"

	"tautline/sampler/evidence"
)

// Simulated example: a one-parameter Gaussian likelihood N(x; 0, 1) in the
// uniform prior [-5, 5], whose power posteriors are sampled here by
// rejection, stands in for a sampler's tempered chains.
func Example() {
	r := rand.New(rand.NewPCG(1, 2))
	const steps, walkers = 500, 8
	var rungs []evidence.Rung
	for k := 0; k <= 12; k++ {
		beta := math.Pow(float64(k)/12, 5)
		lnL := make([]float64, steps*walkers)
		for i := range lnL {
			var x float64
			for {
				x = -5 + 10*r.Float64()
				if r.Float64() < math.Exp(-beta*x*x/2) {
					break
				}
			}
			lnL[i] = -0.5*math.Log(2*math.Pi) - x*x/2
		}
		rungs = append(rungs, evidence.Rung{Beta: beta, LnL: lnL, Steps: steps, Walkers: walkers})
	}
	res, err := evidence.Integrate(rungs, evidence.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	e := res.TIHigher
	fmt.Printf("ln Z = %.2f +- %.2f (MC %.3f, ladder %.3f)\n", e.LnZ, e.Total, e.MCErr, e.DiscErr)
	fmt.Println("stepping-stone agrees:", !res.Disagree)
	fmt.Println("advice for 0.001:", evidence.Advise(res, 0.001).Reason)
	lnB, sd := evidence.BayesFactor(res.TIHigher, evidence.Estimate{LnZ: e.LnZ - 2, Total: 0.05})
	fmt.Printf("ln B = %.2f +- %.2f: %s\n", lnB, sd, evidence.KassRaftery(lnB))
}
