package scan

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/internal/hugemem"
	"gapflux/internal/order"
	"gapflux/internal/parallel"
)

// DefaultCellM is the cell edge used when the point spacing is unknown
// (fewer than two points), m; GridOptions.CellM = 0 follows AutoCellM.
const DefaultCellM = MinAutoCellM

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
	// CellM is the cell edge length, m; 0 means automatic: AutoCellM of
	// the measured point spacing.
	CellM float64
	// OutlierK is the outlier threshold in robust standard deviations
	// (1.4826 × median absolute deviation); 0 means DefaultOutlierK and
	// +Inf turns the outlier test off.
	OutlierK float64
	// MaxCells bounds the number of grid cells, checked before the grid is
	// allocated; 0 means the package's limit of 16 Mi cells.
	MaxCells int
	// MaxCellM bounds the automatic cell edge, m (e.g. a quarter of the
	// form filter's cut-off); 0 means MaxAutoCellM.
	MaxCellM float64
}

// Gridded is a base's height field before the form filter.
type Gridded struct {
	// Raw holds the measured heights and, in holes and rejected cells, the
	// interpolated (Filled) ones.
	Raw *Surface
	// PointSpacingM is the median nearest-neighbour distance (in x-y) of
	// the scan's points or vertices inside the base disc, m.
	PointSpacingM float64
	// OutliersRemoved counts the samples the local outlier test rejected:
	// scan points for a point cloud, grid cells for a mesh.
	OutliersRemoved int
	// Outliers lists, for a point cloud, the indices into the levelled
	// cloud's Points of the rejected points, in increasing order.
	Outliers []int32
	// OutlierSigmaM is the robust standard deviation of the samples about
	// the local reference surface, m (the outlier test's unit).
	OutlierSigmaM float64
	// CoveragePct is 100 × the share of the base disc within
	// CoverageSpacings point spacings of a measured point (see Coverage).
	CoveragePct float64
	// MeasuredCellsPct is 100 × the share of base cells holding data (the
	// rest is interpolated: Filled).
	MeasuredCellsPct float64
	// LargestHoleM is the diameter of the largest empty circle inside the
	// base, m; RimCompletenessPct and RimSectorsMissing say how much of the
	// rim holds points (see Coverage).
	LargestHoleM       float64
	RimCompletenessPct float64
	RimSectorsMissing  []int
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
// The cell edge is opt.CellM or, when it is 0, AutoCellM of the median
// nearest-neighbour spacing of the points (or mesh vertices) inside the
// base disc, which is reported as PointSpacingM.
//
// A mesh (l.Cloud.Triangles not empty) is rasterised: each cell centre
// covered by a triangle takes the height interpolated linearly
// (barycentric) in that triangle, the lowest one when several triangles
// cover it (the outer face is the one that meets the hob). A point cloud
// takes, per cell, the median height of its points.
//
// Outliers (spikes and short streaks) are found by LocalOutliers: each
// point of a cloud, or each rasterised cell of a mesh, is tested against a
// robust local reference surface fitted over a neighbourhood of several
// millimetres, so the test works when a cell holds one point or none.
// Rejected points are left out of the cells; rejected mesh cells lose
// their data.
//
// Cells without data (holes) and rejected cells are filled with the
// harmonic (Laplace) interpolation of their neighbours, with zero normal
// slope at the rim, solved by conjugate gradients, and marked Filled.
// Coverage, the largest hole and the rim's completeness are measured from
// the kept points (see Coverage).
func Grid(l *Levelled, opt GridOptions) (*Gridded, error) {
	k, err := checkGridInput(l, opt)
	if err != nil {
		return nil, err
	}
	r := l.RadiusM
	c := l.Cloud
	bp := basePoints(c.Points, r)
	sp := PointSpacing(bp.x, bp.y, math.Pi*r*r)
	g := &Gridded{PointSpacingM: sp.MedianM}
	cell, err := gridCell(opt, g.PointSpacingM, r)
	if err != nil {
		return nil, err
	}
	s, base, nBase := baseSurface(r, cell)
	g.Raw = s
	have := make([]bool, len(base))
	kept, bins, err := sampleBase(g, s, base, have, c, bp, k)
	if err != nil {
		return nil, err
	}
	nMeas, err := markStates(s, base, have)
	if err != nil {
		return nil, err
	}
	g.FillIterations = inpaint(s, have)
	g.MeasuredCellsPct = 100 * float64(nMeas) / float64(nBase)
	cv := measureCoverage(s, kept.x, kept.y, bins.order, bins.start, r, sp)
	g.CoveragePct, g.LargestHoleM = cv.CoveragePct, cv.LargestHoleM
	g.RimCompletenessPct, g.RimSectorsMissing = cv.RimCompletenessPct, cv.RimSectorsMissing
	if g.CoveragePct < 90 {
		g.Warnings = append(g.Warnings, fmt.Sprintf("only %.1f %% of the base lies within %.1f point spacings of a measured point; the rest is interpolated",
			g.CoveragePct, CoverageSpacings))
	}
	return g, nil
}

// checkGridInput validates the levelled scan and the grid options and
// returns the outlier threshold k (a multiple of the robust local sigma;
// DefaultOutlierK when opt.OutlierK is 0).
func checkGridInput(l *Levelled, opt GridOptions) (float64, error) {
	if l == nil || l.Cloud == nil {
		return 0, errors.New("scan: grid: no levelled scan")
	}
	if math.IsNaN(opt.MaxCellM) || math.IsInf(opt.MaxCellM, 0) || opt.MaxCellM < 0 {
		return 0, fmt.Errorf("scan: grid: largest cell %g m is not finite and non-negative", opt.MaxCellM)
	}
	if math.IsNaN(opt.CellM) || math.IsInf(opt.CellM, 0) || opt.CellM < 0 {
		return 0, fmt.Errorf("scan: grid: cell length %g m is not positive and finite (0 = automatic)", opt.CellM)
	}
	k := opt.OutlierK
	if k == 0 {
		k = DefaultOutlierK
	}
	if !(k > 0) {
		return 0, fmt.Errorf("scan: grid: outlier threshold %g is not positive", opt.OutlierK)
	}
	r := l.RadiusM
	if !(r > 0) || math.IsInf(r, 0) {
		return 0, fmt.Errorf("scan: grid: base radius %g m is not positive and finite", r)
	}
	// Ranges of points are checked at once; the first range's fault is
	// the one reported, as a sequential scan would.
	pts := l.Cloud.Points
	if i, bad := parallel.First(len(pts), rowParts(len(pts)), func(lo, hi int) (int, bool) {
		for i := lo; i < hi; i++ {
			if !finite3(pts[i]) {
				return i, true
			}
		}
		return 0, false
	}); bad {
		return 0, fmt.Errorf("scan: grid: point %d is not finite", i)
	}
	return k, nil
}

// gridCell returns the cell edge in m: opt.CellM, or AutoCellM of the
// median point spacing spacingM (m) capped at opt.MaxCellM. It fails when
// the square grid over a base of radius r (m) would exceed the cell limit.
func gridCell(opt GridOptions, spacingM, r float64) (float64, error) {
	cell := opt.CellM
	if cell == 0 {
		cell = AutoCellM(spacingM)
		if opt.MaxCellM > 0 {
			cell = min(cell, opt.MaxCellM)
		}
	}
	limit := float64(maxGridCells)
	if opt.MaxCells > 0 {
		limit = min(limit, float64(opt.MaxCells))
	}
	if sideF := 2*math.Floor(r/cell+1e-9) + 1; sideF*sideF > limit { // in floats: no overflow
		return 0, fmt.Errorf("scan: grid: %.0f×%.0f cells for a %.1f mm base at %.3g mm cells is too many (the limit is %.0f cells); use larger cells",
			sideF, sideF, 2e3*r, cell*1e3, limit)
	}
	return cell, nil
}

// baseSurface allocates the square surface of cell edge cell (m) centred
// on the origin that holds the base disc of radius r (m), and returns it
// with the mask of cells whose centres lie in the disc and their count.
func baseSurface(r, cell float64) (s *Surface, base []bool, nBase int) {
	half := int(math.Floor(r/cell + 1e-9))
	side := 2*half + 1
	s = NewSurface(side, side, cell, -float64(half)*cell, -float64(half)*cell)
	base = make([]bool, side*side)
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
	return s, base, nBase
}

// sampleBase fills the cells of s from the cloud c: a mesh is rasterised
// and its outlying cells rejected; a point cloud has its outlying points
// (threshold k robust sigmas) removed and is binned by median height. It
// sets have for every cell with data, records the outliers in g and
// returns the base points kept and, for a point cloud, their bins in the
// cells of s (none for a mesh).
func sampleBase(g *Gridded, s *Surface, base, have []bool, c *Cloud, bp samples, k float64) (samples, cellBins, error) {
	kept := bp
	if len(c.Triangles) > 0 {
		if err := rasterise(s, base, have, c); err != nil {
			return kept, cellBins{}, err
		}
		g.OutliersRemoved, g.OutlierSigmaM = rejectMeshCells(s, have, g.PointSpacingM, k)
		return kept, cellBins{}, nil
	}
	out, sigma := LocalOutliers(bp.x, bp.y, bp.z, g.PointSpacingM, k)
	g.OutlierSigmaM = sigma
	for t, o := range out {
		if o {
			g.Outliers = append(g.Outliers, bp.id[t])
		}
	}
	g.OutliersRemoved = len(g.Outliers)
	kept = bp.without(out)
	bins := binCloud(s, base, have, kept)
	return kept, bins, nil
}

// markStates sets each cell's state: Measured where it has data, Filled
// elsewhere in the base disc, Outside (height NaN) beyond it. It returns
// the number of measured cells, and an error when there are none.
func markStates(s *Surface, base, have []bool) (int, error) {
	nMeas := 0
	for p := range have {
		if have[p] {
			nMeas++
		}
	}
	if nMeas == 0 {
		return 0, errors.New("scan: grid: no scan data inside the base disc")
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
	return nMeas, nil
}

// samples are scan points inside the base disc: positions, heights and
// their indices in the cloud.
type samples struct {
	x, y, z []float64
	id      []int32
}

// basePoints returns the points within radius r of the origin, in
// order. Parts of the points are counted at once, then each part writes
// its points at its offset.
func basePoints(pts []r3.Vec, r float64) samples {
	r2 := r * r * (1 + 1e-12)
	parts := rowParts(len(pts))
	off := make([]int, parts+1)
	parallel.Do(len(pts), parts, func(k, i0, i1 int) {
		c := 0
		for _, p := range pts[i0:i1] {
			if p.X*p.X+p.Y*p.Y <= r2 {
				c++
			}
		}
		off[k+1] = c
	})
	for k := range parts {
		off[k+1] += off[k]
	}
	n := off[parts]
	s := samples{x: hugemem.Make[float64](n, 0), y: hugemem.Make[float64](n, 0), z: hugemem.Make[float64](n, 0), id: hugemem.Make[int32](n, 0)}
	parallel.Do(len(pts), parts, func(k, i0, i1 int) {
		o := off[k]
		for i := i0; i < i1; i++ {
			p := pts[i]
			if p.X*p.X+p.Y*p.Y <= r2 {
				s.x[o], s.y[o], s.z[o], s.id[o] = p.X, p.Y, p.Z, int32(i)
				o++
			}
		}
	})
	return s
}

// without removes, in place, the samples whose drop flag is true and
// returns the shortened samples (sharing s's storage).
func (s samples) without(drop []bool) samples {
	n := 0
	for t := range s.z {
		if drop[t] {
			continue
		}
		s.x[n], s.y[n], s.z[n], s.id[n] = s.x[t], s.y[t], s.z[t], s.id[t]
		n++
	}
	return samples{x: s.x[:n], y: s.y[:n], z: s.z[:n], id: s.id[:n]}
}

// rejectMeshCells runs LocalOutliers on the rasterised cells of a mesh and
// drops the rejected ones. It returns their count and the robust σ, m.
func rejectMeshCells(s *Surface, have []bool, spacingM, k float64) (int, float64) {
	m := 0
	for _, h := range have {
		if h {
			m++
		}
	}
	x, y, z := make([]float64, 0, m), make([]float64, 0, m), make([]float64, 0, m)
	qs := make([]int, 0, m)
	for q, h := range have {
		if h {
			x = append(x, s.X(q%s.Nx))
			y = append(y, s.Y(q/s.Nx))
			z = append(z, s.ZM[q])
			qs = append(qs, q)
		}
	}
	out, sigma := LocalOutliers(x, y, z, max(spacingM, s.CellM), k)
	n := 0
	for t, o := range out {
		if o {
			have[qs[t]] = false
			s.ZM[qs[t]] = nan
			n++
		}
	}
	return n, sigma
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

// binCloud sets each base cell holding samples to the median height of
// its samples, and returns the samples binned by cell of s (base or not;
// samples off the grid left out), for the coverage measures.
func binCloud(s *Surface, base, have []bool, sm samples) cellBins {
	n := s.Nx * s.Ny
	byCell, start := sortByCell(gridCells(s, sm.x, sm.y), n)
	// Each cell's heights are copied, in sample order, to its worker's
	// scratch: rows of cells at once.
	parallelRows(s.Ny, func(j0, j1 int) {
		var zs []float64
		for q := j0 * s.Nx; q < j1*s.Nx; q++ {
			ids := byCell[start[q]:start[q+1]]
			if len(ids) == 0 || !base[q] {
				continue
			}
			zs = zs[:0]
			for _, i := range ids {
				zs = append(zs, sm.z[i])
			}
			s.ZM[q] = medianOf(zs)
			have[q] = true
		}
	})
	return cellBins{order: byCell, start: start}
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

// inpaint fills the base cells without data with the discrete harmonic
// interpolation of the cells with data (5-point Laplacian, zero normal
// slope at the rim) by Jacobi-preconditioned conjugate gradients. It
// returns the number of iterations.
func inpaint(s *Surface, have []bool) int {
	h := newHoles(s)
	if len(h.unk) == 0 {
		return 0
	}
	h.peel(have)
	deg, b, x := h.system()
	it := h.solve(deg, b, x)
	for t, q := range h.unk {
		s.ZM[q] = x[t]
	}
	return it
}

// holes numbers the Filled cells of a surface (the unknowns of the
// harmonic fill): unk lists their cell indices, num maps a cell index to
// its unknown number or -1.
type holes struct {
	s   *Surface
	num []int32
	unk []int32
}

// newHoles numbers the Filled cells of s.
func newHoles(s *Surface) *holes {
	n := s.Nx * s.Ny
	h := &holes{s: s, num: make([]int32, n)}
	for q := range n {
		h.num[q] = -1
		if s.State[q] == Filled {
			h.num[q] = int32(len(h.unk))
			h.unk = append(h.unk, int32(q))
		}
	}
	return h
}

// nbrs calls f for each 4-neighbour of cell q that is not Outside, in
// the order left, right, below, above.
func (h *holes) nbrs(q int, f func(p int)) {
	s := h.s
	nx, ny := s.Nx, s.Ny
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

// peel writes the starting guess for the fill into s.ZM (m): the holes
// are peeled layer by layer from their edges, each cell taking the mean
// height of its neighbours already set (cells with data, have, are set
// from the start).
func (h *holes) peel(have []bool) {
	s := h.s
	set := append([]bool(nil), have...)
	layer := make([]int32, 0, len(h.unk))
	inLayer := make([]bool, s.Nx*s.Ny)
	for _, q := range h.unk {
		hit := false
		h.nbrs(int(q), func(p int) { hit = hit || set[p] })
		if hit {
			layer = append(layer, q)
			inLayer[q] = true
		}
	}
	for len(layer) > 0 {
		for _, q := range layer {
			sum, cnt := 0.0, 0
			h.nbrs(int(q), func(p int) {
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
			h.nbrs(int(q), func(p int) {
				if !set[p] && !inLayer[p] && s.State[p] == Filled {
					inLayer[p] = true
					next = append(next, int32(p))
				}
			})
		}
		layer = next
	}
}

// system assembles A x = b with (A x)_u = deg_u x_u − Σ unknown
// neighbours, b_u = Σ known neighbour heights (m); x starts from the
// current heights of the unknown cells (m).
func (h *holes) system() (deg, b, x []float64) {
	m := len(h.unk)
	deg = make([]float64, m)
	b = make([]float64, m)
	x = make([]float64, m)
	for t, q := range h.unk {
		h.nbrs(int(q), func(p int) {
			deg[t]++
			if h.num[p] < 0 {
				b[t] += h.s.ZM[p]
			}
		})
		x[t] = h.s.ZM[q]
	}
	return deg, b, x
}

// apply sets dst = A v for the fill's Laplacian A with diagonal deg.
func (h *holes) apply(dst, v, deg []float64) {
	for t, q := range h.unk {
		a := deg[t] * v[t]
		h.nbrs(int(q), func(p int) {
			if u := h.num[p]; u >= 0 {
				a -= v[u]
			}
		})
		dst[t] = a
	}
}

// solve runs Jacobi-preconditioned conjugate gradients on A x = b from
// the guess in x (m), until |r|² ≤ 1e-24 |b|² or 20000 iterations, and
// returns the number of iterations.
func (h *holes) solve(deg, b, x []float64) int {
	m := len(x)
	r := make([]float64, m)
	z := make([]float64, m)
	d := make([]float64, m)
	ad := make([]float64, m)
	h.apply(ad, x, deg)
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
		h.apply(ad, d, deg)
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
	v := order.Select(a, k)
	if n%2 == 1 {
		return v
	}
	lo := a[0]
	for _, w := range a[1:k] {
		lo = max(lo, w)
	}
	return 0.5 * (lo + v)
}

func finite3(p r3.Vec) bool {
	return !math.IsNaN(p.X) && !math.IsInf(p.X, 0) && !math.IsNaN(p.Y) && !math.IsInf(p.Y, 0) &&
		!math.IsNaN(p.Z) && !math.IsInf(p.Z, 0)
}
