package scan

import (
	"gapflux/internal/parallel"
	"math"
	"runtime"
)

// gaussRegression evaluates the weighted Gaussian regression filter of ISO
// 16610-61 (linear) and ISO 16610-71 (robust, through the weights) on a
// regular grid: at every cell it fits, by least squares with the weights
// s(dx, dy)·w(q), a polynomial of total degree order (0, 1 or 2) in the
// cell offsets (dx, dy), and returns its value at the cell. The Gaussian
// weighting function is
//
//	s(x, y) ∝ exp(−π (x² + y²)/(α λc)²),  α = sqrt(ln 2 / π),
//
// truncated at ±λc, where it has fallen to 7e-7 of its peak. It is
// separable, so every moment Σ s·w·dx^a·dy^b (and Σ s·w·z·dx^a·dy^b) is a
// row pass followed by a column pass: the cost is O(cells × taps ×
// moments), linear in the grid size.
//
// Order 0 is a normalised convolution; order 1 adds a local plane (exact on
// planes, also at the rim); order 2 a local quadric (exact on quadrics: no
// bias on curved forms). The references for the filter are ISO 16610-61
// (areal Gaussian), ISO 16610-71 (robust areal Gaussian regression) and,
// for the regression formulation, Brinkmann, Bodschwinna & Lemke (2001),
// "Accessing roughness in three-dimensions using Gaussian regression
// filtering", Int. J. Mach. Tools Manuf. 41, 2153–2161 (from memory).
type gaussRegression struct {
	nx, ny, half, order int
	// g[p][k+half] = k^p·s(k), p = 0 … 2·order.
	g [][]float64
	// Row-pass buffers, kept between calls.
	rw, rz [][]float64
	wz     []float64
	// First-order (plane) fit only: the row moments of each cell q,
	// rm[5q:5q+5] = (rw0, rw1, rw2, rz0, rz1) (see applyPlane).
	rm []float64
}

// convolveRow sets dst[i] = Σ_k g[k+half]·src[i+k] over the k that keep
// i+k inside [a, b), where src may be non-zero (src is 0 outside: the
// terms left out are ±0, and a sum that starts at +0 is never −0, so
// every dst[i] is bit for bit the sum over the whole row). Zero taps are
// skipped.
func convolveRow(dst, src, g []float64, half, a, b int) {
	n := len(dst)
	clear(dst)
	for k := -half; k <= half; k++ {
		c := g[k+half]
		if c == 0 {
			continue
		}
		i0, i1 := max(0, -k, a-k), min(n, n-k, b-k)
		if i0 >= i1 {
			continue
		}
		d, s := dst[i0:i1], src[i0+k:i1+k]
		for i := range d {
			d[i] += c * s[i]
		}
	}
}

// nonZeroSpan returns the smallest [a, b) holding every non-zero v[i]
// (a = b = 0 when there is none).
func nonZeroSpan(v []float64) (a, b int) {
	for a < len(v) && v[a] == 0 {
		a++
	}
	if a == len(v) {
		return 0, 0
	}
	b = len(v)
	for v[b-1] == 0 {
		b--
	}
	return a, b
}

// newGaussRegression prepares the kernel for a cut-off of cutoffCells cells.
func newGaussRegression(nx, ny int, cutoffCells float64, order int) *gaussRegression {
	half := int(math.Floor(cutoffCells + 1e-9))
	r := &gaussRegression{nx: nx, ny: ny, half: half, order: order}
	r.g = make([][]float64, 2*order+1)
	for p := range r.g {
		r.g[p] = make([]float64, 2*half+1)
	}
	scale := 1 / (GaussianAlpha * cutoffCells)
	for k := -half; k <= half; k++ {
		u := float64(k) * scale
		w := math.Exp(-math.Pi * u * u)
		for p := range r.g {
			r.g[p][k+half] = w * math.Pow(float64(k), float64(p))
		}
	}
	return r
}

// monomials lists the exponents (a, b) of dx^a·dy^b with a + b ≤ d.
func monomials(d int) [][2]int {
	var m [][2]int
	for s := 0; s <= d; s++ {
		for b := 0; b <= s; b++ {
			m = append(m, [2]int{s - b, b})
		}
	}
	return m
}

// apply fits at every cell where use(q) is true and writes the fitted value
// to out[q]. w holds the weights (0 outside the data) and z the values
// (read only where w > 0). A cell whose normal equations are singular at
// the requested order falls back to lower orders; a cell with no weight in
// its window gets NaN.
//
// Every fitted value is the same sum of the same products in the same
// order on any number of processors: the rows of the row pass, and the
// cells of the column pass, are independent and only split between them.
func (r *gaussRegression) apply(w, z, out []float64, use func(q int) bool) {
	if r.order == 1 {
		r.applyPlane(w, z, out, use)
		return
	}
	r.rowPass(w, z)
	r.momentColumns(out, use)
}

// rowPass sets the row moments rw[a][q] = Σ_k g_a(k)·w[q+k] (a ≤ 2·order)
// and rz[a][q] = Σ_k g_a(k)·w·z[q+k] (a ≤ order) along each row, over
// the row's span of non-zero weights only (see convolveRow).
func (r *gaussRegression) rowPass(w, z []float64) {
	nx, ny, d := r.nx, r.ny, r.order
	n := nx * ny
	if r.rw == nil {
		r.rw = make([][]float64, 2*d+1)
		for a := range r.rw {
			r.rw[a] = make([]float64, n)
		}
		r.rz = make([][]float64, d+1)
		for a := range r.rz {
			r.rz[a] = make([]float64, n)
		}
		r.wz = make([]float64, n)
	}
	parallelRows(ny, func(j0, j1 int) {
		for j := j0; j < j1; j++ {
			row := j * nx
			wr, zr := w[row:row+nx], r.wz[row:row+nx]
			for i, wi := range wr {
				zr[i] = 0
				if wi != 0 {
					zr[i] = wi * z[row+i]
				}
			}
			a, b := nonZeroSpan(wr)
			for p, rw := range r.rw {
				convolveRow(rw[row:row+nx], wr, r.g[p], r.half, a, b)
			}
			for p, rz := range r.rz {
				convolveRow(rz[row:row+nx], zr, r.g[p], r.half, a, b)
			}
		}
	})
}

