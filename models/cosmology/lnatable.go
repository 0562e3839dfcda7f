package cosmology

import "slices"

// LnATable returns the nodes of the cubic Hermite interpolation behind
// LnA, HT and LnAHT: the first ln t (t in s), the step in ln t, and ln a
// and H t at each node (copies). A caller that evaluates the interpolant
// itself, with the operations of LnAHT, gets the same values without the
// call (and without H t when it needs ln a alone).
func (b *Background) LnATable() (lnT0, step float64, lnA, hT []float64) {
	return b.lnTime0, b.lnTimeStep, slices.Clone(b.lnAOfT), slices.Clone(b.hTOfT)
}
