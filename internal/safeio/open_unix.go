//go:build unix

package safeio

import "syscall"

// openFlags makes open(2) return at once on a named pipe that has no
// writer instead of waiting for one; on a regular file it has no effect.
const openFlags = syscall.O_NONBLOCK
