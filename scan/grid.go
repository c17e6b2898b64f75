package scan

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/spatial/r3"
)

// DefaultCellM is the default grid cell edge, m.
const DefaultCellM = 0.5e-3

// DefaultOutlierK is the default outlier threshold in robust standard
// deviations.
const DefaultOutlierK = 5.0

// outlierSigmaFloorM is the smallest robust standard deviation the outlier
// tests use, m: below any scanner's noise (TRADE-FACTS.md section 5), it
// keeps noise-free data from flagging round-off and curvature.
const outlierSigmaFloorM = 1e-6

// maxGridCells bounds the grid size (a 4000×4000 grid).
const maxGridCells = 16 << 20

// GridOptions sets up Grid.
type GridOptions struct {
	// CellM is the cell edge length, m; 0 means DefaultCellM.
	CellM float64
	// OutlierK is the outlier threshold in robust standard deviations
	// (1.4826 × median absolute deviation); 0 means DefaultOutlierK and
	// +Inf turns the outlier tests off.
	OutlierK float64
	// MaxCells bounds the number of grid cells, checked before the grid is
	// allocated; 0 means the package's limit of 16 Mi cells.
	MaxCells int
}

// Gridded is a base's height field before the form filter.
type Gridded struct {
	// Raw holds the measured heights and, in holes and rejected cells, the
	// interpolated (Filled) ones.
	Raw *Surface
	// OutliersRemoved counts the samples the robust tests rejected: for a
	// point cloud, scan points (a point dropped by the per-cell test, or
	// every remaining point of a cell rejected by the neighbourhood test);
	// for a mesh, grid cells rejected by the neighbourhood test.
	OutliersRemoved int
	// CoveragePct is 100 × Measured cells / base cells, after the outlier
	// tests.
	CoveragePct float64
	// FillIterations is the number of conjugate-gradient iterations the
	// hole filling took.
	FillIterations int
	// Warnings holds notes for the report.
	Warnings []string
}

// Grid samples the levelled base on a square grid of cells centred on the
// base centre. Base cells are those whose centres lie within l.RadiusM of
// the origin; the grid is the smallest square of cells holding them, with
// cell (K, K) centred at the origin.
//
// A mesh (l.Cloud.Triangles not empty) is rasterised: each cell centre
// covered by a triangle takes the height interpolated linearly
// (barycentric) in that triangle, the lowest one when several triangles
// cover it (the outer face is the one that meets the hob). A point cloud
// takes, per cell, the median height of its points.
//
// Outliers are rejected by two robust tests, both with the threshold
// OutlierK robust standard deviations, estimated over the whole grid as
// 1.4826 × the median absolute deviation and floored at 1 µm:
//   - clouds only: a point further than the threshold from the median of
//     the other points of its cell is dropped (cells of three points or
//     more);
//   - every cell is compared with the median of the means of its
//     point-symmetric neighbour pairs in the 5×5 window around it (a
//     median filter that is exact on planes, also at the rim); for a
//     cloud the difference is scaled by the cell's point count to the
//     spread of one point. A cell off by more than the threshold is
//     rejected.
//
// Cells without data (holes) and rejected cells are filled with the
// harmonic (Laplace) interpolation of their neighbours, with zero normal
// slope at the rim, solved by conjugate gradients, and marked Filled.
func Grid(l *Levelled, opt GridOptions) (*Gridded, error) {
	if l == nil || l.Cloud == nil {
		return nil, errors.New("scan: grid: no levelled scan")
	}
	cell := opt.CellM
	if cell == 0 {
		cell = DefaultCellM
	}
	if !(cell > 0) || math.IsInf(cell, 0) {
		return nil, fmt.Errorf("scan: grid: cell length %g m is not positive and finite", opt.CellM)
	}
	k := opt.OutlierK
	if k == 0 {
		k = DefaultOutlierK
	}
	if !(k > 0) {
		return nil, fmt.Errorf("scan: grid: outlier threshold %g is not positive", opt.OutlierK)
	}
	r := l.RadiusM
	if !(r > 0) || math.IsInf(r, 0) {
		return nil, fmt.Errorf("scan: grid: base radius %g m is not positive and finite", r)
	}
	limit := float64(maxGridCells)
	if opt.MaxCells > 0 {
		limit = min(limit, float64(opt.MaxCells))
	}
	if sideF := 2*math.Floor(r/cell+1e-9) + 1; sideF*sideF > limit { // in floats: no overflow
		return nil, fmt.Errorf("scan: grid: %.0f×%.0f cells for a %.1f mm base at %.3g mm cells is too many (the limit is %.0f cells); use larger cells",
			sideF, sideF, 2e3*r, cell*1e3, limit)
	}
	half := int(math.Floor(r/cell + 1e-9))
	side := 2*half + 1
	s := NewSurface(side, side, cell, -float64(half)*cell, -float64(half)*cell)
	base := make([]bool, side*side)
	nBase := 0
	r2 := r * r * (1 + 1e-12)
	for j := range side {
		y := s.Y(j)
		for i := range side {
			x := s.X(i)
			if x*x+y*y <= r2 {
				base[j*side+i] = true
				nBase++
			}
		}
	}
	c := l.Cloud
	for i, p := range c.Points {
		if !finite3(p) {
			return nil, fmt.Errorf("scan: grid: point %d is not finite", i)
		}
	}
	g := &Gridded{Raw: s}
	have := make([]bool, side*side)
	var counts []int32
	if len(c.Triangles) > 0 {
		if err := rasterise(s, base, have, c); err != nil {
			return nil, err
		}
	} else {
		var dropped int
		dropped, counts = binCloud(s, base, have, c.Points, k)
		g.OutliersRemoved += dropped
	}
	g.OutliersRemoved += rejectCells(s, have, k, counts)

	nMeas := 0
	for p := range have {
		if have[p] {
			nMeas++
		}
	}
	if nMeas == 0 {
		return nil, errors.New("scan: grid: no scan data inside the base disc")
	}
	for p := range base {
		switch {
		case have[p]:
			s.State[p] = Measured
		case base[p]:
			s.State[p] = Filled
		default:
			s.State[p] = Outside
			s.ZM[p] = nan
		}
	}
	g.FillIterations = inpaint(s, have)
	g.CoveragePct = 100 * float64(nMeas) / float64(nBase)
	if g.CoveragePct < 90 {
		g.Warnings = append(g.Warnings, fmt.Sprintf("only %.1f %% of the base cells hold scan data; the rest is interpolated", g.CoveragePct))
	}
	return g, nil
}

