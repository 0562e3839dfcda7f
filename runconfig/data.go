package runconfig

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"slices"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"tautline/chains"
	"tautline/likelihood"
	"tautline/models/registry"
)

// DataList names the data sets of a run, in the order their likelihoods
// are added. One data set is written as a plain string (in YAML and in the
// JSON of meta.json, as before several were possible), several as a list.
type DataList []string

// MarshalYAML writes one data set (or none) as a string, several as a list.
func (d DataList) MarshalYAML() (any, error) {
	if len(d) <= 1 {
		return d.first(), nil
	}
	return []string(d), nil
}

// UnmarshalYAML reads a string or a list of strings.
func (d *DataList) UnmarshalYAML(n *yaml.Node) error {
	switch n.Kind {
	case yaml.ScalarNode:
		if n.Tag == "!!null" {
			*d = nil
			return nil
		}
		*d = DataList{n.Value}
		return nil
	case yaml.SequenceNode:
		out := make(DataList, 0, len(n.Content))
		for k, e := range n.Content {
			if e.Kind != yaml.ScalarNode || e.Tag == "!!null" {
				return fmt.Errorf("line %d: data[%d]: want a data-set path or demo:NAME", e.Line, k)
			}
			out = append(out, e.Value)
		}
		*d = out
		return nil
	}
	return fmt.Errorf("line %d: data: want a data-set path or demo:NAME, or a list of them", n.Line)
}

// MarshalJSON writes one data set (or none) as a string, several as a list.
func (d DataList) MarshalJSON() ([]byte, error) {
	if len(d) <= 1 {
		return json.Marshal(d.first())
	}
	return json.Marshal([]string(d))
}

// UnmarshalJSON reads a string or a list of strings.
func (d *DataList) UnmarshalJSON(b []byte) error {
	var s string
	if err := json.Unmarshal(b, &s); err == nil {
		*d = nil
		if s != "" {
			*d = DataList{s}
		}
		return nil
	}
	var l []string
	if err := json.Unmarshal(b, &l); err != nil {
		return errors.New("data: want a string or a list of strings")
	}
	*d = l
	return nil
}

func (d DataList) first() string {
	if len(d) == 0 {
		return ""
	}
	return d[0]
}

// String joins the data sets with ", ".
func (d DataList) String() string { return strings.Join(d, ", ") }

// AllBins is the key of Bins that applies to every data set without an
// entry of its own.
const AllBins = "*"

// Bins selects frequency bins: it maps a data set, named by its name (the
// name: of its YAML description) or by its 1-based position in Data, to a
// selection in the syntax of likelihood.ParseBins ("1-5", "1,3,7-9",
// "lowest:5"). The key AllBins applies to every data set without an entry
// of its own. In YAML a plain string is the selection of every data set:
//
//	bins: lowest:5
//	bins: {pair-a: "1-10", 2: "lowest:5"}
type Bins map[string]string

// MarshalYAML writes a selection of every data set as a plain string.
func (b Bins) MarshalYAML() (any, error) {
	if v, ok := b[AllBins]; ok && len(b) == 1 {
		return v, nil
	}
	return map[string]string(b), nil
}

// UnmarshalYAML reads a plain string (every data set) or a mapping.
func (b *Bins) UnmarshalYAML(n *yaml.Node) error {
	switch n.Kind {
	case yaml.ScalarNode:
		if n.Tag == "!!null" {
			*b = nil
			return nil
		}
		*b = Bins{AllBins: n.Value}
		return nil
	case yaml.MappingNode:
		out := Bins{}
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			if v.Kind != yaml.ScalarNode {
				return fmt.Errorf("line %d: bins.%s: want a bin selection such as \"1-5\" or \"lowest:5\"", v.Line, k.Value)
			}
			if _, dup := out[k.Value]; dup {
				return fmt.Errorf("line %d: bins: %q is given twice", k.Line, k.Value)
			}
			out[k.Value] = v.Value
		}
		*b = out
		return nil
	}
	return fmt.Errorf("line %d: bins: want a bin selection for every data set, or a mapping from data-set name or position to a selection", n.Line)
}

// SetBins applies one --bins value: SPEC for every data set, or NAME=SPEC
// (NAME a data-set name or 1-based position) for one. A later value for
// the same data set replaces the earlier one.
func (c *Config) SetBins(v string) error {
	key, spec := AllBins, v
	if k, s, ok := strings.Cut(v, "="); ok {
		key, spec = strings.TrimSpace(k), s
		if key == "" || key == AllBins {
			return fmt.Errorf("--bins %q: want SPEC or NAME=SPEC with NAME a data set's name or position", v)
		}
	}
	if strings.TrimSpace(spec) == "" {
		return fmt.Errorf("--bins %q: the selection is empty; write e.g. 1-5, 1,3,7-9 or lowest:5", v)
	}
	if c.Bins == nil {
		c.Bins = Bins{}
	}
	c.Bins[key] = strings.TrimSpace(spec)
	return nil
}

// A Data is one data set of a run as it is used: loaded, and cut to the
// selected bins.
type Data struct {
	// Spec is the data set as Config.Data names it.
	Spec string
	// Set is the data set the likelihood uses (the selection, if any).
	Set *likelihood.Dataset
	// Name and SHA256 are the loaded data set's name and digest (the
	// parent's when bins are selected).
	Name, SHA256 string
	// Bins are the selected bins (1-based, increasing); nil for all.
	Bins []int
}

// A Loader reads the data set a Config.Data entry names.
type Loader func(spec string) (*likelihood.Dataset, error)

