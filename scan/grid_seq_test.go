package scan

import (
	"math"
	"slices"
	"sync"
)

// The sequential gridding and outlier test as they were before the
// stage was split between processors: the oracle the parallel code must
// match bit for bit.

// localOutliersSeq is LocalOutliers, one pass over the samples at a time.
func localOutliersSeq(x, y, z []float64, spacingM, k float64) (out []bool, sigmaM float64) {
	n := len(z)
	out = make([]bool, n)
	if n == 0 || math.IsInf(k, 1) {
		return out, 0
	}
	cutoff := max(OutlierCutoffM, outlierCutoffSpacings*spacingM)
	g := newRefGridSeq(x, y, cutoff/refCellsPerCutoff)
	nc := g.nx * g.ny
	cellOf := make([]int32, n)
	for i := range n {
		cellOf[i] = int32(g.cell(x[i], y[i]))
	}
	byCell, cellStart := samplesByCellSeq(cellOf, nc)
	f := refStartSeq(g, byCell, cellStart, z)
	reg := newGaussRegression(g.nx, g.ny, refCellsPerCutoff, 1)
	w := make([]float64, nc)
	wz := make([]float64, nc)
	res := make([]float64, n)
	fNew := make([]float64, nc)
	has := func(q int) bool { return true }
	sigma := 0.0
	for it := 0; it < outlierMaxIter; it++ {
		residuals(g, f, x, y, z, res)
		sigma = max(madToSigma*madOf(res), outlierSigmaFloorM)
		c := BiweightC / madToSigma * sigma
		if it == 0 {
			c *= 2 // the median start is rougher than a fit
		}
		clear(w)
		clear(wz)
		for i := range n {
			q := cellOf[i]
			if math.IsNaN(res[i]) || math.IsNaN(f[q]) {
				continue
			}
			bw := biweight(res[i], c)
			if bw == 0 {
				continue
			}
			w[q] += bw
			wz[q] += bw * (res[i] + f[q])
		}
		for q := range nc {
			if w[q] > 0 {
				wz[q] /= w[q]
			}
		}
		for q := range fNew {
			fNew[q] = nan
		}
		reg.apply(w, wz, fNew, has)
		moved := 0.0
		for q := range nc {
			if math.IsNaN(fNew[q]) {
				continue
			}
			if !math.IsNaN(f[q]) {
				moved = max(moved, math.Abs(fNew[q]-f[q]))
			} else {
				moved = math.Inf(1)
			}
		}
		f, fNew = fNew, f
		if moved < 0.25*sigma {
			break
		}
	}
	residuals(g, f, x, y, z, res)
	sigma = max(madToSigma*madOf(res), outlierSigmaFloorM)
	// The local scale: the 7×7-cell median of the cells' median |r|.
	// Where the reference cannot follow the form (a kink, a sharp bend)
	// most residuals around grow and so does the limit; isolated spikes
	// and streaks are too few to move a median.
	// res becomes |r| in place (0 for NaN, which no limit exceeds either).
	abs := res
	for i, r := range res {
		abs[i] = math.Abs(r)
		if math.IsNaN(r) {
			abs[i] = 0
		}
	}
	local := refStartSeq(g, byCell, cellStart, abs)
	for i, a := range abs {
		s := sigma
		if v := local[cellOf[i]]; !math.IsNaN(v) {
			s = max(s, madToSigma*v)
		}
		out[i] = a > k*s
	}
	return out, sigma
}

// samplesByCell returns the sample indices sorted by cell, each cell's in
// index order: cell q's are byCell[start[q]:start[q+1]].
func samplesByCellSeq(cellOf []int32, nc int) (byCell, start []int32) {
	start = make([]int32, nc+1)
	for _, q := range cellOf {
		start[q+1]++
	}
	for q := range nc {
		start[q+1] += start[q]
	}
	byCell = make([]int32, len(cellOf))
	fill := append([]int32(nil), start[:nc]...)
	for i, q := range cellOf {
		byCell[fill[q]] = int32(i)
		fill[q]++
	}
	return byCell, start
}

