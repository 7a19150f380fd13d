//go:build unix

package plotting

import (
	"syscall"
	"time"
)

// cpuTime returns the user plus system CPU time of this process, a steadier
// measure than wall time on a shared, loaded machine.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
