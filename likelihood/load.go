package likelihood

import (
	"bytes"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"path"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"tautline/internal/numeric"
	"tautline/internal/safeio"
	"tautline/models/gw"
)

// rawDesc mirrors the description file. Leaves are kept as nodes so that
// every value can be checked with its line; KnownFields rejects unknown keys.
type rawDesc struct {
	Name        yaml.Node `yaml:"name"`
	Provenance  yaml.Node `yaml:"provenance"`
	SpanSeconds yaml.Node `yaml:"span_seconds"`
	SpanYears   yaml.Node `yaml:"span_years"`
	Frequencies rawFreqs  `yaml:"frequencies"`
	Prior       yaml.Node `yaml:"log10_rho_prior"`
	Tables      rawTables `yaml:"tables"`
}

type rawFreqs struct {
	Harmonics yaml.Node `yaml:"harmonics"`
	Hz        yaml.Node `yaml:"hz"`
	Irregular yaml.Node `yaml:"irregular"`
}

type rawTables struct {
	Samples  yaml.Node `yaml:"samples"`
	Grid     yaml.Node `yaml:"grid"`
	Gaussian yaml.Node `yaml:"gaussian"`
}

// Known keys, for messages about unknown ones.
var keySets = map[string]struct{ prefix, known string }{
	"likelihood.rawDesc":   {"", "name, provenance, span_seconds, span_years, frequencies, log10_rho_prior, tables"},
	"likelihood.rawFreqs":  {"frequencies.", "harmonics, hz, irregular"},
	"likelihood.rawTables": {"tables.", "samples, grid, gaussian"},
}

var unknownField = regexp.MustCompile(`^line (\d+): field (.*) not found in type (\S+)$`)

// utf8BOM is the UTF-8 encoding of U+FEFF, the byte-order mark.
var utf8BOM = []byte("\xef\xbb\xbf")

// Table headers of the three representations.
var (
	headerSamples  = []string{"bin", "log10_rho"}
	headerGrid     = []string{"bin", "log10_rho", "density"}
	headerGaussian = []string{"bin", "mean", "sd"}
)

// Load reads the data set described by the YAML file at path; table paths in
// it are resolved against the file's directory.
//
// Only regular files are read (a named pipe or a device such as /dev/zero
// is refused without being opened for long), the description up to
// safeio.LimitDescription bytes and each table up to safeio.LimitTable.
func Load(path string) (*Dataset, error) {
	data, err := safeio.ReadFile(path, safeio.LimitDescription)
	if err != nil {
		return nil, fmt.Errorf("likelihood: %w", err)
	}
	dir := filepath.Dir(path)
	read := func(rel string) (string, []byte, error) {
		p := rel
		if !filepath.IsAbs(p) {
			p = filepath.Join(dir, filepath.FromSlash(rel))
		}
		b, err := safeio.ReadFile(p, safeio.LimitTable)
		return p, b, err
	}
	return parse(path, data, read)
}

// LoadFS is Load reading from fsys; path and the table paths use forward
// slashes, tables relative to the description's directory. The same file
// types and size limits as Load's apply.
func LoadFS(fsys fs.FS, name string) (*Dataset, error) {
	data, err := safeio.ReadFileFS(fsys, name, safeio.LimitDescription)
	if err != nil {
		return nil, fmt.Errorf("likelihood: %w", err)
	}
	dir := path.Dir(name)
	read := func(rel string) (string, []byte, error) {
		p := path.Join(dir, rel)
		b, err := safeio.ReadFileFS(fsys, p, safeio.LimitTable)
		return p, b, err
	}
	return parse(name, data, read)
}

// parser holds the state of one Load.
type parser struct {
	name string // description file as shown in messages
	n    int    // number of bins
	lo   float64
	hi   float64
	prLn int // line of the prior range
	bins []binAcc
	// warns are the doubtful inputs accepted, for Dataset.Warnings.
	warns []string
}

// binAcc accumulates one bin's rows.
type binAcc struct {
	set     bool
	kind    Representation
	file    string
	line    int // first row
	ended   bool
	samples []float64
	grid    []float64
	dens    []float64
	mean    float64
	sd      float64
}

