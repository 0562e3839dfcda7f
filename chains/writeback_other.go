//go:build !linux

package chains

import "os"

// newWriteback returns the function with which a Writer's goroutine has f
// written back to the disk in the background (see
// formatter.startWriteback): where no call starts a writeback without
// waiting for it, fsync (f.Sync but in tests).
func newWriteback(f *os.File, fsync func() error) func() error { return fsync }
