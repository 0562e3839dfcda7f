package rundir

import (
	"encoding/json"
	"fmt"
	"slices"
	"strings"

	"tautline/chains"
	"tautline/internal/safeio"
	"tautline/sampler"
	"tautline/sampler/evidence"
)

// PartSchema is the layout version of part.json.
const PartSchema = 1

// A Unit is one independent piece of a comparison: one model on one block
// of its temperature ladder.
type Unit struct {
	Model string `json:"model"`
	// Index is the model's position in the comparison's list of models.
	Index int `json:"model_index"`
	Block int `json:"block"`
	// Blocks is the number of rung blocks each model's ladder is split into.
	Blocks int `json:"blocks"`
	// Betas are the block's inverse temperatures, decreasing.
	Betas []float64 `json:"betas"`
}

// Dir is the unit's part folder in comparison folder out.
func (u Unit) Dir(out string) string { return PartDir(out, u.Model, u.Block) }

// Part is part.json, the self-description of one unit's result; the unit's
// folder also holds lnl.npy (rows: rung-major recorded steps, columns:
// walkers) and, for the block holding beta = 1, posterior.npy.
type Part struct {
	Schema      int      `json:"schema"`
	Version     string   `json:"tautline_version"`
	Unit        Unit     `json:"unit"`
	Reference   string   `json:"reference"`
	Models      []string `json:"models"`
	Fingerprint string   `json:"fingerprint"`
	// Comparison identifies the whole comparison (data, every option and
	// the seed): parts merge only with parts of the same comparison.
	Comparison string `json:"comparison"`
	// Config is the model's run configuration as the command records it
	// (for report, which rebuilds the model from it); its member
	// Sampler.Seed is the comparison's seed.
	Config     json.RawMessage `json:"config"`
	DataName   string          `json:"data_name"`
	DataSHA256 string          `json:"data_sha256"`
	// Datasets lists every data set of a comparison on several or on
	// selected bins (DataName and DataSHA256 are then their joint record).
	Datasets  []chains.DataSet `json:"datasets,omitempty"`
	Params    []string         `json:"params"`
	Priors    []string         `json:"priors"` // of the free parameters, in the order of Params
	Steps     int              `json:"steps"`
	Walkers   int              `json:"walkers"`
	BurnIndex int              `json:"burn_index"`
	Recorded  int              `json:"recorded_steps"`
	Swap      []float64        `json:"swap_acceptance"`
	// Diagnostics are the cold rung's, in the block holding beta = 1.
	Diagnostics *sampler.Report `json:"cold_rung_diagnostics,omitempty"`
	// Passes lists the passes of an --evidence-error run.
	Passes []Pass `json:"passes,omitempty"`
	// PriorMass, in the block holding beta = 0, is the estimated prior
	// mass of the region where the model's likelihood is non-zero.
	PriorMass *evidence.PriorMass `json:"prior_mass,omitempty"`
}

// Pass is one pass of the loop that runs a unit until its evidence error
// meets a target.
// Its members are in alphabetical order of their JSON names.
type Pass struct {
	// Advice is the evidence package's reading of the pass.
	Advice string `json:"advice"`
	// Pass counts the passes from 0.
	Pass int `json:"pass"`
	// Rungs and Steps are the ladder size and steps per rung of the pass.
	Rungs int `json:"rungs"`
	// Status says, in the last pass, whether the target was met or which
	// cap stopped the run.
	Status string `json:"status,omitempty"`
	Steps  int    `json:"steps"`
	// Stopped says which cap stopped the run before the target.
	Stopped string `json:"stopped,omitempty"`
	// TotalError is the ln Z error (Monte-Carlo plus discretisation).
	TotalError float64 `json:"total_error"`
}

// Seed returns the comparison's seed, recorded in the configuration.
func (p *Part) Seed() (uint64, error) {
	var c struct{ Sampler struct{ Seed uint64 } }
	if len(p.Config) == 0 {
		return 0, nil
	}
	if err := json.Unmarshal(p.Config, &c); err != nil {
		return 0, err
	}
	return c.Sampler.Seed, nil
}

