package thermal

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
)

// jacobi is the diagonal preconditioner, kept for comparison benchmarks.
type jacobi struct{ lv *level }

func (j jacobi) precondition(z, r []float64) {
	n := j.lv.n
	for l := 0; l < j.lv.nl; l++ {
		d := j.lv.diag[l]
		for p := 0; p < n; p++ {
			z[l*n+p] = r[l*n+p] / d[p]
		}
	}
}

type preconditioner interface{ precondition(z, r []float64) }

// pcg is a conjugate-gradient workspace.
type pcg struct {
	r, z, p, q []float64
	maxIter    int
}

func newPCG(size int) *pcg {
	return &pcg{
		r: make([]float64, size), z: make([]float64, size),
		p: make([]float64, size), q: make([]float64, size),
		maxIter: 1000,
	}
}

// errLinear reports a linear solve that did not reach its tolerance.
type errLinear struct {
	iter   int
	relRes float64
	tol    float64
}

func (e *errLinear) Error() string {
	return fmt.Sprintf("thermal: conjugate gradients stopped after %d iterations at relative residual %.3g (tolerance %.3g)", e.iter, e.relRes, e.tol)
}

// solve runs preconditioned conjugate gradients on lv·x = b from the initial
// guess in x, until ‖b − A x‖ ≤ tol·‖b‖. When the recursively updated
// residual meets the tolerance but the true one does not (rounding drift on
// ill-conditioned systems), the iteration restarts from the true residual,
// at most three times. It returns the iterations done and the final true
// relative residual.
func (cg *pcg) solve(lv *level, m preconditioner, x, b []float64, tol float64) (int, float64, error) {
	bn := floats.Norm(b, 2)
	if bn == 0 {
		clear(x)
		return 0, 0, nil
	}
	r, z, p, q := cg.r, cg.z, cg.p, cg.q
	it := 0
	for restart := 0; ; restart++ {
		lv.residual(r, x, b)
		rel := floats.Norm(r, 2) / bn
		switch {
		case rel <= tol:
			return it, rel, nil
		case math.IsNaN(rel):
			return it, rel, &errLinear{iter: it, relRes: rel, tol: tol}
		case restart == 4 || it >= cg.maxIter:
			if rel <= 10*tol {
				return it, rel, nil
			}
			return it, rel, &errLinear{iter: it, relRes: rel, tol: tol}
		}
		m.precondition(z, r)
		copy(p, z)
		rz := floats.Dot(r, z)
		for it < cg.maxIter {
			it++
			lv.apply(q, p)
			pq := floats.Dot(p, q)
			if !(pq > 0) {
				break
			}
			alpha := rz / pq
			floats.AddScaled(x, alpha, p)
			floats.AddScaled(r, -alpha, q)
			if floats.Norm(r, 2) <= tol*bn {
				break
			}
			m.precondition(z, r)
			rzNew := floats.Dot(r, z)
			beta := rzNew / rz
			rz = rzNew
			for i := range p {
				p[i] = z[i] + beta*p[i]
			}
		}
	}
}
