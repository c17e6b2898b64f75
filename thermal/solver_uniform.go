package thermal

// Most cells of a plate grid lie inside the base or glass disc, where every
// face of a layer has the same conductance (k·t of the layer on the fine
// level; the coarse levels' interior faces sum to the same value). There
// the kernels below read that conductance as one number instead of loading
// it from the four face arrays: the products and sums are the same to the
// bit, from four fewer memory streams per layer, which the smoother and the
// operator on a fine grid are limited by.

// setUniform sets, per layer l, kf[l], the largest face conductance of the
// layer (W/K), and for each row j the columns [ua[l][j], ue[l][j]), the
// longest run of interior cells (away from the grid's edges) whose four
// faces all equal kf[l] (empty when kf[l] is 0). The faces must be final.
func (lv *level) setUniform() {
	nx, ny := lv.nx, lv.ny
	for l := 0; l < lv.nl; l++ {
		kx, ky := lv.kx[l], lv.ky[l][:len(lv.kx[l])]
		kf := 0.0
		for p, v := range kx {
			// Faces are not negative, not −0 and not NaN (sums and halves
			// of k·t of validated layers, or 0), so the comparisons give
			// what max gives, with fewer instructions.
			if v > kf {
				kf = v
			}
			if w := ky[p]; w > kf {
				kf = w
			}
		}
		lv.kf[l] = kf
		lv.ua[l], lv.ue[l] = growInt(lv.ua[l], ny), growInt(lv.ue[l], ny)
		for j := 0; j < ny; j++ {
			a, e := 0, 0
			if kf > 0 && j > 0 && j < ny-1 {
				a, e = uniformRun(kx, ky, kf, j*nx, nx)
			}
			lv.ua[l][j], lv.ue[l][j] = a, e
		}
	}
}

// uniformRun returns the longest run [a, e) of the columns 1 … nx−2 of the
// interior row starting at index row whose cells have all four faces equal
// to kf.
func uniformRun(kx, ky []float64, kf float64, row, nx int) (a, e int) {
	start := -1
	for i := 1; i < nx-1; i++ {
		p := row + i
		if kx[p-1] == kf && kx[p] == kf && ky[p-nx] == kf && ky[p] == kf {
			if start < 0 {
				start = i
			}
			if i+1-start > e-a {
				a, e = start, i+1
			}
			continue
		}
		start = -1
	}
	return a, e
}

// pairRun returns the columns of row j where both layers' faces are
// uniform.
func (lv *level) pairRun(j int) (a, e int) {
	return max(lv.ua[0][j], lv.ua[1][j]), min(lv.ue[0][j], lv.ue[1][j])
}

// split2 splits the cells p, p+2, … below e into three ranges [p, s1),
// [s1, s2) and [s2, e) of the same stride, the middle one holding the
// cells within [a, e2) (row-relative columns plus the row's index row).
// The last range may start beyond e (it is then empty).
func split2(p, e, a, e2 int) (s1, s2 int) {
	if a >= e2 {
		return e, e
	}
	s1 = p + (max(a-p, 0)+1)&^1
	if end := min(e2, e); s1 < end {
		return s1, s1 + (end-s1+1)&^1
	}
	return e, e
}

