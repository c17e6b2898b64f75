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
// at once (analyze: 1; batch and demo: their workers), unless the
// GOMEMLIMIT environment variable sets one. A batch without it peaked at
// 447 MiB of resident memory with one worker on the scans of
// scripts/bench.sh, as analyze did before it had one.
func setMemoryLimit(analyses int) {
	if limit, ok := memoryLimitFor(analyses); ok {
		debug.SetMemoryLimit(limit)
	}
}

// maxLimitedAnalyses bounds the analyses the limit is sized for: 1024 of
// them ask for 224 GiB, no limit on the machines a lab runs this on, and
// a larger --workers must not overflow the product.
const maxLimitedAnalyses = 1024

// memoryLimitFor returns the soft memory limit, bytes, for analyses run
// at once, and false when none is to be set: GOMEMLIMIT is set, or
// analyses < 1 (a batch's default, one per processor, is set by the
// batch itself).
func memoryLimitFor(analyses int) (int64, bool) {
	if _, ok := os.LookupEnv("GOMEMLIMIT"); ok || analyses < 1 {
		return 0, false
	}
	return int64(min(analyses, maxLimitedAnalyses)) * analysisMemoryBytes, true
}