// gridIndex returns the cell holding (x, y), or −1 off the grid.
func gridIndex(s *Surface, x, y float64) int {
	fi := math.Round((x - s.X0M) / s.CellM)
	fj := math.Round((y - s.Y0M) / s.CellM)
	if !(fi >= 0 && fj >= 0 && fi < float64(s.Nx) && fj < float64(s.Ny)) {
		return -1
	}
	return int(fj)*s.Nx + int(fi)
}

// binCloud sets each base cell holding points to the median height of its
// points. In cells of three points or more, a point whose leave-one-out
// residual (its height minus the median of the cell's other points) exceeds
// k robust standard deviations is dropped first. It returns the number of
// points dropped and the number of points left in each cell.
func binCloud(s *Surface, base, have []bool, pts []r3.Vec, k float64) (int, []int32) {
	n := s.Nx * s.Ny
	cellOf := make([]int32, len(pts))
	start := make([]int32, n+1)
	for i, p := range pts {
		q := gridIndex(s, p.X, p.Y)
		if q < 0 || !base[q] {
			cellOf[i] = -1
			continue
		}
		cellOf[i] = int32(q)
		start[q+1]++
	}
	for q := range n {
		start[q+1] += start[q]
	}
	zs := make([]float64, start[n])
	fill := append([]int32(nil), start[:n]...)
	for i, p := range pts {
		if q := cellOf[i]; q >= 0 {
			zs[fill[q]] = p.Z
			fill[q]++
		}
	}
	counts := make([]int32, n)
	for q := range n {
		a := zs[start[q]:start[q+1]]
		counts[q] = int32(len(a))
		if len(a) == 0 {
			continue
		}
		if len(a) >= 3 && !math.IsInf(k, 1) {
			sortSmall(a)
			s.ZM[q] = sortedMedian(a)
		} else {
			s.ZM[q] = medianInPlace(a)
		}
		have[q] = true
	}
	if math.IsInf(k, 1) {
		return 0, counts
	}
	// Robust spread of the leave-one-out residuals (subsampled).
	step := max(1, len(zs)/200000)
	var dev []float64
	for q := range n {
		a := zs[start[q]:start[q+1]]
		if len(a) < 3 {
			continue
		}
		for t := 0; t < len(a); t += step {
			dev = append(dev, math.Abs(looResidual(a, t)))
		}
	}
	if len(dev) == 0 {
		return 0, counts
	}
	lim := k * max(1.4826*medianInPlace(dev), outlierSigmaFloorM)
	dropped := 0
	var kept []float64
	for q := range n {
		a := zs[start[q]:start[q+1]]
		if len(a) < 3 {
			continue
		}
		kept = kept[:0]
		for t, z := range a {
			if math.Abs(looResidual(a, t)) <= lim {
				kept = append(kept, z)
			}
		}
		if len(kept) == len(a) {
			continue
		}
		dropped += len(a) - len(kept)
		counts[q] = int32(len(kept))
		if len(kept) == 0 {
			have[q] = false
			s.ZM[q] = nan
			continue
		}
		s.ZM[q] = sortedMedian(kept)
	}
	return dropped, counts
}

