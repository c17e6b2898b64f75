package thermal

import "gapflux/internal/hugemem"

// The files solver*.go hold the matrix-free linear algebra of the plate
// solve: a conductance operator on a grid with one or two node layers and its
// Gauss–Seidel smoother (this file), a geometric multigrid V-cycle built on
// it (solver_multigrid.go), and conjugate gradients preconditioned by that
// V-cycle (solver_pcg.go).
//
// The operator is that of a thermal network. Node (l, p) is layer l of cell
// p; its row reads
//
//	(A x)_lp = Σ_faces k_f (x_lp − x_lq) + s_lp x_lp + c_p (x_lp − x_l'p)
//
// with face conductances k_f ≥ 0 to the four grid neighbours in the same
// layer, a sink s ≥ 0 to fixed temperatures and a coupling c ≥ 0 to the other
// layer of the same cell (W/K). A is symmetric, and positive definite when
// every connected set of active nodes has some sink. Inactive nodes (no pan
// or no glass in that cell) keep an identity row, zero right-hand side and
// zero value, so the grid stays rectangular on every level. The kernels only
// visit, in each row, the span of columns holding active nodes (setSpans);
// outside it every vector stays zero.

// level is one grid of the multigrid hierarchy.
type level struct {
	nx, ny, n int
	nl        int // node layers: 1 or 2

	kx, ky [2][]float64 // kx[l][p]: face (i,j)–(i+1,j); ky[l][p]: face (i,j)–(i,j+1); W/K
	sink   [2][]float64 // W/K
	cpl    []float64    // layer coupling, W/K (nil when nl == 1)
	act    [2][]bool
	diag   [2][]float64 // full diagonal; 1 on inactive nodes
	inv    []float64    // smoother: 1/diag (one layer) or 1/det of the cell's 2×2 block (two)

	fx, fy int // agglomeration factors to the next coarser level (1 or 2)

	// lo[l][j], hi[l][j]: the columns [lo, hi) of row j holding the active
	// nodes of layer l; ulo, uhi: the same for either layer.
	lo, hi   [2][]int
	ulo, uhi []int

	// kf[l]: the face conductance of layer l's interior, W/K; ua[l][j],
	// ue[l][j]: the columns [ua, ue) of row j whose four faces all have it
	// (setUniform).
	kf     [2]float64
	ua, ue [2][]int

	x, b, r []float64 // V-cycle work vectors, length nl·n
}

func newLevel(nx, ny, nl int) *level { return reuseLevel(nil, nx, ny, nl, true) }

// reuseLevel returns a zeroed level of nx × ny cells and nl layers, reusing
// the storage of old (which may be nil). The V-cycle vectors x, b and r are
// only allocated when vcycle is set: the finest level uses the caller's x
// and b, and the caller sets its r (the plate solve lends it the conjugate-
// gradient vector that is free while the preconditioner runs).
func reuseLevel(old *level, nx, ny, nl int, vcycle bool) *level {
	if old == nil {
		old = &level{}
	}
	prev := *old
	n := nx * ny
	lv := old
	*lv = level{nx: nx, ny: ny, n: n, nl: nl}
	for l := 0; l < nl; l++ {
		lv.kx[l] = grow(prev.kx[l], n)
		lv.ky[l] = grow(prev.ky[l], n)
		lv.sink[l] = grow(prev.sink[l], n)
		lv.act[l] = growBool(prev.act[l], n)
		lv.diag[l] = grow(prev.diag[l], n)
		lv.lo[l], lv.hi[l] = prev.lo[l][:0], prev.hi[l][:0]
		lv.ua[l], lv.ue[l] = prev.ua[l][:0], prev.ue[l][:0]
	}
	if nl == 2 {
		lv.cpl = grow(prev.cpl, n)
	}
	lv.inv = grow(prev.inv, n)
	lv.ulo, lv.uhi = prev.ulo[:0], prev.uhi[:0]
	if vcycle {
		lv.x = grow(prev.x, nl*n)
		lv.b = grow(prev.b, nl*n)
		lv.r = grow(prev.r, nl*n)
	}
	return lv
}

