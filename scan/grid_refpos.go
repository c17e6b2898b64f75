package scan

import (
	"math"

	"gapflux/internal/hugemem"
)

// refPos is every sample's place in the bilinear interpolation of a
// refGrid, computed once so the outlier test's residual passes (up to
// outlierMaxIter+1 over every sample) need no division: q is the cell at
// the lower-left corner of the sample's interpolation square and tx, ty
// (in [0, 1]) its fractional position in it, the same values, computed by
// the same operations, as refGrid.interp computes from (x, y).
type refPos struct {
	q      []int32
	tx, ty []float64
}

// newRefPos returns the places of the samples (x[i], y[i]) (m) in g and
// sets cellOf[i] to the sample's nearest cell, g.cell(x[i], y[i]): both
// from the same quotients (x − x0)/h and (y − y0)/h, computed once.
func newRefPos(g refGrid, x, y []float64, cellOf []int32) refPos {
	n := len(x)
	p := refPos{q: hugemem.Make[int32](n, 0), tx: hugemem.Make[float64](n, 0), ty: hugemem.Make[float64](n, 0)}
	parallelRows(n, func(a, b int) {
		for i := a; i < b; i++ {
			fi := (x[i] - g.x0) / g.h
			fj := (y[i] - g.y0) / g.h
			ic := min(max(int(math.Round(fi)), 0), g.nx-1)
			jc := min(max(int(math.Round(fj)), 0), g.ny-1)
			cellOf[i] = int32(jc*g.nx + ic)
			q, tx, ty := g.cornerOf(fi, fj)
			p.q[i], p.tx[i], p.ty[i] = int32(q), tx, ty
		}
	})
	return p
}

// cornerOf returns the lower-left corner cell of the interpolation
// square of the point at (fi, fj) cells from cell (0, 0) and the
// fractional position (tx, ty) in it, as interp computes them.
func (g refGrid) cornerOf(fi, fj float64) (q int, tx, ty float64) {
	i := min(max(int(math.Floor(fi)), 0), g.nx-2)
	j := min(max(int(math.Floor(fj)), 0), g.ny-2)
	tx = min(max(fi-float64(i), 0), 1)
	ty = min(max(fj-float64(j), 0), 1)
	return j*g.nx + i, tx, ty
}

// fullSquares sets full[q] (for every cell q but the last row and column)
// to whether the four corners q, q+1, q+nx, q+nx+1 of f are all defined,
// as interp tests them (their sum neither NaN nor infinite), and returns
// full (grown from its storage when short).
func fullSquares(g refGrid, f []float64, full []bool) []bool {
	nc := g.nx * g.ny
	if cap(full) < nc {
		full = make([]bool, nc)
	}
	full = full[:nc]
	parallelRows(g.ny, func(j0, j1 int) {
		for j := j0; j < j1; j++ {
			for i := range g.nx {
				q := j*g.nx + i
				if i == g.nx-1 || j == g.ny-1 {
					full[q] = false
					continue
				}
				sum := f[q] + f[q+1] + f[q+g.nx] + f[q+g.nx+1]
				full[q] = !math.IsNaN(sum) && !math.IsInf(sum, 0)
			}
		}
	})
	return full
}

// residualsAt sets res[i] = z[i] − f(x[i], y[i]) (m), bit for bit as
// residuals does, from the samples' places p in g: where the four corners
// of a sample's square are defined (the common case) it takes their
// weighted mean in interp's order, else interp itself. full is scratch
// for fullSquares, which it returns for the next call.
func residualsAt(g refGrid, f []float64, p refPos, x, y, z, res []float64, full []bool) []bool {
	full = fullSquares(g, f, full)
	nx := g.nx
	parallelRows(len(z), func(a, b int) {
		pq, ptx, pty, zz, rr := p.q[a:b], p.tx[a:b], p.ty[a:b], z[a:b], res[a:b]
		for k, q32 := range pq {
			q := int(q32)
			if !full[q] {
				rr[k] = zz[k] - g.interp(f, x[a+k], y[a+k])
				continue
			}
			tx, ty := ptx[k], pty[k]
			w00, w10, w01, w11 := (1-tx)*(1-ty), tx*(1-ty), (1-tx)*ty, tx*ty
			var s, w float64
			s += w00 * f[q]
			w += w00
			s += w10 * f[q+1]
			w += w10
			s += w01 * f[q+nx]
			w += w01
			s += w11 * f[q+nx+1]
			w += w11
			if !(w > 0) {
				rr[k] = zz[k] - g.interp(f, x[a+k], y[a+k])
				continue
			}
			rr[k] = zz[k] - s/w
		}
	})
	return full
}
