package scan

import (
	"math"
	"slices"
	"sync"

	"gapflux/internal/order"
)

// Coverage rules (our own choices, stated in the report's documentation).
const (
	// CoverageSpacings is the reach of a measured point for coverage, in
	// point spacings: a place of the base counts as measured when a point
	// lies within this many spacings of it.
	CoverageSpacings = 1.5
	// RimSectors is the number of equal angular sectors the rim is split
	// into for its completeness.
	RimSectors = 72
	// rimBandSpacings and rimBandMinM set the width of the band inside the
	// rim where a sector looks for points: max(3 spacings, 2 mm).
	rimBandSpacings = 3.0
	rimBandMinM     = 2e-3
	// rimSectorFill is the share of a sector's expected point count (band
	// area / spacing²) it needs to count as measured.
	rimSectorFill = 0.25
	// spacingSampleMax bounds the points whose nearest neighbour is
	// searched for the median spacing (a stride subsample beyond it).
	spacingSampleMax = 20000
	// MinAutoCellM and MaxAutoCellM bound the automatic cell size, m.
	MinAutoCellM = 0.5e-3
	MaxAutoCellM = 2e-3
	// autoCellStepM is the step the automatic cell size is rounded up to.
	autoCellStepM = 0.05e-3
)

// AutoCellM returns the grid cell edge for a scan of median point spacing
// spacingM, m: the spacing rounded up to 0.05 mm, no smaller than 0.5 mm
// (finer cells hold no more information than the scanner's noise allows at
// the 8 mm form cut-off) and no larger than 2 mm (the default 8 mm cut-off
// must span four cells). A spacing of 0 (unknown) gives 0.5 mm.
func AutoCellM(spacingM float64) float64 {
	c := math.Ceil(spacingM/autoCellStepM-1e-9) * autoCellStepM
	return min(max(c, MinAutoCellM), MaxAutoCellM)
}

// pointIndex is a square-bucket index of points in x-y.
type pointIndex struct {
	h      float64
	x0, y0 float64
	nx, ny int
	start  []int32
	ids    []int32
}

// newPointIndex indexes the points (x[i], y[i]) in buckets of edge h.
func newPointIndex(x, y []float64, h float64) *pointIndex {
	p := &pointIndex{h: h}
	xmin, xmax, ymin, ymax := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for i := range x {
		xmin, xmax = min(xmin, x[i]), max(xmax, x[i])
		ymin, ymax = min(ymin, y[i]), max(ymax, y[i])
	}
	if len(x) == 0 {
		xmin, xmax, ymin, ymax = 0, 0, 0, 0
	}
	p.x0, p.y0 = xmin, ymin
	p.nx = int((xmax-xmin)/h) + 1
	p.ny = int((ymax-ymin)/h) + 1
	nb := p.nx * p.ny
	p.start = make([]int32, nb+1)
	key := make([]int32, len(x))
	for i := range x {
		key[i] = int32(p.bucket(x[i], y[i]))
		p.start[key[i]+1]++
	}
	for b := range nb {
		p.start[b+1] += p.start[b]
	}
	fill := append([]int32(nil), p.start[:nb]...)
	p.ids = make([]int32, len(x))
	for i, b := range key {
		p.ids[fill[b]] = int32(i)
		fill[b]++
	}
	return p
}

func (p *pointIndex) bucket(x, y float64) int {
	i := min(max(int((x-p.x0)/p.h), 0), p.nx-1)
	j := min(max(int((y-p.y0)/p.h), 0), p.ny-1)
	return j*p.nx + i
}

// ring calls f with every point of the buckets at Chebyshev distance
// exactly d from bucket (bi, bj); f returns false to stop.
func (p *pointIndex) ring(bi, bj, d int, f func(id int32) bool) bool {
	for j := bj - d; j <= bj+d; j++ {
		if j < 0 || j >= p.ny {
			continue
		}
		step := 1
		if j != bj-d && j != bj+d {
			step = 2 * d
		}
		for i := bi - d; i <= bi+d; i += max(step, 1) {
			if i < 0 || i >= p.nx {
				continue
			}
			b := j*p.nx + i
			for _, id := range p.ids[p.start[b]:p.start[b+1]] {
				if !f(id) {
					return false
				}
			}
		}
	}
	return true
}

// nearest returns the distance from (x, y) to the nearest indexed point
// other than self that is more than minD away, searching no further than
// maxD (returns +Inf beyond).
func (p *pointIndex) nearest(xs, ys []float64, x, y float64, self int32, minD, maxD float64) float64 {
	bi := min(max(int((x-p.x0)/p.h), 0), p.nx-1)
	bj := min(max(int((y-p.y0)/p.h), 0), p.ny-1)
	best, best2 := math.Inf(1), math.Inf(1)
	minD2 := minD * minD
	if minD < 0 {
		minD2 = -1
	}
	maxRing := int(math.Ceil(maxD/p.h)) + 1
	for d := 0; d <= maxRing && d <= max(p.nx, p.ny); d++ {
		// Points in ring d are at least (d−1)·h away.
		if float64(d-1)*p.h > best {
			break
		}
		p.ring(bi, bj, d, func(id int32) bool {
			if id == self {
				return true
			}
			dx, dy := xs[id]-x, ys[id]-y
			dd := dx*dx + dy*dy
			if dd > minD2 && dd < best2 {
				best2 = dd
				best = math.Sqrt(dd)
			}
			return true
		})
	}
	if best > maxD {
		return math.Inf(1)
	}
	return best
}

