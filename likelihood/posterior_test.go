package likelihood

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sync"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
	"tautline/models"
	"tautline/priors"

	"tautline/models/gw"
)

const (
	testH0 = 2.1843e-18 // 67.4 km/s/Mpc in s^-1 (docs/physics.md section 1)
	fYr    = 1 / (365.25 * 86400)
)

var errDomain = errors.New("powerlaw: gamma outside [0, 7]")

// powerLaw is a test-only model: h_c = A (f/f_yr)^((3-gamma)/2) with
// parameters log10_A and gamma; gamma outside [0, 7] is outside its domain.
type powerLaw struct{ pri []priors.Prior }

func (m powerLaw) Name() string { return "testpl" }
func (m powerLaw) Params() []models.Param {
	return []models.Param{{Name: "log10_A", Prior: m.pri[0]}, {Name: "gamma", Prior: m.pri[1]}}
}
func (m powerLaw) At(f []float64) (models.Spectrum, error) {
	if len(f) == 0 {
		return nil, errors.New("powerlaw: no frequencies")
	}
	return plSpec{f: f}, nil
}

type plSpec struct{ f []float64 }

// LnOmega uses Omega = (2 pi^2 / (3 H0^2)) f^2 h_c^2 (docs/physics.md section 5).
func (s plSpec) LnOmega(theta, out []float64) error {
	if theta[1] < 0 || theta[1] > 7 {
		return errDomain
	}
	for i, f := range s.f {
		lnhc := theta[0]*math.Ln10 + 0.5*(3-theta[1])*math.Log(f/fYr)
		out[i] = math.Log(2*math.Pi*math.Pi/(3*testH0*testH0)) + 2*math.Log(f) + 2*lnhc
	}
	return nil
}

// uniform and fixed are test-only priors.
type uniform struct{ lo, hi float64 }

func (u uniform) LogProb(x float64) float64 {
	if x < u.lo || x > u.hi {
		return math.Inf(-1)
	}
	return -math.Log(u.hi - u.lo)
}
func (u uniform) Rand(r *rand.Rand) float64  { return u.lo + (u.hi-u.lo)*r.Float64() }
func (u uniform) Bounds() (float64, float64) { return u.lo, u.hi }
func (u uniform) String() string             { return fmt.Sprintf("uniform(%g, %g)", u.lo, u.hi) }

type fixed float64

func (c fixed) LogProb(x float64) float64 {
	if x == float64(c) {
		return 0
	}
	return math.Inf(-1)
}
func (c fixed) Rand(*rand.Rand) float64    { return float64(c) }
func (c fixed) Bounds() (float64, float64) { return float64(c), float64(c) }
func (c fixed) String() string             { return fmt.Sprintf("fixed(%g)", float64(c)) }
func (c fixed) FixedValue() float64        { return float64(c) }

// gaussData has n Gaussian bins of sd 0.3 around -7 + 0.1 i.
func gaussData(n int) *Dataset {
	ds := &Dataset{Name: "g", Span: 15 * gw.JulianYear, PriorMin: -10, PriorMax: -4}
	for i := range n {
		ds.Freqs = append(ds.Freqs, float64(i+1)/ds.Span)
		ds.Bins = append(ds.Bins, Bin{Kind: Gaussian, Mean: -7 + 0.1*float64(i), SD: 0.3})
	}
	return ds
}

