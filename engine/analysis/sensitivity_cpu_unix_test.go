//go:build unix

package analysis

import (
	"syscall"
	"time"
)

// processCPU is the user+system CPU time of the test process (all threads), so
// benchmarks can report CPU per operation on a machine shared with other work.
func processCPU() time.Duration {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
