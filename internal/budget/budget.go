// Package budget holds the caps that a run's estimated size is checked
// against before any of it is allocated: the memory the process may use
// (half the smaller of the physical memory and the address-space limit) and
// the free space of the file system that receives the outputs. A run that
// would need more is refused up front with the estimate, instead of being
// killed by the system hours later or filling the disk.
//
// It implements no published method; bounding a request by the resources
// the machine reports is common practice.
package budget

import (
	"bufio"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
)

// ErrTooLarge is matched (errors.Is) by every refusal of a run whose
// estimated memory or disk exceeds its cap; the command treats it as a
// command-line error (exit status 2).
var ErrTooLarge = errors.New("run too large")

// FallbackMemory is the memory cap used when neither the physical memory
// nor an address-space limit can be read: 8 GiB, half of a common laptop.
const FallbackMemory = 8 << 30

// Caps are the limits a run is checked against. A cap of 0 is not checked.
type Caps struct {
	// Memory is the largest estimated peak memory in bytes, and MemoryWhy
	// says where it comes from, for messages.
	Memory    int64
	MemoryWhy string
	// Disk is the free space in bytes of the file system holding the
	// output folder (0: unknown).
	Disk int64
}

// Current returns the caps of this machine and process for outputs written
// under dir (which need not exist yet: its nearest existing parent is
// asked). The memory cap is half the smaller of MemTotal in /proc/meminfo
// and the soft address-space limit (ulimit -v), leaving the other half to
// the Go runtime, the data and the rest of the system; FallbackMemory when
// neither is known.
func Current(dir string) Caps {
	var c Caps
	phys, okPhys := physicalMemory("/proc/meminfo")
	as, okAS := addressSpaceLimit()
	switch {
	case okAS && (!okPhys || as < phys):
		c.Memory, c.MemoryWhy = as/2, fmt.Sprintf("half the address-space limit of %s", Format(float64(as)))
	case okPhys:
		c.Memory, c.MemoryWhy = phys/2, fmt.Sprintf("half the physical memory of %s", Format(float64(phys)))
	default:
		c.Memory, c.MemoryWhy = FallbackMemory, "a fixed 8 GiB, the physical memory being unknown"
	}
	if dir != "" {
		c.Disk, _ = freeDisk(existingParent(dir))
	}
	return c
}

// CheckMemory returns an error wrapping ErrTooLarge when need bytes exceed
// the memory cap; what says what was estimated and from which options.
func (c Caps) CheckMemory(need float64, what string) error {
	if c.Memory > 0 && need > float64(c.Memory) {
		return fmt.Errorf("%w: %s: about %s of memory, more than the %s cap (%s)", ErrTooLarge, what, Format(need), Format(float64(c.Memory)), c.MemoryWhy)
	}
	return nil
}

// CheckDisk returns an error wrapping ErrTooLarge when need bytes exceed
// the free disk space (when known).
func (c Caps) CheckDisk(need float64, what string) error {
	if c.Disk > 0 && need > float64(c.Disk) {
		return fmt.Errorf("%w: %s: about %s on disk, more than the %s free there", ErrTooLarge, what, Format(need), Format(float64(c.Disk)))
	}
	return nil
}

// physicalMemory reads MemTotal (in kB) from a meminfo file.
func physicalMemory(path string) (int64, bool) {
	f, err := os.Open(path)
	if err != nil {
		return 0, false
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		rest, ok := strings.CutPrefix(sc.Text(), "MemTotal:")
		if !ok {
			continue
		}
		kb, err := strconv.ParseInt(strings.TrimSuffix(strings.TrimSpace(rest), " kB"), 10, 64)
		if err != nil || kb <= 0 || kb > 1<<50 {
			return 0, false
		}
		return kb << 10, true
	}
	return 0, false
}

// existingParent returns dir or its nearest ancestor that exists.
func existingParent(dir string) string {
	d := filepath.Clean(dir)
	for {
		if _, err := os.Stat(d); err == nil {
			return d
		}
		up := filepath.Dir(d)
		if up == d {
			return d
		}
		d = up
	}
}

// Format writes a byte count in binary units with three significant
// digits: "512 B", "1.5 GiB", "107 TiB".
func Format(n float64) string {
	units := []string{"B", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"}
	i := 0
	for n >= 1024 && i < len(units)-1 {
		n /= 1024
		i++
	}
	if i == 0 {
		return fmt.Sprintf("%.0f B", n)
	}
	return strconv.FormatFloat(n, 'g', 3, 64) + " " + units[i]
}