// grow returns v resized to n and zeroed, reusing its storage when large
// enough.
func grow(v []float64, n int) []float64 {
	if cap(v) < n {
		return hugemem.Make[float64](n, 0)
	}
	v = v[:n]
	clear(v)
	return v
}

func growBool(v []bool, n int) []bool {
	if cap(v) < n {
		return make([]bool, n)
	}
	v = v[:n]
	clear(v)
	return v
}

func growInt(v []int, n int) []int {
	if cap(v) < n {
		return make([]int, n)
	}
	return v[:n]
}

// setSpans sets the spans of active columns of each row from lv.act, a
// unit diagonal outside them, and the rows' uniform runs (setUniform); the
// faces must be final.
func (lv *level) setSpans() {
	lv.setUniform()
	nx, ny := lv.nx, lv.ny
	lv.ulo, lv.uhi = growInt(lv.ulo, ny), growInt(lv.uhi, ny)
	for l := 0; l < lv.nl; l++ {
		lv.lo[l], lv.hi[l] = growInt(lv.lo[l], ny), growInt(lv.hi[l], ny)
		for j := 0; j < ny; j++ {
			a := lv.act[l][j*nx : (j+1)*nx]
			lo, hi := 0, 0
			for i, v := range a {
				if v {
					lo = i
					break
				}
			}
			for i := nx - 1; i >= lo; i-- {
				if a[i] {
					hi = i + 1
					break
				}
			}
			lv.lo[l][j], lv.hi[l][j] = lo, hi
		}
	}
	for j := 0; j < ny; j++ {
		lo, hi := lv.lo[0][j], lv.hi[0][j]
		if lv.nl == 2 {
			l1, h1 := lv.lo[1][j], lv.hi[1][j]
			switch {
			case lo >= hi:
				lo, hi = l1, h1
			case l1 < h1:
				lo, hi = min(lo, l1), max(hi, h1)
			}
		}
		lv.ulo[j], lv.uhi[j] = lo, hi
		for _, part := range [2][2]int{{0, lo}, {hi, nx}} {
			for i := part[0]; i < part[1]; i++ {
				for l := 0; l < lv.nl; l++ {
					lv.diag[l][j*nx+i] = 1
				}
				lv.inv[j*nx+i] = 1
			}
		}
	}
}

// setDiag computes the diagonal from faces, sinks and couplings, and the
// smoother's inverses, on the active spans (inactive nodes in a span get a
// unit diagonal; outside the spans nothing is read).
func (lv *level) setDiag() {
	nx, ny := lv.nx, lv.ny
	if len(lv.ulo) != ny {
		lv.setSpans()
	}
	for j := 0; j < ny; j++ {
		lo, hi := lv.ulo[j], lv.uhi[j]
		for l := 0; l < lv.nl; l++ {
			a, e := max(lo, lv.ua[l][j]), min(hi, lv.ue[l][j])
			if a >= e {
				a, e = hi, hi
			}
			lv.diagRange(l, j, lo, a)
			lv.diagUniform(l, j*nx+a, j*nx+e)
			lv.diagRange(l, j, e, hi)
		}
		lo, hi = j*nx+lo, j*nx+hi
		if lv.nl == 1 {
			for p, v := range lv.diag[0][lo:hi] {
				lv.inv[lo+p] = 1 / v
			}
			continue
		}
		d0, d1, c := lv.diag[0][lo:hi], lv.diag[1][lo:hi], lv.cpl[lo:hi]
		for p := range d0 {
			lv.inv[lo+p] = 1 / (d0[p]*d1[p] - c[p]*c[p])
		}
	}
}

