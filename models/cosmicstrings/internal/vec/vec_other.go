//go:build !amd64 || purego

package vec

func sum8(dst, src []float64, m, gs int, w *[8]float64, acc bool) {
	sum8Go(dst, src, m, gs, w, acc)
}

func sum4(dst, src []float64, gs int, w *[4]float64) { sum4Go(dst, src, gs, w) }

func cubics[C ~[4]float64](dst []C, r []float64, shift float64) { cubicsGo(dst, r, shift) }

func series[C ~[4]float64](dst, xs, invF []float64, cf *[Slots]C, c float64, a *[5]float64, terms int) int {
	return 0
}

func log1mxHead(dst, invF []float64, c float64, tab *LogTable) int { return 0 }

func addClamped[C ~[4]float64](dst, xs []float64, cf *[Slots]C, c float64, last int) int {
	return 0
}
