package scan

import (
	"math"

	"gapflux/internal/hugemem"
)

// applyPlane is apply for the first-order (plane) regression, the
// filters' default (ISO 16610-61/-71 Gaussian regression, see
// gaussRegression): the same sums of the same products in the same order
// as the general row and column passes (rowPass, momentColumns), with
// each cell's five row moments side by side (rm) and the nine column
// moments of a cell summed in registers, only at the cells in use. Rows,
// then cells, are split between the processors; none of the sums is.
func (r *gaussRegression) applyPlane(w, z, out []float64, use func(q int) bool) {
	nx, ny, h := r.nx, r.ny, r.half
	if r.rm == nil {
		r.rm = hugemem.Make[float64](5*nx*ny, 0)
	}
	parallelRows(ny, func(j0, j1 int) {
		wz := make([]float64, nx)
		for j := j0; j < j1; j++ {
			row := j * nx
			r.planeRow(r.rm[5*row:5*(row+nx)], w[row:row+nx], z[row:row+nx], wz)
		}
	})
	parallelRows(ny, func(j0, j1 int) {
		for j := j0; j < j1; j++ {
			lo, hi := max(-h, -j), min(h, ny-1-j)
			for i := range nx {
				if q := j*nx + i; use(q) {
					out[q] = solvePlane(r.planeSums(j, i, lo, hi))
				}
			}
		}
	})
}

// planeRow sets one row's row moments dst[5i:5i+5] = Σ_k g_p(k)·w[i+k]
// (p = 0, 1, 2) and Σ_k g_p(k)·w·z[i+k] (p = 0, 1), summed over k in
// increasing order as convolveRow sums them, over the row's span of
// non-zero weights only (the terms left out are ±0; see convolveRow).
// wz is scratch of the row's length.
func (r *gaussRegression) planeRow(dst, w, z, wz []float64) {
	h, n := r.half, len(w)
	for i, wi := range w {
		wz[i] = 0
		if wi != 0 {
			wz[i] = wi * z[i]
		}
	}
	a, b := nonZeroSpan(w)
	i0, i1 := max(0, a-h), min(n, b+h)
	if a == b {
		i0, i1 = 0, 0
	}
	clear(dst[:5*i0])
	clear(dst[5*i1:])
	for i := i0; i < i1; i++ {
		k0, k1 := max(-h, a-i), min(h, b-1-i)
		d := (*[5]float64)(dst[5*i : 5*i+5])
		d[0], d[1], d[2], d[3], d[4] = 0, 0, 0, 0, 0
		// The taps k < 0, the tap k = 0 (if in range), the taps k > 0.
		if e := min(k1, -1); k0 <= e {
			r.rowTaps(d, w[i+k0:i+e+1], wz[i+k0:], k0)
		}
		if k0 <= 0 && 0 <= k1 {
			c := r.g[0][h]
			d[0] += c * w[i]
			d[3] += c * wz[i]
		}
		if k := max(k0, 1); k <= k1 {
			r.rowTaps(d, w[i+k:i+k1+1], wz[i+k:], k)
		}
	}
}

// rowTaps adds to the row moments d the taps k, k+1, … of the window
// ws (heights × weights zs) in order: d[p] += g_p(k)·ws, d[3+p] +=
// g_p(k)·zs (p ≤ 1). No tap may be k = 0, where g_1 and g_2 are 0 and
// are skipped (convolveRow skips zero taps; g_p(k) = k^p·s(k) is not 0
// anywhere else).
func (r *gaussRegression) rowTaps(d *[5]float64, ws, zs []float64, k int) {
	t0 := k + r.half
	g0 := r.g[0][t0 : t0+len(ws)]
	g1 := r.g[1][t0 : t0+len(ws)]
	g2 := r.g[2][t0 : t0+len(ws)]
	zs = zs[:len(ws)]
	s0, s1, s2, z0, z1 := d[0], d[1], d[2], d[3], d[4]
	for t, sw := range ws {
		sz := zs[t]
		c0, c1, c2 := g0[t], g1[t], g2[t]
		s0 += c0 * sw
		s1 += c1 * sw
		s2 += c2 * sw
		z0 += c0 * sz
		z1 += c1 * sz
	}
	d[0], d[1], d[2], d[3], d[4] = s0, s1, s2, z0, z1
}

