//go:build unix

package sampler

import (
	"syscall"
	"time"
)

// cpuTime is the processor time of the process so far, all threads (less
// sensitive than the wall time to other processes on a shared machine).
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
