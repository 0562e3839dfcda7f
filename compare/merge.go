package compare

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"text/tabwriter"

	"tautline/chains"
	"tautline/rundir"
	"tautline/sampler/evidence"
)

// source is one part and the file it was read from.
type source struct {
	part *rundir.Part
	path string
}

// Merge reads every part under the comparison folders dirs, checks that
// they belong to one comparison and that every unit is there, integrates
// each model's ladder and writes the results into out (compare.json,
// compare.csv, models/NAME/ with evidence.json, lnl_beta.csv and
// posterior.npy, and a copy of every part). A single process and a split
// run both finish with Merge, so their outputs are identical. Malformed
// parts give an error naming the file and the field.
func Merge(out string, dirs []string, version string) (*rundir.Comparison, error) {
	return merge(out, dirs, version, nil)
}

// merge is Merge with the rows of some models already integrated from
// the parts in out (early, keyed by model), which it uses instead of
// integrating them again.
func merge(out string, dirs []string, version string, early map[string]rundir.Row) (*rundir.Comparison, error) {
	parts, keys, err := readParts(dirs)
	if err != nil {
		return nil, err
	}
	first := parts[keys[0]]
	seed, _ := first.part.Seed() // checked by DecodePart
	res := &rundir.Comparison{Schema: 1, Version: version, Data: first.part.DataName, DataSHA256: first.part.DataSHA256,
		Datasets: first.part.Datasets, Reference: first.part.Reference, Seed: seed}
	byModel := map[string][]*rundir.Part{}
	for _, k := range keys {
		s := parts[k]
		if s.part.Comparison != first.part.Comparison {
			return nil, fmt.Errorf("%s (model %s, block %d) belongs to another comparison than %s (data, options or seed differ)", s.path, s.part.Unit.Model, s.part.Unit.Block, first.path)
		}
		if s.part.Unit.Blocks != first.part.Unit.Blocks || s.part.Reference != first.part.Reference || !slices.Equal(s.part.Models, first.part.Models) {
			return nil, fmt.Errorf("%s: unit.blocks, reference or models differ from %s", s.path, first.path)
		}
		if want := slices.Index(first.part.Models, s.part.Unit.Model); s.part.Unit.Index != want {
			return nil, fmt.Errorf("%s: unit.model_index is %d but model %s is number %d of models", s.path, s.part.Unit.Index, s.part.Unit.Model, want)
		}
		byModel[s.part.Unit.Model] = append(byModel[s.part.Unit.Model], s.part)
	}
	// unit.blocks comes from the file: list at most maxListed missing
	// units, so that the loop ends after the parts present plus
	// maxListed blocks however large the number claimed.
	const maxListed = 10
	var missing []string
	nMissing, blocks := 0, first.part.Unit.Blocks
	for _, m := range first.part.Models {
		have := map[int]bool{}
		for _, pm := range byModel[m] {
			have[pm.Unit.Block] = true
		}
		nMissing += min(blocks-len(have), math.MaxInt-nMissing)
		for b := 0; b < blocks && len(missing) < maxListed; b++ {
			if !have[b] {
				missing = append(missing, fmt.Sprintf("%s block %d", m, b))
			}
		}
	}
	if nMissing > 0 {
		list := strings.Join(missing, ", ")
		if nMissing > len(missing) {
			list += fmt.Sprintf(" and %d more", nMissing-len(missing))
		}
		return nil, fmt.Errorf("no parts for %s (of the %d rung block(s) per model that %s names): run every task before merging", list, blocks, first.path)
	}
	for _, k := range keys {
		if err := rundir.CopyDir(filepath.Dir(parts[k].path), parts[k].part.Unit.Dir(out)); err != nil {
			return nil, err
		}
	}
	// Models integrate independently, each into its own folder: side by
	// side, one goroutine per processor; rows keep the models' order.
	models := first.part.Models
	res.Rows = make([]rundir.Row, len(models))
	errs := make([]error, len(models))
	next := make(chan int, len(models))
	for i := range models {
		next <- i
	}
	close(next)
	var wg sync.WaitGroup
	for range min(runtime.GOMAXPROCS(0), len(models)) {
		wg.Go(func() {
			for i := range next {
				if row, ok := early[models[i]]; ok {
					res.Rows[i] = row
					continue
				}
				res.Rows[i], errs[i] = mergeModel(out, models[i], byModel[models[i]])
			}
		})
	}
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			return nil, fmt.Errorf("model %s: %w", models[i], err)
		}
	}
	ref := res.Rows[slices.Index(first.part.Models, first.part.Reference)]
	for i := range res.Rows {
		r := &res.Rows[i]
		if r.Model == ref.Model {
			r.LnB, r.LnBErr, r.Reading = 0, 0, "reference"
			continue
		}
		r.LnB, r.LnBErr = evidence.BayesFactor(r.TI, ref.TI)
		r.Reading = evidence.KassRafteryNamed(r.LnB, r.Model, ref.Model)
	}
	if err := rundir.WriteJSON(filepath.Join(out, rundir.CompareFile), res); err != nil {
		return nil, err
	}
	if err := writeCompareCSV(filepath.Join(out, rundir.CompareCSVFile), res); err != nil {
		return nil, err
	}
	return res, nil
}