func (p *parser) errf(line int, key, format string, a ...any) error {
	if line > 0 {
		return fmt.Errorf("likelihood: %s: line %d: %s: %s", p.name, line, key, fmt.Sprintf(format, a...))
	}
	return fmt.Errorf("likelihood: %s: %s: %s", p.name, key, fmt.Sprintf(format, a...))
}

// parse decodes and validates a description and its tables; read returns
// the display name and bytes of a table path.
func parse(name string, data []byte, read func(string) (string, []byte, error)) (ds *Dataset, err error) {
	defer func() {
		// yaml.v3 has panicked on some malformed inputs in the past; bad
		// input must produce an error, never a crash.
		if r := recover(); r != nil {
			ds, err = nil, fmt.Errorf("likelihood: %s: malformed YAML (%v)", name, r)
		}
	}()
	p := &parser{name: name}
	var raw rawDesc
	if err := p.decode(data, &raw); err != nil {
		return nil, err
	}
	ds = &Dataset{Path: name}

	if ds.Name, err = p.str(&raw.Name, "name", true); err != nil {
		return nil, err
	}
	if ds.Provenance, err = p.str(&raw.Provenance, "provenance", true); err != nil {
		return nil, err
	}
	if err := p.span(&raw, ds); err != nil {
		return nil, err
	}
	if err := p.freqs(&raw.Frequencies, ds); err != nil {
		return nil, err
	}
	if err := p.prior(&raw.Prior, ds); err != nil {
		return nil, err
	}

	h := sha256.New()
	h.Write(data)
	p.bins = make([]binAcc, p.n)
	tables := []struct {
		node   *yaml.Node
		key    string
		kind   Representation
		header []string
	}{
		{&raw.Tables.Samples, "tables.samples", Samples, headerSamples},
		{&raw.Tables.Grid, "tables.grid", Grid, headerGrid},
		{&raw.Tables.Gaussian, "tables.gaussian", Gaussian, headerGaussian},
	}
	found := false
	for _, t := range tables {
		if t.node.Kind == 0 {
			continue
		}
		rel, err := p.str(t.node, t.key, true)
		if err != nil {
			return nil, err
		}
		disp, b, err := read(rel)
		if err != nil {
			return nil, fmt.Errorf("likelihood: %s: line %d: %s: cannot read table %q: %w", name, t.node.Line, t.key, rel, err)
		}
		h.Write(b)
		if err := p.table(disp, b, t.kind, t.header); err != nil {
			return nil, err
		}
		found = true
	}
	if !found {
		return nil, fmt.Errorf("likelihood: %s: tables: name at least one of tables.samples, tables.grid, tables.gaussian", name)
	}
	ds.Bins = make([]Bin, p.n)
	for i := range p.bins {
		a := &p.bins[i]
		if !a.set {
			return nil, fmt.Errorf("likelihood: %s: bin %d (%g Hz) appears in none of the tables", name, i+1, ds.Freqs[i])
		}
		ds.Bins[i] = Bin{Kind: a.kind, Samples: a.samples, Grid: a.grid, Density: a.dens, Mean: a.mean, SD: a.sd}
	}
	ds.SHA256 = hex.EncodeToString(h.Sum(nil))
	ds.Warnings = p.warns
	return ds, nil
}

// decode checks the document's shape and decodes it with KnownFields.
func (p *parser) decode(data []byte, raw *rawDesc) error {
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		return fmt.Errorf("likelihood: %s: %s", p.name, strings.TrimPrefix(err.Error(), "yaml: "))
	}
	if doc.Kind != yaml.DocumentNode || len(doc.Content) == 0 {
		return fmt.Errorf("likelihood: %s: empty description; expected a mapping with keys name, provenance, span_seconds or span_years, frequencies, log10_rho_prior, tables", p.name)
	}
	root := doc.Content[0]
	if root.Kind != yaml.MappingNode {
		return fmt.Errorf("likelihood: %s: line %d: the description must be a mapping of keys to values", p.name, root.Line)
	}
	for k := 0; k+1 < len(root.Content); k += 2 {
		key, val := root.Content[k], root.Content[k+1]
		if (key.Value == "frequencies" || key.Value == "tables") && val.Kind != yaml.MappingNode {
			return p.errf(val.Line, key.Value, "must be a mapping")
		}
	}
	dec := yaml.NewDecoder(bytes.NewReader(data))
	dec.KnownFields(true)
	err := dec.Decode(raw)
	if err == nil || errors.Is(err, io.EOF) {
		return nil
	}
	var te *yaml.TypeError
	if errors.As(err, &te) && len(te.Errors) > 0 {
		msg := te.Errors[0]
		if m := unknownField.FindStringSubmatch(msg); m != nil {
			line, _ := strconv.Atoi(m[1])
			ks := keySets[m[3]]
			return fmt.Errorf("likelihood: %s: line %d: unknown key %q (known keys: %s)", p.name, line, ks.prefix+m[2], ks.known)
		}
		return fmt.Errorf("likelihood: %s: %s", p.name, msg)
	}
	return fmt.Errorf("likelihood: %s: %s", p.name, strings.TrimPrefix(err.Error(), "yaml: "))
}

