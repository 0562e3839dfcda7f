package likelihood

import (
	"bytes"
	"fmt"
	"path/filepath"
	"strconv"

	"tautline/internal/atomicfile"
)

// Write stores ds in dir as name.yaml plus one table per representation in
// use (name-samples.csv, name-grid.csv, name-gaussian.csv). Each file is
// written to a temporary file in dir, synced and renamed into place (keeping
// the mode of a file it replaces, else 0644), tables first,
// so a description never names a missing table. Numbers are written with
// the shortest representation that reads back exactly, so Load(Write(ds))
// reproduces ds. Frequencies are written as the harmonics rule when they are
// exactly i/T, else listed.
func Write(dir, name string, ds *Dataset) error {
	if ds == nil {
		return fmt.Errorf("likelihood: write %s: nil data set", name)
	}
	if name == "" || filepath.Base(name) != name {
		return fmt.Errorf("likelihood: write: file base name must be a plain name, got %q", name)
	}
	if err := ds.Validate(); err != nil {
		return fmt.Errorf("likelihood: write %s: %w", name, err)
	}
	g := strconv.FormatFloat
	num := func(x float64) string { return g(x, 'g', -1, 64) }
	var tab [3]bytes.Buffer
	tab[Samples].WriteString("bin,log10_rho\n")
	tab[Grid].WriteString("bin,log10_rho,density\n")
	tab[Gaussian].WriteString("bin,mean,sd\n")
	var used [3]bool
	for i, b := range ds.Bins {
		used[b.Kind] = true
		w := &tab[b.Kind]
		bin := strconv.Itoa(i + 1)
		switch b.Kind {
		case Samples:
			for _, x := range b.Samples {
				fmt.Fprintf(w, "%s,%s\n", bin, num(x))
			}
		case Grid:
			for k, x := range b.Grid {
				fmt.Fprintf(w, "%s,%s,%s\n", bin, num(x), num(b.Density[k]))
			}
		case Gaussian:
			fmt.Fprintf(w, "%s,%s,%s\n", bin, num(b.Mean), num(b.SD))
		}
	}

	var y bytes.Buffer
	y.WriteString("# tautline free-spectrum data set (see FORMAT.md of package likelihood)\n")
	fmt.Fprintf(&y, "name: %s\n", strconv.Quote(ds.Name))
	fmt.Fprintf(&y, "provenance: %s\n", strconv.Quote(ds.Provenance))
	fmt.Fprintf(&y, "span_seconds: %s\n", num(ds.Span))
	y.WriteString("frequencies:\n")
	harm := !ds.Irregular
	for i, f := range ds.Freqs {
		if f != float64(i+1)/ds.Span {
			harm = false
		}
	}
	if harm {
		fmt.Fprintf(&y, "  harmonics: %d  # f_i = i/T, i = 1..%d\n", len(ds.Freqs), len(ds.Freqs))
	} else {
		y.WriteString("  hz:\n")
		for _, f := range ds.Freqs {
			fmt.Fprintf(&y, "    - %s\n", num(f))
		}
		if ds.Irregular {
			y.WriteString("  irregular: true\n")
		}
	}
	fmt.Fprintf(&y, "log10_rho_prior: [%s, %s]\n", num(ds.PriorMin), num(ds.PriorMax))
	y.WriteString("tables:\n")
	for k := Samples; k <= Gaussian; k++ {
		if !used[k] {
			continue
		}
		file := name + "-" + k.String() + ".csv"
		fmt.Fprintf(&y, "  %s: %s\n", k, strconv.Quote(file))
		if err := writeAtomic(filepath.Join(dir, file), tab[k].Bytes()); err != nil {
			return err
		}
	}
	return writeAtomic(filepath.Join(dir, name+".yaml"), y.Bytes())
}

// writeAtomic writes data to path through a temporary file and a rename.
func writeAtomic(path string, data []byte) error {
	if err := atomicfile.WriteFile(path, data); err != nil {
		return fmt.Errorf("likelihood: write %w", err)
	}
	return nil
}
