package importer

import (
	"fmt"
	"path/filepath"

	"tautline/likelihood"
)

// Save writes ds into dir as <Name>.yaml with its CSV tables (the format of
// package likelihood; every file written to a temporary file and renamed)
// and loads it back, so that the returned data set carries the digest of
// the files.
func Save(dir string, ds *likelihood.Dataset) (*likelihood.Dataset, error) {
	if err := likelihood.Write(dir, ds.Name, ds); err != nil {
		return nil, fmt.Errorf("importer: %w", err)
	}
	back, err := likelihood.Load(filepath.Join(dir, ds.Name+".yaml"))
	if err != nil {
		return nil, fmt.Errorf("importer: reading back what was written: %w", err)
	}
	return back, nil
}
