package pipeline

import (
	"math"

	"gapflux/scan"
)

// rimCover measures the rim's completeness for the data-quality gate on
// the gridded base s of radius radiusM whose points lie spacingM apart
// (scan.Gridded.PointSpacingM): the widest arc, degrees, and the share of
// the rim's angle, %, with no measured cell in a band of max(3 spacings,
// 4 cells) inside the rim. (Coverage and the largest hole come from the
// gridding itself, measured from the points.)
func rimCover(s *scan.Surface, radiusM, spacingM float64) (gapDeg, missingPct float64) {
	bandM := max(3*spacingM, 4*s.CellM)
	return rimGaps(s, radiusM, bandM, max(s.CellM, spacingM))
}

// rimGaps splits the rim into angular sectors at least two cells (or point
// spacings, stepM) long and returns the widest run of sectors, degrees, and
// the share of sectors, %, without a measured cell in the band of width
// bandM inside the rim.
func rimGaps(s *scan.Surface, radiusM, bandM, stepM float64) (gapDeg, missingPct float64) {
	n := int(math.Min(360, math.Floor(2*math.Pi*radiusM/(2*stepM))))
	if n < 4 {
		n = 4
	}
	seen := make([]bool, n)
	inner := math.Max(radiusM-bandM, 0)
	for j := 0; j < s.Ny; j++ {
		for i := 0; i < s.Nx; i++ {
			if s.State[s.Index(i, j)] != scan.Measured {
				continue
			}
			x, y := s.X(i), s.Y(j)
			if math.Hypot(x, y) < inner {
				continue
			}
			a := math.Atan2(y, x)/(2*math.Pi) + 0.5 // [0, 1]
			seen[min(int(a*float64(n)), n-1)] = true
		}
	}
	empty, run, longest := 0, 0, 0
	for k := 0; k < 2*n; k++ { // twice round, for a run across the seam
		if !seen[k%n] {
			if k < n {
				empty++
			}
			run++
			longest = max(longest, min(run, n))
		} else {
			run = 0
		}
	}
	return 360 * float64(longest) / float64(n), 100 * float64(empty) / float64(n)
}
