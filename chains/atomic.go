package chains

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"syscall"
)

// WriteFileAtomic replaces the file at path with the bytes write produces.
// It writes to a temporary file in the same directory, fsyncs it, renames
// it over path and fsyncs the directory. On any error, including one
// returned by write, the temporary file is removed and an existing file at
// path is left untouched. The new file keeps the permissions of the one it
// replaces, or gets 0644.
func WriteFileAtomic(path string, write func(w io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if base == "" {
		return fmt.Errorf("chains: %q: not a file name", path)
	}
	if dir == "" {
		dir = "."
	}
	perm := fs.FileMode(0o644)
	if st, err := os.Stat(path); err == nil {
		if !st.Mode().IsRegular() {
			return fmt.Errorf("chains: %s: not a regular file", path)
		}
		perm = st.Mode().Perm()
	}
	tmp, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return fmt.Errorf("chains: %s: %w", path, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	bw := bufio.NewWriterSize(tmp, 1<<16)
	if err := write(bw); err != nil {
		return fmt.Errorf("chains: %s: %w", path, err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("chains: %s: %w", path, err)
	}
	if err := tmp.Chmod(perm); err != nil {
		return fmt.Errorf("chains: %s: %w", path, err)
	}
	if err := tmp.Sync(); err != nil {
		return fmt.Errorf("chains: %s: %w", path, err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("chains: %s: %w", path, err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("chains: %s: %w", path, err)
	}
	return syncDir(dir)
}

// syncDir fsyncs a directory so that a rename in it is durable.
// File systems that cannot sync directories are tolerated.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return fmt.Errorf("chains: %s: %w", dir, err)
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !errors.Is(err, syscall.EINVAL) && !errors.Is(err, syscall.ENOTSUP) {
		return fmt.Errorf("chains: sync directory %s: %w", dir, err)
	}
	return nil
}
