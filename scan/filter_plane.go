package scan

// applyPlane is apply for the first-order (plane) regression, the
// filters' default: the same sums of the same products in the same order,
// with each cell's five row moments side by side (rm) and the nine column
// moments of a cell summed in registers, only at the cells in use.
func (r *gaussRegression) applyPlane(w, z, out []float64, use func(q int) bool) {
	nx, ny, h := r.nx, r.ny, r.half
	if r.rm == nil {
		r.rm = make([]float64, 5*nx*ny)
		r.gk = make([]float64, 3*(2*h+1))
		for k := range 2*h + 1 {
			for p := range 3 {
				r.gk[3*k+p] = r.g[p][k]
			}
		}
	}
	parallelRows(ny, func(j0, j1 int) {
		wz := make([]float64, nx)
		for j := j0; j < j1; j++ {
			row := j * nx
			r.planeRow(r.rm[5*row:5*(row+nx)], w[row:row+nx], z[row:row+nx], wz)
		}
	})
	mons, mw := monomials(1), monomials(2)
	parallelRows(ny, func(j0, j1 int) {
		var sol regressionSolver
		for j := j0; j < j1; j++ {
			lo, hi := max(-h, -j), min(h, ny-1-j)
			for i := range nx {
				if q := j*nx + i; use(q) {
					bw, bz := r.planeSums(j, i, lo, hi)
					out[q] = sol.solve(1, mons, mw, bw[:], bz[:])
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
// l = l0 … l1 (none of them 0) of the row moments rm[q + (l−l0)·stride].
func (r *gaussRegression) columnTaps(m *[9]float64, q, stride, l0, l1 int) {
	if l1 < l0 {
		return
	}
	g0 := r.g[0][l0+r.half : l1+r.half+1]
	g1 := r.g[1][l0+r.half : l1+r.half+1][:len(g0)]
	g2 := r.g[2][l0+r.half : l1+r.half+1][:len(g0)]
	rm := r.rm
	m00, m10, m01, m20, m11, m02, z00, z10, z01 := m[0], m[1], m[2], m[3], m[4], m[5], m[6], m[7], m[8]
	for t, c0 := range g0 {
		c1, c2 := g1[t], g2[t]
		s := (*[5]float64)(rm[q : q+5])
		q += stride
		m00 += c0 * s[0]
		m01 += c1 * s[0]
		m02 += c2 * s[0]
		m10 += c0 * s[1]
		m11 += c1 * s[1]
		m20 += c0 * s[2]
		z00 += c0 * s[3]
		z01 += c1 * s[3]
		z10 += c0 * s[4]
	}
	*m = [9]float64{m00, m10, m01, m20, m11, m02, z00, z10, z01}
}
