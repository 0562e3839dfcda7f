package acf

// LagBlock is the number of lags Lags.Block computes in one pass over the
// series.
const LagBlock = 8

// Lags computes the same autocovariances as Work, lag by lag from the
// defining sum,
//
//	C_j(k) = (1/n) sum_{t=0}^{n-1-k} (x_jt - m_j)(x_j,t+k - m_j),
//
// for m series of n values. A lag costs O(n m), so it beats the FFT, which
// yields all n lags for O(n log n) per series, when only the first few
// dozen lags are needed: the windowed autocorrelation times of a chain that
// is long against its correlation time. Each C_j(k) is accumulated in t
// order, so the values do not depend on how lags are grouped into blocks.
// A Lags reuses its buffers between loads and is not safe for concurrent
// use.
type Lags struct {
	n, m int
	dev  []float64 // series j centred at dev[j*n:(j+1)*n]
	mean []float64
}

// LoadChains loads m series of n values, series j at c[j*n:(j+1)*n].
func (l *Lags) LoadChains(c []float64, n, m int) {
	l.resize(n, m)
	for j := range m {
		l.centre(j, c[j*n:(j+1)*n])
	}
}

// LoadInterleaved loads m series of n values stored step-major, value t of
// series j at x[t*m+j].
func (l *Lags) LoadInterleaved(x []float64, n, m int) {
	l.resize(n, m)
	for j := range m {
		d := l.dev[j*n : (j+1)*n]
		for t := range d {
			d[t] = x[t*m+j]
		}
		l.centre(j, d)
	}
}

func (l *Lags) resize(n, m int) {
	l.n, l.m = n, m
	if cap(l.dev) < n*m {
		l.dev = make([]float64, n*m)
	}
	l.dev = l.dev[:n*m]
	if cap(l.mean) < m {
		l.mean = make([]float64, m)
	}
	l.mean = l.mean[:m]
}

// centre stores series (which may alias its slot) minus its mean as
// series j; the mean is summed in order as Work.Autocov does.
func (l *Lags) centre(j int, series []float64) {
	mean := 0.0
	for _, v := range series {
		mean += v
	}
	mean /= float64(l.n)
	d := l.dev[j*l.n : (j+1)*l.n]
	for t, v := range series {
		d[t] = v - mean
	}
	l.mean[j] = mean
}

// Mean returns the mean of series j.
func (l *Lags) Mean(j int) float64 { return l.mean[j] }

// Block writes C_j(k0+i) into out[j*LagBlock+i] for i < LagBlock and every
// series j; lags at or beyond n are written as 0. out must hold
// m x LagBlock values.
func (l *Lags) Block(k0 int, out []float64) {
	n := l.n
	nf := float64(n)
	for j := range l.m {
		s := block(l.dev[j*n:(j+1)*n], k0)
		o := out[j*LagBlock : (j+1)*LagBlock]
		for i := range o {
			o[i] = s[i] / nf
		}
	}
}

// Sums writes the autocovariances of one centred series d (its deviations
// from its centre) at lags k0, k0+1, ..., k0+len(out)-1 into out:
//
//	out[i] = (1/n) sum_{t=0}^{n-1-k} d_t d_{t+k},  k = k0+i, n = len(d),
//
// lags at or beyond n being 0. Each sum is accumulated in t order, as
// Block's, so a lag's value does not depend on the lags computed with it
// (on amd64 sixteen or, with AVX2 or AVX-512, thirty-two lags at a time,
// one per SIMD lane).
func Sums(d []float64, k0 int, out []float64) {
	nf := float64(len(d))
	for i := 0; i < len(out); {
		if len(out)-i > 16 && wide() {
			s := block32(d, k0+i)
			o := out[i:min(i+32, len(out))]
			for j := range o {
				o[j] = s[j] / nf
			}
			i += 32
			continue
		}
		s := block16(d, k0+i)
		o := out[i:min(i+16, len(out))]
		for j := range o {
			o[j] = s[j] / nf
		}
		i += 16
	}
}

// SumsWidth is the number of lags Sums computes at once most cheaply per
// lag: 32 where it has a 32-lag kernel (AVX2, or AVX-512), else 16.
func SumsWidth() int {
	if wide() {
		return 32
	}
	return 16
}

// pair16 is block32 from two calls of block16.
func pair16(d []float64, k0 int) [32]float64 {
	var s [32]float64
	a, b := block16(d, k0), block16(d, k0+16)
	copy(s[:16], a[:])
	copy(s[16:], b[:])
	return s
}

// tail adds to s[i] the terms d_t d_{t+k0+i} of t >= full that lie inside
// the series, in t order after those of t < full.
func tail(d []float64, k0, full int, s []float64) {
	n := len(d)
	// Four lags at a time, each in a register of its own: their sums
	// do not wait on one another.
	i := 0
	for ; i+4 <= len(s); i += 4 {
		s0, s1, s2, s3 := s[i], s[i+1], s[i+2], s[i+3]
		t := full
		for ; t < n-k0-i-3; t++ { // all four lags have a term at t
			v, e := d[t], d[t+k0+i:t+k0+i+4]
			s0 += v * e[0]
			s1 += v * e[1]
			s2 += v * e[2]
			s3 += v * e[3]
		}
		for ; t < n-k0-i; t++ { // the last terms of the first three
			v := d[t]
			s0 += v * d[t+k0+i]
			if t+k0+i+1 < n {
				s1 += v * d[t+k0+i+1]
			}
			if t+k0+i+2 < n {
				s2 += v * d[t+k0+i+2]
			}
		}
		s[i], s[i+1], s[i+2], s[i+3] = s0, s1, s2, s3
	}
	for ; i < len(s); i++ {
		for t := full; t < n-k0-i; t++ {
			s[i] += d[t] * d[t+k0+i]
		}
	}
}

// block returns the unnormalised sums sum_t d_t d_{t+k0+i}, i < LagBlock,
// each accumulated in t order.
func block(d []float64, k0 int) [LagBlock]float64 {
	n := len(d)
	var s [LagBlock]float64
	if k0 >= n {
		return s
	}
	// t below full has every lag of the block inside the series.
	full := max(n-(k0+LagBlock-1), 0)
	if full > 0 {
		a := d[:full]
		b0, b1, b2, b3 := d[k0:k0+full], d[k0+1:k0+1+full], d[k0+2:k0+2+full], d[k0+3:k0+3+full]
		b4, b5, b6, b7 := d[k0+4:k0+4+full], d[k0+5:k0+5+full], d[k0+6:k0+6+full], d[k0+7:k0+7+full]
		var s0, s1, s2, s3, s4, s5, s6, s7 float64
		for t, v := range a {
			s0 += v * b0[t]
			s1 += v * b1[t]
			s2 += v * b2[t]
			s3 += v * b3[t]
			s4 += v * b4[t]
			s5 += v * b5[t]
			s6 += v * b6[t]
			s7 += v * b7[t]
		}
		s = [LagBlock]float64{s0, s1, s2, s3, s4, s5, s6, s7}
	}
	tail(d, k0, full, s[:])
	return s
}
