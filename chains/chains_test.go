package chains

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"
	"time"
)

func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.txt")
	write := func(s string) func(io.Writer) error {
		return func(w io.Writer) error { _, err := io.WriteString(w, s); return err }
	}
	if err := WriteFileAtomic(p, write("first\n")); err != nil {
		t.Fatal(err)
	}
	if err := os.Chmod(p, 0o600); err != nil {
		t.Fatal(err)
	}
	if err := WriteFileAtomic(p, write("second\n")); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(p); string(b) != "second\n" {
		t.Errorf("content %q, want second", b)
	}
	if st, _ := os.Stat(p); st.Mode().Perm() != 0o600 {
		t.Errorf("mode %v, want the replaced file's 0600", st.Mode().Perm())
	}
	// A failing writer leaves the old file and no temporary behind.
	boom := errors.New("boom")
	err := WriteFileAtomic(p, func(w io.Writer) error {
		io.WriteString(w, "partial")
		return boom
	})
	if !errors.Is(err, boom) || !strings.HasPrefix(err.Error(), "chains: ") {
		t.Errorf("error %v, want wrapped boom", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "second\n" {
		t.Errorf("after failed write: content %q", b)
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("directory holds %d entries after a failed write, want 1", len(ents))
	}
	if err := WriteFileAtomic(filepath.Join(dir, "no", "such", "dir"), write("x")); err == nil {
		t.Error("write into a missing directory succeeded")
	}
}

var cols = []string{"step", "walker", "ln_post", "ln_like", "log10_A", "gamma"}

func row(step, walker int) []float64 {
	x := float64(step*7 + walker)
	return []float64{float64(step), float64(walker), -0.1 * x, math.Sqrt(x), -15 + 1/(x+3), 13.0 / 3}
}

// TestFormat checks the bytes against the documented shortest round-trip
// 'g' formatting of strconv (Go standard library documentation: precision
// -1 uses the smallest number of digits necessary to represent the value
// uniquely; exponent when it is < -4 or >= 21 digits).
func TestFormat(t *testing.T) {
	p := filepath.Join(t.TempDir(), "c.csv")
	w, err := Create(p, []string{"a", "b", "c", "d"})
	if err != nil {
		t.Fatal(err)
	}
	rows := [][]float64{
		{0.1, 3, math.Copysign(0, -1), 1e21},
		{1e-5, 123456789, math.Inf(1), math.NaN()},
		{math.Inf(-1), 2.5e-300, 1.0 / 3, 100},
	}
	for _, r := range rows {
		if err := w.Append(r); err != nil {
			t.Fatal(err)
		}
	}
	off, err := w.Flush()
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	want := "# a,b,c,d\n" +
		"0.1,3,-0,1e+21\n" +
		"1e-05,1.23456789e+08,+Inf,NaN\n" +
		"-Inf,2.5e-300,0.3333333333333333,100\n"
	b, _ := os.ReadFile(p)
	if string(b) != want {
		t.Errorf("file:\n%s\nwant:\n%s", b, want)
	}
	if off != int64(len(want)) {
		t.Errorf("Flush offset %d, file length %d", off, len(want))
	}
	gotCols, got, err := ReadCSV(p)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(gotCols, []string{"a", "b", "c", "d"}) || !sameRows(got, rows) {
		t.Errorf("read back %v %v", gotCols, got)
	}
}

// sameRows compares bit patterns, treating all NaNs as equal.
func sameRows(a, b [][]float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if len(a[i]) != len(b[i]) {
			return false
		}
		for j := range a[i] {
			x, y := a[i][j], b[i][j]
			if math.Float64bits(x) != math.Float64bits(y) && !(math.IsNaN(x) && math.IsNaN(y)) {
				return false
			}
		}
	}
	return true
}

