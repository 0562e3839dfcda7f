//go:build !unix

package safeio

// openFlags is empty where open(2) has no non-blocking mode; the stat
// before opening still refuses named pipes.
const openFlags = 0
