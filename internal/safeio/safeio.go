// Package safeio reads files that a user names without trusting them: it
// opens a path only when it is a regular file (a named pipe would block the
// reader forever, a device such as /dev/zero never ends, a directory is no
// file), reads it whole only up to a size cap, and removes the hidden
// temporary files that an interrupted atomic write (write a temporary file,
// then rename it) leaves behind.
//
// It implements no published method; it is the defensive-reading practice
// of checking a file's type with stat before opening it and of bounding
// every read by a limit chosen for the kind of file (common practice).
//
// # Default limits
//
// Each kind of input file has a default cap, chosen as a generous multiple
// of the largest file the program writes or ships, and small enough that a
// file of that size still fits in memory many times over on a laptop:
//
//   - LimitDescription, 1 MiB: a data set's YAML description lists a name,
//     a provenance line, a span, at most 65536 frequencies (about 1.5 MB in
//     the longest spelling would exceed this, so lists that long belong in
//     frequencies.harmonics) and three table names. The demos' are 0.5 kB.
//   - LimitConfig, 1 MiB: a run configuration is some forty keys and a prior
//     per parameter; anything near a megabyte is not a configuration.
//   - LimitTable, 512 MiB: a CSV table of posterior samples holds about
//     20 bytes a row; 512 MiB is some 25 million samples, e.g. 30 bins of
//     800 000 samples, far above what the kernel density estimate needs
//     (the demo tables are 0.6 MB), and it keeps the parsed data (8 bytes a
//     sample) well under a gigabyte.
//   - LimitCheckpoint, 4 GiB: a checkpoint holds the sampler's state and its
//     recorded history, 8 bytes per walker, step, rung and (parameter + 2)
//     values: 32 walkers x 100 000 steps x 12 values x 8 bytes is 300 MB
//     for one rung, so 4 GiB leaves room for a tempered run. Callers that
//     know the configuration should pass the exact bound it implies.
//   - LimitPart, 64 MiB: a compare part.json holds a unit's metadata,
//     configuration, diagnostics and ladder (tens of kB in practice); the
//     arrays live in .npy files beside it.
//   - LimitJSON, 64 MiB: any other JSON metadata the program wrote itself
//     (meta.json, summary.json, evidence.json, compare.json).
package safeio

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"time"
)

// Size units in bytes.
const (
	KiB int64 = 1 << 10
	MiB int64 = 1 << 20
	GiB int64 = 1 << 30
)

// Default caps per kind of file; the package documentation says why each.
const (
	LimitDescription = 1 * MiB
	LimitConfig      = 1 * MiB
	LimitTable       = 512 * MiB
	LimitCheckpoint  = 4 * GiB
	LimitPart        = 64 * MiB
	LimitJSON        = 64 * MiB
)

// ErrNotRegular is matched (errors.Is) by every error that refuses a path
// because it is not a regular file.
var ErrNotRegular = errors.New("not a regular file")

// ErrTooLarge is matched (errors.Is) by every error that refuses a file
// because it exceeds its size cap.
var ErrTooLarge = errors.New("file too large")

// NotRegularError refuses a path that is a directory, named pipe, device,
// socket or other non-regular file.
type NotRegularError struct {
	Path string
	Mode fs.FileMode
}

func (e *NotRegularError) Error() string {
	return fmt.Sprintf("%s: is %s, not a regular file", e.Path, Describe(e.Mode))
}

// Is makes errors.Is(err, ErrNotRegular) hold.
func (e *NotRegularError) Is(target error) bool { return target == ErrNotRegular }

// LimitError refuses a file larger than the cap it was read with.
type LimitError struct {
	Path  string
	Limit int64
	// Size is the file's size when it was known before reading (from
	// stat), or -1 when the reader only found that it goes on past Limit.
	Size int64
}

func (e *LimitError) Error() string {
	if e.Size >= 0 {
		return fmt.Sprintf("%s: %s is more than the %s limit for this kind of file", e.Path, FormatSize(e.Size), FormatSize(e.Limit))
	}
	return fmt.Sprintf("%s: more than the %s limit for this kind of file", e.Path, FormatSize(e.Limit))
}

// Is makes errors.Is(err, ErrTooLarge) hold.
func (e *LimitError) Is(target error) bool { return target == ErrTooLarge }

// Describe names the kind of file a mode stands for, with an article, for
// messages: "a directory", "a named pipe (FIFO)", "a character device"...
func Describe(m fs.FileMode) string {
	switch {
	case m.IsRegular():
		return "a regular file"
	case m.IsDir():
		return "a directory"
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe (FIFO)"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeCharDevice != 0:
		return "a character device"
	case m&fs.ModeDevice != 0:
		return "a block device"
	case m&fs.ModeSymlink != 0:
		return "a symbolic link"
	case m&fs.ModeIrregular != 0:
		return "an irregular file"
	}
	return "a special file"
}

// FormatSize writes a byte count in binary units: "512 B", "1 MiB",
// "1.5 GiB".
func FormatSize(n int64) string {
	units := []struct {
		size int64
		name string
	}{{GiB << 10, "TiB"}, {GiB, "GiB"}, {MiB, "MiB"}, {KiB, "KiB"}}
	for _, u := range units {
		if n >= u.size {
			if n%u.size == 0 {
				return fmt.Sprintf("%d %s", n/u.size, u.name)
			}
			return fmt.Sprintf("%.1f %s", float64(n)/float64(u.size), u.name)
		}
	}
	return fmt.Sprintf("%d B", n)
}

