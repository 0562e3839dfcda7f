package calibrate

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"tautline/internal/atomicfile"
)

// BandMass is the probability of the rank histograms' simultaneous band.
const BandMass = 0.95

// ParamResult is the calibration of one sampled parameter.
type ParamResult struct {
	Name       string
	Coverage   []Coverage // one per Masses() entry
	Uniformity Uniformity
}

// Result is a finished calibration.
type Result struct {
	// Replicates holds every replicate, in index order.
	Replicates []*Replicate
	// Params holds the per-parameter results, in the fits' order.
	Params []ParamResult
	// Draws, RankBins and Band describe the rank histograms.
	Draws, RankBins int
	Band            Band
	// Warnings are what a reader should know before trusting the result
	// (short runs, data outside the grid).
	Warnings []string
	// Files lists the files written, relative to the run folder.
	Files []string
}

func summarise(r *resolved, s Settings, reps []*Replicate) (*Result, error) {
	names := reps[0].Params
	for _, rep := range reps {
		if strings.Join(rep.Params, ",") != strings.Join(names, ",") {
			return nil, fmt.Errorf("calibrate: replicate %d samples %v but replicate 0 samples %v", rep.Index, rep.Params, names)
		}
	}
	band, err := HistogramBand(len(reps), s.RankBins, BandMass)
	if err != nil {
		return nil, err
	}
	res := &Result{Replicates: reps, Draws: s.Draws, RankBins: s.RankBins, Band: band}
	for j, name := range names {
		ranks := make([]int, len(reps))
		for i, rep := range reps {
			ranks[i] = rep.Ranks[j]
		}
		u, err := TestUniform(ranks, s.Draws, s.RankBins, s.Level, band)
		if err != nil {
			return nil, err
		}
		pr := ParamResult{Name: name, Uniformity: u}
		for _, m := range Masses() {
			c, err := CoverageOf(m, ranks, s.Draws)
			if err != nil {
				return nil, err
			}
			pr.Coverage = append(pr.Coverage, c)
		}
		res.Params = append(res.Params, pr)
	}
	res.Warnings = warnings(reps, s)
	return res, writeOutputs(r, s, res)
}

func warnings(reps []*Replicate, s Settings) []string {
	var below, noTau, above, aboveBins int
	worst := 0.0
	for _, rep := range reps {
		if rep.ThinBelowTau {
			below++
		}
		if rep.Tau == nil {
			noTau++
		} else {
			worst = math.Max(worst, *rep.Tau)
		}
		if rep.AboveGrid > 0 {
			above++
			aboveBins += rep.AboveGrid
		}
	}
	w := []string{}
	if below > 0 {
		w = append(w, fmt.Sprintf("%d of %d replicates were too short for %d draws spaced by the autocorrelation time (largest tau %.0f steps); their draws are correlated, which widens the rank histogram's spread: give more steps", below, len(reps), s.Draws, worst))
	}
	if noTau > 0 {
		w = append(w, fmt.Sprintf("%d of %d replicates were too short to estimate an autocorrelation time; their draws were taken every step", noTau, len(reps)))
	}
	if above > 0 {
		w = append(w, fmt.Sprintf("%d of %d replicates had true log10 rho above the data grid's maximum in %d bins in all; those bins are truncated and miscalibrate the fit: raise the grid maximum or narrow the prior", above, len(reps), aboveBins))
	}
	return w
}

