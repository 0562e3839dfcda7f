//go:build !(linux || darwin || freebsd)

package budget

func addressSpaceLimit() (int64, bool) { return 0, false }

func freeDisk(string) (int64, bool) { return 0, false }