// diagRange sets the diagonal of layer l on the columns [from, to) of row
// j from its sinks, faces and couplings (1 on inactive nodes).
func (lv *level) diagRange(l, j, from, to int) {
	nx := lv.nx
	kx, ky, s, act, d := lv.kx[l], lv.ky[l], lv.sink[l], lv.act[l], lv.diag[l]
	for i := from; i < to; i++ {
		p := j*nx + i
		if !act[p] {
			d[p] = 1
			continue
		}
		v := s[p] + kx[p] + ky[p]
		if i > 0 {
			v += kx[p-1]
		}
		if j > 0 {
			v += ky[p-nx]
		}
		if lv.nl == 2 {
			v += lv.cpl[p]
		}
		d[p] = v
	}
}

// diagUniform is diagRange on the cells [p, e) of a uniform run of layer
// l, whose four faces are lv.kf[l] (the same sums in the same order).
func (lv *level) diagUniform(l, p, e int) {
	if p >= e {
		return
	}
	kf := lv.kf[l]
	s, act, d := lv.sink[l][p:e], lv.act[l][p:e], lv.diag[l][p:e]
	var c []float64
	if lv.nl == 2 {
		c = lv.cpl[p:e]
	}
	for m := range d {
		if !act[m] {
			d[m] = 1
			continue
		}
		v := s[m] + kf + kf
		v += kf
		v += kf
		if c != nil {
			v += c[m]
		}
		d[m] = v
	}
}

// apply sets dst = A x on the active spans (dst is left as it is, zero,
// outside them).
func (lv *level) apply(dst, x []float64) { lv.applyRows(dst, x, nil) }

// applyRows sets dst = A x on the active spans, or, with b not nil, dst =
// b − A x (the subtraction over every node of the row, so that the nodes
// outside the spans get b − dst as well). It works row by row, both layers
// and their coupling, so that each row's vectors are still in the cache
// for the coupling and the subtraction, and with two layers it does all
// three in one loop over the interior columns where both layers are live.
// Every node gets the same operations in the same order as in separate
// passes.
func (lv *level) applyRows(dst, x, b []float64) {
	for j := 0; j < lv.ny; j++ {
		lv.applyRowAll(dst, x, b, j)
	}
}

// updateApply sets p = z + beta·p on every node, then q = A p as apply
// does, each row of p updated just before the operator first reads it
// (with the row before it), so that p streams through the cache once for
// both; every node gets the same operations as in two passes.
func (lv *level) updateApply(q, p, z []float64, beta float64) {
	nx, n := lv.nx, lv.n
	update := func(j int) {
		for l := 0; l < lv.nl; l++ {
			o := l*n + j*nx
			pr, zr := p[o:o+nx], z[o:o+nx]
			for i, v := range zr {
				pr[i] = v + beta*pr[i]
			}
		}
	}
	update(0)
	for j := 0; j < lv.ny; j++ {
		if j+1 < lv.ny {
			update(j + 1)
		}
		lv.applyRowAll(q, p, nil, j)
	}
}

// applyRowAll is applyRows on row j alone: it reads the rows j−1, j and
// j+1 of x and writes row j of dst.
func (lv *level) applyRowAll(dst, x, b []float64, j int) {
	nx, ny, n := lv.nx, lv.ny, lv.n
	a, e := 0, 0 // the columns done by applyPair
	if lv.nl == 2 && j > 0 && j < ny-1 && nx >= 3 {
		a = max(lv.lo[0][j], lv.lo[1][j], 1)
		e = max(a, min(lv.hi[0][j], lv.hi[1][j], nx-1))
	}
	for l := 0; l < lv.nl; l++ {
		dl, xl := dst[l*n:(l+1)*n], x[l*n:(l+1)*n]
		lo, hi := lv.lo[l][j], lv.hi[l][j]
		if a < e {
			lv.applyRow(dl, xl, l, j, lo, a)
			lv.applyRow(dl, xl, l, j, e, hi)
		} else {
			lv.applyRow(dl, xl, l, j, lo, hi)
		}
	}
	if a < e {
		lv.applyPairSplit(dst, x, b, j*nx+a, j*nx+e)
	}
	if lv.nl == 2 {
		// Couplings exist only at cells with both layers.
		c := lv.cpl
		x0, x1 := x[:n], x[n:2*n]
		d0, d1 := dst[:n], dst[n:2*n]
		lo, hi := max(lv.lo[0][j], lv.lo[1][j]), min(lv.hi[0][j], lv.hi[1][j])
		for i := lo; i < hi; i++ {
			if i == a && a < e {
				i = e - 1
				continue
			}
			p := j*nx + i
			if cp := c[p]; cp != 0 {
				d0[p] -= cp * x1[p]
				d1[p] -= cp * x0[p]
			}
		}
	}
	if b != nil {
		for l := 0; l < lv.nl; l++ {
			o := l*n + j*nx
			r, bl := dst[o:o+nx], b[o:o+nx]
			for i := 0; i < len(r); i++ {
				if i == a && a < e {
					i = e - 1
					continue
				}
				r[i] = bl[i] - r[i]
			}
		}
	}
}

