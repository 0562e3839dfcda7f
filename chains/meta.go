package chains

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"time"

	"tautline/internal/safeio"
)

// MetaSchema is the version of the metadata layout written by WriteMeta.
const MetaSchema = 1

// Meta describes one run: what produced it, from what, and what it wrote.
// It is stored as JSON with the field names given in the tags.
type Meta struct {
	// Schema is the metadata layout version (MetaSchema when written).
	Schema int `json:"schema"`
	// Version is the tautline version that made the run.
	Version string `json:"tautline_version"`
	// CommandLine is the program's argument list, os.Args.
	CommandLine []string `json:"command_line"`
	// Config is the fully resolved run configuration, as the command
	// represents it (any value encoding/json accepts); read back as
	// generic JSON (map[string]any and so on).
	Config any `json:"config"`
	// Seed is the run's random seed.
	Seed uint64 `json:"seed"`
	// Data identifies the data set fitted (for several, their joint
	// record: names joined, combined digest).
	Data DataSet `json:"data"`
	// Datasets lists every data set of a run on several data sets or on
	// selected bins; omitted for one data set with every bin.
	Datasets []DataSet `json:"datasets,omitempty"`
	// Model names the model and its parameters.
	Model ModelInfo `json:"model"`
	// Start and End bound the run in wall-clock time.
	Start time.Time `json:"start"`
	End   time.Time `json:"end"`
	// Timings lists the wall-clock duration of each phase, in order. A fit
	// records "sampling", then "diagnostics" (the convergence checks and
	// the final report, a part of sampling) and "total".
	Timings []Timing `json:"timings"`
	// Diagnostics holds the sampler's convergence report (any value
	// encoding/json accepts).
	Diagnostics any `json:"diagnostics"`
	// Outputs lists the files the run wrote.
	Outputs []Output `json:"outputs"`
	// Status is the run's state when the file was written, e.g. running,
	// interrupted, converged or max-steps; omitted when empty.
	Status string `json:"status,omitempty"`
	// Sampling records how the samples were made, filled at the end of a
	// run; omitted when nil.
	Sampling *Sampling `json:"sampling,omitempty"`
}

// Sampling records how a run's posterior samples were drawn and the
// likelihood settings it used. Every member is always written; the members
// are in alphabetical order of their JSON names.
type Sampling struct {
	// AboveRangePenalty is the likelihood's per-bin log-likelihood cost
	// above the data's prior range (per dex beyond its top).
	AboveRangePenalty float64 `json:"above_range_penalty"`
	// Acceptance is each walker's fraction of accepted proposals on the
	// untempered rung.
	Acceptance []float64 `json:"acceptance"`
	// BandwidthRule names the rule that chose the density bandwidths.
	BandwidthRule string `json:"bandwidth_rule"`
	// Bandwidths are the per-bin density bandwidths in log10 rho.
	Bandwidths []float64 `json:"bandwidths"`
	// Burn is the number of ensemble steps discarded as burn-in.
	Burn int `json:"burn"`
	// PosteriorSamples is the number of samples kept after burn-in and
	// thinning.
	PosteriorSamples int `json:"posterior_samples"`
	// Steps is the number of ensemble steps run.
	Steps int `json:"steps"`
	// Thin is the thinning applied after burn-in.
	Thin int `json:"thin"`
	// Until is the stopping rule given, empty for a fixed number of steps.
	Until string `json:"until"`
}

// DataSet identifies a data file.
type DataSet struct {
	Name   string `json:"name"`
	Path   string `json:"path"`
	SHA256 string `json:"sha256"` // hex digest of the file's bytes
	// Bins are the bins used (1-based, increasing) when not all were;
	// SHA256 is then still the whole file's digest.
	Bins []int `json:"bins,omitempty"`
}

// ModelInfo names a model and lists its parameters in chain-column order.
type ModelInfo struct {
	Name   string      `json:"name"`
	Params []ParamInfo `json:"params"`
}

// ParamInfo describes one parameter as run: its prior in the syntax of
// priors.Parse, and whether it was held fixed (no chain column).
type ParamInfo struct {
	Name  string `json:"name"`
	Label string `json:"label,omitempty"`
	Unit  string `json:"unit,omitempty"`
	Prior string `json:"prior"`
	Fixed bool   `json:"fixed,omitempty"`
}

// Timing is the duration of one named phase of a run.
type Timing struct {
	Phase   string  `json:"phase"`
	Seconds float64 `json:"seconds"`
}

// Output is one file a run wrote, with a one-line description.
type Output struct {
	File        string `json:"file"`
	Description string `json:"description"`
}

// WriteMeta writes m to path as indented JSON, atomically, with Schema set
// to MetaSchema.
func WriteMeta(path string, m *Meta) error {
	c := *m
	c.Schema = MetaSchema
	b, err := json.MarshalIndent(&c, "", "  ")
	if err != nil {
		return fmt.Errorf("chains: %s: encoding metadata: %w", path, err)
	}
	b = append(b, '\n')
	return WriteFileAtomic(path, func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}

// ReadMeta reads a metadata file written by WriteMeta. It rejects files
// without a schema number and files from a newer schema than this package
// knows.
//
// Only a regular file of at most safeio.LimitJSON bytes is read.
func ReadMeta(path string) (*Meta, error) {
	b, err := safeio.ReadFile(path, safeio.LimitJSON)
	if err != nil {
		return nil, fmt.Errorf("chains: %w", err)
	}
	var m Meta
	dec := json.NewDecoder(bytes.NewReader(b))
	if err := dec.Decode(&m); err != nil {
		var (
			se *json.SyntaxError
			te *json.UnmarshalTypeError
			at int64 = -1
		)
		switch {
		case errors.As(err, &se):
			at = se.Offset
		case errors.As(err, &te):
			at = te.Offset
		}
		if at >= 0 && at <= int64(len(b)) {
			line := 1 + bytes.Count(b[:at], []byte("\n"))
			return nil, fmt.Errorf("chains: %s:%d: %w", path, line, err)
		}
		return nil, fmt.Errorf("chains: %s: %w", path, err)
	}
	switch {
	case m.Schema == 0:
		return nil, fmt.Errorf("chains: %s: no \"schema\" field; not a run metadata file", path)
	case m.Schema > MetaSchema:
		return nil, fmt.Errorf("chains: %s: schema %d is newer than this program's %d", path, m.Schema, MetaSchema)
	}
	return &m, nil
}

// FileSHA256 returns the hex SHA-256 digest of the file at path, for
// DataSet.SHA256. Only a regular file is read (a device such as /dev/zero
// would never end).
func FileSHA256(path string) (string, error) {
	f, err := safeio.Open(path)
	if err != nil {
		return "", fmt.Errorf("chains: %w", err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("chains: %s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}