// TestResume: a run killed after a checkpoint, with unflushed rows and a
// torn last line on disk, resumes from the checkpoint offset and ends
// byte-identical to an uninterrupted run.
func TestResume(t *testing.T) {
	dir := t.TempDir()
	const steps, walkers, checkpoint = 30, 4, 17

	whole := filepath.Join(dir, "whole.csv")
	w, err := Create(whole, cols)
	if err != nil {
		t.Fatal(err)
	}
	for s := range steps {
		for k := range walkers {
			if err := w.Append(row(s, k)); err != nil {
				t.Fatal(err)
			}
		}
		if s%5 == 4 {
			if _, err := w.Flush(); err != nil {
				t.Fatal(err)
			}
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}

	cut := filepath.Join(dir, "cut.csv")
	w, err = Create(cut, cols)
	if err != nil {
		t.Fatal(err)
	}
	var off int64
	for s := range checkpoint + 3 {
		for k := range walkers {
			if err := w.Append(row(s, k)); err != nil {
				t.Fatal(err)
			}
		}
		if s == checkpoint-1 {
			if off, err = w.Flush(); err != nil {
				t.Fatal(err)
			}
		}
	}
	// The rows after the checkpoint reach the file, then the kill tears a
	// line.
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	tf, err := os.OpenFile(cut, os.O_WRONLY|os.O_APPEND, 0)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := tf.WriteString("-14.2,3."); err != nil {
		t.Fatal(err)
	}
	if err := tf.Close(); err != nil {
		t.Fatal(err)
	}

	if _, err := Resume(cut, cols, off+3); err == nil || !strings.Contains(err.Error(), "end of a line") {
		t.Errorf("resume mid-line: %v", err)
	}
	if _, err := Resume(cut, cols, 1<<40); err == nil || !strings.Contains(err.Error(), "outside the file") {
		t.Errorf("resume past the end: %v", err)
	}
	if _, err := Resume(cut, cols[:5], off); err == nil || !strings.Contains(err.Error(), "line 1: header") {
		t.Errorf("resume with other columns: %v", err)
	}
	w, err = Resume(cut, cols, off)
	if err != nil {
		t.Fatal(err)
	}
	for s := checkpoint; s < steps; s++ {
		for k := range walkers {
			if err := w.Append(row(s, k)); err != nil {
				t.Fatal(err)
			}
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	a, _ := os.ReadFile(whole)
	b, _ := os.ReadFile(cut)
	if !bytes.Equal(a, b) {
		t.Errorf("resumed file differs from the uninterrupted one (%d vs %d bytes)", len(b), len(a))
	}
	if err := w.Append(row(0, 0)); err == nil {
		t.Error("Append after Close succeeded")
	}
}

func TestCreateErrors(t *testing.T) {
	dir := t.TempDir()
	for _, c := range [][]string{nil, {"a", ""}, {"a", "a"}, {"a,b"}, {"a b"}, {"#a"}} {
		if _, err := Create(filepath.Join(dir, "x.csv"), c); err == nil {
			t.Errorf("Create with columns %q succeeded", c)
		}
	}
	w, err := Create(filepath.Join(dir, "y.csv"), []string{"a", "b"})
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	if err := w.Append([]float64{1}); err == nil {
		t.Error("short row accepted")
	}
}

func TestAppendNoAlloc(t *testing.T) {
	w, err := Create(filepath.Join(t.TempDir(), "c.csv"), cols)
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	r := row(12345, 17)
	w.Append(r) // warm the scratch line
	if n := testing.AllocsPerRun(1000, func() { w.Append(r) }); n != 0 {
		t.Errorf("Append allocates %v times per row", n)
	}
}

func BenchmarkAppend(b *testing.B) {
	w, err := Create(filepath.Join(b.TempDir(), "c.csv"), cols)
	if err != nil {
		b.Fatal(err)
	}
	defer w.Close()
	r := row(12345, 17)
	b.ReportAllocs()
	for b.Loop() {
		if err := w.Append(r); err != nil {
			b.Fatal(err)
		}
	}
}

func TestReadCSVErrors(t *testing.T) {
	dir := t.TempDir()
	cases := []struct{ name, content, want string }{
		{"empty", "", ":1: empty file"},
		{"no hash", "a,b\n1,2\n", ":1: header must start with '#'"},
		{"dup", "# a,a\n", ":1: header: column 1 (\"a\"): duplicate"},
		{"short", "# a,b\n1,2\n3\n", ":3: 1 fields, want 2"},
		{"long", "# a,b\n1,2,3\n", ":2: 3 fields, want 2"},
		{"trailing comma", "# a,b\n1,2,\n", ":2: 3 fields, want 2"},
		{"bad number", "# a,b\n1,x\n", ":2: field 2 (b): \"x\" is not a number"},
		{"blank", "# a,b\n\n", ":2: 1 fields, want 2"},
		{"torn", "# a,b\n1,2\n3,", ":3: incomplete last line"},
	}
	for _, c := range cases {
		p := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "_")+".csv")
		os.WriteFile(p, []byte(c.content), 0o644)
		_, _, err := ReadCSV(p)
		if err == nil || !strings.Contains(err.Error(), p+c.want) || !strings.HasPrefix(err.Error(), "chains: ") {
			t.Errorf("%s: error %v, want it to contain %q", c.name, err, p+c.want)
		}
	}
	if _, _, err := ReadCSV(filepath.Join(dir, "missing.csv")); err == nil {
		t.Error("missing file read")
	}
}

// FuzzReadCSV: ReadCSV never panics, and what it accepts survives being
// written again by a Writer and read back.
func FuzzReadCSV(f *testing.F) {
	f.Add([]byte("# step,walker,ln_post\n0,0,-1.5\n0,1,NaN\n"))
	f.Add([]byte("# a\n+Inf\n-Inf\n1e-300\n"))
	f.Add([]byte("#a,b\r\n1,2\r\n"))
	f.Add([]byte("# a,b\n1,2\n3,"))
	f.Fuzz(func(t *testing.T, b []byte) {
		dir := t.TempDir()
		p := filepath.Join(dir, "in.csv")
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		columns, rows, err := ReadCSV(p)
		if err != nil {
			return
		}
		q := filepath.Join(dir, "out.csv")
		w, err := Create(q, columns)
		if err != nil {
			t.Fatalf("columns %q accepted by ReadCSV but not by Create: %v", columns, err)
		}
		for _, r := range rows {
			if err := w.Append(r); err != nil {
				t.Fatal(err)
			}
		}
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
		c2, r2, err := ReadCSV(q)
		if err != nil || !reflect.DeepEqual(c2, columns) || !sameRows(r2, rows) {
			t.Fatalf("rewrite changed the chain: %v", err)
		}
	})
}

func TestNPYRoundTrip(t *testing.T) {
	p := filepath.Join(t.TempDir(), "m.npy")
	data := []float64{1, 2, 3, 4, 5, math.Inf(-1), math.Copysign(0, -1), 1e-310, math.Pi}
	if err := WriteNPY(p, 3, 3, data[:9]); err != nil {
		t.Fatal(err)
	}
	rows, cols, got, err := ReadNPY(p)
	if err != nil {
		t.Fatal(err)
	}
	if rows != 3 || cols != 3 || !sameRows([][]float64{got}, [][]float64{data}) {
		t.Errorf("read %dx%d %v", rows, cols, got)
	}
	if err := WriteNPY(p, 2, 3, data[:5]); err == nil {
		t.Error("short data accepted")
	}
	for _, dims := range [][2]int{{0, 3}, {4, 0}} {
		q := filepath.Join(filepath.Dir(p), "empty.npy")
		if err := WriteNPY(q, dims[0], dims[1], nil); err != nil {
			t.Fatal(err)
		}
		r, c, d, err := ReadNPY(q)
		if err != nil || r != dims[0] || c != dims[1] || len(d) != 0 {
			t.Errorf("empty %v: read %dx%d %v, %v", dims, r, c, d, err)
		}
	}
	if err := WriteNPY(p, -1, 3, nil); err == nil {
		t.Error("negative size accepted")
	}

	// The file follows the .npy format specification (NumPy enhancement
	// proposal 1): magic "\x93NUMPY", version bytes, little-endian header
	// length, a Python dict literal naming dtype, order and shape, padded
	// so that the data start on a 16-byte boundary, then the data in C order.
	b, _ := os.ReadFile(p)
	if !bytes.HasPrefix(b, []byte("\x93NUMPY")) {
		t.Fatalf("magic %q", b[:6])
	}
	var hlen, start int
	switch b[6] {
	case 1:
		hlen, start = int(binary.LittleEndian.Uint16(b[8:])), 10
	case 2, 3:
		hlen, start = int(binary.LittleEndian.Uint32(b[8:])), 12
	default:
		t.Fatalf("version %d", b[6])
	}
	hdr := string(b[start : start+hlen])
	for _, s := range []string{"'descr': '<f8'", "'fortran_order': False", "'shape': (3, 3)"} {
		if !strings.Contains(hdr, s) {
			t.Errorf("header %q lacks %s", hdr, s)
		}
	}
	if (start+hlen)%16 != 0 || len(b) != start+hlen+8*9 {
		t.Errorf("data offset %d, file %d bytes", start+hlen, len(b))
	}
	if v := math.Float64frombits(binary.LittleEndian.Uint64(b[start+hlen+8*8:])); v != math.Pi {
		t.Errorf("last value on disk %v", v)
	}
}

// TestReadNPYFortran reads a file assembled by hand from the format
// specification, in Fortran (column-major) order.
func TestReadNPYFortran(t *testing.T) {
	hdr := "{'descr': '<f8', 'fortran_order': True, 'shape': (2, 3), }"
	for (10+len(hdr)+1)%16 != 0 {
		hdr += " "
	}
	hdr += "\n"
	var buf bytes.Buffer
	buf.WriteString("\x93NUMPY\x01\x00")
	binary.Write(&buf, binary.LittleEndian, uint16(len(hdr)))
	buf.WriteString(hdr)
	// Matrix [[1 2 3] [4 5 6]] stored column by column.
	for _, v := range []float64{1, 4, 2, 5, 3, 6} {
		binary.Write(&buf, binary.LittleEndian, v)
	}
	p := filepath.Join(t.TempDir(), "f.npy")
	os.WriteFile(p, buf.Bytes(), 0o644)
	rows, cols, data, err := ReadNPY(p)
	if err != nil {
		t.Fatal(err)
	}
	if rows != 2 || cols != 3 || !reflect.DeepEqual(data, []float64{1, 2, 3, 4, 5, 6}) {
		t.Errorf("got %dx%d %v", rows, cols, data)
	}
	// Truncated data and garbage are errors, not panics.
	for name, b := range map[string][]byte{
		"truncated": buf.Bytes()[:buf.Len()-9],
		"garbage":   []byte("not a numpy file at all"),
		"no header": []byte("\x93NUMPY\x01\x00\x04\x00abcd"),
		"huge":      []byte(strings.Replace(buf.String(), "(2, 3)", "(9999999999, 3)", 1)),
	} {
		os.WriteFile(p, b, 0o644)
		if _, _, _, err := ReadNPY(p); err == nil || !strings.HasPrefix(err.Error(), "chains: "+p) {
			t.Errorf("%s: error %v", name, err)
		}
	}
}

func TestMetaRoundTrip(t *testing.T) {
	p := filepath.Join(t.TempDir(), "meta.json")
	start := time.Date(2026, 3, 4, 5, 6, 7, 8, time.UTC)
	m := &Meta{
		Version:     "0.1.0",
		CommandLine: []string{"tautline", "run", "demo.yaml"},
		Config:      map[string]any{"walkers": 32.0, "model": "smbhb"},
		Seed:        42,
		Data:        DataSet{Name: "simulated-demo", Path: "testdata/demo.txt", SHA256: "ab12"},
		Model: ModelInfo{Name: "smbhb", Params: []ParamInfo{
			{Name: "log10_A", Label: `\log_{10} A`, Prior: "uniform(-18, -11)"},
			{Name: "gamma", Prior: "fixed(4.333333333333333)", Fixed: true},
		}},
		Start:       start,
		End:         start.Add(90 * time.Second),
		Timings:     []Timing{{"burn-in", 30}, {"sampling", 60}},
		Diagnostics: map[string]any{"max_rhat": 1.01},
		Outputs:     []Output{{"chain.csv", "posterior samples"}},
		Status:      "converged",
		Sampling:    &Sampling{Acceptance: []float64{0.3}, BandwidthRule: "scott", Burn: 10, Steps: 100, Thin: 2},
	}
	if err := WriteMeta(p, m); err != nil {
		t.Fatal(err)
	}
	got, err := ReadMeta(p)
	if err != nil {
		t.Fatal(err)
	}
	want := *m
	want.Schema = MetaSchema
	if !reflect.DeepEqual(got, &want) {
		t.Errorf("read back\n%+v\nwant\n%+v", got, &want)
	}
	if m.Schema != 0 {
		t.Error("WriteMeta modified its argument")
	}
	// Without a status or sampling record the file has neither key, as
	// before they existed.
	bare := *m
	bare.Status, bare.Sampling = "", nil
	if err := WriteMeta(p, &bare); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(p); bytes.Contains(b, []byte(`"status":`)) || bytes.Contains(b, []byte(`"sampling":`)) {
		t.Errorf("metadata without status or sampling names them:\n%s", b)
	}
	for name, c := range map[string]struct{ content, want string }{
		"syntax": {"{\n  \"schema\": 1,\n  oops\n}", ":3: "},
		"type":   {"{\n\"schema\": \"one\"\n}", ":2: "},
		"none":   {"{}", "no \"schema\""},
		"newer":  {"{\"schema\": 99}", "newer"},
	} {
		os.WriteFile(p, []byte(c.content), 0o644)
		if _, err := ReadMeta(p); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want %q", name, err, c.want)
		}
	}
}

