//go:build linux || darwin || freebsd

package budget

import "syscall"

// addressSpaceLimit returns the soft RLIMIT_AS when one is set.
func addressSpaceLimit() (int64, bool) {
	var rl syscall.Rlimit
	if err := syscall.Getrlimit(syscall.RLIMIT_AS, &rl); err != nil || rl.Cur == 0 || rl.Cur >= 1<<62 {
		return 0, false
	}
	return int64(rl.Cur), true
}

// freeDisk returns the bytes available to this user on the file system
// holding path.
func freeDisk(path string) (int64, bool) {
	var st syscall.Statfs_t
	if err := syscall.Statfs(path, &st); err != nil {
		return 0, false
	}
	free := uint64(st.Bavail) * uint64(st.Bsize)
	if free == 0 || free >= 1<<62 {
		return 0, false
	}
	return int64(free), true
}