// readParts reads and checks every part.json under dirs, keyed by model
// index and block, and returns the keys sorted.
func readParts(dirs []string) (map[string]source, []string, error) {
	parts := map[string]source{}
	var keys []string
	for _, d := range dirs {
		matches, err := rundir.PartFiles(d)
		if err != nil {
			return nil, nil, err
		}
		for _, m := range matches {
			pm, err := rundir.ReadPart(m)
			if err != nil {
				return nil, nil, err
			}
			k := fmt.Sprintf("%04d.%04d", pm.Unit.Index, pm.Unit.Block)
			if prev, dup := parts[k]; dup {
				if prev.part.Comparison != pm.Comparison {
					return nil, nil, fmt.Errorf("%s and %s hold the same unit (model %s, block %d) from different comparisons (data, options or seed differ)", prev.path, m, pm.Unit.Model, pm.Unit.Block)
				}
				continue // the same unit listed twice (e.g. a merged folder given again)
			}
			parts[k] = source{pm, m}
			keys = append(keys, k)
		}
	}
	if len(parts) == 0 {
		return nil, nil, fmt.Errorf("no parts found under %s (expected DIR/parts/*/part.json)", strings.Join(dirs, ", "))
	}
	slices.Sort(keys)
	return parts, keys, nil
}

// mergeModel integrates one model's ladder from its parts (blocks).
func mergeModel(out, model string, parts []*rundir.Part) (rundir.Row, error) {
	var rungs []evidence.Rung
	seed, _ := parts[0].Seed()
	for _, pm := range parts {
		s, _ := pm.Seed()
		if pm.Walkers != parts[0].Walkers || pm.Recorded != parts[0].Recorded || s != seed {
			return rundir.Row{}, errors.New("its rung blocks were run with different walkers or steps")
		}
		path := filepath.Join(pm.Unit.Dir(out), rundir.LnLFile)
		rows, walkers, data, err := chains.ReadNPY(path)
		if err != nil {
			return rundir.Row{}, err
		}
		if nb := len(pm.Unit.Betas); rows%nb != 0 || rows/nb != pm.Recorded || walkers != pm.Walkers || len(data) != rows*walkers {
			return rundir.Row{}, fmt.Errorf("%s: holds %d x %d values, but its part.json promises %d rungs x %d steps x %d walkers",
				path, rows, walkers, len(pm.Unit.Betas), pm.Recorded, pm.Walkers)
		}
		per := pm.Recorded * walkers
		for r, b := range pm.Unit.Betas {
			rungs = append(rungs, evidence.Rung{Beta: b, LnL: data[r*per : (r+1)*per], Steps: pm.Recorded, Walkers: walkers})
		}
	}
	slices.SortFunc(rungs, func(a, b evidence.Rung) int {
		switch {
		case a.Beta < b.Beta:
			return -1
		case a.Beta > b.Beta:
			return 1
		}
		return 0
	})
	var pm *evidence.PriorMass
	for _, p := range parts {
		if p.PriorMass != nil {
			pm = p.PriorMass
		}
	}
	if pm == nil {
		return rundir.Row{}, errors.New("no part records the prior mass of the region where the likelihood is non-zero (parts written by an older version?)")
	}
	ev, err := integrate(rungs, pm)
	if err != nil {
		return rundir.Row{}, err
	}
	dir := rundir.ModelDir(out, model)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return rundir.Row{}, err
	}
	if err := rundir.WriteJSON(filepath.Join(dir, rundir.EvidenceFile), ev); err != nil {
		return rundir.Row{}, err
	}
	if err := writeCurveCSV(filepath.Join(dir, rundir.CurveFile), ev); err != nil {
		return rundir.Row{}, err
	}
	for _, pm := range parts {
		if pm.Unit.Betas[0] == 1 {
			if err := rundir.CopyFile(filepath.Join(pm.Unit.Dir(out), rundir.PosteriorFile), filepath.Join(dir, rundir.PosteriorFile)); err != nil {
				return rundir.Row{}, err
			}
		}
	}
	var accuracy string
	if ps := parts[0].Passes; len(ps) > 0 {
		accuracy = ps[len(ps)-1].Status
	}
	return rundir.Row{
		Model: model, Params: parts[0].Params, TI: ev.TIHigher, TITrap: ev.TI, SS: ev.SS, Disagree: ev.Disagree,
		Rungs: len(rungs), Steps: parts[0].Steps, Walkers: parts[0].Walkers, Warnings: ev.Warnings, Accuracy: accuracy,
		PriorMass: ev.PriorMass,
	}, nil
}