func TestFileSHA256(t *testing.T) {
	p := filepath.Join(t.TempDir(), "x")
	os.WriteFile(p, []byte("abc"), 0o644)
	// SHA-256("abc") from FIPS 180-2, appendix B.1.
	const want = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
	if got, err := FileSHA256(p); err != nil || got != want {
		t.Errorf("got %s, %v", got, err)
	}
}

// TestReadNPYBigEndian reads a hand-assembled big-endian (">f8") file.
func TestReadNPYBigEndian(t *testing.T) {
	p := filepath.Join(t.TempDir(), "b.npy")
	if err := os.WriteFile(p, npyBytes(">f8", "(3,)", binary.BigEndian, []float64{1.5, -2, 1e300}), 0o644); err != nil {
		t.Fatal(err)
	}
	rows, cols, data, err := ReadNPY(p)
	if err != nil {
		t.Fatal(err)
	}
	if rows != 3 || cols != 1 || !reflect.DeepEqual(data, []float64{1.5, -2, 1e300}) {
		t.Errorf("got %dx%d %v", rows, cols, data)
	}
}

// npyBytes assembles a version-1.0 .npy file from the format specification.
func npyBytes(descr, shape string, bo binary.ByteOrder, vals []float64) []byte {
	hdr := "{'descr': '" + descr + "', 'fortran_order': False, 'shape': " + shape + ", }"
	for (10+len(hdr)+1)%16 != 0 {
		hdr += " "
	}
	hdr += "\n"
	var buf bytes.Buffer
	buf.WriteString("\x93NUMPY\x01\x00")
	binary.Write(&buf, binary.LittleEndian, uint16(len(hdr)))
	buf.WriteString(hdr)
	for _, v := range vals {
		binary.Write(&buf, bo, v)
	}
	return buf.Bytes()
}

