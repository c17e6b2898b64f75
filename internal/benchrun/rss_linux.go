package main

import (
	"os"
	"syscall"
)

// usage returns the child's peak resident set size, MiB (Linux reports
// ru_maxrss in KiB), and its minor page faults (ru_minflt), getrusage(2).
func usage(st *os.ProcessState) (rssMiB, faults float64) {
	if ru, ok := st.SysUsage().(*syscall.Rusage); ok {
		return float64(ru.Maxrss) / 1024, float64(ru.Minflt)
	}
	return 0, 0
}