func TestPosteriorLogLike(t *testing.T) {
	ds := gaussData(5)
	fs, err := NewFreeSpectrum(ds, Options{})
	if err != nil {
		t.Fatal(err)
	}
	m := powerLaw{pri: []priors.Prior{uniform{-18, -12}, uniform{0, 7}}}
	p, err := NewPosterior(m, nil, ds, fs, testH0)
	if err != nil {
		t.Fatal(err)
	}
	if p.Dim() != 2 {
		t.Fatalf("Dim = %d, want 2", p.Dim())
	}
	// Table interpolation of a Gaussian ln p errs by at most
	// step^2/(8 sd^2) per bin (step 6/2047 dex).
	step := 6.0 / (DefaultTableSize - 1)
	tol := float64(len(ds.Bins)) * step * step / (8 * 0.09)
	for _, x := range [][]float64{{-14.6, 13.0 / 3}, {-14.2, 3}, {-15, 5.5}, {-12.5, 0.5}} {
		// Independent route: S = h_c^2/(12 pi^2 f^3), rho^2 = S/T
		// (docs/physics.md section 5), scored with distuv.Normal truncated to the
		// prior range.
		want := 0.0
		for i, f := range ds.Freqs {
			hc := math.Pow(10, x[0]) * math.Pow(f/fYr, (3-x[1])/2)
			rho := math.Sqrt(hc * hc / (12 * math.Pi * math.Pi * f * f * f) / ds.Span)
			lr := math.Log10(rho)
			nd := distuv.Normal{Mu: ds.Bins[i].Mean, Sigma: ds.Bins[i].SD}
			lnZ := math.Log(nd.CDF(ds.PriorMax) - nd.CDF(ds.PriorMin))
			switch {
			case lr < ds.PriorMin:
				want += nd.LogProb(ds.PriorMin) - lnZ
			case lr > ds.PriorMax:
				want = math.Inf(-1) // zero likelihood above the range
			default:
				want += nd.LogProb(lr) - lnZ
			}
		}
		got := p.LogLike(x)
		if math.IsInf(want, -1) {
			if !math.IsInf(got, -1) || p.LogLikeExact(x) != got {
				t.Errorf("LogLike(%v) = %g, LogLikeExact %g, want -Inf (above the range)", x, got, p.LogLikeExact(x))
			}
			continue
		}
		if math.Abs(got-want) > tol*(1+1e-9)+1e-9*math.Abs(want) || p.LogLikeExact(x) != got {
			t.Errorf("LogLike(%v) = %.9g, want %.9g (tol %.2g)", x, got, want, tol)
		}
	}
	// A NaN from the model counts as above the data: zero likelihood.
	if got := p.LogLike([]float64{math.NaN(), 3}); !math.IsInf(got, -1) {
		t.Errorf("LogLike with NaN amplitude = %g, want -Inf", got)
	}
	// Outside the model's domain: -Inf (zero prior support).
	if got := p.LogLike([]float64{-14, 8}); !math.IsInf(got, -1) {
		t.Errorf("LogLike outside the domain = %g, want -Inf", got)
	}
	if got := p.LogPrior([]float64{-14, 3}); math.Abs(got-(-math.Log(6)-math.Log(7))) > 1e-15 {
		t.Errorf("LogPrior = %g, want -ln 6 - ln 7", got)
	}
	if got := p.LogPrior([]float64{-11, 3}); !math.IsInf(got, -1) {
		t.Errorf("LogPrior outside the prior = %g, want -Inf", got)
	}
	// The race detector makes sync.Pool drop items on purpose, so the
	// steady state is only checked without it.
	if a := testing.AllocsPerRun(200, func() { p.LogLike([]float64{-14.6, 4}) }); a != 0 && !raceEnabled {
		// The closure's slice literal is stack-allocated; any allocation
		// comes from LogLike.
		t.Errorf("LogLike allocates %g times per call, want 0", a)
	}
}

