package main

import (
	"os"
	"runtime/debug"
)

// analysisMemoryBytes is the soft memory limit of one analysis. A 2 M-point
// scan holds some 130 MB through levelling and gridding and some 215 MB
// while the scan and its flat twin are solved at once (two solver
// workspaces of about 90 MB and the geometry's results). With the Go
// default (the heap may grow to twice what is live before it is collected)
// it peaks above 450 MB of resident memory; with the limit the collector
// runs earlier instead, and the resident peak follows the limit: on the
// PLY of scripts/bench.sh 262 MB at 250 MiB, 242 MB at 230 MiB (and 233 MB
// at 220 MiB, too close to what is live). It is soft: a larger scan still
// runs, with the collector working harder.
const analysisMemoryBytes = 230 << 20

// setMemoryLimit sets the Go runtime's soft memory limit for analyses run
// at once, unless the GOMEMLIMIT environment variable sets one.
func setMemoryLimit(analyses int) {
	if _, ok := os.LookupEnv("GOMEMLIMIT"); ok || analyses < 1 {
		return
	}
	debug.SetMemoryLimit(int64(analyses) * analysisMemoryBytes)
}