// ReadPart reads and checks the part.json at path (see DecodePart). Only a
// regular file of at most safeio.LimitPart bytes is read: a named pipe in
// its place is refused at once instead of blocking the reader.
func ReadPart(path string) (*Part, error) {
	raw, err := safeio.ReadFile(path, safeio.LimitPart)
	if err != nil {
		return nil, err
	}
	return DecodePart(path, raw)
}

// DecodePart reads one part.json (name names it in errors) and checks that
// it describes a unit: the fields it needs are present and consistent.
func DecodePart(name string, raw []byte) (*Part, error) {
	var p Part
	if err := json.Unmarshal(raw, &p); err != nil {
		return nil, fmt.Errorf("%s: not a compare part: %w", name, err)
	}
	if _, err := p.Seed(); err != nil {
		return nil, fmt.Errorf("%s: config: %w", name, err)
	}
	u := p.Unit
	switch {
	case p.Schema != PartSchema:
		return nil, fmt.Errorf("%s: part schema %d, want %d", name, p.Schema, PartSchema)
	case u.Model == "" || u.Index < 0 || u.Block < 0 || u.Blocks < 1 || u.Block >= u.Blocks:
		return nil, fmt.Errorf("%s: unit (model %q, block %d of %d) is malformed", name, u.Model, u.Block, u.Blocks)
	case strings.ContainsAny(u.Model, `/\`) || u.Model == "." || u.Model == "..":
		return nil, fmt.Errorf("%s: unit.model %q is not a model name", name, u.Model)
	case len(u.Betas) == 0 || p.Walkers < 1 || p.Recorded < 0 || len(p.Params) != len(p.Priors):
		return nil, fmt.Errorf("%s: ladder, walkers, steps or parameter list is missing or inconsistent", name)
	case len(p.Models) == 0:
		return nil, fmt.Errorf("%s: models: empty", name)
	case !slices.Contains(p.Models, p.Reference):
		return nil, fmt.Errorf("%s: reference %q is not among models %s", name, p.Reference, strings.Join(p.Models, ", "))
	case !slices.Contains(p.Models, u.Model):
		return nil, fmt.Errorf("%s: unit.model %q is not among models %s", name, u.Model, strings.Join(p.Models, ", "))
	}
	for i, m := range p.Models {
		if slices.Contains(p.Models[:i], m) {
			return nil, fmt.Errorf("%s: models[%d]: %q is listed twice", name, i, m)
		}
	}
	for i, b := range u.Betas {
		if !(b >= 0 && b <= 1) || (i > 0 && !(b < u.Betas[i-1])) {
			return nil, fmt.Errorf("%s: unit.betas[%d] = %g: betas must decrease within [0, 1]", name, i, b)
		}
	}
	return &p, nil
}

// Comparison is compare.json, a comparison's result.
type Comparison struct {
	Schema     int    `json:"schema"`
	Version    string `json:"tautline_version"`
	Data       string `json:"data"`
	DataSHA256 string `json:"data_sha256"`
	// Datasets is as in Part.
	Datasets  []chains.DataSet `json:"datasets,omitempty"`
	Reference string           `json:"reference"`
	Seed      uint64           `json:"seed"`
	Rows      []Row            `json:"models"`
}

// Row is one model's line of the comparison.
type Row struct {
	Model    string            `json:"model"`
	Params   []string          `json:"params"`
	TI       evidence.Estimate `json:"ln_z_ti"`
	TITrap   evidence.Estimate `json:"ln_z_ti_trapezoid"`
	SS       evidence.Estimate `json:"ln_z_ss"`
	Disagree bool              `json:"estimators_disagree"`
	LnB      float64           `json:"ln_b"`
	LnBErr   float64           `json:"ln_b_error"`
	Reading  string            `json:"kass_raftery"`
	Rungs    int               `json:"rungs"`
	Steps    int               `json:"steps_per_rung"`
	Walkers  int               `json:"walkers"`
	Warnings []string          `json:"warnings,omitempty"`
	// Accuracy says, with --evidence-error, whether the target was met or
	// which cap stopped the run.
	Accuracy string `json:"evidence_target,omitempty"`
	// PriorMass is the estimated prior mass of the region where the
	// likelihood is non-zero, whose ln is included in the ln Z above.
	PriorMass *evidence.PriorMass `json:"prior_mass,omitempty"`
}