// applyRow sets dl = (A x)_l on the columns [from, to) of row j, clipped
// to the span of layer l; xl and dl are layer l of x and of the result
// (without the layer coupling).
func (lv *level) applyRow(dl, xl []float64, l, j, from, to int) {
	nx, ny := lv.nx, lv.ny
	kx, ky, d := lv.kx[l], lv.ky[l], lv.diag[l]
	lo, hi := max(from, lv.lo[l][j]), min(to, lv.hi[l][j])
	if lo >= hi {
		return
	}
	row := j * nx
	if j == 0 || j == ny-1 || nx < 3 {
		for i := lo; i < hi; i++ {
			p := row + i
			dl[p] = d[p]*xl[p] - nbSum(kx, ky, xl, nx, ny, i, j, p, 0)
		}
		return
	}
	i := lo
	if i == 0 {
		dl[row] = d[row]*xl[row] - nbSum(kx, ky, xl, nx, ny, 0, j, row, 0)
		i = 1
	}
	if end := min(hi, nx-1); i < end {
		// The columns [i, end) of the row: the uniform run by its face
		// conductance, the rest from the face arrays.
		if a, e := max(i, lv.ua[l][j]), min(end, lv.ue[l][j]); a < e {
			applyRowRange(dl, xl, kx, ky, d, row+i, row+a, nx)
			applyRowUniform(dl, xl, d, lv.kf[l], row+a, row+e, nx)
			i = e
		}
		applyRowRange(dl, xl, kx, ky, d, row+i, row+end, nx)
	}
	if hi == nx {
		p := row + nx - 1
		dl[p] = d[p]*xl[p] - nbSum(kx, ky, xl, nx, ny, nx-1, j, p, 0)
	}
}

// applyRowRange sets dl = (A x)_l, without the layer coupling, on the
// cells [p, e) of an interior row away from its first and last columns,
// from the face arrays kx and ky of the layer and its diagonal d.
func applyRowRange(dl, xl, kx, ky, d []float64, p, e, nx int) {
	if w := e - p; w > 0 {
		// Every slice of the same length (no bounds checks in the loop):
		// west, centre and east values and faces, the north and south rows.
		xw, xc, xe := xl[p-1:][:w], xl[p:][:w], xl[p+1:][:w]
		kw, ke := kx[p-1:][:w], kx[p:][:w]
		xn, xs, kn, ks := xl[p-nx:][:w], xl[p+nx:][:w], ky[p-nx:][:w], ky[p:][:w]
		dc, out := d[p:][:w], dl[p:][:w]
		for m := range out {
			out[m] = dc[m]*xc[m] - kw[m]*xw[m] - ke[m]*xe[m] - kn[m]*xn[m] - ks[m]*xs[m]
		}
	}
}

