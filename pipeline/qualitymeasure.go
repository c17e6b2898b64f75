package pipeline

import (
	"gapflux/scan"
)

// rimCover gives the rim figures of the data-quality gate from the
// gridding's rim sectors (scan.RimSectors sectors, each holding points in
// a band inside the rim or not; see scan.Coverage): the widest run of
// empty sectors, degrees, and the share of empty sectors, %.
func rimCover(missing []int) (gapDeg, missingPct float64) {
	n := scan.RimSectors
	empty := make([]bool, n)
	for _, k := range missing {
		if k >= 0 && k < n {
			empty[k] = true
		}
	}
	run, longest, count := 0, 0, 0
	for k := 0; k < 2*n; k++ { // twice round, for a run across the seam
		if !empty[k%n] {
			run = 0
			continue
		}
		if k < n {
			count++
		}
		run++
		longest = max(longest, min(run, n))
	}
	step := 360 / float64(n)
	return step * float64(longest), 100 * float64(count) / float64(n)
}
