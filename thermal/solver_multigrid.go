package thermal

import (
	"errors"

	"gonum.org/v1/gonum/mat"
)

// The multigrid is geometric and cell-centred: each coarse cell is the union
// of 2×2 fine cells, prolongation is piecewise constant and restriction is
// its transpose (sums). With that prolongation the Galerkin coarse operator
// PᵀAP would double every face conductance; the coarse faces are instead the
// ones a direct discretisation of the coarse grid gives (the Galerkin value
// divided by the agglomeration factor), the usual remedy in cell-centred and
// aggregation multigrid (e.g. Wesseling, An Introduction to Multigrid
// Methods, 1992, on cell-centred coarsening; Braess 1995 on scaled
// aggregation — both from memory). Sinks and layer couplings scale with the
// area and are summed. Every coarse operator is SPD and fixed during a
// solve, the smoother is symmetric (red–black forward before, reversed
// after) and the coarsest solve exact, so the V-cycle is a symmetric
// preconditioner; it is positive definite in practice (TestSolverDirect
// checks both on random systems), as conjugate gradients needs.

// coarsen builds the next coarser level by agglomerating fx × fy cells
// (fx = 2 unless nx == 1, likewise fy). Coarse face conductances are the sum
// of the fine faces they replace divided by the agglomeration factor along
// the face normal (the conductance of a cell twice as long), coarse sinks and
// couplings are sums, and a coarse node is active when any of its children
// is. Sinks, couplings and diagonals are filled by updateFrom.
func (lv *level) coarsen(old *level) *level {
	lv.fx, lv.fy = 1, 1
	if lv.nx > 1 {
		lv.fx = 2
	}
	if lv.ny > 1 {
		lv.fy = 2
	}
	cx := (lv.nx + lv.fx - 1) / lv.fx
	cy := (lv.ny + lv.fy - 1) / lv.fy
	c := reuseLevel(old, cx, cy, lv.nl, true)
	nx := lv.nx
	// The factors are 1 or 2: i/fx is i >> sx, and k/fx is k·(1/fx), the
	// same correctly rounded value (1/fx is exact), without a division.
	sx, sy := uint(lv.fx-1), uint(lv.fy-1)
	ix, iy := 1/float64(lv.fx), 1/float64(lv.fy)
	for l := 0; l < lv.nl; l++ {
		for j := 0; j < lv.ny; j++ {
			J := j >> sy
			for i := 0; i < nx; i++ {
				I := i >> sx
				p, P := j*nx+i, J*cx+I
				if lv.act[l][p] {
					c.act[l][P] = true
				}
				if i+1 < nx && (i+1)>>sx != I {
					c.kx[l][P] += lv.kx[l][p] * ix
				}
				if j+1 < lv.ny && (j+1)>>sy != J {
					c.ky[l][P] += lv.ky[l][p] * iy
				}
			}
		}
	}
	return c
}

// updateFrom sets the coarse sinks, couplings and diagonal from the fine
// level f (whose sinks and couplings are zero outside its active spans).
func (lv *level) updateFrom(f *level) {
	cx := lv.nx
	for l := 0; l < lv.nl; l++ {
		clear(lv.sink[l])
	}
	if lv.nl == 2 {
		clear(lv.cpl)
	}
	sum := func(dst, src []float64, lo, hi int) {
		if f.fx == 2 {
			sumPairs(dst, src, lo, hi)
			return
		}
		for i := lo; i < hi; i++ {
			dst[i] += src[i]
		}
	}
	for j := 0; j < f.ny; j++ {
		crow, row := (j/f.fy)*cx, j*f.nx
		lo, hi := f.ulo[j], f.uhi[j]
		for l := 0; l < lv.nl; l++ {
			sum(lv.sink[l][crow:crow+cx], f.sink[l][row:row+f.nx], lo, hi)
		}
		if lv.nl == 2 {
			sum(lv.cpl[crow:crow+cx], f.cpl[row:row+f.nx], lo, hi)
		}
	}
	lv.setDiag()
}

// sumPairs adds src[i] to dst[i/2] for i in [lo, hi), in increasing i, as
// the loop dst[i>>1] += src[i] does, but holding each coarse sum in a
// register across its two fine values (the same additions in the same
// order).
func sumPairs(dst, src []float64, lo, hi int) {
	i := lo
	if i < hi && i&1 == 1 {
		dst[i>>1] += src[i]
		i++
	}
	m := max(hi-i, 0) / 2 // whole pairs from i
	d, sp := dst[i>>1:][:m], src[i:][:2*m]
	for k := range d {
		v := d[k] + sp[2*k]
		d[k] = v + sp[2*k+1]
	}
	if i += 2 * m; i < hi {
		dst[i>>1] += src[i]
	}
}