// sortedMedian returns the median of the sorted, non-empty slice a.
func sortedMedian(a []float64) float64 {
	n := len(a)
	if n%2 == 1 {
		return a[n/2]
	}
	return 0.5 * (a[n/2-1] + a[n/2])
}

// looResidual returns a[t] minus the median of the other values of the
// sorted slice a (len(a) ≥ 3).
func looResidual(a []float64, t int) float64 {
	n := len(a)
	m := n / 2
	var med float64
	if n%2 == 0 {
		// n−1 others, odd: their middle value.
		if t < m {
			med = a[m]
		} else {
			med = a[m-1]
		}
	} else {
		// n−1 others, even: mean of their two middle values.
		switch {
		case t < m:
			med = 0.5 * (a[m] + a[m+1])
		case t > m:
			med = 0.5 * (a[m-1] + a[m])
		default:
			med = 0.5 * (a[m-1] + a[m+1])
		}
	}
	return a[t] - med
}

// sortSmall sorts a in increasing order (insertion sort for short slices).
func sortSmall(a []float64) {
	if len(a) > 24 {
		slices.Sort(a)
		return
	}
	for i := 1; i < len(a); i++ {
		v := a[i]
		j := i - 1
		for j >= 0 && a[j] > v {
			a[j+1] = a[j]
			j--
		}
		a[j+1] = v
	}
}

// rasterise sets each base cell covered by a triangle to the lowest
// height interpolated at its centre.
func rasterise(s *Surface, base, have []bool, c *Cloud) error {
	pts := c.Points
	h := s.CellM
	for t, tri := range c.Triangles {
		for _, v := range tri {
			if v < 0 || int(v) >= len(pts) {
				return fmt.Errorf("scan: grid: triangle %d refers to vertex %d of %d", t, v, len(pts))
			}
		}
		p0, p1, p2 := pts[tri[0]], pts[tri[1]], pts[tri[2]]
		area := (p1.X-p0.X)*(p2.Y-p0.Y) - (p2.X-p0.X)*(p1.Y-p0.Y)
		if math.Abs(area) <= 1e-12*h*h {
			continue // degenerate in x-y (e.g. a vertical facet)
		}
		inv := 1 / area
		xmin, xmax := min(p0.X, p1.X, p2.X), max(p0.X, p1.X, p2.X)
		ymin, ymax := min(p0.Y, p1.Y, p2.Y), max(p0.Y, p1.Y, p2.Y)
		i0 := max(0, int(math.Ceil((xmin-s.X0M)/h-1e-9)))
		i1 := min(s.Nx-1, int(math.Floor((xmax-s.X0M)/h+1e-9)))
		j0 := max(0, int(math.Ceil((ymin-s.Y0M)/h-1e-9)))
		j1 := min(s.Ny-1, int(math.Floor((ymax-s.Y0M)/h+1e-9)))
		for j := j0; j <= j1; j++ {
			y := s.Y(j)
			for i := i0; i <= i1; i++ {
				q := j*s.Nx + i
				if !base[q] {
					continue
				}
				x := s.X(i)
				w0 := ((p1.X-x)*(p2.Y-y) - (p2.X-x)*(p1.Y-y)) * inv
				w1 := ((p2.X-x)*(p0.Y-y) - (p0.X-x)*(p2.Y-y)) * inv
				w2 := 1 - w0 - w1
				const eps = -1e-9
				if w0 < eps || w1 < eps || w2 < eps {
					continue
				}
				z := w0*p0.Z + w1*p1.Z + w2*p2.Z
				if !have[q] || z < s.ZM[q] {
					s.ZM[q] = z
					have[q] = true
				}
			}
		}
	}
	return nil
}

