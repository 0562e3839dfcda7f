package importer

import (
	"archive/zip"
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// maxNPYHeader caps the header dictionary of a .npy file; NumPy's own
// reader refuses headers above 10000 bytes unless told otherwise.
const maxNPYHeader = 1 << 16

// ReadNPY reads a two-dimensional float32 or float64 array from a .npy file
// (format versions 1.0, 2.0, 3.0; either byte order; C or Fortran order).
// limit caps the file size; 0 means DefaultLimit.
func ReadNPY(path string, limit int64) (*Matrix, error) {
	if limit <= 0 {
		limit = DefaultLimit
	}
	f, size, err := openRegular(path, limit)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return decodeNPY(bufio.NewReaderSize(&capped{r: f, left: limit, limit: limit, file: path}, 1<<16), path, size, limit)
}

// ReadNPZ reads the array named array (with or without the ".npy" suffix)
// from an .npz archive, stored or deflated. An empty name picks the only
// array of a one-array archive. limit caps the archive's size and the
// array's uncompressed size; 0 means DefaultLimit.
func ReadNPZ(path, array string, limit int64) (*Matrix, error) {
	if limit <= 0 {
		limit = DefaultLimit
	}
	f, size, err := openRegular(path, limit)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return decodeNPZ(f, size, path, array, limit)
}

func decodeNPZ(r io.ReaderAt, size int64, path, array string, limit int64) (*Matrix, error) {
	z, err := zip.NewReader(r, size)
	if err != nil {
		return nil, fmt.Errorf("importer: %s: not an .npz archive: %w", path, err)
	}
	var names []string
	var member *zip.File
	want := strings.TrimSuffix(array, ".npy")
	for _, zf := range z.File {
		n, ok := strings.CutSuffix(zf.Name, ".npy")
		if !ok {
			continue
		}
		names = append(names, n)
		if n == want {
			member = zf
		}
	}
	slices.Sort(names)
	list := strings.Join(names, ", ")
	if len(names) == 0 {
		return nil, fmt.Errorf("importer: %s: the archive holds no .npy arrays", path)
	}
	if want == "" {
		if len(names) != 1 {
			return nil, fmt.Errorf("importer: %s: the archive holds %d arrays (%s); name the one to read", path, len(names), list)
		}
		for _, zf := range z.File {
			if strings.HasSuffix(zf.Name, ".npy") {
				member = zf
			}
		}
		want = names[0]
	}
	if member == nil {
		return nil, fmt.Errorf("importer: %s: no array %q in the archive (arrays: %s)", path, want, list)
	}
	src := path + "[" + want + "]"
	if member.UncompressedSize64 > uint64(limit) {
		return nil, fmt.Errorf("importer: %s: %d bytes uncompressed is more than the limit of %s", src, member.UncompressedSize64, byteSize(limit))
	}
	rc, err := member.Open()
	if err != nil {
		return nil, fmt.Errorf("importer: %s: %w", src, err)
	}
	defer rc.Close()
	return decodeNPY(bufio.NewReaderSize(&capped{r: rc, left: int64(member.UncompressedSize64), limit: int64(member.UncompressedSize64), file: src}, 1<<16), src, int64(member.UncompressedSize64), limit)
}

// npyHeader is the decoded header dictionary.
type npyHeader struct {
	descr   string
	fortran bool
	shape   []int
}

// decodeNPY reads a .npy stream of size bytes, following the NumPy format
// specification (NEP 1): the magic "\x93NUMPY", major and minor version
// bytes, the header length (uint16 little endian in version 1.0, uint32 in
// 2.0 and 3.0), a Python dict literal with keys descr, fortran_order and
// shape, then the data.
func decodeNPY(r io.Reader, src string, size, limit int64) (*Matrix, error) {
	fail := func(format string, a ...any) error {
		return fmt.Errorf("importer: %s: "+format, append([]any{src}, a...)...)
	}
	var pre [8]byte
	if _, err := io.ReadFull(r, pre[:]); err != nil || string(pre[:6]) != "\x93NUMPY" {
		return nil, fail(`not a .npy file (it does not start with the magic "\x93NUMPY")`)
	}
	major, minor := pre[6], pre[7]
	var hlen, pre2 int64
	switch {
	case major == 1 && minor == 0:
		var b [2]byte
		if _, err := io.ReadFull(r, b[:]); err != nil {
			return nil, fail("truncated in the header")
		}
		hlen, pre2 = int64(binary.LittleEndian.Uint16(b[:])), 10
	case (major == 2 || major == 3) && minor == 0:
		var b [4]byte
		if _, err := io.ReadFull(r, b[:]); err != nil {
			return nil, fail("truncated in the header")
		}
		hlen, pre2 = int64(binary.LittleEndian.Uint32(b[:])), 12
	default:
		return nil, fail(".npy format version %d.%d is not supported (1.0, 2.0 and 3.0 are)", major, minor)
	}
	if hlen > maxNPYHeader {
		return nil, fail("header of %d bytes is longer than the %d accepted", hlen, maxNPYHeader)
	}
	if pre2+hlen > size {
		return nil, fail("header of %d bytes runs past the end of the file (%d bytes)", hlen, size)
	}
	hb := make([]byte, hlen)
	if _, err := io.ReadFull(r, hb); err != nil {
		return nil, fail("truncated in the header")
	}
	h, err := parseNPYHeader(string(hb))
	if err != nil {
		return nil, fail("header: %v", err)
	}
	var item int64
	var order binary.ByteOrder
	switch h.descr {
	case "<f8":
		item, order = 8, binary.LittleEndian
	case ">f8":
		item, order = 8, binary.BigEndian
	case "<f4":
		item, order = 4, binary.LittleEndian
	case ">f4":
		item, order = 4, binary.BigEndian
	default:
		return nil, fail("dtype %q is not supported; samples must be float64 ('<f8', '>f8') or float32 ('<f4', '>f4')", h.descr)
	}
	shape := shapeString(h.shape)
	switch len(h.shape) {
	case 2:
	case 1:
		return nil, fail("array of shape %s has 1 dimension; a samples matrix needs 2 (samples x bins): save a single bin as a column, shape (%d, 1)", shape, h.shape[0])
	default:
		return nil, fail("array of shape %s has %d dimensions; a samples matrix needs 2 (samples x bins)", shape, len(h.shape))
	}
	rows, cols := int64(h.shape[0]), int64(h.shape[1])
	if rows == 0 || cols == 0 {
		return nil, fail("array of shape %s is empty", shape)
	}
	if rows > limit/item/cols {
		return nil, fail("data of shape %s take more than the limit of %s", shape, byteSize(limit))
	}
	nbytes := rows * cols * item
	if have := size - pre2 - hlen; have != nbytes {
		if have < nbytes {
			return nil, fail("shape %s needs %d data bytes but the file holds %d (truncated?)", shape, nbytes, have)
		}
		return nil, fail("shape %s needs %d data bytes but the file holds %d; the header does not describe the data", shape, nbytes, have)
	}
	m := &Matrix{Source: src, Rows: int(rows), Cols: make([][]float64, cols)}
	for j := range m.Cols {
		m.Cols[j] = make([]float64, rows)
	}
	buf := make([]byte, 1<<16)
	// (i, j) of the next value in file order: C order varies the last
	// index fastest, Fortran order the first.
	var i, j int64
	left := nbytes
	for left > 0 {
		n := min(int64(len(buf)), left)
		n -= n % item
		if _, err := io.ReadFull(r, buf[:n]); err != nil {
			if errors.Is(err, io.ErrUnexpectedEOF) || errors.Is(err, io.EOF) {
				return nil, fail("shape %s needs %d data bytes but the file ends after %d (truncated?)", shape, nbytes, nbytes-left)
			}
			return nil, fail("%v", err)
		}
		for off := int64(0); off < n; off += item {
			var v float64
			if item == 8 {
				v = math.Float64frombits(order.Uint64(buf[off:]))
			} else {
				v = float64(math.Float32frombits(order.Uint32(buf[off:])))
			}
			m.Cols[j][i] = v
			if h.fortran {
				if i++; i == rows {
					i, j = 0, j+1
				}
			} else if j++; j == cols {
				i, j = i+1, 0
			}
		}
		left -= n
	}
	return m, nil
}

func shapeString(s []int) string {
	p := make([]string, len(s))
	for i, v := range s {
		p[i] = strconv.Itoa(v)
	}
	if len(s) == 1 {
		return "(" + p[0] + ",)"
	}
	return "(" + strings.Join(p, ", ") + ")"
}

// parseNPYHeader reads the Python dict literal of a .npy header, for
// example {'descr': '<f8', 'fortran_order': False, 'shape': (3, 4), }
// followed by padding spaces and a newline.
func parseNPYHeader(s string) (npyHeader, error) {
	var h npyHeader
	p := &pyLexer{s: s}
	if !p.eat('{') {
		return h, errors.New("expected a dict literal starting with '{'")
	}
	seen := map[string]bool{}
	for {
		if p.eat('}') {
			break
		}
		key, ok := p.str()
		if !ok {
			return h, fmt.Errorf("expected a quoted key at byte %d", p.i)
		}
		if seen[key] {
			return h, fmt.Errorf("key %q given twice", key)
		}
		seen[key] = true
		if !p.eat(':') {
			return h, fmt.Errorf("expected ':' after key %q", key)
		}
		switch key {
		case "descr":
			d, ok := p.str()
			if !ok {
				return h, errors.New("descr: structured dtypes are not supported; expected a dtype string such as '<f8'")
			}
			h.descr = d
		case "fortran_order":
			switch {
			case p.word("True"):
				h.fortran = true
			case p.word("False"):
				h.fortran = false
			default:
				return h, errors.New("fortran_order: expected True or False")
			}
		case "shape":
			sh, err := p.tuple()
			if err != nil {
				return h, fmt.Errorf("shape: %v", err)
			}
			h.shape = sh
		default:
			return h, fmt.Errorf("unknown key %q (known keys: descr, fortran_order, shape)", key)
		}
		if p.eat(',') {
			continue
		}
		if !p.eat('}') {
			return h, fmt.Errorf("expected ',' or '}' at byte %d", p.i)
		}
		break
	}
	if rest := strings.TrimRight(s[p.i:], " \t\n\x00"); rest != "" {
		return h, fmt.Errorf("unexpected text %q after the dict", clip(rest))
	}
	for _, k := range []string{"descr", "fortran_order", "shape"} {
		if !seen[k] {
			return h, fmt.Errorf("key %q missing", k)
		}
	}
	return h, nil
}

func clip(s string) string {
	if len(s) > 20 {
		return s[:20] + "..."
	}
	return s
}

// pyLexer scans the small subset of Python literals a .npy header uses.
type pyLexer struct {
	s string
	i int
}

func (p *pyLexer) skip() {
	for p.i < len(p.s) && (p.s[p.i] == ' ' || p.s[p.i] == '\t' || p.s[p.i] == '\n' || p.s[p.i] == '\r') {
		p.i++
	}
}

func (p *pyLexer) eat(c byte) bool {
	p.skip()
	if p.i < len(p.s) && p.s[p.i] == c {
		p.i++
		return true
	}
	return false
}

func (p *pyLexer) word(w string) bool {
	p.skip()
	if strings.HasPrefix(p.s[p.i:], w) {
		end := p.i + len(w)
		if end == len(p.s) || !isIdent(p.s[end]) {
			p.i = end
			return true
		}
	}
	return false
}

func isIdent(c byte) bool {
	return c == '_' || c >= '0' && c <= '9' || c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z'
}

// str reads a quoted string without escapes (dtype strings and keys need
// none).
func (p *pyLexer) str() (string, bool) {
	p.skip()
	if p.i >= len(p.s) || (p.s[p.i] != '\'' && p.s[p.i] != '"') {
		return "", false
	}
	q := p.s[p.i]
	end := strings.IndexByte(p.s[p.i+1:], q)
	if end < 0 {
		return "", false
	}
	v := p.s[p.i+1 : p.i+1+end]
	if strings.ContainsRune(v, '\\') {
		return "", false
	}
	p.i += end + 2
	return v, true
}

// tuple reads a tuple of non-negative integers: (), (n,), (n, m), ...
func (p *pyLexer) tuple() ([]int, error) {
	if !p.eat('(') {
		return nil, errors.New("expected a tuple of integers")
	}
	out := []int{}
	for {
		if p.eat(')') {
			return out, nil
		}
		p.skip()
		j := p.i
		for j < len(p.s) && p.s[j] >= '0' && p.s[j] <= '9' {
			j++
		}
		if j == p.i {
			return nil, fmt.Errorf("expected a non-negative integer at byte %d", p.i)
		}
		v, err := strconv.Atoi(p.s[p.i:j])
		if err != nil || v > math.MaxInt32 {
			return nil, fmt.Errorf("dimension %q is too large", p.s[p.i:j])
		}
		out = append(out, v)
		p.i = j
		if p.i < len(p.s) && p.s[p.i] == 'L' { // Python 2 long suffix
			p.i++
		}
		if len(out) > 32 {
			return nil, errors.New("more than 32 dimensions")
		}
		if p.eat(',') {
			continue
		}
		if !p.eat(')') {
			return nil, fmt.Errorf("expected ',' or ')' at byte %d", p.i)
		}
		return out, nil
	}
}

// ReadMatrix reads a samples matrix, choosing the reader by the file's
// extension: .npy, .npz (array names the array; empty for a one-array
// archive), anything else is text (ReadText). limit caps the bytes read;
// 0 means DefaultLimit.
func ReadMatrix(path, array string, limit int64) (*Matrix, error) {
	switch strings.ToLower(filepath.Ext(path)) {
	case ".npy":
		if array != "" {
			return nil, fmt.Errorf("importer: %s: an array name (%q) applies only to .npz archives", path, array)
		}
		return ReadNPY(path, limit)
	case ".npz":
		return ReadNPZ(path, array, limit)
	}
	if array != "" {
		return nil, fmt.Errorf("importer: %s: an array name (%q) applies only to .npz archives", path, array)
	}
	return ReadText(path, limit)
}