// g formats a float in the shortest form that reads back exactly.
func g(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// jnum is a float64 that encodes NaN and infinities as JSON null.
type jnum float64

func (v jnum) MarshalJSON() ([]byte, error) {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return []byte(g(f)), nil
}

type coverageJSON struct {
	Param    string `json:"param"`
	Mass     jnum   `json:"mass"`
	Nominal  jnum   `json:"nominal"`
	Lo       int    `json:"order_lo"`
	Hi       int    `json:"order_hi"`
	Covered  int    `json:"covered"`
	N        int    `json:"n"`
	Fraction jnum   `json:"fraction"`
	StdErr   jnum   `json:"stderr"`
	Expected jnum   `json:"expected_stderr"`
}

type uniformityJSON struct {
	Param       string `json:"param"`
	Counts      []int  `json:"counts"`
	ChiSquare   jnum   `json:"chi_square"`
	DOF         int    `json:"dof"`
	P           jnum   `json:"p_value"`
	Level       jnum   `json:"level"`
	Flagged     bool   `json:"flagged"`
	OutsideBand []int  `json:"bins_outside_band"`
}

type summaryJSON struct {
	Method     string           `json:"method"`
	Model      string           `json:"model"`
	Replicates int              `json:"replicates"`
	Draws      int              `json:"draws"`
	RankBins   int              `json:"rank_bins"`
	Band       bandJSON         `json:"band"`
	Uniformity []uniformityJSON `json:"uniformity"`
	Coverage   []coverageJSON   `json:"coverage"`
	Warnings   []string         `json:"warnings"`
	Files      []string         `json:"files"`
}

type bandJSON struct {
	Mass   jnum   `json:"mass"`
	Method string `json:"method"`
	Lo     int    `json:"lo"`
	Hi     int    `json:"hi"`
}

func writeOutputs(r *resolved, s Settings, res *Result) error {
	out := s.Out
	var covs []coverageJSON
	var unis []uniformityJSON
	for _, p := range res.Params {
		for _, c := range p.Coverage {
			covs = append(covs, coverageJSON{p.Name, jnum(c.Mass), jnum(c.Nominal), c.Lo, c.Hi, c.Covered, c.N, jnum(c.Fraction), jnum(c.StdErr), jnum(c.Expected)})
		}
		u := p.Uniformity
		unis = append(unis, uniformityJSON{p.Name, u.Counts, jnum(u.ChiSquare), u.DOF, jnum(u.P), jnum(u.Level), u.Flagged, u.OutsideBand})
	}
	files := []string{"ranks.csv", "coverage.csv", "coverage.json", "uniformity.csv"}
	write := func(name string, fn func(w io.Writer) error) error {
		if err := atomicfile.Write(filepath.Join(out, name), fn); err != nil {
			return fmt.Errorf("calibrate: %w", err)
		}
		return nil
	}
	if err := write("ranks.csv", func(w io.Writer) error { return writeRanks(w, res) }); err != nil {
		return err
	}
	if err := write("coverage.csv", func(w io.Writer) error {
		fmt.Fprintln(w, "# param,mass,nominal,order_lo,order_hi,covered,n,fraction,stderr,expected_stderr")
		for _, c := range covs {
			fmt.Fprintf(w, "%s,%s,%s,%d,%d,%d,%d,%s,%s,%s\n", c.Param, g(float64(c.Mass)), g(float64(c.Nominal)), c.Lo, c.Hi, c.Covered, c.N, g(float64(c.Fraction)), g(float64(c.StdErr)), g(float64(c.Expected)))
		}
		return nil
	}); err != nil {
		return err
	}
	if err := writeJSONFile(filepath.Join(out, "coverage.json"), map[string]any{"coverage": covs}); err != nil {
		return err
	}
	if err := write("uniformity.csv", func(w io.Writer) error {
		fmt.Fprintln(w, "# param,chi_square,dof,p_value,level,flagged,band_lo,band_hi,bins_outside_band,counts")
		for _, u := range unis {
			fmt.Fprintf(w, "%s,%s,%d,%s,%s,%t,%d,%d,%d,%s\n", u.Param, g(float64(u.ChiSquare)), u.DOF, g(float64(u.P)), g(float64(u.Level)),
				u.Flagged, res.Band.Lo, res.Band.Hi, len(u.OutsideBand), joinInts(u.Counts, " "))
		}
		return nil
	}); err != nil {
		return err
	}
	for _, p := range res.Params {
		fs, err := writeRankFigure(out, p, res, s.FigureFormats)
		if err != nil {
			return err
		}
		files = append(files, fs...)
	}
	files = append(files, "summary.json")
	res.Files = files
	sum := summaryJSON{
		Method: "simulation-based calibration (Talts et al. 2018); ranks of the truth among L posterior draws",
		Model:  r.Model.Name(), Replicates: len(res.Replicates), Draws: res.Draws, RankBins: res.RankBins,
		Band:       bandJSON{jnum(res.Band.Mass), "binomial per-bin quantiles at (1-mass)/(2 bins) and 1-(1-mass)/(2 bins): simultaneous by the union bound", res.Band.Lo, res.Band.Hi},
		Uniformity: unis, Coverage: covs, Warnings: res.Warnings, Files: files,
	}
	return writeJSONFile(filepath.Join(out, "summary.json"), sum)
}

func writeRanks(w io.Writer, res *Result) error {
	names := res.Params
	head := []string{"replicate", "seed"}
	for _, p := range names {
		head = append(head, "true_"+p.Name)
	}
	for _, p := range names {
		head = append(head, "rank_"+p.Name)
	}
	if _, err := fmt.Fprintln(w, "# "+strings.Join(head, ",")); err != nil {
		return err
	}
	for _, rep := range res.Replicates {
		row := []string{strconv.Itoa(rep.Index), strconv.FormatUint(rep.Seed, 10)}
		for _, t := range rep.Truth {
			row = append(row, g(t))
		}
		for _, k := range rep.Ranks {
			row = append(row, strconv.Itoa(k))
		}
		if _, err := fmt.Fprintln(w, strings.Join(row, ",")); err != nil {
			return err
		}
	}
	return nil
}

func joinInts(v []int, sep string) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = strconv.Itoa(x)
	}
	return strings.Join(s, sep)
}

func writeJSONFile(path string, v any) error {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		return fmt.Errorf("calibrate: %s: %w", path, err)
	}
	if err := atomicfile.WriteFile(path, buf.Bytes()); err != nil {
		return fmt.Errorf("calibrate: %w", err)
	}
	return nil
}
