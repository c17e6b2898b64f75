//go:build unix

package scan

import (
	"syscall"
	"time"
)

// cpuTime returns the CPU time used by the process so far. Benchmarks
// report throughput per CPU second too, since wall time on a shared
// machine says little about one core.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
