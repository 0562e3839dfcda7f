package runconfig

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"slices"
	"strings"
	"testing"

	"tautline/chains"
	"tautline/likelihood"
)

// TestDataListForms: one data set stays a plain string in YAML and JSON
// (so configurations and meta.json of single-data-set runs read as
// before), several are a list; both forms read back.
func TestDataListForms(t *testing.T) {
	cases := []struct {
		name, in string
		want     DataList
		yaml     string
		json     string
	}{
		{"string", "data: demo:smbhb\n", DataList{"demo:smbhb"}, "data: demo:smbhb\n", `"demo:smbhb"`},
		{"one-item list", "data: [demo:smbhb]\n", DataList{"demo:smbhb"}, "data: demo:smbhb\n", `"demo:smbhb"`},
		{"list", "data:\n  - demo:pair-a\n  - b.yaml\n", DataList{"demo:pair-a", "b.yaml"}, "data:\n  - demo:pair-a\n  - b.yaml\n", `["demo:pair-a","b.yaml"]`},
	}
	for _, c := range cases {
		cfg := Default()
		if err := Decode("c.yaml", []byte(c.in), &cfg); err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if !slices.Equal(cfg.Data, c.want) {
			t.Errorf("%s: data %q, want %q", c.name, cfg.Data, c.want)
		}
		if y := Marshal(cfg); !strings.HasPrefix(y, c.yaml) {
			t.Errorf("%s: YAML starts\n%s, want\n%s", c.name, y[:min(len(y), 60)], c.yaml)
		}
		j, err := json.Marshal(cfg.Data)
		if err != nil || string(j) != c.json {
			t.Errorf("%s: JSON %s (%v), want %s", c.name, j, err, c.json)
		}
		var back DataList
		if err := json.Unmarshal(j, &back); err != nil || !slices.Equal(back, c.want) {
			t.Errorf("%s: JSON round trip %q (%v)", c.name, back, err)
		}
	}
	// The default configuration has no data set and renders it as before.
	if y := Marshal(Default()); !strings.HasPrefix(y, "data: \"\"\nmodel:") {
		t.Errorf("default YAML starts %q", y[:30])
	}
}

// TestDecodeBins: bins as a plain string or a mapping by name or position;
// malformed values refused with their line.
func TestDecodeBins(t *testing.T) {
	cases := []struct {
		name, in string
		want     Bins
		err      string
	}{
		{"every data set", "bins: lowest:5\n", Bins{AllBins: "lowest:5"}, ""},
		{"by name and position", "bins:\n  pair-a: 1-5\n  2: '1,3'\n", Bins{"pair-a": "1-5", "2": "1,3"}, ""},
		{"list", "bins:\n  - 1-5\n", nil, "c.yaml: line 2: bins: want a bin selection"},
		{"nested", "bins:\n  pair-a: [1, 2]\n", nil, "c.yaml: line 2: bins.pair-a: want a bin selection"},
		{"data not a string", "data:\n  - {a: 1}\n", nil, "c.yaml: line 2: data[0]: want a data-set path"},
		{"data a mapping", "data: {a: 1}\n", nil, "c.yaml: line 1: data: want a data-set path or demo:NAME, or a list of them"},
	}
	for _, c := range cases {
		cfg := Default()
		err := Decode("c.yaml", []byte(c.in), &cfg)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("%s: error %v, want %q", c.name, err, c.err)
			}
			continue
		}
		if err != nil || fmt.Sprint(cfg.Bins) != fmt.Sprint(c.want) {
			t.Errorf("%s: bins %v (%v), want %v", c.name, cfg.Bins, err, c.want)
		}
	}
}

// memSet is an in-memory data set of n harmonic bins with Gaussian
// summaries.
func memSet(name string, n int, sha string) *likelihood.Dataset {
	ds := &likelihood.Dataset{Name: name, Span: 4e8, PriorMin: -10, PriorMax: -4, SHA256: sha}
	for i := 1; i <= n; i++ {
		ds.Freqs = append(ds.Freqs, float64(i)/ds.Span)
		ds.Bins = append(ds.Bins, likelihood.Bin{Kind: likelihood.Gaussian, Mean: -7, SD: 0.5})
	}
	return ds
}