// restrictRow adds the fine values of row j of v, each layer's span, to
// the coarse vector dst (level c).
func (lv *level) restrictRow(c *level, dst, v []float64, j int) {
	cx := c.nx
	crow := (j / lv.fy) * cx
	row := j * lv.nx
	for l := 0; l < lv.nl; l++ {
		vl := v[l*lv.n : (l+1)*lv.n]
		dl := dst[l*c.n : (l+1)*c.n]
		lo, hi := lv.lo[l][j], lv.hi[l][j]
		if lv.fx == 2 {
			for i := lo; i < hi; i++ {
				dl[crow+(i>>1)] += vl[row+i]
			}
		} else {
			for i := lo; i < hi; i++ {
				dl[crow+i] += vl[row+i]
			}
		}
	}
}

// prolongRow adds to row j of the fine vector x the coarse vector xc
// (level c), piecewise constant over each coarse cell, on the active spans
// of x. Inactive fine nodes in a span may pick up values; the
// post-smoothing resets them to their zero right-hand side.
func (lv *level) prolongRow(c *level, x, xc []float64, j int) {
	cx := c.nx
	crow := (j / lv.fy) * cx
	row := j * lv.nx
	for l := 0; l < lv.nl; l++ {
		xl := x[l*lv.n : (l+1)*lv.n]
		cl := xc[l*c.n : (l+1)*c.n]
		lo, hi := lv.lo[l][j], lv.hi[l][j]
		if lv.fx == 2 {
			for i := lo; i < hi; i++ {
				xl[row+i] += cl[crow+(i>>1)]
			}
		} else {
			for i := lo; i < hi; i++ {
				xl[row+i] += cl[crow+i]
			}
		}
	}
}

// directSolver solves the coarsest level exactly by a dense Cholesky
// factorisation (gonum mat) of the system restricted to its active nodes.
type directSolver struct {
	idx  []int // compact index of each node (l·n + p), −1 if inactive
	m    int
	a    *mat.SymDense
	chol mat.Cholesky
	rhs  *mat.VecDense
	sol  *mat.VecDense
}

func newDirectSolver(lv *level) *directSolver {
	ds := &directSolver{idx: make([]int, lv.nl*lv.n)}
	for l := 0; l < lv.nl; l++ {
		for p := 0; p < lv.n; p++ {
			ds.idx[l*lv.n+p] = -1
			if lv.act[l][p] {
				ds.idx[l*lv.n+p] = ds.m
				ds.m++
			}
		}
	}
	if ds.m > 0 {
		ds.a = mat.NewSymDense(ds.m, nil)
		ds.rhs = mat.NewVecDense(ds.m, nil)
		ds.sol = mat.NewVecDense(ds.m, nil)
	}
	return ds
}

var errNotPD = errors.New("thermal: conductance system is not positive definite (a part of the plate has no heat sink)")

// factorize assembles and factorises the matrix of lv.
func (ds *directSolver) factorize(lv *level) error {
	if ds.m == 0 {
		return nil
	}
	a := ds.a
	for i := 0; i < ds.m; i++ {
		for j := i; j < ds.m; j++ {
			a.SetSym(i, j, 0)
		}
	}
	nx, n := lv.nx, lv.n
	for l := 0; l < lv.nl; l++ {
		for p := 0; p < n; p++ {
			u := ds.idx[l*n+p]
			if u < 0 {
				continue
			}
			a.SetSym(u, u, lv.diag[l][p])
			if (p%nx)+1 < nx {
				if v := ds.idx[l*n+p+1]; v >= 0 && lv.kx[l][p] != 0 {
					a.SetSym(u, v, -lv.kx[l][p])
				}
			}
			if p+nx < n {
				if v := ds.idx[l*n+p+nx]; v >= 0 && lv.ky[l][p] != 0 {
					a.SetSym(u, v, -lv.ky[l][p])
				}
			}
			if l == 0 && lv.nl == 2 && lv.cpl[p] != 0 {
				if v := ds.idx[n+p]; v >= 0 {
					a.SetSym(u, v, -lv.cpl[p])
				}
			}
		}
	}
	if !ds.chol.Factorize(a) {
		return errNotPD
	}
	return nil
}