// anyWithin reports whether an indexed point lies within reach of (x, y).
func (p *pointIndex) anyWithin(xs, ys []float64, x, y, reach float64) bool {
	bi := min(max(int((x-p.x0)/p.h), 0), p.nx-1)
	bj := min(max(int((y-p.y0)/p.h), 0), p.ny-1)
	r2 := reach * reach
	found := false
	for d := 0; d <= int(math.Ceil(reach/p.h))+1 && !found; d++ {
		p.ring(bi, bj, d, func(id int32) bool {
			dx, dy := xs[id]-x, ys[id]-y
			found = dx*dx+dy*dy <= r2
			return !found
		})
	}
	return found
}

// Spacing is the distribution of nearest-neighbour distances of a scan's
// points in x-y.
type Spacing struct {
	// MedianM is the median nearest-neighbour distance, m: the point
	// spacing reported.
	MedianM float64
	// P90M is its 90th percentile, m: the spacing coverage is measured
	// with, so that an irregular (random) cloud without holes is not
	// called incomplete (for a random cloud P90 ≈ 1.8 × the median; on a
	// lattice they are equal).
	P90M float64
}

// PointSpacing returns the nearest-neighbour distances in x-y of the
// points (x[i], y[i]) that lie in a disc of area areaM2, m; coincident
// points (closer than 1 nm, e.g. the shared vertices of a triangle soup)
// count as one. It is zero for fewer than two points. At most 20 000
// points (an even stride) are searched.
func PointSpacing(x, y []float64, areaM2 float64) Spacing {
	n := len(x)
	if n < 2 {
		return Spacing{}
	}
	h := math.Sqrt(areaM2 / float64(n))
	if !(h > 0) || math.IsInf(h, 0) {
		return Spacing{}
	}
	idx := newPointIndex(x, y, h)
	step := max(1, n/spacingSampleMax)
	// The searches are shared between the processors, each into its own
	// slot; the finite distances are then taken in sample order.
	all := make([]float64, (n+step-1)/step)
	parallelRows(len(all), func(s0, s1 int) {
		for s := s0; s < s1; s++ {
			i := s * step
			all[s] = idx.nearest(x, y, x[i], y[i], int32(i), 1e-9, math.Sqrt(areaM2))
		}
	})
	d := all[:0]
	for _, v := range all {
		if !math.IsInf(v, 1) {
			d = append(d, v)
		}
	}
	if len(d) == 0 {
		return Spacing{}
	}
	med := medianInPlace(d)
	return Spacing{MedianM: med, P90M: order.Select(d, min(len(d)-1, len(d)*9/10))}
}

// Coverage describes how much of the base disc the scan measured.
type Coverage struct {
	// CoveragePct is 100 × the share of the base disc within
	// CoverageSpacings point spacings (Spacing.P90M) of a measured point
	// (sampled at the grid's base cell centres).
	CoveragePct float64
	// LargestHoleM is the diameter of the largest circle inside the base
	// disc that holds no measured point, m (from a Euclidean distance
	// transform of the grid's cells holding points; within about a cell).
	LargestHoleM float64
	// RimCompletenessPct is 100 × the share of the RimSectors equal
	// angular sectors whose band inside the rim (max(3 spacings, 2 mm)
	// wide) holds at least a quarter of the points its area should hold.
	RimCompletenessPct float64
	// RimSectorsMissing lists the incomplete sectors; sector k spans the
	// angles [k, k+1)·360°/RimSectors counter-clockwise from +x.
	RimSectorsMissing []int
}