// TestLoadData: selections land on the data sets the keys name, a data
// set's own entry beats the entry for all, and every refusal says why.
func TestLoadData(t *testing.T) {
	sets := map[string]*likelihood.Dataset{
		"a.yaml": memSet("alder", 20, "aa"), "b.yaml": memSet("birch", 30, "bb"),
		"a2.yaml": memSet("alder", 20, "cc"), "same.yaml": memSet("other", 20, "aa"),
	}
	load := func(s string) (*likelihood.Dataset, error) {
		if ds, ok := sets[s]; ok {
			return ds, nil
		}
		return nil, fmt.Errorf("no %s", s)
	}
	cases := []struct {
		name string
		data DataList
		bins []string
		want [][]int
		err  string
	}{
		{"no bins", DataList{"a.yaml", "b.yaml"}, nil, [][]int{nil, nil}, ""},
		{"all, own by name", DataList{"a.yaml", "b.yaml"}, []string{"lowest:3", "birch=2,4-5"}, [][]int{{1, 2, 3}, {2, 4, 5}}, ""},
		{"own by position", DataList{"a.yaml", "b.yaml"}, []string{"2=1-2"}, [][]int{nil, {1, 2}}, ""},
		{"unknown name", DataList{"a.yaml", "b.yaml"}, []string{"cedar=1-5"}, nil,
			`usage: bin selection cedar=1-5: no data set is named "cedar"; the data sets are alder, birch (or give a position 1..2)`},
		{"position out of range", DataList{"a.yaml"}, []string{"2=1"}, nil, "usage: bin selection 2=1: there is no data set 2; positions run 1..1"},
		{"two selections", DataList{"a.yaml"}, []string{"1=1", "alder=2"}, nil, `usage: bin selection: data set "alder" has two selections (1=1 and alder=2); give one`},
		{"bad spec", DataList{"a.yaml"}, []string{"1-x"}, nil, `usage: data set "alder": likelihood: bin selection "1-x": "1-x" is not a bin number or range`},
		{"too many", DataList{"a.yaml"}, []string{"lowest:21"}, nil, `usage: data set "alder": likelihood: bin selection "lowest:21": the data set has only 20 bins`},
		{"same entry twice", DataList{"a.yaml", "a.yaml"}, nil, nil, "usage: data set a.yaml is given twice (data sets 1 and 2); its likelihood would count twice"},
		{"same name", DataList{"a.yaml", "a2.yaml"}, nil, nil, `usage: data sets a.yaml and a2.yaml are both named "alder"`},
		{"same digest", DataList{"a.yaml", "same.yaml"}, nil, nil, "usage: data sets a.yaml and same.yaml have the same content (sha256 aa)"},
		{"none", nil, nil, nil, "no data set: give one with --data"},
	}
	for _, c := range cases {
		cfg := Default()
		cfg.Data = c.data
		for _, b := range c.bins {
			if err := cfg.SetBins(b); err != nil {
				t.Fatal(err)
			}
		}
		got, err := cfg.LoadData(load)
		if c.err != "" {
			if err == nil || !strings.HasPrefix(err.Error(), c.err) {
				t.Errorf("%s: error %v, want %q", c.name, err, c.err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		for i, d := range got {
			if !slices.Equal(d.Bins, c.want[i]) {
				t.Errorf("%s: data set %d: bins %v, want %v", c.name, i+1, d.Bins, c.want[i])
			}
			if n := len(d.Set.Freqs); c.want[i] != nil && n != len(c.want[i]) {
				t.Errorf("%s: data set %d: %d frequencies for %d bins", c.name, i+1, n, len(c.want[i]))
			}
			if d.SHA256 != sets[d.Spec].SHA256 {
				t.Errorf("%s: data set %d records digest %q, want the file's %q", c.name, i+1, d.SHA256, sets[d.Spec].SHA256)
			}
		}
	}
}

// TestDataIdentity: one whole data set keeps the record it always had;
// several get the digest of their digest lines, recomputed here with
// crypto/sha256 from the definition in CombinedDigest's comment.
func TestDataIdentity(t *testing.T) {
	a := Data{Spec: "a.yaml", Set: memSet("alder", 3, "aa"), Name: "alder", SHA256: "aa"}
	if got := DataIdentity([]Data{a}); fmt.Sprint(got) != fmt.Sprint(chains.DataSet{Name: "alder", Path: "a.yaml", SHA256: "aa"}) {
		t.Errorf("one data set: %+v", got)
	}
	if DataRecords([]Data{a}) != nil {
		t.Error("one whole data set: want no datasets list")
	}
	sel, err := a.Set.Select([]int{1, 2})
	if err != nil {
		t.Fatal(err)
	}
	b := Data{Spec: "b.yaml", Set: sel, Name: "birch", SHA256: "bb", Bins: []int{1, 2}}
	sum := sha256.Sum256([]byte("aa all\nbb 1,2\n"))
	got := DataIdentity([]Data{a, b})
	want := chains.DataSet{Name: "alder + alder[bins 1-2]", Path: "a.yaml, b.yaml", SHA256: hex.EncodeToString(sum[:])}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("two data sets: %+v, want %+v", got, want)
	}
	recs := DataRecords([]Data{b})
	if len(recs) != 1 || recs[0].SHA256 != "bb" || !slices.Equal(recs[0].Bins, []int{1, 2}) {
		t.Errorf("one data set with bins: records %+v, want the file's digest and the bins", recs)
	}
}