// planeSums returns the column sums at cell (i, j) over the taps lo … hi
// (lo ≤ 0 ≤ hi) of the first-order fit: the weight moments M_ab (a + b ≤
// 2, in monomials(2) order) and the height moments Z_ab (a + b ≤ 1),
// each Σ_l g_b(l)·(row moment a of row j+l) in increasing l, the zero
// taps g_1(0) and g_2(0) skipped, as momentColumns sums them.
func (r *gaussRegression) planeSums(j, i, lo, hi int) (bw [6]float64, bz [3]float64) {
	var m [9]float64 // M00 M10 M01 M20 M11 M02 Z00 Z10 Z01
	q, stride := 5*((j+lo)*r.nx+i), 5*r.nx
	r.columnTaps(&m, q, stride, lo, -1)
	q -= lo * stride
	c, s := r.g[0][r.half], (*[5]float64)(r.rm[q:q+5])
	m[0] += c * s[0]
	m[1] += c * s[1]
	m[3] += c * s[2]
	m[6] += c * s[3]
	m[7] += c * s[4]
	r.columnTaps(&m, q+stride, stride, 1, hi)
	return [6]float64{m[0], m[1], m[2], m[3], m[4], m[5]}, [3]float64{m[6], m[7], m[8]}
}

// columnTaps adds to the column moments m (planeSums' order) the taps
// l = l0 … l1 (none of them 0) of the row moments rm[q + (l−l0)·stride]:
// first the five moments of kernel g_0, then the four of g_1 and g_2
// (two loops, so that each keeps its sums in registers; every sum still
// takes its taps in increasing l).
func (r *gaussRegression) columnTaps(m *[9]float64, q, stride, l0, l1 int) {
	if l1 < l0 {
		return
	}
	g0 := r.g[0][l0+r.half : l1+r.half+1]
	g1 := r.g[1][l0+r.half : l1+r.half+1][:len(g0)]
	g2 := r.g[2][l0+r.half : l1+r.half+1][:len(g0)]
	rm := r.rm
	m00, m10, m20, z00, z10 := m[0], m[1], m[3], m[6], m[7]
	for t, c0 := range g0 {
		s := (*[5]float64)(rm[q+t*stride : q+t*stride+5])
		m00 += c0 * s[0]
		m10 += c0 * s[1]
		m20 += c0 * s[2]
		z00 += c0 * s[3]
		z10 += c0 * s[4]
	}
	m01, m11, m02, z01 := m[2], m[4], m[5], m[8]
	for t, c1 := range g1 {
		c2 := g2[t]
		s := (*[5]float64)(rm[q+t*stride : q+t*stride+5])
		m01 += c1 * s[0]
		m11 += c1 * s[1]
		m02 += c2 * s[0]
		z01 += c1 * s[3]
	}
	*m = [9]float64{m00, m10, m01, m20, m11, m02, z00, z10, z01}
}

// solvePlane is regressionSolver.solve for degree 1: β0 of the plane
// fitted to one cell's moments bw (M00 M10 M01 M20 M11 M02) and bz (Z00
// Z10 Z01), or of the constant when the 3×3 normal matrix is singular;
// NaN when the cell has no weight. The same divisions, pivots and
// eliminations in the same order as solve and solveSmallInPlace, on
// arrays of fixed size.
func solvePlane(bw [6]float64, bz [3]float64) float64 {
	m00 := bw[0]
	if !(m00 > 0) {
		return nan
	}
	a := [9]float64{
		bw[0] / m00, bw[1] / m00, bw[2] / m00,
		bw[1] / m00, bw[3] / m00, bw[4] / m00,
		bw[2] / m00, bw[4] / m00, bw[5] / m00,
	}
	b := [3]float64{bz[0] / m00, bz[1] / m00, bz[2] / m00}
	if x, ok := solve3(&a, &b); ok {
		return x
	}
	return bz[0] / m00
}

// solve3 is solveSmallInPlace for k = 3.
func solve3(a *[9]float64, b *[3]float64) (float64, bool) {
	scale := 0.0
	for r := range 3 {
		scale = max(scale, math.Abs(a[r*3+r]))
	}
	if !(scale > 0) {
		return 0, false
	}
	for c := range 3 {
		p := c
		for r := c + 1; r < 3; r++ {
			if math.Abs(a[r*3+c]) > math.Abs(a[p*3+c]) {
				p = r
			}
		}
		if math.Abs(a[p*3+c]) < 1e-10*scale {
			return 0, false
		}
		if p != c {
			for t := range 3 {
				a[p*3+t], a[c*3+t] = a[c*3+t], a[p*3+t]
			}
			b[p], b[c] = b[c], b[p]
		}
		for r := c + 1; r < 3; r++ {
			f := a[r*3+c] / a[c*3+c]
			if f == 0 {
				continue
			}
			for t := c; t < 3; t++ {
				a[r*3+t] -= f * a[c*3+t]
			}
			b[r] -= f * b[c]
		}
	}
	for r := 2; r >= 0; r-- {
		v := b[r]
		for t := r + 1; t < 3; t++ {
			v -= a[r*3+t] * b[t]
		}
		b[r] = v / a[r*3+r]
	}
	return b[0], true
}
