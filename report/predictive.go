package report

import "errors"

// Log10Rho maps a parameter vector to the model's log10 rho (rho in s) at
// the data's frequencies; an error marks a vector outside the model's
// domain.
type Log10Rho func(theta []float64) ([]float64, error)

// PredictiveBand pushes up to draws evenly spaced rows of the rows x cols
// posterior samples (row-major) through f, giving the model's
// posterior-predictive log10 rho curves at freq. It returns the band and
// the number of draws that fell outside the model's domain and were left
// out; an error when none gives a spectrum.
func PredictiveBand(name string, freq, samples []float64, rows, cols, draws int, f Log10Rho) (ModelBand, int, error) {
	d := min(draws, rows)
	band := ModelBand{Name: name, Freq: freq}
	failed := 0
	for i := range d {
		r := int((float64(i) + 0.5) * float64(rows) / float64(d))
		rho, err := f(samples[r*cols : (r+1)*cols])
		if err != nil {
			failed++
			continue
		}
		band.Curves = append(band.Curves, rho)
	}
	if len(band.Curves) == 0 {
		return band, failed, errors.New("no posterior draw gives a spectrum")
	}
	return band, failed, nil
}
