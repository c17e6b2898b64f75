package pipeline

import (
	"math"

	"gapflux/scan"
)

// baseCover holds the coverage figures of the data-quality gate, measured on
// the gridded base from its cell states. It stands in until the scan
// package measures them from the points themselves (issue 8 part 2).
type baseCover struct {
	// SpacingM is the point spacing estimated from the point count: the
	// side of the square each point of the base stands for, m.
	SpacingM float64
	// ReachM is how near a measured cell a base cell must lie to count as
	// covered: 1.5 spacings, m.
	ReachM float64
	// CoveragePct is the share of base cells within ReachM of a measured
	// cell, %.
	CoveragePct float64
	// LargestHoleM is the diameter of the largest circle centred in the
	// base that holds no measured cell centre, m.
	LargestHoleM float64
	// RimLargestGapDeg is the widest arc with no measured cell within
	// the rim band, degrees; RimMissingPct the share of the rim's angle
	// with none, %.
	RimLargestGapDeg, RimMissingPct float64
	// RimBandM is the width of the rim band, m.
	RimBandM float64
}

// coverageReach is the reach of a measured point, in point spacings
// (issue 8: "within about one and a half spacings").
const coverageReach = 1.5

// measureCover measures the coverage figures of the base grid s (cells
// Measured, Filled or Outside) of a base of radius radiusM holding points
// scan points.
func measureCover(s *scan.Surface, radiusM float64, points int) baseCover {
	nBase := 0
	for k := range s.State {
		if s.InBase(k) {
			nBase++
		}
	}
	var c baseCover
	c.SpacingM = math.Sqrt(math.Pi * radiusM * radiusM / float64(max(points, 1)))
	c.ReachM = coverageReach * c.SpacingM
	if nBase == 0 {
		c.CoveragePct, c.LargestHoleM, c.RimLargestGapDeg, c.RimMissingPct = 0, 2*radiusM, 360, 100
		return c
	}
	d2 := measuredDistance2(s) // squared distances in cells
	reach2 := math.Pow(c.ReachM/s.CellM, 2)
	covered, far := 0, 0.0
	for k, st := range s.State {
		if st == scan.Outside {
			continue
		}
		if d2[k] <= reach2 {
			covered++
		}
		if d2[k] > far {
			far = d2[k]
		}
	}
	c.CoveragePct = 100 * float64(covered) / float64(nBase)
	c.LargestHoleM = math.Min(2*math.Sqrt(far)*s.CellM, 2*radiusM)
	c.RimBandM = max(3*c.SpacingM, 4*s.CellM)
	c.RimLargestGapDeg, c.RimMissingPct = rimGaps(s, radiusM, c.RimBandM, max(s.CellM, c.SpacingM))
	return c
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

// measuredDistance2 returns, per cell of s, the squared Euclidean distance
// in cells to the nearest Measured cell centre (+Inf when there is none),
// by the exact separable transform of Felzenszwalb & Huttenlocher (2012,
// "Distance transforms of sampled functions", Theory of Computing 8,
// 415–428, section 3): a 1-D lower envelope of parabolas along each row,
// then along each column. Time linear in the number of cells.
func measuredDistance2(s *scan.Surface) []float64 {
	nx, ny := s.Nx, s.Ny
	d := make([]float64, nx*ny)
	for k, st := range s.State {
		if st == scan.Measured {
			d[k] = 0
		} else {
			d[k] = math.Inf(1)
		}
	}
	// Rows first, into a transposed copy, so that both passes read
	// contiguous lines.
	tr := make([]float64, nx*ny)
	out := make([]float64, max(nx, ny))
	v, z := make([]int, max(nx, ny)), make([]float64, max(nx, ny)+1)
	for j := 0; j < ny; j++ {
		dt1(d[j*nx:(j+1)*nx], out[:nx], v, z)
		for i, x := range out[:nx] {
			tr[i*ny+j] = x
		}
	}
	for i := 0; i < nx; i++ {
		dt1(tr[i*ny:(i+1)*ny], out[:ny], v, z)
		for j, x := range out[:ny] {
			d[j*nx+i] = x
		}
	}
	return d
}

// dt1 is the 1-D squared-distance transform of f (Felzenszwalb &
// Huttenlocher 2012, algorithm DT(f)): out[q] = min_p (q−p)² + f[p]. v and
// z are scratch of lengths len(f) and len(f)+1. Infinite samples (no
// measured cell) are skipped; a line without any stays infinite.
func dt1(f, out []float64, v []int, z []float64) {
	k := -1
	for q := range f {
		if math.IsInf(f[q], 1) {
			continue
		}
		fq := f[q] + float64(q*q)
		for k >= 0 {
			p := v[k]
			sep := (fq - (f[p] + float64(p*p))) / float64(2*(q-p))
			if sep > z[k] {
				k++
				v[k], z[k] = q, sep
				break
			}
			k--
		}
		if k < 0 {
			k = 0
			v[0], z[0] = q, math.Inf(-1)
		}
		z[k+1] = math.Inf(1)
	}
	if k < 0 {
		for q := range out {
			out[q] = math.Inf(1)
		}
		return
	}
	j := 0
	for q := range f {
		for z[j+1] < float64(q) {
			j++
		}
		p := v[j]
		out[q] = float64((q-p)*(q-p)) + f[p]
	}
}