// newRefGridSeq is newRefGrid in one pass.
func newRefGridSeq(x, y []float64, h float64) refGrid {
	xmin, xmax, ymin, ymax := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for i := range x {
		xmin, xmax = min(xmin, x[i]), max(xmax, x[i])
		ymin, ymax = min(ymin, y[i]), max(ymax, y[i])
	}
	g := refGrid{h: h, x0: xmin, y0: ymin}
	g.nx = int(math.Ceil((xmax-xmin)/h)) + 2
	g.ny = int(math.Ceil((ymax-ymin)/h)) + 2
	return g
}

// refStartSeq is refStart with the heights gathered first.
func refStartSeq(g refGrid, byCell, start []int32, z []float64) []float64 {
	nc := g.nx * g.ny
	zs := make([]float64, len(z))
	for k, i := range byCell {
		zs[k] = z[i]
	}
	// Each cell's samples are its own slice of zs: the rows of cells are
	// split between the workers with no effect on the result.
	med := make([]float64, nc)
	parallelRows(g.ny, func(j0, j1 int) {
		for q := j0 * g.nx; q < j1*g.nx; q++ {
			if a := zs[start[q]:start[q+1]]; len(a) > 0 {
				med[q] = medianInPlace(a)
			} else {
				med[q] = nan
			}
		}
	})
	f := make([]float64, nc)
	parallelRows(g.ny, func(j0, j1 int) {
		buf := make([]float64, 0, (2*refMedianHalf+1)*(2*refMedianHalf+1))
		for j := j0; j < j1; j++ {
			for i := range g.nx {
				buf = buf[:0]
				for dj := -refMedianHalf; dj <= refMedianHalf; dj++ {
					jj := j + dj
					if jj < 0 || jj >= g.ny {
						continue
					}
					for di := -refMedianHalf; di <= refMedianHalf; di++ {
						ii := i + di
						if ii < 0 || ii >= g.nx {
							continue
						}
						if v := med[jj*g.nx+ii]; !math.IsNaN(v) {
							buf = append(buf, v)
						}
					}
				}
				if len(buf) == 0 {
					f[j*g.nx+i] = nan
					continue
				}
				f[j*g.nx+i] = medianInPlace(buf)
			}
		}
	})
	return f
}

// binCloudSeq is binCloud with the heights gathered first.
func binCloudSeq(s *Surface, base, have []bool, sm samples) {
	n := s.Nx * s.Ny
	cellOf := make([]int32, len(sm.z))
	parallelRows(len(sm.z), func(i0, i1 int) {
		for i := i0; i < i1; i++ {
			q := gridIndex(s, sm.x[i], sm.y[i])
			if q < 0 || !base[q] {
				q = -1
			}
			cellOf[i] = int32(q)
		}
	})
	start := make([]int32, n+1)
	for _, q := range cellOf {
		if q >= 0 {
			start[q+1]++
		}
	}
	for q := range n {
		start[q+1] += start[q]
	}
	zs := make([]float64, start[n])
	fill := append([]int32(nil), start[:n]...)
	for i, z := range sm.z {
		if q := cellOf[i]; q >= 0 {
			zs[fill[q]] = z
			fill[q]++
		}
	}
	// Each cell's heights are its own slice of zs: rows of cells at once.
	parallelRows(s.Ny, func(j0, j1 int) {
		for q := j0 * s.Nx; q < j1*s.Nx; q++ {
			if a := zs[start[q]:start[q+1]]; len(a) > 0 {
				s.ZM[q] = medianInPlace(a)
				have[q] = true
			}
		}
	})
}

// measureCoverageSeq is measureCoverage searching every cell among all points.
func measureCoverageSeq(s *Surface, x, y []float64, r float64, sp Spacing) Coverage {
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
	idx := newPointIndexSeq(x, y, max(reach, s.CellM))
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
	cv.RimCompletenessPct, cv.RimSectorsMissing = rimCompletenessSeq(x, y, r, sp.MedianM)
	return cv
}

// newPointIndexSeq is newPointIndex, sorting in one pass.
func newPointIndexSeq(x, y []float64, h float64) *pointIndex {
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

// rimCompletenessSeq is rimCompleteness in one pass.
func rimCompletenessSeq(x, y []float64, r, spacingM float64) (float64, []int) {
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
