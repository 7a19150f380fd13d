//go:build linux || darwin || freebsd || netbsd || openbsd

package stages

import (
	"bytes"
	"os"
	"runtime"
	"strconv"
	"syscall"
)

// PeakRSS returns the peak resident memory of the process in bytes, or 0
// when it is not known. On Linux it is VmHWM of /proc/self/status, which
// starts afresh at exec (getrusage's figure can carry the peak of the
// parent that started the process); elsewhere getrusage's maximum.
func PeakRSS() int64 {
	if runtime.GOOS == "linux" {
		if b, err := os.ReadFile("/proc/self/status"); err == nil {
			if _, rest, ok := bytes.Cut(b, []byte("VmHWM:")); ok {
				f := bytes.Fields(rest)
				if len(f) > 0 {
					if kb, err := strconv.ParseInt(string(f[0]), 10, 64); err == nil {
						return kb * 1024
					}
				}
			}
		}
	}
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	if runtime.GOOS == "darwin" {
		return int64(ru.Maxrss) // bytes there
	}
	return int64(ru.Maxrss) * 1024 // kilobytes elsewhere
}

// CPUTime returns the processor time the process has used, user and
// system, in seconds.
func CPUTime() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}
