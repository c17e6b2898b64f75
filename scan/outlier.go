package scan

import (
	"math"

	"gapflux/internal/hugemem"
)

// Constants of the local outlier test (our own choices, stated in
// LocalOutliers' doc).
const (
	// OutlierCutoffM is the smallest cut-off wavelength of the robust
	// local reference surface, m: its Gaussian weight reaches about ±3 mm,
	// so a streak of a few millimetres is a minority in every window.
	OutlierCutoffM = 8e-3
	// outlierCutoffSpacings scales the cut-off with sparse clouds: at
	// least this many point spacings.
	outlierCutoffSpacings = 6.0
	// refCellsPerCutoff is the reference grid's cells per cut-off.
	refCellsPerCutoff = 8
	// refMedianHalf is the half-width, in reference cells, of the median
	// window that starts the iteration (7×7 cells, 7/8 of the cut-off).
	refMedianHalf = 3
	// outlierMaxIter bounds the reweighting iterations.
	outlierMaxIter = 8
	// BiweightC is the constant of Tukey's biweight in the robust
	// Gaussian regression filter: c = BiweightC × MAD of the residuals
	// (ISO/TS 16610-31 and ISO 16610-71; Brinkmann, Bodschwinna & Lemke
	// 2001; from memory, and the value one public implementation of the
	// filter uses). For Gaussian residuals c ≈ 2.97 σ.
	BiweightC = 4.4
	// madToSigma turns a median absolute deviation into a normal σ.
	madToSigma = 1.4826
	// madSampleMax bounds the residuals a MAD is taken over (a
	// deterministic stride subsample beyond it).
	madSampleMax = 200000
)

// biweight returns Tukey's biweight (1 − (r/c)²)² for |r| < c, else 0.
func biweight(r, c float64) float64 {
	u := r / c
	if !(u*u < 1) {
		return 0
	}
	v := 1 - u*u
	return v * v
}

// refGrid is the coarse grid of the local reference surface.
type refGrid struct {
	nx, ny int
	x0, y0 float64 // centre of cell (0, 0), m
	h      float64 // cell edge, m
}

func (g refGrid) cell(x, y float64) int {
	i := int(math.Round((x - g.x0) / g.h))
	j := int(math.Round((y - g.y0) / g.h))
	i = min(max(i, 0), g.nx-1)
	j = min(max(j, 0), g.ny-1)
	return j*g.nx + i
}

// interp returns the bilinear interpolation of f (NaN where undefined) at
// (x, y), renormalised over the defined corners; NaN if none is.
func (g refGrid) interp(f []float64, x, y float64) float64 {
	fi := (x - g.x0) / g.h
	fj := (y - g.y0) / g.h
	i := min(max(int(math.Floor(fi)), 0), g.nx-2)
	j := min(max(int(math.Floor(fj)), 0), g.ny-2)
	tx := min(max(fi-float64(i), 0), 1)
	ty := min(max(fj-float64(j), 0), 1)
	q := j*g.nx + i
	w00, w10, w01, w11 := (1-tx)*(1-ty), tx*(1-ty), (1-tx)*ty, tx*ty
	v00, v10, v01, v11 := f[q], f[q+1], f[q+g.nx], f[q+g.nx+1]
	if sum := v00 + v10 + v01 + v11; !math.IsNaN(sum) && !math.IsInf(sum, 0) {
		// All four corners defined (the common case): a corner of zero
		// weight adds ±0 to both sums, the same as leaving it out below.
		var s, w float64
		s += w00 * v00
		w += w00
		s += w10 * v10
		w += w10
		s += w01 * v01
		w += w01
		s += w11 * v11
		w += w11
		if w > 0 {
			return s / w
		}
	}
	var s, w float64
	for _, c := range [4]struct {
		q int
		w float64
	}{{q, w00}, {q + 1, w10}, {q + g.nx, w01}, {q + g.nx + 1, w11}} {
		if v := f[c.q]; !math.IsNaN(v) && c.w > 0 {
			s += c.w * v
			w += c.w
		}
	}
	if w == 0 {
		// On a corner-less edge: the nearest defined corner, if any.
		if v := f[g.cell(x, y)]; !math.IsNaN(v) {
			return v
		}
		return nan
	}
	return s / w
}

