//go:build !linux

package main

import "os"

// peakRSSMiB is 0 outside Linux (ru_maxrss is in bytes on macOS and absent
// on Windows; not measured there).
func peakRSSMiB(*os.ProcessState) float64 { return 0 }