// pairOffsets are one of each point-symmetric pair of offsets in the 5×5
// window.
var pairOffsets = [12][2]int{
	{1, 0}, {2, 0},
	{-2, 1}, {-1, 1}, {0, 1}, {1, 1}, {2, 1},
	{-2, 2}, {-1, 2}, {0, 2}, {1, 2}, {2, 2},
}

// rejectCells compares each cell holding data with the median of its
// neighbour-pair means and drops those further than k robust standard
// deviations; for a cloud the differences are first scaled to the spread
// of a single point, since cells holding more points scatter less. It
// returns the number of rejected samples: the points the
// rejected cells held when counts (points per cell) is given, else cells.
func rejectCells(s *Surface, have []bool, k float64, counts []int32) int {
	if math.IsInf(k, 1) {
		return 0
	}
	n := s.Nx * s.Ny
	res := make([]float64, n)
	tested := make([]bool, n)
	var buf [12]float64
	var all []float64
	for j := range s.Ny {
		for i := range s.Nx {
			q := j*s.Nx + i
			if !have[q] {
				continue
			}
			m := 0
			for _, d := range pairOffsets {
				ia, ja, ib, jb := i+d[0], j+d[1], i-d[0], j-d[1]
				if ia < 0 || ia >= s.Nx || ib < 0 || ib >= s.Nx || ja < 0 || ja >= s.Ny || jb < 0 || jb >= s.Ny {
					continue
				}
				qa, qb := ja*s.Nx+ia, jb*s.Nx+ib
				if !have[qa] || !have[qb] {
					continue
				}
				buf[m] = 0.5 * (s.ZM[qa] + s.ZM[qb])
				m++
			}
			if m < 4 {
				continue
			}
			res[q] = s.ZM[q] - medianInPlace(buf[:m])
			if counts != nil {
				// Scale by the cell's own spread: a median of n points
				// varies like σ²·π/(2n) (σ²/n for n ≤ 2).
				n := float64(counts[q])
				if n >= 3 {
					n *= 2 / math.Pi
				}
				res[q] *= math.Sqrt(n)
			}
			tested[q] = true
			all = append(all, res[q])
		}
	}
	if len(all) == 0 {
		return 0
	}
	med := medianInPlace(append([]float64(nil), all...))
	for t := range all {
		all[t] = math.Abs(all[t] - med)
	}
	lim := k * max(1.4826*medianInPlace(all), outlierSigmaFloorM)
	count := 0
	for q := range n {
		if !tested[q] || math.Abs(res[q]-med) <= lim {
			continue
		}
		if counts != nil {
			count += int(counts[q])
		} else {
			count++
		}
		have[q] = false
		s.ZM[q] = nan
	}
	return count
}