// LocalOutliers tests every sample (x[i], y[i], z[i]) against a robust
// local reference surface and reports which ones are outliers, and the
// robust standard deviation σ of the residuals, m.
//
// The reference is the robust Gaussian regression filter (first order: a
// local plane; ISO 16610-71 with Tukey's biweight, c = 4.4 × MAD) of the
// samples themselves at the cut-off max(OutlierCutoffM, 6 × spacingM),
// evaluated on a grid of cut-off/8 cells and interpolated bilinearly to
// each sample. It starts from a 7×7-cell median of the cells' medians (so
// a streak or a cluster of spikes covering up to about a third of a window
// does not pull the start) and reweights until the surface moves nowhere
// by more than σ/4 (at most 8 iterations; the default limit is 5 σ).
// Within a cell, samples are moved to its centre along the current
// reference, so steep forms are not mistaken for scatter. Every step is a pass over the samples or a
// separable pass over the grid: the cost grows linearly with both.
//
// A sample is an outlier when its residual exceeds k times the larger of
// σ = 1.4826 × MAD of all residuals (floored at 1 µm) and the local σ, the
// same from the median |residual| of the 7×7 reference cells around it
// (so a kink the reference cannot follow does not flag a band of sound
// points). A sample whose window holds no other weight cannot be tested
// and is kept.
func LocalOutliers(x, y, z []float64, spacingM, k float64) (out []bool, sigmaM float64) {
	n := len(z)
	out = make([]bool, n)
	if n == 0 || math.IsInf(k, 1) {
		return out, 0
	}
	cutoff := max(OutlierCutoffM, outlierCutoffSpacings*spacingM)
	g := newRefGrid(x, y, cutoff/refCellsPerCutoff)
	cellOf := hugemem.Make[int32](n, 0)
	pos := newRefPos(g, x, y, cellOf)
	byCell, cellStart := sortByCell(cellOf, g.nx*g.ny)
	f := refStart(g, byCell, cellStart, z)
	res := hugemem.Make[float64](n, 0)
	f, full := reweight(g, f, pos, x, y, z, byCell, cellStart, res)
	residualsAt(g, f, pos, x, y, z, res, full)
	sigma := max(madToSigma*madOf(res), outlierSigmaFloorM)
	// The local scale: the 7×7-cell median of the cells' median |r|.
	// Where the reference cannot follow the form (a kink, a sharp bend)
	// most residuals around grow and so does the limit; isolated spikes
	// and streaks are too few to move a median.
	// res becomes |r| in place (0 for NaN, which no limit exceeds either).
	abs := res
	parallelRows(n, func(i0, i1 int) {
		for i, r := range res[i0:i1] {
			abs[i0+i] = math.Abs(r)
			if math.IsNaN(r) {
				abs[i0+i] = 0
			}
		}
	})
	local := refStart(g, byCell, cellStart, abs)
	parallelRows(n, func(i0, i1 int) {
		for i := i0; i < i1; i++ {
			s := sigma
			if v := local[cellOf[i]]; !math.IsNaN(v) {
				s = max(s, madToSigma*v)
			}
			out[i] = abs[i] > k*s
		}
	})
	return out, sigma
}

