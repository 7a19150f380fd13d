//go:build !(linux || darwin || freebsd || netbsd || openbsd)

package stages

// PeakRSS returns 0: the system's peak resident memory is not read here.
func PeakRSS() int64 { return 0 }

// CPUTime returns 0: the processor time is not read here.
func CPUTime() float64 { return 0 }