func (p *parser) str(n *yaml.Node, key string, required bool) (string, error) {
	if n.Kind == 0 {
		if required {
			return "", p.errf(0, key, "missing; it is required")
		}
		return "", nil
	}
	if n.Kind != yaml.ScalarNode || n.Tag == "!!null" || strings.TrimSpace(n.Value) == "" {
		return "", p.errf(n.Line, key, "must be a non-empty string")
	}
	return n.Value, nil
}

// float reads a finite number.
func (p *parser) float(n *yaml.Node, key string) (float64, error) {
	if n.Kind != yaml.ScalarNode || n.Tag == "!!null" {
		return 0, p.errf(n.Line, key, "must be a number")
	}
	if strings.Contains(n.Value, "_") {
		// yaml.v3 drops "_" between digits as YAML 1.1 did, where YAML
		// 1.2 and most other readers take the scalar for a string: refuse
		// a number whose value depends on the reader.
		return 0, p.errf(n.Line, key, "must be a number, got %q: YAML readers disagree on \"_\" between digits (YAML 1.1 drops it, YAML 1.2 reads a string); write %s", n.Value, strings.ReplaceAll(n.Value, "_", ""))
	}
	var v float64
	if err := n.Decode(&v); err != nil {
		var perr error
		v, perr = strconv.ParseFloat(strings.TrimSpace(n.Value), 64)
		if perr != nil {
			return 0, p.errf(n.Line, key, "must be a number, got %q", n.Value)
		}
	}
	if !numeric.Finite(v) {
		return 0, p.errf(n.Line, key, "must be finite, got %g", v)
	}
	return v, nil
}

func (p *parser) span(raw *rawDesc, ds *Dataset) error {
	s, y := &raw.SpanSeconds, &raw.SpanYears
	switch {
	case s.Kind != 0 && y.Kind != 0:
		return p.errf(y.Line, "span_years", "give the span once, as span_seconds or span_years, not both")
	case s.Kind == 0 && y.Kind == 0:
		return p.errf(0, "span_seconds", "missing; give the time span as span_seconds or span_years")
	}
	key, n, unit := "span_seconds", s, 1.0
	if y.Kind != 0 {
		key, n, unit = "span_years", y, gw.JulianYear
	}
	v, err := p.float(n, key)
	if err != nil {
		return err
	}
	if v <= 0 {
		return p.errf(n.Line, key, "must be > 0, got %g", v)
	}
	if t := v * unit; !(t >= MinSpan && t <= MaxSpan) {
		if y.Kind != 0 {
			return p.errf(n.Line, key, "%g yr is outside the supported range [%.4g yr (1 day), %g yr]", v, MinSpan/unit, MaxSpan/unit)
		}
		return p.errf(n.Line, key, "%g s is outside the supported range [%g s (1 day), %g s (1000 yr)]", v, MinSpan, MaxSpan)
	}
	ds.Span = v * unit
	return nil
}