func TestPosteriorFixed(t *testing.T) {
	ds := gaussData(4)
	fs, err := NewFreeSpectrum(ds, Options{})
	if err != nil {
		t.Fatal(err)
	}
	m := powerLaw{pri: []priors.Prior{uniform{-18, -12}, uniform{0, 7}}}
	pf, err := NewPosterior(m, []priors.Prior{nil, fixed(13.0 / 3)}, ds, fs, testH0)
	if err != nil {
		t.Fatal(err)
	}
	pa, err := NewPosterior(m, nil, ds, fs, testH0)
	if err != nil {
		t.Fatal(err)
	}
	if pf.Dim() != 1 || len(pf.FreeNames()) != 1 || pf.FreeNames()[0] != "log10_A" {
		t.Fatalf("Dim %d, FreeNames %v: want 1, [log10_A]", pf.Dim(), pf.FreeNames())
	}
	if fp := pf.FreeParams(); len(fp) != 1 || fp[0].Prior.String() != "uniform(-18, -12)" {
		t.Errorf("FreeParams = %+v", fp)
	}
	theta := make([]float64, 2)
	pf.Full([]float64{-14.5}, theta)
	if theta[0] != -14.5 || theta[1] != 13.0/3 {
		t.Errorf("Full = %v, want [-14.5 4.333...]", theta)
	}
	// Fixing gamma must give the same likelihood as sampling it at that value.
	if a, b := pf.LogLike([]float64{-14.5}), pa.LogLike([]float64{-14.5, 13.0 / 3}); a != b {
		t.Errorf("fixed-gamma LogLike %g differs from full %g", a, b)
	}
	r := rand.New(rand.NewPCG(5, 6))
	x := make([]float64, 1)
	for range 100 {
		pf.Draw(r, x)
		if x[0] < -18 || x[0] > -12 {
			t.Fatalf("Draw gave %g outside the prior", x[0])
		}
	}
	if _, err := NewPosterior(m, []priors.Prior{nil}, ds, fs, testH0); err == nil {
		t.Error("accepted one prior for two parameters")
	}
	if _, err := NewPosterior(m, nil, ds, fs, -1); err == nil {
		t.Error("accepted a negative H0")
	}
	lr, err := pf.Log10Rho([]float64{-14.5}, nil)
	if err != nil || len(lr) != 4 {
		t.Fatalf("Log10Rho = %v, %v", lr, err)
	}
	// log10 rho falls as f^(-13/6) for gamma = 13/3 (rho^2 ∝ h_c^2/f^3).
	if d := lr[1] - lr[0]; math.Abs(d-(-13.0/6)*math.Log10(2)) > 1e-12 {
		t.Errorf("log10 rho step from bin 1 to 2 = %g, want %g", d, (-13.0/6)*math.Log10(2))
	}
}

