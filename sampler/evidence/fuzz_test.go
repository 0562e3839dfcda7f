package evidence

import (
	"encoding/binary"
	"math"
	"testing"

	"tautline/internal/numeric"
)

// rungsFromBytes turns fuzz input into a ladder: byte 0 sets the number of
// rungs (2-6), byte 1 the steps (20-83), byte 2 the walkers (1-4), then
// pairs of bytes give the interior betas' gaps and 8-byte words give ln L
// values (as raw float64 bits, so NaN, Inf and huge values occur).
func rungsFromBytes(data []byte) ([]Rung, Options) {
	next := func() byte {
		if len(data) == 0 {
			return 0
		}
		b := data[0]
		data = data[1:]
		return b
	}
	n := 2 + int(next())%5
	steps := minSteps + int(next())%64
	walkers := 1 + int(next())%4
	opt := Options{Synchronous: next()%2 == 1, BatchFactor: float64(next() % 20)}
	betas := make([]float64, n)
	var acc float64
	gaps := make([]float64, n)
	for k := 1; k < n; k++ {
		gaps[k] = float64(next()) // a zero gap makes a repeated beta
		acc += gaps[k]
	}
	for k := 1; k < n; k++ {
		betas[k] = betas[k-1] + gaps[k]/acc
	}
	betas[n-1] = 1
	rungs := make([]Rung, n)
	for k := range rungs {
		lnL := make([]float64, steps*walkers)
		for i := range lnL {
			if len(data) >= 8 {
				lnL[i] = math.Float64frombits(binary.LittleEndian.Uint64(data))
				data = data[8:]
			} else {
				lnL[i] = -float64((i*7+k*3)%11) * (1 + betas[k])
			}
		}
		rungs[k] = Rung{Beta: betas[k], LnL: lnL, Steps: steps, Walkers: walkers}
	}
	return rungs, opt
}

// FuzzIntegrate checks that no input makes Integrate or Advise panic, and
// that every result it accepts is finite with non-negative errors.
func FuzzIntegrate(f *testing.F) {
	f.Add([]byte{3, 10, 2, 0, 10, 5, 9})
	f.Add([]byte{0, 0, 0, 1, 0, 0})
	f.Fuzz(func(t *testing.T, data []byte) {
		rungs, opt := rungsFromBytes(data)
		res, err := Integrate(rungs, opt)
		if err != nil {
			return
		}
		for _, e := range []Estimate{res.TI, res.TIHigher, res.SS} {
			if !numeric.Finite(e.LnZ) || !(e.MCErr >= 0) || !(e.DiscErr >= 0) || !numeric.Finite(e.Total) {
				t.Fatalf("non-finite or negative estimate %+v", e)
			}
		}
		if math.IsNaN(res.DisagreeSigma) {
			t.Fatalf("DisagreeSigma is NaN")
		}
		a := Advise(res, 0.01)
		if !(a.StepsFactor >= 1) || math.IsInf(a.StepsFactor, 0) {
			t.Fatalf("steps factor %g", a.StepsFactor)
		}
	})
}
