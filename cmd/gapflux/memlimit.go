package main

import (
	"os"
	"runtime/debug"
)

// analysisMemoryBytes is the soft memory limit of one analysis. A 2 M-point
// scan holds some 130 MiB through levelling and gridding and some 200 MiB
// while the scan and its flat twin are solved at once (two solver
// workspaces of about 88 MiB with their solutions, the sensitivity
// table's coarse ones, the geometry's results). With the Go default (the
// heap may grow to twice what is live before it is collected) it peaks
// above 450 MB of resident memory; with the limit the collector runs
// earlier instead, and the resident peak follows the limit: on the PLY of
// scripts/bench.sh 262 MiB at 250 MiB, 240–243 MiB at 230 MiB and 234–235
// MiB (245 MB) at 224 MiB, with 13, 17 and 19 collections (about 80, 110
// and 100 ms in collection phases; CPU time the same within the host's
// noise). It is soft: a larger scan still runs, with the collector working
// harder.
const analysisMemoryBytes = 224 << 20

// setMemoryLimit sets the Go runtime's soft memory limit for analyses run
// at once, unless the GOMEMLIMIT environment variable sets one.
func setMemoryLimit(analyses int) {
	if _, ok := os.LookupEnv("GOMEMLIMIT"); ok || analyses < 1 {
		return
	}
	debug.SetMemoryLimit(int64(analyses) * analysisMemoryBytes)
}
