package chains

import (
	"fmt"
	"io"

	"tautline/internal/atomicfile"
)

// WriteFileAtomic replaces the file at path with the bytes write produces.
// It writes to a temporary file in the same directory, fsyncs it, renames
// it over path and fsyncs the directory. On any error, including one
// returned by write, the temporary file is removed and an existing file at
// path is left untouched. The new file keeps the permissions of the one it
// replaces, or gets 0644.
func WriteFileAtomic(path string, write func(w io.Writer) error) error {
	if err := atomicfile.Write(path, write); err != nil {
		return fmt.Errorf("chains: %w", err)
	}
	return nil
}