// relaxSplit relaxes the cells p, p+2, … below e of layer l, both layers
// together when pair is set, with the uniform kernels on the row's uniform
// run and the face arrays elsewhere, or, when zero says that the cells'
// neighbours are all zero, without reading the neighbours or faces.
func (lv *level) relaxSplit(x, b []float64, l int, pair, zero bool, p, e int) {
	n, nx := lv.n, lv.nx
	if zero {
		if pair {
			relaxBlockZero(lv, x[:n], x[n:2*n], b[:n], b[n:2*n], p, e)
		} else {
			relaxZero(x[l*n:(l+1)*n], b[l*n:(l+1)*n], lv.inv, p, e)
		}
		return
	}
	j := p / nx
	row := j * nx
	a, ue := lv.ua[l][j], lv.ue[l][j]
	if pair {
		a, ue = lv.pairRun(j)
	}
	s1, s2 := split2(p, e, row+a, row+ue)
	if pair {
		x0, x1, b0, b1 := x[:n], x[n:2*n], b[:n], b[n:2*n]
		relaxBlockRange(lv, x0, x1, b0, b1, p, s1)
		relaxBlockUniform(lv, x0, x1, b0, b1, s1, s2)
		relaxBlockRange(lv, x0, x1, b0, b1, s2, e)
		return
	}
	xl, bl := x[l*n:(l+1)*n], b[l*n:(l+1)*n]
	relaxRange(xl, lv.kx[l], lv.ky[l], bl, lv.inv, p, s1, nx)
	relaxUniform(xl, bl, lv.inv, lv.kf[l], s1, s2, nx)
	relaxRange(xl, lv.kx[l], lv.ky[l], bl, lv.inv, s2, e, nx)
}

// relaxUniform is relaxRange with every face conductance kf.
func relaxUniform(x, b, inv []float64, kf float64, p, e, nx int) {
	w := e - p
	if w <= 0 {
		return
	}
	xw, xc, xe := x[p-1:][:w], x[p:][:w], x[p+1:][:w]
	xn, xs := x[p-nx:][:w], x[p+nx:][:w]
	bc, ic := b[p:][:w], inv[p:][:w]
	for m := 0; m < len(xc); m += 2 {
		xc[m] = (bc[m] + kf*xw[m] + kf*xe[m] + kf*xn[m] + kf*xs[m]) * ic[m]
	}
}

// relaxBlockUniform is relaxBlockRange with every face conductance of
// layer l equal to lv.kf[l].
func relaxBlockUniform(lv *level, x0, x1, b0, b1 []float64, p, e int) {
	nx, w := lv.nx, e-p
	if w <= 0 {
		return
	}
	k0, k1 := lv.kf[0], lv.kf[1]
	xw0, xc0, xe0 := x0[p-1:][:w], x0[p:][:w], x0[p+1:][:w]
	xn0, xs0 := x0[p-nx:][:w], x0[p+nx:][:w]
	xw1, xc1, xe1 := x1[p-1:][:w], x1[p:][:w], x1[p+1:][:w]
	xn1, xs1 := x1[p-nx:][:w], x1[p+nx:][:w]
	bc0, bc1 := b0[p:][:w], b1[p:][:w]
	dc0, dc1, cc, ic := lv.diag[0][p:][:w], lv.diag[1][p:][:w], lv.cpl[p:][:w], lv.inv[p:][:w]
	for m := 0; m < len(xc0); m += 2 {
		r0 := bc0[m] + k0*xw0[m] + k0*xe0[m] + k0*xn0[m] + k0*xs0[m]
		r1 := bc1[m] + k1*xw1[m] + k1*xe1[m] + k1*xn1[m] + k1*xs1[m]
		cp, id := cc[m], ic[m]
		xc0[m] = (dc1[m]*r0 + cp*r1) * id
		xc1[m] = (cp*r0 + dc0[m]*r1) * id
	}
}

// applyPairSplit is applyPair with the uniform kernel on the row's uniform
// run of both layers.
func (lv *level) applyPairSplit(dst, x, b []float64, p, e int) {
	j := p / lv.nx
	row := j * lv.nx
	a, ue := lv.pairRun(j)
	s1, s2 := min(max(row+a, p), e), max(min(row+ue, e), p)
	if s1 >= s2 {
		lv.applyPair(dst, x, b, p, e)
		return
	}
	lv.applyPair(dst, x, b, p, s1)
	lv.applyPairUniform(dst, x, b, s1, s2)
	lv.applyPair(dst, x, b, s2, e)
}