// FuzzReadNPY: ReadNPY never panics on arbitrary bytes, and what it accepts
// survives WriteNPY and ReadNPY again.
func FuzzReadNPY(f *testing.F) {
	f.Add(npyBytes("<f8", "(2, 2)", binary.LittleEndian, []float64{1, 2, 3, 4}))
	f.Add(npyBytes(">f8", "(3,)", binary.BigEndian, []float64{1, 2, 3}))
	f.Add(npyBytes("<i8", "(1,)", binary.LittleEndian, []float64{1}))
	f.Add([]byte("\x93NUMPY\x01\x00\x04\x00abcd"))
	f.Fuzz(func(t *testing.T, b []byte) {
		dir := t.TempDir()
		p := filepath.Join(dir, "in.npy")
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		rows, cols, data, err := ReadNPY(p)
		if err != nil {
			return
		}
		q := filepath.Join(dir, "out.npy")
		if err := WriteNPY(q, rows, cols, data); err != nil {
			t.Fatalf("accepted %dx%d matrix not writable: %v", rows, cols, err)
		}
		r2, c2, d2, err := ReadNPY(q)
		if err != nil || r2 != rows || c2 != cols || !sameRows([][]float64{d2}, [][]float64{data}) {
			t.Fatalf("rewrite changed the matrix: %v", err)
		}
	})
}