// applyPair sets dst = A x, or b − A x when b is not nil, at the interior
// nodes [p, e) of one row where both layers are live: each layer's row as
// applyRow, minus the coupling, then the subtraction from b.
func (lv *level) applyPair(dst, x, b []float64, p, e int) {
	n, nx, w := lv.n, lv.nx, e-p
	x0, x1, d0, d1 := x[:n], x[n:2*n], dst[:n], dst[n:2*n]
	kx0, ky0, kx1, ky1 := lv.kx[0], lv.ky[0], lv.kx[1], lv.ky[1]
	xw0, xc0, xe0 := x0[p-1:][:w], x0[p:][:w], x0[p+1:][:w]
	kw0, ke0 := kx0[p-1:][:w], kx0[p:][:w]
	xn0, xs0, kn0, ks0 := x0[p-nx:][:w], x0[p+nx:][:w], ky0[p-nx:][:w], ky0[p:][:w]
	xw1, xc1, xe1 := x1[p-1:][:w], x1[p:][:w], x1[p+1:][:w]
	kw1, ke1 := kx1[p-1:][:w], kx1[p:][:w]
	xn1, xs1, kn1, ks1 := x1[p-nx:][:w], x1[p+nx:][:w], ky1[p-nx:][:w], ky1[p:][:w]
	dc0, dc1, cc := lv.diag[0][p:][:w], lv.diag[1][p:][:w], lv.cpl[p:][:w]
	out0, out1 := d0[p:][:w], d1[p:][:w]
	if b == nil {
		for m := range out0 {
			o0 := dc0[m]*xc0[m] - kw0[m]*xw0[m] - ke0[m]*xe0[m] - kn0[m]*xn0[m] - ks0[m]*xs0[m]
			o1 := dc1[m]*xc1[m] - kw1[m]*xw1[m] - ke1[m]*xe1[m] - kn1[m]*xn1[m] - ks1[m]*xs1[m]
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
		o0 := dc0[m]*xc0[m] - kw0[m]*xw0[m] - ke0[m]*xe0[m] - kn0[m]*xn0[m] - ks0[m]*xs0[m]
		o1 := dc1[m]*xc1[m] - kw1[m]*xw1[m] - ke1[m]*xe1[m] - kn1[m]*xn1[m] - ks1[m]*xs1[m]
		if cp := cc[m]; cp != 0 {
			o0 -= cp * xc1[m]
			o1 -= cp * xc0[m]
		}
		out0[m], out1[m] = b0[m]-o0, b1[m]-o1
	}
}

// localEnergy returns Σ s_i x_i² + Σ c_p (x_0p − x_1p)², the part of x·A x
// from sinks and layer couplings, a lower bound of x·A x.
func (lv *level) localEnergy(x []float64) float64 {
	var e float64
	for l := 0; l < lv.nl; l++ {
		xl := x[l*lv.n : (l+1)*lv.n]
		for p, s := range lv.sink[l] {
			e += s * xl[p] * xl[p]
		}
	}
	if lv.nl == 2 {
		x0, x1 := x[:lv.n], x[lv.n:2*lv.n]
		for p, c := range lv.cpl {
			d := x0[p] - x1[p]
			e += c * d * d
		}
	}
	return e
}

// residual sets r = b − A x.
func (lv *level) residual(r, x, b []float64) { lv.applyRows(r, x, b) }

// nbSum returns b_p + Σ k x_q over the in-layer neighbours q of cell (i, j).
func nbSum(kx, ky, x []float64, nx, ny, i, j, p int, bp float64) float64 {
	v := bp
	if i > 0 {
		v += kx[p-1] * x[p-1]
	}
	if i < nx-1 {
		v += kx[p] * x[p+1]
	}
	if j > 0 {
		v += ky[p-nx] * x[p-nx]
	}
	if j < ny-1 {
		v += ky[p] * x[p+nx]
	}
	return v
}

// sweeps does m red–black Gauss–Seidel sweeps, in each the cells of
// colour first ((i+j) mod 2 == first) before the others, solving the 2×2
// block of both layers of a cell together. The half-sweeps are fused row
// by row: sweep s relaxes row j of the first colour, then row j−1 of the
// second (whose neighbours are then final), two rows behind sweep s−1
// (whose rows around them are then final), so the grid streams through the
// cache once for all m sweeps. Every cell sees the same neighbour values as
// in m separate sweeps of two separate half-sweeps, so the result is the
// same to the bit. With zero set, x is zero on entry, and the first
// half-sweep, whose neighbours are all still zero, skips reading them (the
// sum b + Σ k·0 is b + 0). With prep not nil, prep(j) is called for each
// row j before any of its values is read (the rows around it are then not
// yet relaxed either). With done not nil, done(j) is called for each row j,
// in increasing j, as soon as the rows j−1, j and j+1 of x hold their final
// values (the last sweep's second colour has passed row j+1), while they
// are still in the cache; done must not write x.
func (lv *level) sweeps(x, b []float64, first, m int, zero bool, prep, done func(j int)) {
	second := 1 - first
	ny := lv.ny
	if prep != nil {
		prep(0)
	}
	next := 0 // the next row for done
	for t := 0; t < ny+2*m-1; t++ {
		if prep != nil && t+1 < ny {
			prep(t + 1)
		}
		for s := 0; s < m; s++ {
			j := t - 2*s
			if j >= 0 && j < ny {
				lv.relaxRow(x, b, j, first, zero && s == 0)
			}
			if j >= 1 && j <= ny {
				lv.relaxRow(x, b, j-1, second, false)
			}
		}
		// Rows up to t − 2m + 1 are final: the last sweep's second colour
		// passed row t − 2(m−1) − 1.
		for ; done != nil && next < ny && next+1 <= t-2*m+1; next++ {
			done(next)
		}
	}
	for ; done != nil && next < ny; next++ {
		done(next)
	}
}

// relaxRow updates the cells of one colour in row j; zero says that their
// neighbours are all zero.
func (lv *level) relaxRow(x, b []float64, j, colour int, zero bool) {
	nx, ny, n := lv.nx, lv.ny, lv.n
	lo, hi := lv.ulo[j], lv.uhi[j]
	if lo >= hi {
		return
	}
	// First column of the colour in [lo, hi); the last column nx−1 is
	// relaxed by the edge code when the span reaches it with that colour.
	first := lo + ((lo ^ (j + colour)) & 1)
	lastEdge := hi == nx && (nx-1-first)&1 == 0
	row := j * nx
	if lv.nl == 1 {
		kx, ky, d := lv.kx[0], lv.ky[0], lv.diag[0]
		if j == 0 || j == ny-1 || nx < 3 {
			for i := first; i < hi; i += 2 {
				p := row + i
				x[p] = nbSum(kx, ky, x, nx, ny, i, j, p, b[p]) / d[p]
			}
			return
		}
		// Interior row: the ends by nbSum, the rest without tests.
		i := first
		if i == 0 {
			x[row] = nbSum(kx, ky, x, nx, ny, 0, j, row, b[row]) / d[row]
			i = 2
		}
		lv.relaxSplit(x, b, 0, false, zero, row+i, row+min(hi, nx-1))
		if lastEdge {
			p := row + nx - 1
			x[p] = nbSum(kx, ky, x, nx, ny, nx-1, j, p, b[p]) / d[p]
		}
		return
	}
	kx0, ky0, d0 := lv.kx[0], lv.ky[0], lv.diag[0]
	kx1, ky1, d1 := lv.kx[1], lv.ky[1], lv.diag[1]
	x0, x1 := x[:n], x[n:2*n]
	b0, b1 := b[:n], b[n:2*n]
	c := lv.cpl
	// block solves [d0 −c; −c d1] [x0; x1] = [r0; r1] at cell p.
	block := func(p int, r0, r1 float64) {
		cp := c[p]
		if cp == 0 {
			x0[p] = r0 / d0[p]
			x1[p] = r1 / d1[p]
			return
		}
		det := d0[p]*d1[p] - cp*cp
		x0[p] = (d1[p]*r0 + cp*r1) / det
		x1[p] = (cp*r0 + d0[p]*r1) / det
	}
	edge := func(i int) {
		p := row + i
		block(p, nbSum(kx0, ky0, x0, nx, ny, i, j, p, b0[p]), nbSum(kx1, ky1, x1, nx, ny, i, j, p, b1[p]))
	}
	if j == 0 || j == ny-1 || nx < 3 {
		for i := first; i < hi; i += 2 {
			edge(i)
		}
		return
	}
	i := first
	if i == 0 {
		edge(0)
		i = 2
	}
	// Outside the pan span only the glass node is live (the pan node is an
	// identity row with zero value and right-hand side, d0 = 1, c = 0).
	// Each range starts on a cell of the colour (i) and advances i past it
	// by a whole number of steps of 2.
	end := min(hi, nx-1)
	next := func(e int) int { return max(i, i+(e-i+1)&^1) }
	if e := min(end, lv.lo[0][j]); i < e {
		lv.relaxSplit(x, b, 1, false, zero, row+i, row+e)
		i = next(e)
	}
	if e := min(end, lv.hi[0][j]); i < e {
		lv.relaxSplit(x, b, 0, true, zero, row+i, row+e)
		i = next(e)
	}
	if i < end {
		lv.relaxSplit(x, b, 1, false, zero, row+i, row+end)
	}
	if lastEdge {
		edge(nx - 1)
	}
}

// relaxRange relaxes the cells p, p+2, … below e of one layer's vector x
// (faces kx, ky, right-hand side b, inverse diagonal inv), all of them in
// one interior row of width nx away from its first and last columns. The
// slices are cut to the same length first, so that the loop runs without
// bounds checks; the arithmetic is that of nbSum times the inverse.
func relaxRange(x, kx, ky, b, inv []float64, p, e, nx int) {
	w := e - p
	if w <= 0 {
		return
	}
	xw, xc, xe := x[p-1:][:w], x[p:][:w], x[p+1:][:w]
	kw, ke := kx[p-1:][:w], kx[p:][:w]
	xn, xs, kn, ks := x[p-nx:][:w], x[p+nx:][:w], ky[p-nx:][:w], ky[p:][:w]
	bc, ic := b[p:][:w], inv[p:][:w]
	for m := 0; m < len(xc); m += 2 {
		xc[m] = (bc[m] + kw[m]*xw[m] + ke[m]*xe[m] + kn[m]*xn[m] + ks[m]*xs[m]) * ic[m]
	}
}

// relaxBlockRange is relaxRange for the cells where both layers are live,
// solving each cell's 2×2 block [d0 −c; −c d1] by its inverse determinant.
func relaxBlockRange(lv *level, x0, x1, b0, b1 []float64, p, e int) {
	nx, w := lv.nx, e-p
	if w <= 0 {
		return
	}
	kx0, ky0, kx1, ky1 := lv.kx[0], lv.ky[0], lv.kx[1], lv.ky[1]
	xw0, xc0, xe0 := x0[p-1:][:w], x0[p:][:w], x0[p+1:][:w]
	kw0, ke0 := kx0[p-1:][:w], kx0[p:][:w]
	xn0, xs0, kn0, ks0 := x0[p-nx:][:w], x0[p+nx:][:w], ky0[p-nx:][:w], ky0[p:][:w]
	xw1, xc1, xe1 := x1[p-1:][:w], x1[p:][:w], x1[p+1:][:w]
	kw1, ke1 := kx1[p-1:][:w], kx1[p:][:w]
	xn1, xs1, kn1, ks1 := x1[p-nx:][:w], x1[p+nx:][:w], ky1[p-nx:][:w], ky1[p:][:w]
	bc0, bc1 := b0[p:][:w], b1[p:][:w]
	dc0, dc1, cc, ic := lv.diag[0][p:][:w], lv.diag[1][p:][:w], lv.cpl[p:][:w], lv.inv[p:][:w]
	for m := 0; m < len(xc0); m += 2 {
		r0 := bc0[m] + kw0[m]*xw0[m] + ke0[m]*xe0[m] + kn0[m]*xn0[m] + ks0[m]*xs0[m]
		r1 := bc1[m] + kw1[m]*xw1[m] + ke1[m]*xe1[m] + kn1[m]*xn1[m] + ks1[m]*xs1[m]
		cp, id := cc[m], ic[m]
		xc0[m] = (dc1[m]*r0 + cp*r1) * id
		xc1[m] = (cp*r0 + dc0[m]*r1) * id
	}
}
