package rundir

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"time"

	"tautline/internal/safeio"
)

// Files of a run folder that are written whole through a temporary file
// and a rename (chains.WriteFileAtomic), whose temporaries
// ".NAME.tmp-*" a writer killed mid-write leaves behind.
var (
	fitAtomicFiles   = []string{ChainFile, PosteriorFile, SummaryFile, MetaFile, CheckpointFile}
	partAtomicFiles  = []string{PartFile, LnLFile, PosteriorFile}
	modelAtomicFiles = []string{PosteriorFile, EvidenceFile, CurveFile}
	mergeAtomicFiles = []string{CompareFile, CompareCSVFile}
)

// RemoveStaleFit removes, from the fit folder dir, the temporaries of its
// own files (".checkpoint.bin.tmp-*", ".meta.json.tmp-*", ...) last
// modified before started, the time the calling process started: they
// belong to a writer that died. It returns the names removed. A folder
// that does not exist yet holds nothing to remove. Call it once the
// folder is known to be this process's (a fit into a folder that holds
// another run refuses first), before writing anything into it.
func RemoveStaleFit(dir string, started time.Time) ([]string, error) {
	return removeStale(dir, "", fitAtomicFiles, started)
}

// RemoveStaleUnit removes the stale temporaries (see RemoveStaleFit) from
// the part folder of unit u in comparison folder out, and only there:
// tasks of one comparison running side by side each write their own
// units' folders, so none removes another's temporaries. Call it before
// the unit's outputs are written.
func RemoveStaleUnit(out string, u Unit, started time.Time) ([]string, error) {
	rel, err := filepath.Rel(out, u.Dir(out))
	if err != nil {
		return nil, err
	}
	return removeStale(out, rel, partAtomicFiles, started)
}

// RemoveStaleMerge removes the stale temporaries (see RemoveStaleFit) of
// merge's outputs: compare.json and compare.csv in out and the files of
// models/NAME/ for each of models. The names returned are relative to
// out.
func RemoveStaleMerge(out string, models []string, started time.Time) ([]string, error) {
	removed, err := removeStale(out, "", mergeAtomicFiles, started)
	errs := []error{err}
	for _, m := range models {
		rel, rerr := filepath.Rel(out, ModelDir(out, m))
		if rerr != nil {
			errs = append(errs, rerr)
			continue
		}
		r, err := removeStale(out, rel, modelAtomicFiles, started)
		removed = append(removed, r...)
		errs = append(errs, err)
	}
	return removed, errors.Join(errs...)
}

// removeStale removes the temporaries of bases in root/rel and returns
// their names joined to rel.
func removeStale(root, rel string, bases []string, started time.Time) ([]string, error) {
	dir := filepath.Join(root, rel)
	names, err := safeio.RemoveStale(dir, safeio.TempsOf(bases...), started)
	if errors.Is(err, fs.ErrNotExist) {
		if _, serr := os.Stat(dir); errors.Is(serr, fs.ErrNotExist) {
			return nil, nil
		}
	}
	if err != nil {
		err = fmt.Errorf("removing stale temporaries in %s: %w", dir, err)
	}
	if rel != "" && rel != "." {
		for k := range names {
			names[k] = filepath.Join(rel, names[k])
		}
	}
	return names, err
}
