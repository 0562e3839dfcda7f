package rundir

import (
	"crypto/sha256"
	"encoding/hex"

	"tautline/chains"
	"tautline/sampler"
)

// Meta is a fit's meta.json: the chains package's metadata, whose Status
// is running, interrupted, converged or max-steps and whose Sampling is
// filled at the end of the run.
type Meta struct {
	chains.Meta
}

// FitOutputs describes the files of a fit folder, for meta.json.
func FitOutputs() []chains.Output {
	return []chains.Output{
		{File: ChainFile, Description: "every walker at every step: step, walker, ln_post, ln_like, then the sampled parameters"},
		{File: PosteriorFile, Description: "burned-in, thinned posterior samples (float64, one row per sample, columns in the order of the free parameters)"},
		{File: SummaryFile, Description: "median, 68 % and 95 % equal-tailed intervals, mean and std per parameter"},
		{File: CheckpointFile, Description: "sampler state for --resume (the history is read back from chain.csv)"},
		{File: MetaFile, Description: "this file"},
	}
}

// RungsOutput describes RungsFile, which only a tempered fit writes, for
// meta.json.
func RungsOutput() chains.Output {
	return chains.Output{File: RungsFile, Description: "ln likelihood of every walker of the rungs with beta < 1 at every step (float64 little-endian after a 24-byte header), for --resume"}
}

// WriteMeta writes m to path with the current schema version.
func WriteMeta(path string, m *Meta) error {
	m.Schema = chains.MetaSchema
	return WriteJSON(path, m)
}

// Summary is a fit's summary.json.
// Its members are in alphabetical order of their JSON names.
type Summary struct {
	Burn    int            `json:"burn"`
	Params  []ParamSummary `json:"params"`
	Samples int            `json:"samples"`
	Thin    int            `json:"thin"`
}

// ParamSummary is one parameter's posterior summary in summary.json.
type ParamSummary struct {
	Name   string  `json:"name"`
	Median float64 `json:"median"`
	Lo68   float64 `json:"lo68"`
	Hi68   float64 `json:"hi68"`
	Lo95   float64 `json:"lo95"`
	Hi95   float64 `json:"hi95"`
	Mean   float64 `json:"mean"`
	Std    float64 `json:"std"`
}

// PosteriorSamples returns what posterior.npy holds: the burned-in,
// thinned cold-rung samples of a run, as a row-major n x dim matrix.
func PosteriorSamples(res sampler.Result, dim int) ([]float64, int) {
	h := res.History
	pos := h.Positions(res.BurnIndex)
	steps := len(pos) / (h.Walkers() * dim)
	thin := max(res.Thin, 1)
	var out []float64
	n := 0
	for s := 0; s < steps; s += thin {
		out = append(out, pos[s*h.Walkers()*dim:(s+1)*h.Walkers()*dim]...)
		n += h.Walkers()
	}
	return out, n
}

// Fingerprint is the hex SHA-256 of a data set's checksum and a text that
// renders every setting deciding a run's result: the identity stored in
// checkpoints and parts.
func Fingerprint(dataSHA, settings string) string {
	h := sha256.Sum256([]byte(dataSHA + "\n" + settings))
	return hex.EncodeToString(h[:])
}
