package scan

import (
	"math"
	"slices"
	"sync"

	"gapflux/internal/hugemem"
	"gapflux/internal/order"
	"gapflux/internal/parallel"
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
	xmin, xmax, ymin, ymax := bounds(x, y)
	if len(x) == 0 {
		xmin, xmax, ymin, ymax = 0, 0, 0, 0
	}
	p.x0, p.y0 = xmin, ymin
	p.nx = int((xmax-xmin)/h) + 1
	p.ny = int((ymax-ymin)/h) + 1
	key := hugemem.Make[int32](len(x), 0)
	parallelRows(len(x), func(i0, i1 int) {
		for i := i0; i < i1; i++ {
			key[i] = int32(p.bucket(x[i], y[i]))
		}
	})
	p.ids, p.start = sortByCell(key, p.nx*p.ny)
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
	// Buckets of about four points: the few searches look at a few more
	// points each, the index of all points has a quarter of the buckets
	// to bin into (BenchmarkPointSpacing: about half the time), and the
	// nearest distance is the same for any bucket size.
	idx := newPointIndex(x, y, 2*h)
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
// cells are those not Outside). byCell and start bin the points by cell of
// s (as sortByCell returns them, points off the grid left out), or are nil
// to have them binned here.
func measureCoverage(s *Surface, x, y []float64, byCell, start []int32, r float64, sp Spacing) Coverage {
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
	if start == nil {
		byCell, start = sortByCell(gridCells(s, x, y), s.Nx*s.Ny)
	}
	seed := make([]bool, s.Nx*s.Ny)
	for q := range seed {
		seed[q] = start[q+1] > start[q]
	}
	nBase, nCov, pending := coveredCells(s, x, y, byCell, start, reach)
	nCov += coveredBySearch(s, x, y, pending, reach)
	if nBase > 0 {
		cv.CoveragePct = 100 * float64(nCov) / float64(nBase)
	}
	cv.LargestHoleM = largestHole(s, seed, r)
	cv.RimCompletenessPct, cv.RimSectorsMissing = rimCompleteness(x, y, r, sp.MedianM)
	return cv
}

// coveredCells returns the number of base cells of s, the number of
// those whose centre lies within reach (m) of one of the cell's own points
// (cell q's are byCell[start[q]:start[q+1]]) and the other base cells, in
// order. A cell holding points is covered without a look at them when
// reach spans half its diagonal.
func coveredCells(s *Surface, x, y []float64, byCell, start []int32, reach float64) (nBase, nCov int, pending []int32) {
	seedCovers := reach >= s.CellM*math.Sqrt2/2
	r2 := reach * reach
	open := make([]bool, s.Nx*s.Ny)
	// Rows of cells are counted at once; integer counts add up the same
	// in any order.
	var mu sync.Mutex
	parallelRows(s.Ny, func(j0, j1 int) {
		nb, nc := 0, 0
		for q := j0 * s.Nx; q < j1*s.Nx; q++ {
			if s.State[q] == Outside {
				continue
			}
			nb++
			ids := byCell[start[q]:start[q+1]]
			if len(ids) > 0 && seedCovers {
				nc++
				continue
			}
			cx, cy := s.X(q%s.Nx), s.Y(q/s.Nx)
			hit := false
			for _, id := range ids {
				// The test anyWithin makes.
				if dx, dy := x[id]-cx, y[id]-cy; dx*dx+dy*dy <= r2 {
					hit = true
					break
				}
			}
			if hit {
				nc++
			} else {
				open[q] = true
			}
		}
		mu.Lock()
		nBase, nCov = nBase+nb, nCov+nc
		mu.Unlock()
	})
	for q, o := range open {
		if o {
			pending = append(pending, int32(q))
		}
	}
	return nBase, nCov, pending
}

// coveredBySearch returns the number of the cells of s listed in cells
// whose centre lies within reach (m) of a point (x[i], y[i]), searched in
// an index of the points that can be (searchPoints).
func coveredBySearch(s *Surface, x, y []float64, cells []int32, reach float64) int {
	if len(cells) == 0 {
		return 0
	}
	sx, sy := searchPoints(s, x, y, reach, cells)
	if len(sx) == 0 {
		return 0
	}
	idx := newPointIndex(sx, sy, max(reach, s.CellM))
	var mu sync.Mutex
	nCov := 0
	parallelRows(len(cells), func(k0, k1 int) {
		nc := 0
		for _, q := range cells[k0:k1] {
			cx, cy := s.X(int(q)%s.Nx), s.Y(int(q)/s.Nx)
			if idx.anyWithin(sx, sy, cx, cy, reach) {
				nc++
			}
		}
		mu.Lock()
		nCov += nc
		mu.Unlock()
	})
	return nCov
}

// searchPoints returns the points (x[i], y[i]) that may lie within reach
// (m) of the centre of one of the cells of s listed in cells: those whose
// cell (the nearest cell of s for a point off the grid) is within
// ceil(reach/cell) + 1 cells, in either direction, of a listed one. A
// point within reach of a cell centre is never further from it than that,
// so a search among these finds what a search among all would. When
// marking the cells near the listed ones would cost more than a pass over
// the points, all points are returned.
func searchPoints(s *Surface, x, y []float64, reach float64, cells []int32) (sx, sy []float64) {
	d := int(math.Ceil(reach/s.CellM)) + 1
	if float64(len(cells))*float64(2*d+1)*float64(2*d+1) > 4*float64(len(x)+len(s.State)) {
		return x, y
	}
	near := make([]bool, s.Nx*s.Ny)
	for _, q := range cells {
		i, j := int(q)%s.Nx, int(q)/s.Nx
		for jj := max(0, j-d); jj <= min(s.Ny-1, j+d); jj++ {
			row := near[jj*s.Nx : (jj+1)*s.Nx]
			for ii := max(0, i-d); ii <= min(s.Nx-1, i+d); ii++ {
				row[ii] = true
			}
		}
	}
	return pointsNear(s, x, y, near)
}

// pointsNear returns, in order, the points (x[i], y[i]) whose cell of s
// (the nearest one for a point off the grid) is marked in near. Ranges of
// points are counted at once, then each writes its points at its offset.
func pointsNear(s *Surface, x, y []float64, near []bool) (sx, sy []float64) {
	in := func(i int) bool {
		ci := min(max(int(math.Round((x[i]-s.X0M)/s.CellM)), 0), s.Nx-1)
		cj := min(max(int(math.Round((y[i]-s.Y0M)/s.CellM)), 0), s.Ny-1)
		return near[cj*s.Nx+ci]
	}
	parts := rowParts(len(x))
	off := make([]int, parts+1)
	parallel.Do(len(x), parts, func(t, i0, i1 int) {
		for i := i0; i < i1; i++ {
			if in(i) {
				off[t+1]++
			}
		}
	})
	for t := range parts {
		off[t+1] += off[t]
	}
	sx, sy = make([]float64, off[parts]), make([]float64, off[parts])
	parallel.Do(len(x), parts, func(t, i0, i1 int) {
		o := off[t]
		for i := i0; i < i1; i++ {
			if in(i) {
				sx[o], sy[o] = x[i], y[i]
				o++
			}
		}
	})
	return sx, sy
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
	inner := r - band
	// A point clearly inside the band's inner circle (by far more than
	// rounding) needs no exact radius. Ranges of points are counted at
	// once, each into counts of its own; integer counts add up the same in
	// any order.
	clearIn := inner * inner * (1 - 1e-9)
	parts := rowParts(len(x))
	counts := make([][RimSectors]int, parts)
	parallel.Do(len(x), parts, func(t, i0, i1 int) {
		c := &counts[t]
		for i := i0; i < i1; i++ {
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
			c[k]++
		}
	})
	count := make([]int, RimSectors)
	for t := range counts {
		for k, c := range counts[t] {
			count[k] += c
		}
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