func (p *parser) freqs(raw *rawFreqs, ds *Dataset) error {
	if raw.Irregular.Kind != 0 {
		if raw.Irregular.Kind != yaml.ScalarNode || raw.Irregular.Decode(&ds.Irregular) != nil {
			return p.errf(raw.Irregular.Line, "frequencies.irregular", "must be true or false, got %q", raw.Irregular.Value)
		}
	}
	h, l := &raw.Harmonics, &raw.Hz
	switch {
	case h.Kind != 0 && l.Kind != 0:
		return p.errf(l.Line, "frequencies.hz", "give either frequencies.harmonics or frequencies.hz, not both")
	case h.Kind == 0 && l.Kind == 0:
		return p.errf(0, "frequencies", "missing; give frequencies.harmonics (f_i = i/T) or list frequencies.hz")
	case h.Kind != 0:
		if ds.Irregular {
			return p.errf(raw.Irregular.Line, "frequencies.irregular", "irregular frequencies must be listed in frequencies.hz")
		}
		n, err := strconv.Atoi(strings.TrimSpace(h.Value))
		if h.Kind != yaml.ScalarNode || err != nil || n < 1 {
			return p.errf(h.Line, "frequencies.harmonics", "must be an integer >= 1, got %q", h.Value)
		}
		const maxBins = 1 << 16
		if n > maxBins {
			return p.errf(h.Line, "frequencies.harmonics", "%d bins is more than the %d supported", n, maxBins)
		}
		ds.Freqs = make([]float64, n)
		for i := range ds.Freqs {
			ds.Freqs[i] = float64(i+1) / ds.Span
		}
	default:
		if l.Kind != yaml.SequenceNode || len(l.Content) == 0 {
			return p.errf(l.Line, "frequencies.hz", "must be a non-empty list of frequencies in Hz")
		}
		ds.Freqs = make([]float64, len(l.Content))
		for i, e := range l.Content {
			key := fmt.Sprintf("frequencies.hz[%d] (bin %d)", i, i+1)
			v, err := p.float(e, key)
			if err != nil {
				return err
			}
			ds.Freqs[i] = v
			if msg := checkFreq(ds.Freqs, i, ds.Span, ds.Irregular); msg != "" {
				return p.errf(e.Line, key, "%s", msg)
			}
		}
	}
	p.n = len(ds.Freqs)
	return nil
}

func (p *parser) prior(n *yaml.Node, ds *Dataset) error {
	const key = "log10_rho_prior"
	if n.Kind == 0 {
		return p.errf(0, key, "missing; give the uniform prior range of log10 rho as [lo, hi]")
	}
	if n.Kind != yaml.SequenceNode || len(n.Content) != 2 {
		return p.errf(n.Line, key, "must be a list [lo, hi]")
	}
	lo, err := p.float(n.Content[0], key+"[0]")
	if err != nil {
		return err
	}
	hi, err := p.float(n.Content[1], key+"[1]")
	if err != nil {
		return err
	}
	if lo >= hi {
		return p.errf(n.Line, key, "lo must be below hi, got [%g, %g]", lo, hi)
	}
	if msg := checkPriorWidth(lo, hi); msg != "" {
		return p.errf(n.Line, key, "%s", msg)
	}
	ds.PriorMin, ds.PriorMax = lo, hi
	p.lo, p.hi, p.prLn = lo, hi, n.Line
	return nil
}

