package likelihood

import (
	"slices"
	"testing"
)

func TestSelect(t *testing.T) {
	ds := gaussData(6)
	ds.Provenance = "invented"
	ds.SHA256 = "feed"
	for _, c := range []struct {
		bins      []int
		name      string
		irregular bool
	}{
		{[]int{3, 1, 2}, "g[bins 1-3]", false},
		{[]int{2, 5, 6}, "g[bins 2,5-6]", true},
		{[]int{6}, "g[bins 6]", true},
	} {
		s, err := ds.Select(c.bins)
		if err != nil {
			t.Fatalf("%v: %v", c.bins, err)
		}
		if s.Name != c.name || s.Irregular != c.irregular || s.SHA256 != "" {
			t.Errorf("%v: name %q irregular %v digest %q, want %q %v empty", c.bins, s.Name, s.Irregular, s.SHA256, c.name, c.irregular)
		}
		want := "invented; bins " + c.name[len("g[bins "):len(c.name)-1] + ` of the 6 bins of data set "g" (sha256 feed)`
		if s.Provenance != want {
			t.Errorf("%v: provenance %q, want %q", c.bins, s.Provenance, want)
		}
		sorted := slices.Sorted(slices.Values(c.bins))
		for k, b := range sorted {
			if s.Freqs[k] != ds.Freqs[b-1] || s.Bins[k].Mean != ds.Bins[b-1].Mean {
				t.Errorf("%v: bin %d is not bin %d of the parent", c.bins, k+1, b)
			}
		}
		if err := s.Validate(); err != nil {
			t.Errorf("%v: selection does not validate: %v", c.bins, err)
		}
	}
	// The copy shares no memory with the parent.
	sd := &Dataset{Name: "s", Span: 1e8, Freqs: []float64{1e-8}, PriorMin: -9, PriorMax: -5, Bins: []Bin{{Kind: Samples, Samples: []float64{-7, -6}}}}
	c, err := sd.Select([]int{1})
	if err != nil {
		t.Fatal(err)
	}
	c.Bins[0].Samples[0] = 0
	if sd.Bins[0].Samples[0] != -7 {
		t.Error("Select shares sample memory with its parent")
	}
	low, err := ds.SelectLowest(4)
	if err != nil || low.Name != "g[bins 1-4]" || len(low.Bins) != 4 {
		t.Errorf("SelectLowest(4) = %v, %v", low, err)
	}
}

func TestSelectRefuses(t *testing.T) {
	ds := gaussData(6)
	for _, c := range []struct {
		bins []int
		want string
	}{
		{nil, `likelihood: data set "g": bin selection is empty; name at least one of the bins 1..6`},
		{[]int{1, 7}, `likelihood: data set "g": bin selection: entry 2: bin 7 does not exist; the data set has bins 1..6`},
		{[]int{0}, `likelihood: data set "g": bin selection: entry 1: bin 0 does not exist; the data set has bins 1..6`},
		{[]int{2, 3, 2}, `likelihood: data set "g": bin selection: bin 2 is named twice`},
	} {
		_, err := ds.Select(c.bins)
		if err == nil || err.Error() != c.want {
			t.Errorf("Select(%v): got %v\nwant %s", c.bins, err, c.want)
		}
	}
	if _, err := ds.SelectLowest(7); err == nil || err.Error() != `likelihood: data set "g": lowest 7 bins: need 1..6` {
		t.Errorf("SelectLowest(7): %v", err)
	}
}

func TestParseBins(t *testing.T) {
	for _, c := range []struct {
		in   string
		want []int
		err  string
	}{
		{"1-5", []int{1, 2, 3, 4, 5}, ""},
		{"1, 3,7-9", []int{1, 3, 7, 8, 9}, ""},
		{"lowest:3", []int{1, 2, 3}, ""},
		{"", nil, `likelihood: bin selection is empty; write e.g. "1-5", "1,3,7-9" or "lowest:5"`},
		{"lowest:x", nil, `likelihood: bin selection "lowest:x": lowest: needs a whole number >= 1`},
		{"lowest:11", nil, `likelihood: bin selection "lowest:11": the data set has only 10 bins`},
		{"1,a", nil, `likelihood: bin selection "1,a": "a" is not a bin number or range`},
		{"5-3", nil, `likelihood: bin selection "5-3": range "5-3" runs backwards`},
		{"8-12", nil, `likelihood: bin selection "8-12": "8-12" reaches outside the bins 1..10`},
		{"0", nil, `likelihood: bin selection "0": "0" reaches outside the bins 1..10`},
	} {
		got, err := ParseBins(c.in, 10)
		if c.err != "" {
			if err == nil || err.Error() != c.err {
				t.Errorf("ParseBins(%q): got %v\nwant %s", c.in, err, c.err)
			}
			continue
		}
		if err != nil || !slices.Equal(got, c.want) {
			t.Errorf("ParseBins(%q) = %v, %v; want %v", c.in, got, err, c.want)
		}
	}
}
