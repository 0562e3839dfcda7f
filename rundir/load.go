package rundir

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"tautline/chains"
	"tautline/internal/safeio"
)

// Kinds of run folder.
const (
	KindFit     = "fit"
	KindCompare = "compare"
)

// Run is a fit or comparison folder as Load reads it.
type Run struct {
	// Kind is KindFit or KindCompare.
	Kind string
	Dir  string
	// Models holds the one model of a fit, or every model of a comparison
	// in the order of compare.json.
	Models []*Model
	// Comparison is compare.json (comparisons only).
	Comparison *Comparison
}

// ModelNames lists the run's models.
func (r *Run) ModelNames() []string {
	var out []string
	for _, m := range r.Models {
		out = append(out, m.Name)
	}
	return out
}

// Model is one model's posterior as a run folder holds it.
type Model struct {
	Name string
	// Stem is Name as a file name.
	Stem string
	// Config is the run configuration the command recorded (meta.json's or
	// part.json's "config").
	Config json.RawMessage
	// Data and DataSHA256 name the data set and its checksum (for several
	// data sets, their joint record).
	Data, DataSHA256 string
	// Datasets lists every data set of a run on several or on selected
	// bins; nil for one data set with every bin (and in older folders).
	Datasets []chains.DataSet
	// Names are the sampled parameters, in the column order of Samples;
	// Priors their priors (priors.Parse syntax), Labels their LaTeX labels
	// and Units their units (empty: unknown).
	Names, Priors, Labels, Units []string
	// Rows x Cols samples, row-major.
	Rows, Cols int
	Samples    []float64
	// SamplesPath is the posterior.npy the samples were read from.
	SamplesPath string
	// ChainPath is a fit's chain.csv ("" when absent or not asked for) and
	// Steps the steps per walker it holds (0: unknown).
	ChainPath string
	Steps     int
	// EvidencePath and CurvePath are a comparison model's evidence.json
	// and lnl_beta.csv ("" when absent).
	EvidencePath, CurvePath string
}

// Options says what Load reads besides the posterior samples.
type Options struct {
	// Traces asks for a fit's chain.csv (Model.ChainPath).
	Traces bool
}

// Load reads a run folder: meta.json for a fit, compare.json for a
// comparison.
func Load(dir string, o Options) (*Run, error) {
	fi, err := os.Stat(dir)
	switch {
	case err != nil:
		return nil, fmt.Errorf("run folder %s: %w", dir, errors.Unwrap(err))
	case !fi.IsDir():
		return nil, fmt.Errorf("run folder %s is a file, not a folder", dir)
	}
	metaPath, cmpPath := filepath.Join(dir, MetaFile), filepath.Join(dir, CompareFile)
	if exists(metaPath) {
		return loadFit(dir, metaPath, o.Traces)
	}
	if exists(cmpPath) {
		return loadCompare(dir, cmpPath)
	}
	return nil, fmt.Errorf("%s is neither a fit run (no meta.json) nor a compare run (no compare.json)", dir)
}

func loadFit(dir, metaPath string, traces bool) (*Run, error) {
	m, err := chains.ReadMeta(metaPath)
	if err != nil {
		return nil, err
	}
	var status struct {
		Status   string `json:"status"`
		Sampling struct {
			Steps int `json:"steps"`
		} `json:"sampling"`
	}
	if raw, err := safeio.ReadFile(metaPath, safeio.LimitJSON); err == nil {
		_ = json.Unmarshal(raw, &status)
	}
	cfg, err := json.Marshal(m.Config)
	if err != nil {
		return nil, fmt.Errorf("%s: config: %w", metaPath, err)
	}
	rm := &Model{Name: m.Model.Name, Stem: Stem(m.Model.Name), Config: cfg, Data: m.Data.Name, DataSHA256: m.Data.SHA256,
		Datasets: m.Datasets, SamplesPath: filepath.Join(dir, PosteriorFile)}
	for _, p := range m.Model.Params {
		if !p.Fixed {
			rm.Names = append(rm.Names, p.Name)
			rm.Priors = append(rm.Priors, p.Prior)
			rm.Labels = append(rm.Labels, p.Label)
			rm.Units = append(rm.Units, p.Unit)
		}
	}
	if !exists(rm.SamplesPath) {
		if status.Status == "running" || status.Status == "interrupted" {
			return nil, fmt.Errorf("%s: no posterior.npy: the fit has not finished (status %s); continue it with 'tautline fit --resume --out %s'", dir, status.Status, dir)
		}
		return nil, fmt.Errorf("%s: posterior.npy is missing: the fit run is incomplete", dir)
	}
	if err := rm.readSamples(); err != nil {
		return nil, err
	}
	if c := filepath.Join(dir, ChainFile); traces && exists(c) {
		rm.ChainPath, rm.Steps = c, status.Sampling.Steps
	}
	return &Run{Kind: KindFit, Dir: dir, Models: []*Model{rm}}, nil
}