// table reads one CSV table into the bin accumulators.
func (p *parser) table(file string, data []byte, kind Representation, header []string) error {
	errf := func(line int, format string, a ...any) error {
		return fmt.Errorf("likelihood: %s: line %d: %s", file, line, fmt.Sprintf(format, a...))
	}
	// A byte-order mark, which some spreadsheet programs write before the
	// header, is no part of the first field.
	r := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(data, utf8BOM)))
	r.Comment = '#'
	r.TrimLeadingSpace = true
	r.FieldsPerRecord = len(header)
	r.ReuseRecord = true
	parseErr := func(err error) error {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			if errors.Is(pe.Err, csv.ErrFieldCount) {
				return errf(pe.Line, "expected %d fields (%s)", len(header), strings.Join(header, ","))
			}
			return errf(pe.Line, "%v", pe.Err)
		}
		return fmt.Errorf("likelihood: %s: %w", file, err)
	}
	want := strings.Join(header, ",")
	rec, err := r.Read()
	if err == io.EOF {
		return fmt.Errorf("likelihood: %s: empty table; the first row must be the header %q", file, want)
	}
	if err != nil {
		var pe *csv.ParseError
		if errors.As(err, &pe) && errors.Is(pe.Err, csv.ErrFieldCount) {
			return errf(pe.Line, "header must be %q", want)
		}
		return parseErr(err)
	}
	for k := range rec {
		if strings.TrimSpace(rec[k]) != header[k] {
			line, _ := r.FieldPos(0)
			return errf(line, "header must be %q, got %q", want, strings.Join(rec, ","))
		}
	}
	cur := -1 // bin of the previous row
	var order []int
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return parseErr(err)
		}
		line, _ := r.FieldPos(0)
		b, err := strconv.Atoi(strings.TrimSpace(rec[0]))
		if err != nil || b < 1 {
			return errf(line, "bin: must be an integer >= 1, got %q", rec[0])
		}
		if b > p.n {
			return errf(line, "bin: %d exceeds the %d bins declared in %s", b, p.n, p.name)
		}
		vals := [2]float64{}
		for k := 1; k < len(rec); k++ {
			v, err := strconv.ParseFloat(strings.TrimSpace(rec[k]), 64)
			if err != nil {
				return errf(line, "%s: must be a number, got %q", header[k], rec[k])
			}
			if !numeric.Finite(v) {
				return errf(line, "%s: must be finite, got %g", header[k], v)
			}
			vals[k-1] = v
		}
		a := &p.bins[b-1]
		if b-1 != cur {
			if cur >= 0 {
				p.bins[cur].ended = true
			}
			cur = b - 1
			switch {
			case a.set && a.file != file:
				return errf(line, "bin %d: already given in %s line %d; each bin takes one representation", b, a.file, a.line)
			case a.set && kind == Gaussian:
				return errf(line, "bin %d: already given on line %d", b, a.line)
			case a.set:
				return errf(line, "bin %d: rows of a bin must be contiguous, but this bin already had rows from line %d", b, a.line)
			}
			*a = binAcc{set: true, kind: kind, file: file, line: line}
			order = append(order, b-1)
		} else if kind == Gaussian {
			return errf(line, "bin %d: already given on line %d", b, a.line)
		}
		x := vals[0]
		col := header[1]
		if x < p.lo || x > p.hi {
			return errf(line, "%s: %g lies outside the prior range [%g, %g] (log10_rho_prior, %s line %d)", col, x, p.lo, p.hi, p.name, p.prLn)
		}
		switch kind {
		case Samples:
			a.samples = append(a.samples, x)
		case Grid:
			d := vals[1]
			if d < 0 {
				return errf(line, "density: must be >= 0, got %g", d)
			}
			if n := len(a.grid); n > 0 && x <= a.grid[n-1] {
				return errf(line, "log10_rho: the grid of bin %d must be strictly increasing, got %g after %g", b, x, a.grid[n-1])
			}
			a.grid = append(a.grid, x)
			a.dens = append(a.dens, d)
		case Gaussian:
			if vals[1] <= 0 {
				return errf(line, "sd: must be > 0, got %g", vals[1])
			}
			a.mean, a.sd = x, vals[1]
		}
	}
	if len(order) == 0 {
		return fmt.Errorf("likelihood: %s: no rows after the header", file)
	}
	for _, i := range order {
		a := &p.bins[i]
		switch kind {
		case Samples:
			if len(a.samples) < MinSamples {
				return errf(a.line, "bin %d: %d samples, need at least %d", i+1, len(a.samples), MinSamples)
			}
			if spread(a.samples) <= 0 {
				return errf(a.line, "bin %d: all samples are equal; no density can be estimated", i+1)
			}
			if msg := checkSpread(a.samples, p.lo, p.hi); msg != "" {
				return errf(a.line, "bin %d: %s (log10_rho_prior, %s line %d)", i+1, msg, p.name, p.prLn)
			}
		case Grid:
			if len(a.grid) < 2 {
				return errf(a.line, "bin %d: the grid needs at least 2 points, got %d", i+1, len(a.grid))
			}
			if gridCDF(a.grid, a.dens) == nil {
				return errf(a.line, "bin %d: the density has no positive mass", i+1)
			}
			if len(a.grid) == 2 {
				p.warns = append(p.warns, fmt.Sprintf("%s: line %d: bin %d: the grid has only 2 points, so its log density is taken as a straight line between them; check that the table is complete", file, a.line, i+1))
			}
		}
	}
	return nil
}