// solve sets x = A⁻¹ b on the coarsest level.
func (ds *directSolver) solve(x, b []float64) {
	for k, u := range ds.idx {
		if u >= 0 {
			ds.rhs.SetVec(u, b[k])
		}
	}
	if ds.m > 0 {
		// A Condition error only reports a large condition number; the
		// solution is still the best available.
		_ = ds.chol.SolveVecTo(ds.sol, ds.rhs)
	}
	for k, u := range ds.idx {
		if u >= 0 {
			x[k] = ds.sol.AtVec(u)
		} else {
			x[k] = b[k]
		}
	}
}

// Multigrid parameters.
const (
	mgCoarsestNodes = 256 // coarsen while a level has more nodes (cells × layers) than this
	mgSweeps        = 2   // red–black Gauss–Seidel sweeps before and after the coarse correction
)

// multigrid is a geometric multigrid V-cycle on cell-centred 2×2
// agglomeration with symmetric red–black block Gauss–Seidel smoothing and an
// exact coarsest solve, so that one V-cycle is a symmetric positive definite
// preconditioner for conjugate gradients.
type multigrid struct {
	levels []*level
	direct *directSolver
}

// newMultigrid builds the hierarchy over the fine level f, whose faces and
// activity are final. Call update after setting the fine sinks.
func newMultigrid(f *level) *multigrid { return reuseMultigrid(f, nil) }

// reuseMultigrid is newMultigrid reusing the coarse levels of old (which
// may be nil).
func reuseMultigrid(f *level, old *multigrid) *multigrid {
	mg := &multigrid{levels: []*level{f}}
	f.setSpans()
	for lv := f; lv.nl*lv.n > mgCoarsestNodes && (lv.nx > 1 || lv.ny > 1); {
		var o *level
		if k := len(mg.levels); old != nil && k < len(old.levels) {
			o = old.levels[k]
		}
		lv = lv.coarsen(o)
		lv.setSpans()
		mg.levels = append(mg.levels, lv)
	}
	mg.direct = newDirectSolver(mg.levels[len(mg.levels)-1])
	return mg
}

// update propagates the fine sinks and couplings to all levels and
// refactorises the coarsest one. The fine diagonal must be current.
func (mg *multigrid) update() error {
	for k := 1; k < len(mg.levels); k++ {
		mg.levels[k].updateFrom(mg.levels[k-1])
	}
	return mg.direct.factorize(mg.levels[len(mg.levels)-1])
}

// clearEdges zeroes what the pre-smoothing from a zero guess reads of x
// (sweeps with zero set): the grid's two outermost rows and columns, whose
// edge cells are relaxed with their neighbours read, or all of x on a grid
// narrower than four cells. It relies on what a V-cycle leaves in x: its
// interior cells of the first colour are written before any read, those of
// the second colour read only first-colour neighbours written before them,
// and nodes outside the active spans or inactive in them are zero (never
// written, or reset by the post-smoothing); so the V-cycle gives the bits
// it gives from an x cleared whole.
func (lv *level) clearEdges(x []float64) {
	nx, ny, n := lv.nx, lv.ny, lv.n
	if nx < 4 || ny < 4 {
		clear(x)
		return
	}
	for l := 0; l < lv.nl; l++ {
		xl := x[l*n : (l+1)*n]
		clear(xl[:2*nx])
		clear(xl[(ny-2)*nx:])
		for j := 2; j < ny-2; j++ {
			row := xl[j*nx : (j+1)*nx]
			row[0], row[1], row[nx-2], row[nx-1] = 0, 0, 0, 0
		}
	}
}

// precondition sets z = B r, one V-cycle from a zero initial guess (z
// holding what the last V-cycle on these levels left, or zero; see
// clearEdges).
func (mg *multigrid) precondition(z, r []float64) { mg.vcycle(0, z, r) }

func (mg *multigrid) vcycle(k int, x, b []float64) {
	if k == len(mg.levels)-1 {
		mg.direct.solve(x, b)
		return
	}
	lv, c := mg.levels[k], mg.levels[k+1]
	lv.clearEdges(x)
	// The residual of each row is made and restricted as soon as the
	// pre-smoothing has left it and its neighbours final, while they are
	// in the cache (the values of a residual pass and a restriction, in their
	// order).
	clear(c.b)
	lv.sweeps(x, b, 0, mgSweeps, true, nil, func(j int) {
		lv.applyRowAll(lv.r, x, b, j)
		lv.restrictRow(c, c.b, lv.r, j)
	})
	mg.vcycle(k+1, c.x, c.b)
	// The coarse correction is added to each row just before the
	// post-smoothing first reads it, while the row is in the cache.
	lv.sweeps(x, b, 1, mgSweeps, false, func(j int) { lv.prolongRow(c, x, c.x, j) }, nil)
}
