// Package rundir is the layout of tautline's run folders: the files a fit
// writes (chain.csv, posterior.npy, summary.json, meta.json,
// checkpoint.bin), the files a comparison writes (compare.json,
// compare.csv, models/NAME/, parts/MODEL.blockB/part.json), their typed
// contents, and Load, which reads either kind of folder back for reports.
//
// Every JSON file is written through a typed struct (WriteJSON), atomically:
// a reader never sees half a file.
package rundir

import (
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"tautline/chains"
	"tautline/internal/safeio"
)

// File names of a fit folder.
const (
	ChainFile      = "chain.csv"
	PosteriorFile  = "posterior.npy"
	SummaryFile    = "summary.json"
	MetaFile       = "meta.json"
	CheckpointFile = "checkpoint.bin"
	// RungsFile holds, in a tempered fit, the ln likelihoods of the rungs
	// with beta < 1 at every step (chain.csv holds the cold rung's).
	RungsFile = "rungs_lnl.bin"
)

// File and folder names of a comparison folder.
const (
	CompareFile    = "compare.json"
	CompareCSVFile = "compare.csv"
	EvidenceFile   = "evidence.json"
	CurveFile      = "lnl_beta.csv"
	PartFile       = "part.json"
	LnLFile        = "lnl.npy"
	ModelsDir      = "models"
	PartsDir       = "parts"
)

// Fit names the files of a fit folder.
type Fit struct {
	Chain, Posterior, Summary, Meta, Checkpoint, Rungs string
}

// FitPaths returns the files of the fit folder dir.
func FitPaths(dir string) Fit {
	return Fit{
		Chain:      filepath.Join(dir, ChainFile),
		Posterior:  filepath.Join(dir, PosteriorFile),
		Summary:    filepath.Join(dir, SummaryFile),
		Meta:       filepath.Join(dir, MetaFile),
		Checkpoint: filepath.Join(dir, CheckpointFile),
		Rungs:      filepath.Join(dir, RungsFile),
	}
}

// Stem is a model name as a file or folder name ("strings+smbhb" ->
// "strings-smbhb").
func Stem(model string) string { return strings.ReplaceAll(model, "+", "-") }

// ModelDir is the folder of one model's results in comparison folder out.
func ModelDir(out, model string) string { return filepath.Join(out, ModelsDir, Stem(model)) }

// PartDir is the folder of one unit (model, rung block) in comparison
// folder out.
func PartDir(out, model string, block int) string {
	return filepath.Join(out, PartsDir, fmt.Sprintf("%s.block%d", Stem(model), block))
}

// PartFiles lists the part.json files under the comparison folder dir.
func PartFiles(dir string) ([]string, error) {
	return filepath.Glob(filepath.Join(dir, PartsDir, "*", PartFile))
}

// WriteJSON writes v as indented JSON, atomically.
func WriteJSON(path string, v any) error {
	return chains.WriteFileAtomic(path, func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(v)
	})
}

// CopyFile copies src to dst atomically; nothing happens when they are the
// same file.
func CopyFile(src, dst string) error {
	a, _ := filepath.Abs(src)
	b, _ := filepath.Abs(dst)
	if a == b {
		return nil
	}
	in, err := safeio.Open(src)
	if err != nil {
		return err
	}
	defer in.Close()
	return chains.WriteFileAtomic(dst, func(w io.Writer) error {
		_, err := io.Copy(w, in)
		return err
	})
}

// CopyDir copies the regular files of folder src into dst (nothing to do
// when they are the same folder).
func CopyDir(src, dst string) error {
	a, _ := filepath.Abs(src)
	b, _ := filepath.Abs(dst)
	if a == b {
		return nil
	}
	if err := os.MkdirAll(dst, 0o755); err != nil {
		return err
	}
	ents, err := os.ReadDir(src)
	if err != nil {
		return err
	}
	for _, en := range ents {
		if en.Type().IsRegular() {
			if err := CopyFile(filepath.Join(src, en.Name()), filepath.Join(dst, en.Name())); err != nil {
				return err
			}
		}
	}
	return nil
}

func exists(path string) bool {
	_, err := os.Stat(path)
	return err == nil
}
