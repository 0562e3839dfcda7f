//go:build linux

package chains

import (
	"errors"
	"os"

	"golang.org/x/sys/unix"
)

// newWriteback returns the function with which a Writer's goroutine has
// f written back to the disk in the background (see
// formatter.startWriteback). On Linux that is sync_file_range(2) with
// SYNC_FILE_RANGE_WRITE over the whole file (the Linux man-pages): the
// kernel starts writing the dirty pages and the call returns without
// waiting for them, with neither the journal commit nor the flush of the
// device's cache of an fsync. Made as often as the flush requests and the
// writeback ask, fsyncs slowed a fast fit: the bench's fit replica (smbhb
// demo, 20000 steps) took 165-167 ms with them and 145-148 ms with this
// writeback (medians of 25 runs alternated, in two sets; 126-133 ms
// without a chain writer). Where the file system or the kernel cannot do
// it (an error other than an I/O error), it calls fsync (f.Sync but in
// tests) instead, from then on.
func newWriteback(f *os.File, fsync func() error) func() error {
	rc, err := f.SyscallConn()
	if err != nil {
		return fsync
	}
	fallback := false
	return func() error {
		if fallback {
			return fsync()
		}
		var serr error
		if err := rc.Control(func(fd uintptr) {
			serr = unix.SyncFileRange(int(fd), 0, 0, unix.SYNC_FILE_RANGE_WRITE)
		}); err != nil {
			return err
		}
		if serr != nil && unsupported(serr) {
			fallback = true
			return fsync()
		}
		return serr
	}
}

// unsupported reports whether err from sync_file_range says that the call
// cannot be made on this file (a pipe, a file system or kernel without
// it) rather than that writing failed.
func unsupported(err error) bool {
	return errors.Is(err, unix.ENOSYS) || errors.Is(err, unix.EINVAL) || errors.Is(err, unix.ESPIPE) || errors.Is(err, unix.EOPNOTSUPP)
}
