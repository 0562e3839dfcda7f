package compare

import (
	"errors"
	"io/fs"
	"path/filepath"
	"strings"
	"time"

	"tautline/internal/safeio"
	"tautline/rundir"
)

// removeStale deletes the temporaries that atomic writes of a killed
// comparison left (".NAME.tmp-*", older than started) in the folders this
// run owns: the part folders of its units and, when it merges (Task < 0),
// the comparison folder and its model folders. Folders of units other
// tasks run are left alone, since those tasks may be writing now. It
// returns the paths removed; a missing folder is no error.
func removeStale(s Settings, units []rundir.Unit, models []string, started time.Time) ([]string, error) {
	type place struct {
		dir   string
		bases []string
	}
	var places []place
	for _, u := range units {
		places = append(places, place{u.Dir(s.Out), []string{rundir.PartFile, rundir.LnLFile, rundir.PosteriorFile}})
	}
	if s.Task < 0 {
		places = append(places, place{s.Out, []string{rundir.CompareFile, rundir.CompareCSVFile}})
		for _, m := range models {
			places = append(places, place{rundir.ModelDir(s.Out, m), []string{rundir.EvidenceFile, rundir.CurveFile, rundir.PosteriorFile}})
		}
	}
	var removed []string
	for _, p := range places {
		names, err := safeio.RemoveStale(p.dir, safeio.TempsOf(p.bases...), started)
		if err != nil && !errors.Is(err, fs.ErrNotExist) {
			return removed, err
		}
		for _, n := range names {
			removed = append(removed, filepath.Join(p.dir, n))
		}
	}
	return removed, nil
}

// logRemoved reports removed temporaries through warnf, if set.
func logRemoved(warnf func(string, ...any), removed []string) {
	if warnf != nil && len(removed) > 0 {
		warnf("removed %d stale temporaries of an interrupted run: %s", len(removed), strings.Join(removed, ", "))
	}
}
