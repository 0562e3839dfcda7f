package sampler_test

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"tautline/sampler"
)

// unitBox is a standard normal likelihood in two dimensions under a
// uniform prior on [-10, 10]^2 (simulated example).
type unitBox struct{}

func (unitBox) Dim() int { return 2 }
func (unitBox) Draw(r *rand.Rand, x []float64) {
	for i := range x {
		x[i] = -10 + 20*r.Float64()
	}
}
func (unitBox) LogPrior(x []float64) float64 {
	for _, v := range x {
		if math.Abs(v) > 10 {
			return math.Inf(-1)
		}
	}
	return -2 * math.Log(20)
}
func (unitBox) LogLike(x []float64) float64 { return -0.5 * (x[0]*x[0] + x[1]*x[1]) }

func ExampleRun() {
	ladder, err := sampler.PowerLadder(4, 5)
	if err != nil {
		fmt.Println(err)
		return
	}
	e, err := sampler.New(unitBox{}, sampler.Config{Walkers: 16, Seed: 1, Betas: ladder, Fingerprint: "example"})
	if err != nil {
		fmt.Println(err)
		return
	}
	defer e.Close()
	res, err := sampler.Run(context.Background(), e, sampler.RunOptions{
		MaxSteps: 20000, Burn: -1, CheckEvery: 500,
		Until: sampler.Criteria{ESS: 1000, TauMultiple: 50, Rhat: 1.01},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(res.Status)
	fmt.Println("rungs:", e.Rungs(), "hottest beta:", e.Beta(e.Rungs()-1))
	fmt.Println("ESS >= 1000:", res.Report.MinESS >= 1000)
	// The retained cold-rung samples and every rung's ln L for the
	// evidence code:
	x0 := res.History.Param(0, res.BurnIndex)
	lnL := res.History.LnLike(e.Rungs()-1, res.BurnIndex)
	fmt.Println(len(x0) == len(lnL))
	// Output:
	// converged
	// rungs: 4 hottest beta: 0
	// ESS >= 1000: true
	// true
}