// CheckRegular returns a *NotRegularError unless info describes a regular
// file.
func CheckRegular(path string, info fs.FileInfo) error {
	if info.Mode().IsRegular() {
		return nil
	}
	return &NotRegularError{Path: path, Mode: info.Mode()}
}

// Open opens path for reading only if it is a regular file (after
// following symbolic links). It never blocks on a named pipe: the type is
// checked before opening, the file is opened without waiting for a writer,
// and the type is checked again on the open file so that a path swapped in
// between is refused too.
func Open(path string) (*os.File, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, asOpenError(err)
	}
	if err := CheckRegular(path, st); err != nil {
		return nil, err
	}
	f, err := os.OpenFile(path, os.O_RDONLY|openFlags, 0)
	if err != nil {
		return nil, err
	}
	st, err = f.Stat()
	if err == nil {
		err = CheckRegular(path, st)
	}
	if err != nil {
		f.Close()
		return nil, err
	}
	return f, nil
}

// ReadFile reads the regular file at path whole, refusing it with a
// *LimitError when it holds more than limit bytes.
func ReadFile(path string, limit int64) ([]byte, error) {
	f, err := Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var size int64 = -1
	if st, err := f.Stat(); err == nil {
		size = st.Size()
	}
	return readLimited(path, f, size, limit)
}

// ReadFileFS is ReadFile on fsys (an embed.FS, os.DirFS, fstest.MapFS...).
// The type is checked with fs.Stat before the file is opened, so a named
// pipe in an os.DirFS is refused without blocking.
func ReadFileFS(fsys fs.FS, name string, limit int64) ([]byte, error) {
	st, err := fs.Stat(fsys, name)
	if err != nil {
		return nil, asOpenError(err)
	}
	if err := CheckRegular(name, st); err != nil {
		return nil, err
	}
	f, err := fsys.Open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	st, err = f.Stat()
	if err != nil {
		return nil, err
	}
	if err := CheckRegular(name, st); err != nil {
		return nil, err
	}
	return readLimited(name, f, st.Size(), limit)
}

// asOpenError reports a failed stat as the failed open it stands for, so
// that a missing file reads "open PATH: no such file or directory" as it
// does with os.Open, whichever call found it missing.
func asOpenError(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) && pe.Op == "stat" {
		return &fs.PathError{Op: "open", Path: pe.Path, Err: pe.Err}
	}
	return err
}

// readLimited reads r whole but never more than limit+1 bytes, so that a
// file which grows after stat, or whose stat size lies (as /proc files'
// does), is still caught.
func readLimited(name string, r io.Reader, size, limit int64) ([]byte, error) {
	if limit < 0 {
		return nil, fmt.Errorf("safeio: %s: negative limit %d", name, limit)
	}
	if size > limit {
		return nil, &LimitError{Path: name, Limit: limit, Size: size}
	}
	hint := int64(512)
	if size > 0 {
		hint = size + 1
	}
	buf := make([]byte, 0, min(hint, limit+1))
	for {
		if int64(len(buf)) > limit {
			return nil, &LimitError{Path: name, Limit: limit, Size: -1}
		}
		if len(buf) == cap(buf) {
			buf = append(buf, 0)[:len(buf)]
		}
		room := min(int64(cap(buf)), limit+1)
		n, err := r.Read(buf[len(buf):room])
		buf = buf[:len(buf)+n]
		if err == io.EOF {
			if int64(len(buf)) > limit {
				return nil, &LimitError{Path: name, Limit: limit, Size: -1}
			}
			return buf, nil
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
	}
}

// IsTempName reports whether name looks like a temporary file of an atomic
// write: hidden (starting with ".") and holding ".tmp-", as in
// ".checkpoint.bin.tmp-123456".
func IsTempName(name string) bool {
	return strings.HasPrefix(name, ".") && strings.Contains(name[1:], ".tmp-")
}

// TempsOf returns a matcher for the temporaries of the named files only:
// ".BASE.tmp-*" for each base, the pattern os.CreateTemp(dir,
// "."+base+".tmp-*") produces.
func TempsOf(bases ...string) func(name string) bool {
	return func(name string) bool {
		for _, b := range bases {
			if b != "" && strings.HasPrefix(name, "."+b+".tmp-") {
				return true
			}
		}
		return false
	}
}

// RemoveStale deletes the regular files directly in dir whose names match
// and whose modification time is before notAfter, and returns the names it
// removed (sorted). It does not descend into subfolders and never removes
// a directory, a symbolic link or a special file, whatever its name. Pass
// the time the current process started as notAfter: a temporary older than
// that belongs to a process that died (or to one running beside this one
// for longer, which the caller must exclude, e.g. by owning the folder).
// A file that vanishes while it works is not an error.
func RemoveStale(dir string, match func(name string) bool, notAfter time.Time) ([]string, error) {
	ents, err := os.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	var removed []string
	var errs []error
	for _, en := range ents {
		if !match(en.Name()) || !en.Type().IsRegular() {
			continue
		}
		p := filepath.Join(dir, en.Name())
		st, err := os.Lstat(p)
		if err != nil {
			if !errors.Is(err, fs.ErrNotExist) {
				errs = append(errs, err)
			}
			continue
		}
		if !st.Mode().IsRegular() || !st.ModTime().Before(notAfter) {
			continue
		}
		if err := os.Remove(p); err != nil {
			if !errors.Is(err, fs.ErrNotExist) {
				errs = append(errs, err)
			}
			continue
		}
		removed = append(removed, en.Name())
	}
	return removed, errors.Join(errs...)
}
