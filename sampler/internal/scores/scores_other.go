//go:build !amd64 || purego || amd64.v3

package scores

// fast reports whether centralScores has a vector kernel: not in this
// build (with GOAMD64=v3 or above the compiler may fuse the scalar code's
// multiply-adds, which a kernel would have to follow).
func fast() bool { return false }

// centralScores is centralGo.
func centralScores(dst []float64, i0, S int) { centralGo(dst, i0, S) }