// LoadData loads every data set of c with load and applies the bin
// selections of c.Bins. It refuses an empty list, a data set named twice
// (by the same entry, name or digest), a selection for a data set that is
// not there and a malformed selection.
func (c Config) LoadData(load Loader) ([]Data, error) {
	if len(c.Data) == 0 || (len(c.Data) == 1 && c.Data[0] == "") {
		return nil, errors.New("no data set: give one with --data")
	}
	out := make([]Data, len(c.Data))
	for i, spec := range c.Data {
		if k := slices.Index(c.Data[:i], spec); k >= 0 {
			return nil, fmt.Errorf("%w: data set %s is given twice (data sets %d and %d); its likelihood would count twice", registry.ErrUsage, spec, k+1, i+1)
		}
		ds, err := load(spec)
		if err != nil {
			return nil, err
		}
		for k := range i {
			if out[k].Name == ds.Name {
				return nil, fmt.Errorf("%w: data sets %s and %s are both named %q; the same data would count twice (give each data set once, with distinct names)", registry.ErrUsage, out[k].Spec, spec, ds.Name)
			}
			if ds.SHA256 != "" && out[k].SHA256 == ds.SHA256 {
				return nil, fmt.Errorf("%w: data sets %s and %s have the same content (sha256 %s); the same data would count twice", registry.ErrUsage, out[k].Spec, spec, ds.SHA256)
			}
		}
		out[i] = Data{Spec: spec, Set: ds, Name: ds.Name, SHA256: ds.SHA256}
	}
	specs, err := c.binSpecs(out)
	if err != nil {
		return nil, err
	}
	for i, spec := range specs {
		if spec == "" {
			continue
		}
		d := &out[i]
		bins, err := likelihood.ParseBins(spec, len(d.Set.Bins))
		if err != nil {
			return nil, fmt.Errorf("%w: data set %q: %w", registry.ErrUsage, d.Name, err)
		}
		if d.Set, err = d.Set.Select(bins); err != nil {
			return nil, fmt.Errorf("%w: data set %q: %w", registry.ErrUsage, d.Name, err)
		}
		d.Bins = slices.Sorted(slices.Values(bins))
	}
	return out, nil
}

// binSpecs returns the selection of every data set ("" for all bins): its
// own entry in c.Bins, by name or position, else the entry for all.
func (c Config) binSpecs(data []Data) ([]string, error) {
	out := make([]string, len(data))
	own := make([]string, len(data))
	var names []string
	for _, d := range data {
		names = append(names, d.Name)
	}
	keys := slices.Sorted(func(yield func(string) bool) {
		for k := range c.Bins {
			if !yield(k) {
				return
			}
		}
	})
	for _, k := range keys {
		spec := c.Bins[k]
		if k == AllBins {
			continue
		}
		i := slices.Index(names, k)
		if i < 0 {
			n, err := strconv.Atoi(k)
			if err != nil {
				return nil, fmt.Errorf("%w: bin selection %s=%s: no data set is named %q; the data sets are %s (or give a position 1..%d)", registry.ErrUsage, k, spec, k, strings.Join(names, ", "), len(data))
			}
			if n < 1 || n > len(data) {
				return nil, fmt.Errorf("%w: bin selection %s=%s: there is no data set %d; positions run 1..%d", registry.ErrUsage, k, spec, n, len(data))
			}
			i = n - 1
		}
		if own[i] != "" {
			return nil, fmt.Errorf("%w: bin selection: data set %q has two selections (%s and %s=%s); give one", registry.ErrUsage, names[i], own[i], k, spec)
		}
		own[i] = k + "=" + spec
		out[i] = spec
	}
	for i := range out {
		if own[i] == "" {
			out[i] = c.Bins[AllBins]
		}
	}
	return out, nil
}

// DataIdentity is the data of a run as one record, the "data" member of
// meta.json, part.json and compare.json. One data set with every bin is
// recorded as it always was: its name, the path as given, its digest. One
// with selected bins records the selection's name and the file's digest.
// Several are recorded under their names joined by " + " and paths by
// ", ", with the digest of the list of their digests and bins (see
// CombinedDigest).
func DataIdentity(data []Data) chains.DataSet {
	if len(data) == 1 {
		return chains.DataSet{Name: data[0].Set.Name, Path: data[0].Spec, SHA256: data[0].SHA256}
	}
	var names, paths []string
	for _, d := range data {
		names = append(names, d.Set.Name)
		paths = append(paths, d.Spec)
	}
	return chains.DataSet{Name: strings.Join(names, " + "), Path: strings.Join(paths, ", "), SHA256: CombinedDigest(DataRecords(data))}
}

// DataRecords lists every data set of a run (name, path, file digest and
// selected bins), the "datasets" member of the metadata. It is nil for a
// single data set with every bin, whose "data" member says it all, so
// such runs' metadata are as they were before several data sets were
// possible.
func DataRecords(data []Data) []chains.DataSet {
	if len(data) == 1 && data[0].Bins == nil {
		return nil
	}
	out := make([]chains.DataSet, len(data))
	for i, d := range data {
		out[i] = chains.DataSet{Name: d.Name, Path: d.Spec, SHA256: d.SHA256, Bins: d.Bins}
	}
	return out
}

// CombinedDigest is the hex SHA-256 of one line per data set, in order:
// its digest, a space, and its selected bins (comma-separated; "all").
func CombinedDigest(recs []chains.DataSet) string {
	h := sha256.New()
	for _, r := range recs {
		bins := "all"
		if r.Bins != nil {
			var s []string
			for _, b := range r.Bins {
				s = append(s, strconv.Itoa(b))
			}
			bins = strings.Join(s, ",")
		}
		fmt.Fprintf(h, "%s %s\n", r.SHA256, bins)
	}
	return hex.EncodeToString(h.Sum(nil))
}