func TestPosteriorConcurrent(t *testing.T) {
	ds := gaussData(8)
	fs, err := NewFreeSpectrum(ds, Options{})
	if err != nil {
		t.Fatal(err)
	}
	p, err := NewPosterior(powerLaw{pri: []priors.Prior{uniform{-18, -12}, uniform{0, 7}}}, nil, ds, fs, testH0)
	if err != nil {
		t.Fatal(err)
	}
	xs := make([][]float64, 64)
	want := make([]float64, len(xs))
	for k := range xs {
		xs[k] = []float64{-15 + 0.02*float64(k), 2 + 0.05*float64(k)}
		want[k] = p.LogLike(xs[k])
	}
	var wg sync.WaitGroup
	errs := make(chan string, 8*len(xs))
	for g := range 8 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for rep := range 50 {
				k := (g*7 + rep) % len(xs)
				if got := p.LogLike(xs[k]); got != want[k] {
					errs <- fmt.Sprintf("goroutine %d: LogLike(%v) = %g, want %g", g, xs[k], got, want[k])
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Error(e)
	}
}

func BenchmarkPosteriorLogLike30Bins(b *testing.B) {
	ds := thirtyBins()
	fs, err := NewFreeSpectrum(ds, Options{})
	if err != nil {
		b.Fatal(err)
	}
	p, err := NewPosterior(powerLaw{pri: []priors.Prior{uniform{-18, -12}, uniform{0, 7}}}, nil, ds, fs, testH0)
	if err != nil {
		b.Fatal(err)
	}
	x := []float64{-14.6, 13.0 / 3}
	b.ReportAllocs()
	for b.Loop() {
		p.LogLike(x)
	}
}

// target has the method set of sampler.Target (sampler/target.go), which
// this package must satisfy without importing sampler.
type target interface {
	Dim() int
	Draw(r *rand.Rand, x []float64)
	LogPrior(x []float64) float64
	LogLike(x []float64) float64
}

var _ target = (*Posterior)(nil)

// TestLogPriorUniformCached checks LogPrior, which reads the constant
// density of uniform priors from a cache, against gonum's distuv.Uniform
// (an independent library) and, to the bit, against the sum of the priors'
// own LogProb calls, inside, on and outside the bounds and at NaN, with a
// uniform, a non-uniform and a fixed parameter.
func TestLogPriorUniformCached(t *testing.T) {
	ds := gaussData(5)
	fs, err := NewFreeSpectrum(ds, Options{})
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name string
		pri  []priors.Prior
	}{
		{"uniform, uniform", []priors.Prior{priors.Uniform{Min: -18, Max: -11}, priors.Uniform{Min: 0, Max: 7}}},
		{"uniform, normal", []priors.Prior{priors.Uniform{Min: -18, Max: -11}, priors.Normal{Mu: 13.0 / 3, Sigma: 0.5}}},
		{"log-uniform, uniform", []priors.Prior{priors.LogUniform{Min: 1e-18, Max: 1e-11}, priors.Uniform{Min: 0, Max: 7}}},
		{"uniform, fixed", []priors.Prior{priors.Uniform{Min: -18, Max: -11}, fixed(13.0 / 3)}},
	}
	r := rand.New(rand.NewPCG(3, 4))
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p, err := NewPosterior(powerLaw{pri: tc.pri}, nil, ds, fs, testH0)
			if err != nil {
				t.Fatal(err)
			}
			var free []priors.Prior
			allUniform := true
			for _, pr := range tc.pri {
				if _, ok := pr.(priors.PointMass); !ok {
					free = append(free, pr)
					_, u := pr.(priors.Uniform)
					allUniform = allUniform && u
				}
			}
			x := make([]float64, p.Dim())
			pick := func(pr priors.Prior) float64 {
				lo, hi := pr.Bounds()
				switch r.IntN(6) {
				case 0:
					return lo
				case 1:
					return hi
				case 2:
					return lo - 1e-9
				case 3:
					return math.NaN()
				default:
					return lo + (hi-lo)*r.Float64()
				}
			}
			for range 2000 {
				want := 0.0
				for k, pr := range free {
					x[k] = pick(pr)
					want += pr.LogProb(x[k])
				}
				got := p.LogPrior(x)
				if math.Float64bits(got) != math.Float64bits(want) && !(math.IsNaN(got) && math.IsNaN(want)) {
					t.Fatalf("LogPrior(%v) = %v, sum of LogProb = %v", x, got, want)
				}
				if !allUniform {
					continue
				}
				// gonum's density, -Inf outside the support. distuv.Uniform
				// returns -ln(Max - Min), the same expression as the cache,
				// so the sums agree exactly.
				g := 0.0
				for k, pr := range free {
					v := pr.(priors.Uniform)
					if !(x[k] >= v.Min && x[k] <= v.Max) {
						g = math.Inf(-1)
						break
					}
					g += distuv.Uniform{Min: v.Min, Max: v.Max}.LogProb(x[k])
				}
				if got != g {
					t.Fatalf("LogPrior(%v) = %v, gonum distuv.Uniform gives %v", x, got, g)
				}
			}
		})
	}
}

// BenchmarkLogPrior times the prior of the three-parameter string model's
// default shape (three uniform priors).
func BenchmarkLogPrior(b *testing.B) {
	ds := gaussData(5)
	fs, err := NewFreeSpectrum(ds, Options{})
	if err != nil {
		b.Fatal(err)
	}
	p, err := NewPosterior(powerLaw{pri: []priors.Prior{priors.Uniform{Min: -18, Max: -11}, priors.Uniform{Min: 0, Max: 7}}}, nil, ds, fs, testH0)
	if err != nil {
		b.Fatal(err)
	}
	// Proposals as a prior-dominated rung makes them: a third outside.
	r := rand.New(rand.NewPCG(7, 8))
	xs := make([][]float64, 1024)
	for i := range xs {
		xs[i] = []float64{-18 + 10.5*r.Float64(), 10.5 * r.Float64()}
	}
	s, i := 0.0, 0
	for b.Loop() {
		s += p.LogPrior(xs[i&1023])
		i++
	}
	_ = s
}
