//go:build !linux

package main

import "os"

// usage returns 0, 0 outside Linux (ru_maxrss is in bytes on macOS and
// absent on Windows; not measured there).
func usage(*os.ProcessState) (rssMiB, faults float64) { return 0, 0 }
