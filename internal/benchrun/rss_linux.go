package main

import (
	"os"
	"syscall"
)

// peakRSSMB is the child's peak resident set size, MB (Linux reports
// ru_maxrss in KiB, getrusage(2)).
func peakRSSMB(st *os.ProcessState) float64 {
	if ru, ok := st.SysUsage().(*syscall.Rusage); ok {
		return float64(ru.Maxrss) / 1024
	}
	return 0
}