func (rm *Model) readSamples() error {
	r, c, data, err := chains.ReadNPY(rm.SamplesPath)
	if err != nil {
		return err
	}
	if c != len(rm.Names) {
		return fmt.Errorf("%s has %d columns but the run sampled %d parameters (%s)", rm.SamplesPath, c, len(rm.Names), strings.Join(rm.Names, ", "))
	}
	if r < 2 {
		return fmt.Errorf("%s holds %d posterior samples; a report needs at least 2", rm.SamplesPath, r)
	}
	rm.Rows, rm.Cols, rm.Samples = r, c, data
	return nil
}

func loadCompare(dir, cmpPath string) (*Run, error) {
	raw, err := safeio.ReadFile(cmpPath, safeio.LimitJSON)
	if err != nil {
		return nil, err
	}
	var res Comparison
	if err := json.Unmarshal(raw, &res); err != nil {
		return nil, fmt.Errorf("%s: %w", cmpPath, err)
	}
	if len(res.Rows) == 0 {
		return nil, fmt.Errorf("%s lists no models", cmpPath)
	}
	run := &Run{Kind: KindCompare, Dir: dir, Comparison: &res}
	for _, row := range res.Rows {
		pm, err := findPart(dir, row.Model)
		if err != nil {
			return nil, err
		}
		md := ModelDir(dir, row.Model)
		rm := &Model{Name: row.Model, Stem: Stem(row.Model), Config: pm.Config, Data: res.Data, DataSHA256: res.DataSHA256,
			Datasets: res.Datasets, Names: pm.Params, Priors: pm.Priors, SamplesPath: filepath.Join(md, PosteriorFile)}
		rm.Labels, rm.Units = make([]string, len(rm.Names)), make([]string, len(rm.Names))
		if len(rm.Priors) != len(rm.Names) {
			return nil, fmt.Errorf("%s: part.json of model %s lists %d priors for %d parameters", dir, row.Model, len(rm.Priors), len(rm.Names))
		}
		if !exists(rm.SamplesPath) {
			return nil, fmt.Errorf("%s is missing: the comparison of model %s is incomplete (rerun 'tautline merge')", rm.SamplesPath, row.Model)
		}
		if err := rm.readSamples(); err != nil {
			return nil, err
		}
		if p := filepath.Join(md, EvidenceFile); exists(p) {
			rm.EvidencePath = p
		}
		if p := filepath.Join(md, CurveFile); exists(p) {
			rm.CurvePath = p
		}
		run.Models = append(run.Models, rm)
	}
	return run, nil
}

// findPart returns the part.json of any rung block of model (they share
// parameters, priors and configuration).
func findPart(dir, model string) (*Part, error) {
	matches, _ := PartFiles(dir)
	for _, m := range matches {
		raw, err := safeio.ReadFile(m, safeio.LimitPart)
		if err != nil {
			return nil, err
		}
		var pm Part
		if err := json.Unmarshal(raw, &pm); err != nil {
			return nil, fmt.Errorf("%s: %w", m, err)
		}
		if pm.Unit.Model == model {
			return &pm, nil
		}
	}
	return nil, fmt.Errorf("%s: no parts/*/part.json for model %s: its priors and configuration are unknown", dir, model)
}