// inpaint fills the base cells without data with the discrete harmonic
// interpolation of the cells with data (5-point Laplacian, zero normal
// slope at the rim) by Jacobi-preconditioned conjugate gradients. It
// returns the number of iterations.
func inpaint(s *Surface, have []bool) int {
	nx, ny := s.Nx, s.Ny
	n := nx * ny
	num := make([]int32, n)
	var unk []int32
	for q := range n {
		num[q] = -1
		if s.State[q] == Filled {
			num[q] = int32(len(unk))
			unk = append(unk, int32(q))
		}
	}
	if len(unk) == 0 {
		return 0
	}
	nbrs := func(q int, f func(p int)) {
		i, j := q%nx, q/nx
		if i > 0 && s.State[q-1] != Outside {
			f(q - 1)
		}
		if i < nx-1 && s.State[q+1] != Outside {
			f(q + 1)
		}
		if j > 0 && s.State[q-nx] != Outside {
			f(q - nx)
		}
		if j < ny-1 && s.State[q+nx] != Outside {
			f(q + nx)
		}
	}
	// Starting guess: peel the holes layer by layer from their edges,
	// each cell taking the mean of its neighbours already set.
	set := append([]bool(nil), have...)
	layer := make([]int32, 0, len(unk))
	inLayer := make([]bool, n)
	for _, q := range unk {
		hit := false
		nbrs(int(q), func(p int) { hit = hit || set[p] })
		if hit {
			layer = append(layer, q)
			inLayer[q] = true
		}
	}
	for len(layer) > 0 {
		for _, q := range layer {
			sum, cnt := 0.0, 0
			nbrs(int(q), func(p int) {
				if set[p] {
					sum += s.ZM[p]
					cnt++
				}
			})
			s.ZM[q] = sum / float64(cnt)
		}
		for _, q := range layer {
			set[q] = true
		}
		var next []int32
		for _, q := range layer {
			nbrs(int(q), func(p int) {
				if !set[p] && !inLayer[p] && s.State[p] == Filled {
					inLayer[p] = true
					next = append(next, int32(p))
				}
			})
		}
		layer = next
	}
	// A x = b with (A x)_u = deg_u x_u − Σ unknown neighbours,
	// b_u = Σ known neighbours.
	m := len(unk)
	deg := make([]float64, m)
	b := make([]float64, m)
	x := make([]float64, m)
	for t, q := range unk {
		nbrs(int(q), func(p int) {
			deg[t]++
			if num[p] < 0 {
				b[t] += s.ZM[p]
			}
		})
		x[t] = s.ZM[q]
	}
	apply := func(dst, v []float64) {
		for t, q := range unk {
			a := deg[t] * v[t]
			nbrs(int(q), func(p int) {
				if u := num[p]; u >= 0 {
					a -= v[u]
				}
			})
			dst[t] = a
		}
	}
	r := make([]float64, m)
	z := make([]float64, m)
	d := make([]float64, m)
	ad := make([]float64, m)
	apply(ad, x)
	bn := 0.0
	for t := range r {
		r[t] = b[t] - ad[t]
		bn += b[t] * b[t]
	}
	tol2 := 1e-24 * bn
	rz := 0.0
	for t := range r {
		z[t] = r[t] / deg[t]
		d[t] = z[t]
		rz += r[t] * z[t]
	}
	it := 0
	for ; it < 20000; it++ {
		rr := 0.0
		for _, v := range r {
			rr += v * v
		}
		if rr <= tol2 || rz == 0 {
			break
		}
		apply(ad, d)
		dad := 0.0
		for t := range d {
			dad += d[t] * ad[t]
		}
		if !(dad > 0) {
			break
		}
		alpha := rz / dad
		for t := range x {
			x[t] += alpha * d[t]
			r[t] -= alpha * ad[t]
		}
		rzNew := 0.0
		for t := range r {
			z[t] = r[t] / deg[t]
			rzNew += r[t] * z[t]
		}
		beta := rzNew / rz
		rz = rzNew
		for t := range d {
			d[t] = z[t] + beta*d[t]
		}
	}
	for t, q := range unk {
		s.ZM[q] = x[t]
	}
	return it
}

// medianInPlace returns the median of a (the mean of the two middle values
// for an even count), reordering a. It panics on an empty slice.
func medianInPlace(a []float64) float64 {
	n := len(a)
	if n == 0 {
		panic("scan: median of nothing")
	}
	k := n / 2
	v := quickSelect(a, k)
	if n%2 == 1 {
		return v
	}
	lo := a[0]
	for _, w := range a[1:k] {
		lo = max(lo, w)
	}
	return 0.5 * (lo + v)
}

// quickSelect reorders a so that a[k] is the k-th smallest value, with
// a[:k] ≤ a[k] ≤ a[k+1:], and returns it.
func quickSelect(a []float64, k int) float64 {
	lo, hi := 0, len(a)-1
	for hi-lo > 16 {
		mid := lo + (hi-lo)/2
		// Median of three as the pivot.
		if a[mid] < a[lo] {
			a[mid], a[lo] = a[lo], a[mid]
		}
		if a[hi] < a[lo] {
			a[hi], a[lo] = a[lo], a[hi]
		}
		if a[hi] < a[mid] {
			a[hi], a[mid] = a[mid], a[hi]
		}
		p := a[mid]
		i, j := lo, hi
		for i <= j {
			for a[i] < p {
				i++
			}
			for a[j] > p {
				j--
			}
			if i <= j {
				a[i], a[j] = a[j], a[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return a[k]
		}
	}
	for i := lo + 1; i <= hi; i++ {
		v := a[i]
		j := i - 1
		for j >= lo && a[j] > v {
			a[j+1] = a[j]
			j--
		}
		a[j+1] = v
	}
	return a[k]
}

func finite3(p r3.Vec) bool {
	return !math.IsNaN(p.X) && !math.IsInf(p.X, 0) && !math.IsNaN(p.Y) && !math.IsInf(p.Y, 0) &&
		!math.IsNaN(p.Z) && !math.IsInf(p.Z, 0)
}