func g(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func writeCompareCSV(path string, res *rundir.Comparison) error {
	return chains.WriteFileAtomic(path, func(w io.Writer) error {
		cw := csv.NewWriter(w)
		_ = cw.Write([]string{"model", "ln_z_ti", "ti_mc_err", "ti_disc_err", "ti_prior_mass_err", "ti_total_err", "ln_z_ss", "ss_mc_err", "ss_disc_err", "ss_total_err", "ln_b", "ln_b_err", "kass_raftery", "ln_prior_mass"})
		for _, r := range res.Rows {
			_ = cw.Write([]string{r.Model, g(r.TI.LnZ), g(r.TI.MCErr), g(r.TI.DiscErr), g(r.TI.PriorMassErr), g(r.TI.Total),
				g(r.SS.LnZ), g(r.SS.MCErr), g(r.SS.DiscErr), g(r.SS.Total), g(r.LnB), g(r.LnBErr), r.Reading, g(lnPriorMass(r))})
		}
		cw.Flush()
		return cw.Error()
	})
}

// lnPriorMass is the ln P_prior(R) included in a row's ln Z (0 if none
// was recorded).
func lnPriorMass(r rundir.Row) float64 {
	if r.PriorMass == nil {
		return 0
	}
	return r.PriorMass.LnP
}

func writeCurveCSV(path string, ev evidence.Result) error {
	return chains.WriteFileAtomic(path, func(w io.Writer) error {
		cw := csv.NewWriter(w)
		_ = cw.Write([]string{"beta", "mean_ln_like", "mean_err", "var_ln_like", "tau_steps", "ess"})
		for _, c := range ev.Curve {
			_ = cw.Write([]string{g(c.Beta), g(c.Mean), g(c.MeanErr), g(c.Var), g(c.Tau), g(c.ESS)})
		}
		cw.Flush()
		return cw.Error()
	})
}

// WriteTable prints the comparison res, whose files are in out, as a text
// table with its warnings.
func WriteTable(w io.Writer, res *rundir.Comparison, out string) {
	fmt.Fprintf(w, "\nEvidence of each model given data set %s (reference %s; errors: Monte-Carlo + discretisation + prior mass = total)\n\n", res.Data, res.Reference)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "model\tln Z (TI)\t± MC\t± disc\t± mass\t± total\tln Z (SS)\t± total\tln B\t± err\treading")
	for _, r := range res.Rows {
		lnb, lnbErr := strconv.FormatFloat(r.LnB, 'f', 2, 64), strconv.FormatFloat(r.LnBErr, 'f', 2, 64)
		if r.Reading == "reference" {
			lnb, lnbErr = "0", "-"
		}
		fmt.Fprintf(tw, "%s\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%.3f\t%s\t%s\t%s\n", r.Model, r.TI.LnZ, r.TI.MCErr, r.TI.DiscErr, r.TI.PriorMassErr, r.TI.Total,
			r.SS.LnZ, r.SS.Total, lnb, lnbErr, r.Reading)
	}
	_ = tw.Flush()
	for _, r := range res.Rows {
		if pm := r.PriorMass; pm != nil && pm.Inside < pm.Draws {
			fmt.Fprintf(w, "%s: the likelihood is zero (model above the data's range) on part of the prior: ln Z includes the prior mass of the rest, ln P = %.3f ± %.3f (%d of %d prior draws)\n",
				r.Model, pm.LnP, pm.Err, pm.Inside, pm.Draws)
		}
	}
	for _, r := range res.Rows {
		if r.Accuracy != "" {
			fmt.Fprintf(w, "%s: evidence accuracy: %s\n", r.Model, r.Accuracy)
		}
	}
	for _, r := range res.Rows {
		if r.Disagree {
			fmt.Fprintf(w, "warning: %s: thermodynamic integration and stepping-stone disagree beyond their errors; run longer or with more rungs\n", r.Model)
		}
		for _, wn := range r.Warnings {
			fmt.Fprintf(w, "warning: %s: %s\n", r.Model, wn)
		}
	}
	fmt.Fprintf(w, "\nln B > 0 favours the model over %s. Files in %s: compare.json, compare.csv, models/*/ (evidence.json, lnl_beta.csv, posterior.npy), parts/\n", res.Reference, out)
}
