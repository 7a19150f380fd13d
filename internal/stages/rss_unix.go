//go:build linux || darwin || freebsd || netbsd || openbsd

package stages

import (
	"runtime"
	"syscall"
)

// PeakRSS returns the peak resident memory of the process in bytes (the
// high-water mark getrusage reports), or 0 when it is not known.
func PeakRSS() int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	if runtime.GOOS == "darwin" {
		return int64(ru.Maxrss) // bytes there
	}
	return int64(ru.Maxrss) * 1024 // kilobytes elsewhere
}