// TestSamplingJSON: the typed Sampling record encodes exactly as the
// generic map with the same keys and values would (encoding/json writes map
// keys sorted, and Sampling's members are declared in that order), so files
// written before and after the change compare equal byte for byte.
func TestSamplingJSON(t *testing.T) {
	cases := []Sampling{
		{AboveRangePenalty: 1000, Acceptance: []float64{0.25, 0.3125, 1.0 / 3}, BandwidthRule: "silverman",
			Bandwidths: []float64{0.05, 1e-7, 12.5}, Burn: 120, PosteriorSamples: 4096, Steps: 3000, Thin: 7, Until: "ess=5000,rhat=1.01"},
		{}, // zero values and nil slices: null, as in the map
	}
	for _, s := range cases {
		m := map[string]any{"steps": s.Steps, "burn": s.Burn, "thin": s.Thin, "posterior_samples": s.PosteriorSamples,
			"acceptance": s.Acceptance, "bandwidth_rule": s.BandwidthRule, "bandwidths": s.Bandwidths,
			"above_range_penalty": s.AboveRangePenalty, "until": s.Until}
		want, err := json.MarshalIndent(m, "", "  ")
		if err != nil {
			t.Fatal(err)
		}
		got, err := json.MarshalIndent(&s, "", "  ")
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got, want) {
			t.Errorf("typed\n%s\nmap\n%s", got, want)
		}
	}
}

// TestAppendFloatMatchesStrconv checks appendFloat, integers below 2^53
// (its shortcut) and other values, against strconv.AppendFloat(b, v, 'g',
// -1, 64), byte for byte, on edge cases and on runs of integers, near
// integers and fractions.
func TestAppendFloatMatchesStrconv(t *testing.T) {
	vals := []float64{0, math.Copysign(0, -1), 1, -1, 7, 999999, -999999, 1e6, -1e6, 1e21, 123456.5,
		0.1, -2.5e-7, 1e-320, math.MaxFloat64, -math.SmallestNonzeroFloat64, math.Inf(1), math.Inf(-1), math.NaN(),
		-14.52513370917262, 4.161803398874989, 3.0000000000000004, 1<<53 + 2, 5e5 + 0.25}
	for i := range 20000 {
		vals = append(vals, float64(i)*1.000000001-17.3, float64(i%300)/7, float64(i)*997, -float64(i)*1e5, float64(i)/8)
	}
	for _, v := range vals {
		got := string(appendFloat([]byte("x,"), v))
		want := string(strconv.AppendFloat([]byte("x,"), v, 'g', -1, 64))
		if got != want {
			t.Fatalf("%v formats as %q, want %q", v, got, want)
		}
	}
}