// momentColumns is the column pass and solve of any order: for each
// output row it sums the moment rows M_ab (a + b ≤ 2·order) and Z_ab
// (a + b ≤ order) down the columns, then solves at each cell in use.
func (r *gaussRegression) momentColumns(out []float64, use func(q int) bool) {
	nx, ny, d := r.nx, r.ny, r.order
	mons := monomials(d)
	mw, mz := monomials(2*d), mons
	parallelRows(ny, func(j0, j1 int) {
		bw := make([][]float64, len(mw))
		for t := range bw {
			bw[t] = make([]float64, nx)
		}
		bz := make([][]float64, len(mz))
		for t := range bz {
			bz[t] = make([]float64, nx)
		}
		cw, cz := make([]float64, len(mw)), make([]float64, len(mz))
		var sol regressionSolver
		for j := j0; j < j1; j++ {
			for t := range bw {
				clear(bw[t])
			}
			for t := range bz {
				clear(bz[t])
			}
			lo, hi := max(-r.half, -j), min(r.half, ny-1-j)
			for l := lo; l <= hi; l++ {
				in := (j + l) * nx
				r.accumulate(bw, r.rw, mw, l, in)
				r.accumulate(bz, r.rz, mz, l, in)
			}
			for i := range nx {
				q := j*nx + i
				if !use(q) {
					continue
				}
				for t := range cw {
					cw[t] = bw[t][i]
				}
				for t := range cz {
					cz[t] = bz[t][i]
				}
				out[q] = sol.solve(d, mons, mw, cw, cz)
			}
		}
	})
}

// accumulate adds, for each moment t with exponents m = mons[t], the row
// moments src[m[0]] of the row starting at in, weighted by the column
// kernel g_m[1](l), to dst[t].
func (r *gaussRegression) accumulate(dst, src [][]float64, mons [][2]int, l, in int) {
	nx := len(dst[0])
	for t, m := range mons {
		c := r.g[m[1]][l+r.half]
		if c == 0 {
			continue
		}
		s, d := src[m[0]][in:in+nx], dst[t]
		for i := range d {
			d[i] += c * s[i]
		}
	}
}

// regressionSolver solves the per-cell normal equations; it holds scratch
// space so that the inner loop does not allocate.
type regressionSolver struct {
	a [36]float64
	b [6]float64
}

// solve returns β0 of the weighted fit of degree d to one cell's
// moments, bw in monomials(2d) order and bz in monomials(d) order,
// lowering the degree while the normal matrix is singular.
func (s *regressionSolver) solve(d int, mons, mw [][2]int, bw, bz []float64) float64 {
	m00 := bw[0]
	if !(m00 > 0) {
		return nan
	}
	idx := func(a, b int) int { // position of (a, b) in monomials(2d)
		s := a + b
		return s*(s+1)/2 + b
	}
	for deg := d; deg >= 1; deg-- {
		k := (deg + 1) * (deg + 2) / 2
		for r := range k {
			for c := range k {
				s.a[r*k+c] = bw[idx(mons[r][0]+mons[c][0], mons[r][1]+mons[c][1])] / m00
			}
			s.b[r] = bz[r] / m00
		}
		if x, ok := solveSmallInPlace(k, s.a[:k*k], s.b[:k]); ok {
			return x
		}
	}
	return bz[0] / m00
}

// solveSmallInPlace solves the k×k system a·x = b (row-major) by Gaussian
// elimination with partial pivoting and returns x[0]; ok is false when a
// pivot falls below 1e-10 of the matrix's largest diagonal entry.
func solveSmallInPlace(k int, a, b []float64) (float64, bool) {
	scale := 0.0
	for r := range k {
		scale = max(scale, math.Abs(a[r*k+r]))
	}
	if !(scale > 0) {
		return 0, false
	}
	for c := range k {
		p := c
		for r := c + 1; r < k; r++ {
			if math.Abs(a[r*k+c]) > math.Abs(a[p*k+c]) {
				p = r
			}
		}
		if math.Abs(a[p*k+c]) < 1e-10*scale {
			return 0, false
		}
		if p != c {
			for t := range k {
				a[p*k+t], a[c*k+t] = a[c*k+t], a[p*k+t]
			}
			b[p], b[c] = b[c], b[p]
		}
		for r := c + 1; r < k; r++ {
			f := a[r*k+c] / a[c*k+c]
			if f == 0 {
				continue
			}
			for t := c; t < k; t++ {
				a[r*k+t] -= f * a[c*k+t]
			}
			b[r] -= f * b[c]
		}
	}
	for r := k - 1; r >= 0; r-- {
		v := b[r]
		for t := r + 1; t < k; t++ {
			v -= a[r*k+t] * b[t]
		}
		b[r] = v / a[r*k+r]
	}
	return b[0], true
}

// parallelRows runs f over [0, ny) split into contiguous row ranges, one
// per available processor (each range writes only its own rows).
func parallelRows(ny int, f func(j0, j1 int)) {
	parallel.Do(ny, rowParts(ny), func(_, j0, j1 int) { f(j0, j1) })
}

// rowParts is the number of ranges parallelRows splits ny rows into.
func rowParts(ny int) int { return min(runtime.GOMAXPROCS(0), max(1, ny/16)) }