// reweight runs the iterations of LocalOutliers from the starting
// reference f (m, on the cells of g) and returns the reference it ends
// with, and residualsAt's scratch. pos holds the samples' places in g;
// res is scratch for the residuals (m).
func reweight(g refGrid, f []float64, pos refPos, x, y, z []float64, byCell, cellStart []int32, res []float64) ([]float64, []bool) {
	nc := g.nx * g.ny
	reg := newGaussRegression(g.nx, g.ny, refCellsPerCutoff, 1)
	w := make([]float64, nc)
	wz := make([]float64, nc)
	fNew := make([]float64, nc)
	has := func(q int) bool { return true }
	var buf []float64
	var full []bool
	for it := 0; it < outlierMaxIter; it++ {
		full = residualsAt(g, f, pos, x, y, z, res, full)
		mad, b := madOfInto(res, buf)
		buf = b
		sigma := max(madToSigma*mad, outlierSigmaFloorM)
		c := BiweightC / madToSigma * sigma
		if it == 0 {
			c *= 2 // the median start is rougher than a fit
		}
		cellWeights(g, f, res, byCell, cellStart, c, w, wz)
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
	return f, full
}

// cellWeights sets, for every cell q of g, w[q] to the sum of the
// biweights (constant c, m) of its samples' residuals res (m) and wz[q]
// to their weighted mean height (m) where w[q] > 0; cell q's samples are
// byCell[cellStart[q]:cellStart[q+1]]. Each cell's sums run over its
// samples in index order, as a pass over the samples would add them, so
// the rows of cells can be shared between the processors.
func cellWeights(g refGrid, f, res []float64, byCell, cellStart []int32, c float64, w, wz []float64) {
	parallelRows(g.ny, func(j0, j1 int) {
		for q := j0 * g.nx; q < j1*g.nx; q++ {
			sw, swz := 0.0, 0.0
			if fq := f[q]; !math.IsNaN(fq) {
				for _, i := range byCell[cellStart[q]:cellStart[q+1]] {
					r := res[i]
					if math.IsNaN(r) {
						continue
					}
					bw := biweight(r, c)
					if bw == 0 {
						continue
					}
					sw += bw
					swz += bw * (r + fq)
				}
			}
			if sw > 0 {
				swz /= sw
			}
			w[q], wz[q] = sw, swz
		}
	})
}

// samplesByCell returns the sample indices sorted by cell, each cell's in
// index order: cell q's are byCell[start[q]:start[q+1]].
func samplesByCell(cellOf []int32, nc int) (byCell, start []int32) {
	return sortByCell(cellOf, nc)
}

// newRefGrid returns a grid of cells of edge h covering the samples.
func newRefGrid(x, y []float64, h float64) refGrid {
	xmin, xmax, ymin, ymax := bounds(x, y)
	g := refGrid{h: h, x0: xmin, y0: ymin}
	g.nx = int(math.Ceil((xmax-xmin)/h)) + 2
	g.ny = int(math.Ceil((ymax-ymin)/h)) + 2
	return g
}

// refStart returns the starting reference: the median of each cell's
// samples, then the median of those over the (2·refMedianHalf+1)² window
// around every cell (NaN where the window is empty). Cell q's samples are
// z[byCell[start[q]:start[q+1]]], or z[start[q]:start[q+1]] when byCell
// is nil (z in cell order); z is not changed.
func refStart(g refGrid, byCell, start []int32, z []float64) []float64 {
	nc := g.nx * g.ny
	// Each cell's heights are copied, in index order, to its worker's
	// scratch: the rows of cells are split between the workers with no
	// effect on the result.
	med := make([]float64, nc)
	parallelRows(g.ny, func(j0, j1 int) {
		var buf []float64
		for q := j0 * g.nx; q < j1*g.nx; q++ {
			buf = buf[:0]
			if byCell == nil {
				buf = append(buf, z[start[q]:start[q+1]]...)
			} else {
				for _, i := range byCell[start[q]:start[q+1]] {
					buf = append(buf, z[i])
				}
			}
			med[q] = nan
			if len(buf) > 0 {
				med[q] = medianOf(buf)
			}
		}
	})
	return windowMedians(g, med)
}

// windowMedians returns, for every cell of g, the median of the non-NaN
// values of med (m) over the (2·refMedianHalf+1)² window around it (NaN
// where there are none).
func windowMedians(g refGrid, med []float64) []float64 {
	f := make([]float64, g.nx*g.ny)
	parallelRows(g.ny, func(j0, j1 int) {
		buf := make([]float64, 0, (2*refMedianHalf+1)*(2*refMedianHalf+1))
		for j := j0; j < j1; j++ {
			buf = windowRowMedians(g, med, j, f[j*g.nx:(j+1)*g.nx], buf)
		}
	})
	return f
}

// windowRowMedians sets out[i] to the window median of cell (i, j) for
// the cells of row j, gathering each window's values in buf's storage,
// which it returns for the next call.
func windowRowMedians(g refGrid, med []float64, j int, out, buf []float64) []float64 {
	for i := range g.nx {
		buf = windowValues(g, med, i, j, buf)
		out[i] = nan
		if len(buf) > 0 {
			out[i] = medianOf(buf)
		}
	}
	return buf
}

// windowValues returns the non-NaN values of med over the window of cell
// (i, j), row by row, in buf's storage.
func windowValues(g refGrid, med []float64, i, j int, buf []float64) []float64 {
	ilo, ihi := max(0, i-refMedianHalf), min(g.nx-1, i+refMedianHalf)
	buf = buf[:0]
	for jj := max(0, j-refMedianHalf); jj <= min(g.ny-1, j+refMedianHalf); jj++ {
		for _, v := range med[jj*g.nx+ilo : jj*g.nx+ihi+1] {
			if !math.IsNaN(v) {
				buf = append(buf, v)
			}
		}
	}
	return buf
}

// residuals sets res[i] = z[i] − f(x[i], y[i]).
func residuals(g refGrid, f, x, y, z, res []float64) {
	parallelRows(len(z), func(a, b int) {
		for i := a; i < b; i++ {
			res[i] = z[i] - g.interp(f, x[i], y[i])
		}
	})
}

// madOf returns the median absolute deviation about the median of the
// finite values of r (a stride subsample of at most madSampleMax), or 0.
func madOf(r []float64) float64 {
	m, _ := madOfInto(r, nil)
	return m
}

// madOfInto is madOf gathering the subsample into buf's storage (grown
// when short), which it returns for the next call.
func madOfInto(r, buf []float64) (float64, []float64) {
	step := max(1, len(r)/madSampleMax)
	a := buf[:0]
	if cap(a) < len(r)/step+1 {
		a = make([]float64, 0, len(r)/step+1)
	}
	for i := 0; i < len(r); i += step {
		if !math.IsNaN(r[i]) {
			a = append(a, r[i])
		}
	}
	return madOfValues(a), a
}

// madOfValues returns the median absolute deviation about the median of
// a (finite values), or 0 when a is empty; a is reordered and changed.
func madOfValues(a []float64) float64 {
	if len(a) == 0 {
		return 0
	}
	m := bracketMedian(a)
	for i := range a {
		a[i] = math.Abs(a[i] - m)
	}
	return bracketMedian(a)
}