// measureCoverage computes the Coverage of the base disc of radius r by the
// measured points (x[i], y[i]) of spacing sp, on the cells of s (base
// cells are those not Outside).
func measureCoverage(s *Surface, x, y []float64, r float64, sp Spacing) Coverage {
	var cv Coverage
	if len(x) == 0 {
		cv.RimSectorsMissing = make([]int, RimSectors)
		for k := range cv.RimSectorsMissing {
			cv.RimSectorsMissing[k] = k
		}
		cv.LargestHoleM = 2 * r
		return cv
	}
	reach := CoverageSpacings * sp.P90M
	if !(reach > 0) {
		reach = s.CellM
	}
	idx := newPointIndex(x, y, max(reach, s.CellM))
	n := s.Nx * s.Ny
	seed := make([]bool, n)
	for i := range x {
		if q := gridIndex(s, x[i], y[i]); q >= 0 {
			seed[q] = true
		}
	}
	// Rows of cells are counted at once; integer counts add up the same
	// in any order.
	var mu sync.Mutex
	nBase, nCov := 0, 0
	parallelRows(s.Ny, func(j0, j1 int) {
		nb, nc := 0, 0
		for q := j0 * s.Nx; q < j1*s.Nx; q++ {
			if s.State[q] == Outside {
				continue
			}
			nb++
			if seed[q] && reach >= s.CellM*math.Sqrt2/2 {
				nc++
				continue
			}
			cx, cy := s.X(q%s.Nx), s.Y(q/s.Nx)
			if idx.anyWithin(x, y, cx, cy, reach) {
				nc++
			}
		}
		mu.Lock()
		nBase, nCov = nBase+nb, nCov+nc
		mu.Unlock()
	})
	if nBase > 0 {
		cv.CoveragePct = 100 * float64(nCov) / float64(nBase)
	}
	cv.LargestHoleM = largestHole(s, seed, r)
	cv.RimCompletenessPct, cv.RimSectorsMissing = rimCompleteness(x, y, r, sp.MedianM)
	return cv
}

// largestHole returns the diameter of the largest circle centred on a base
// cell of s, inside the disc of radius r, that reaches no seed cell, m.
func largestHole(s *Surface, seed []bool, r float64) float64 {
	d2 := distanceTransform(s.Nx, s.Ny, seed)
	best := 0.0
	for q, v := range d2 {
		if s.State[q] == Outside {
			continue
		}
		cx, cy := s.X(q%s.Nx), s.Y(q/s.Nx)
		rad := min(math.Sqrt(v)*s.CellM, r-math.Hypot(cx, cy))
		best = max(best, rad)
	}
	return 2 * best
}

// distanceTransform returns, for every cell of an nx×ny grid, the squared
// Euclidean distance in cells to the nearest seed cell (+Inf without
// seeds), by the separable lower-envelope algorithm of Felzenszwalb &
// Huttenlocher (2012), "Distance transforms of sampled functions", Theory
// of Computing 8, 415–428: linear in the number of cells.
func distanceTransform(nx, ny int, seed []bool) []float64 {
	inf := math.Inf(1)
	d := make([]float64, nx*ny)
	for q := range d {
		if !seed[q] {
			d[q] = inf
		}
	}
	buf := make([]float64, max(nx, ny))
	out := make([]float64, max(nx, ny))
	v := make([]int, max(nx, ny))
	z := make([]float64, max(nx, ny)+1)
	for j := range ny {
		row := d[j*nx : (j+1)*nx]
		copy(buf, row)
		dt1(buf[:nx], out[:nx], v, z)
		copy(row, out[:nx])
	}
	for i := range nx {
		for j := range ny {
			buf[j] = d[j*nx+i]
		}
		dt1(buf[:ny], out[:ny], v, z)
		for j := range ny {
			d[j*nx+i] = out[j]
		}
	}
	return d
}

// dt1 is the one-dimensional squared distance transform of f into out.
func dt1(f, out []float64, v []int, z []float64) {
	n := len(f)
	k := -1
	for q := range n {
		if math.IsInf(f[q], 1) {
			continue
		}
		fq := f[q] + float64(q*q)
		for k >= 0 {
			p := v[k]
			s := (fq - (f[p] + float64(p*p))) / float64(2*(q-p))
			if s <= z[k] {
				k--
				continue
			}
			k++
			v[k], z[k] = q, s
			break
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
	for q := range n {
		for z[j+1] < float64(q) {
			j++
		}
		dq := float64(q - v[j])
		out[q] = dq*dq + f[v[j]]
	}
}

// rimCompleteness returns the share of the RimSectors sectors whose band
// inside the rim holds enough points, and the missing sectors.
func rimCompleteness(x, y []float64, r, spacingM float64) (float64, []int) {
	band := max(rimBandSpacings*spacingM, rimBandMinM)
	band = min(band, r)
	count := make([]int, RimSectors)
	inner := r - band
	// A point clearly inside the band's inner circle (by far more than
	// rounding) needs no exact radius.
	clearIn := inner * inner * (1 - 1e-9)
	for i := range x {
		if x[i]*x[i]+y[i]*y[i] < clearIn {
			continue
		}
		rr := math.Hypot(x[i], y[i])
		if rr < inner || rr > r*(1+1e-9) {
			continue
		}
		a := math.Atan2(y[i], x[i])
		if a < 0 {
			a += 2 * math.Pi
		}
		k := min(int(a/(2*math.Pi)*RimSectors), RimSectors-1)
		count[k]++
	}
	need := 1.0
	if spacingM > 0 {
		area := math.Pi * (r*r - inner*inner) / RimSectors
		need = max(1, rimSectorFill*area/(spacingM*spacingM))
	}
	var missing []int
	for k, c := range count {
		if float64(c) < need {
			missing = append(missing, k)
		}
	}
	pct := 100 * float64(RimSectors-len(missing)) / RimSectors
	return pct, slices.Clip(missing)
}