// applyPairUniform is applyPair with every face conductance of layer l
// equal to lv.kf[l].
func (lv *level) applyPairUniform(dst, x, b []float64, p, e int) {
	n, nx, w := lv.n, lv.nx, e-p
	if w <= 0 {
		return
	}
	k0, k1 := lv.kf[0], lv.kf[1]
	x0, x1, d0, d1 := x[:n], x[n:2*n], dst[:n], dst[n:2*n]
	xw0, xc0, xe0, xn0, xs0 := x0[p-1:][:w], x0[p:][:w], x0[p+1:][:w], x0[p-nx:][:w], x0[p+nx:][:w]
	xw1, xc1, xe1, xn1, xs1 := x1[p-1:][:w], x1[p:][:w], x1[p+1:][:w], x1[p-nx:][:w], x1[p+nx:][:w]
	dc0, dc1, cc := lv.diag[0][p:][:w], lv.diag[1][p:][:w], lv.cpl[p:][:w]
	out0, out1 := d0[p:][:w], d1[p:][:w]
	if b == nil {
		for m := range out0 {
			o0 := dc0[m]*xc0[m] - k0*xw0[m] - k0*xe0[m] - k0*xn0[m] - k0*xs0[m]
			o1 := dc1[m]*xc1[m] - k1*xw1[m] - k1*xe1[m] - k1*xn1[m] - k1*xs1[m]
			if cp := cc[m]; cp != 0 {
				o0 -= cp * xc1[m]
				o1 -= cp * xc0[m]
			}
			out0[m], out1[m] = o0, o1
		}
		return
	}
	b0, b1 := b[p:][:w], b[n+p:][:w]
	for m := range out0 {
		o0 := dc0[m]*xc0[m] - k0*xw0[m] - k0*xe0[m] - k0*xn0[m] - k0*xs0[m]
		o1 := dc1[m]*xc1[m] - k1*xw1[m] - k1*xe1[m] - k1*xn1[m] - k1*xs1[m]
		if cp := cc[m]; cp != 0 {
			o0 -= cp * xc1[m]
			o1 -= cp * xc0[m]
		}
		out0[m], out1[m] = b0[m]-o0, b1[m]-o1
	}
}

// applyRowUniform sets out = (A x)_l on the columns [p, e) of an interior
// row where every face of layer l is kf (without the layer coupling); xl
// and out are layer l of x and of the result, d its diagonal.
func applyRowUniform(out, xl, d []float64, kf float64, p, e, nx int) {
	w := e - p
	if w <= 0 {
		return
	}
	xw, xc, xe, xn, xs := xl[p-1:][:w], xl[p:][:w], xl[p+1:][:w], xl[p-nx:][:w], xl[p+nx:][:w]
	dc, o := d[p:][:w], out[p:][:w]
	for m := range o {
		o[m] = dc[m]*xc[m] - kf*xw[m] - kf*xe[m] - kf*xn[m] - kf*xs[m]
	}
}

// relaxZero is relaxRange where the neighbours are all zero: each product
// k·0 is +0 (faces are finite and not negative), so the sum is b + 0.
func relaxZero(x, b, inv []float64, p, e int) {
	w := e - p
	if w <= 0 {
		return
	}
	xc, bc, ic := x[p:][:w], b[p:][:w], inv[p:][:w]
	for m := 0; m < len(xc); m += 2 {
		xc[m] = (bc[m] + 0) * ic[m]
	}
}

// relaxBlockZero is relaxBlockRange where the neighbours are all zero.
func relaxBlockZero(lv *level, x0, x1, b0, b1 []float64, p, e int) {
	w := e - p
	if w <= 0 {
		return
	}
	xc0, xc1, bc0, bc1 := x0[p:][:w], x1[p:][:w], b0[p:][:w], b1[p:][:w]
	dc0, dc1, cc, ic := lv.diag[0][p:][:w], lv.diag[1][p:][:w], lv.cpl[p:][:w], lv.inv[p:][:w]
	for m := 0; m < len(xc0); m += 2 {
		r0, r1 := bc0[m]+0, bc1[m]+0
		cp, id := cc[m], ic[m]
		xc0[m] = (dc1[m]*r0 + cp*r1) * id
		xc1[m] = (cp*r0 + dc0[m]*r1) * id
	}
}
