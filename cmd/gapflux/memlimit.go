package main

import (
	"os"
	"runtime/debug"
)

// analysisMemoryBytes is the soft memory limit of one analysis: a 2 M-point
// scan holds some 150 MB through levelling and gridding and up to some
// 245 MB while the scan and its flat twin are solved and heated up at once,
// and with the Go default (the heap may grow to twice what is live before
// it is collected) it peaks above 450 MB of resident memory. With the limit
// the collector runs earlier instead (measured on the PLY of
// scripts/bench.sh: 262 MB peak, no more CPU time than with 300 MiB, which
// peaked at 302 MB). It is soft: a larger scan still runs, with the
// collector working harder.
const analysisMemoryBytes = 250 << 20

// setMemoryLimit sets the Go runtime's soft memory limit for analyses run
// at once, unless the GOMEMLIMIT environment variable sets one.
func setMemoryLimit(analyses int) {
	if _, ok := os.LookupEnv("GOMEMLIMIT"); ok || analyses < 1 {
		return
	}
	debug.SetMemoryLimit(int64(analyses) * analysisMemoryBytes)
}
