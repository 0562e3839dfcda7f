// Package atomicfile replaces files so that a reader, or a crash, never sees
// a half-written one: the new content goes to a temporary file in the same
// folder, which is flushed to disk (fsync) and renamed over the target; the
// folder is then synced so that the rename itself is durable. On any error
// the temporary file is removed and an existing file is left as it was.
//
// Errors name the path and wrap the cause; callers add their own package
// prefix.
package atomicfile

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

// Write replaces the file at path with the bytes write produces, through a
// buffered writer. The new file keeps the permissions of the regular file it
// replaces, or gets 0644; path may not name a folder or other non-regular
// file. The folder must exist.
func Write(path string, write func(w io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if base == "" {
		return fmt.Errorf("%q: not a file name", path)
	}
	if dir == "" {
		dir = "."
	}
	perm := fs.FileMode(0o644)
	if st, err := os.Stat(path); err == nil {
		if !st.Mode().IsRegular() {
			return fmt.Errorf("%s: not a regular file", path)
		}
		perm = st.Mode().Perm()
	}
	tmp, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	bw := bufio.NewWriterSize(tmp, 1<<16)
	if err := write(bw); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if err := tmp.Chmod(perm); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if err := tmp.Sync(); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	return syncDir(dir)
}

// WriteFile is Write for content already in memory.
func WriteFile(path string, data []byte) error {
	return Write(path, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// syncDir fsyncs a folder so that a rename in it is durable. File systems
// that cannot sync folders are tolerated.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return fmt.Errorf("%s: %w", dir, err)
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !errors.Is(err, syscall.EINVAL) && !errors.Is(err, syscall.ENOTSUP) {
		return fmt.Errorf("sync directory %s: %w", dir, err)
	}
	return nil
}
