package main

import (
	"os"
	"syscall"
)

// peakRSSMiB is the child's peak resident set size, MiB (Linux reports
// ru_maxrss in KiB, getrusage(2)).
func peakRSSMiB(st *os.ProcessState) float64 {
	if ru, ok := st.SysUsage().(*syscall.Rusage); ok {
		return float64(ru.Maxrss) / 1024
	}
	return 0
}
