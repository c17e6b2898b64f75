package thermal

import (
	"context"
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
	ctx        context.Context // checked once per iteration; nil = never cancelled
}

func newPCG(size int) *pcg { return reusePCG(nil, size) }

// reusePCG returns a zeroed workspace, reusing the storage of old (which may
// be nil).
func reusePCG(old *pcg, size int) *pcg {
	if old == nil {
		old = &pcg{}
	}
	return &pcg{
		r: grow(old.r, size), z: grow(old.z, size),
		p: grow(old.p, size), q: grow(old.q, size),
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
// guess in x, until ‖b − A x‖ ≤ max(tol·‖b‖, eta·‖b − A x₀‖). From a guess
// already within tol·‖b‖ it still does one iteration (unless the residual is
// exactly zero), so that a final solve from a converged state sharpens it
// rather than return it as it is. When the recursively updated residual
// meets the tolerance but the true one does not (rounding drift on
// ill-conditioned systems), the iteration restarts from the true residual,
// at most three times; a loose target (eta·‖b − A x₀‖ above tol·‖b‖) trusts
// the updated residual. It returns the iterations done and the final
// relative residual ‖b − A x‖/‖b‖.
func (cg *pcg) solve(lv *level, m preconditioner, x, b []float64, tol, eta float64) (int, float64, error) {
	return cg.solveForced(lv, m, x, b, tol, &forcing{fixed: eta})
}

// forcing gives the factor eta of solve for one of a sequence of linear
// solves within a nonlinear iteration. A fixed forcing returns fixed; a
// tight one 0. An adaptive one returns maxEta unless the factor of choice 1
// of Eisenstat & Walker (1996, SIAM J. Sci. Comput. 17:16–32; from memory),
// η_EW = |‖F_k‖ − ‖r_{k−1}‖| / ‖F_{k−1}‖, is below maxEta/10, and then
// η_EW; F_k is the residual at the start of solve k (the nonlinear
// residual), r_{k−1} the final residual of the solve before. η_EW is small
// where the linear model predicted the new residual well, so a (nearly)
// linear problem gets a tight second solve instead of many loose ones,
// while an outer iteration limited by its own contraction keeps cheap
// solves.
type forcing struct {
	fixed              float64
	adaptive, tight    bool
	maxEta             float64
	prevStart, prevEnd float64 // residual norms at the start and end of the last solve
}

func (f *forcing) eta(start float64) float64 {
	switch {
	case f.tight:
		return 0
	case !f.adaptive:
		return f.fixed
	case !(f.prevStart > 0):
		return f.maxEta
	}
	ew := math.Abs(start-f.prevEnd) / f.prevStart
	if ew < f.maxEta/10 {
		return ew
	}
	return f.maxEta
}

// solveForced is solve with the factor eta from f, whose record of residual
// norms it updates.
func (cg *pcg) solveForced(lv *level, m preconditioner, x, b []float64, tol float64, f *forcing) (int, float64, error) {
	bn := norm(b)
	if bn == 0 {
		clear(x)
		f.prevStart, f.prevEnd = 0, 0
		return 0, 0, nil
	}
	r, z, p, q := cg.r, cg.z, cg.p, cg.q
	it := 0
	stop := tol * bn
	for restart := 0; ; restart++ {
		lv.residual(r, x, b)
		rn := norm(r)
		if restart == 0 {
			stop = max(stop, f.eta(rn)*rn)
			f.prevStart = rn
		}
		f.prevEnd = rn
		rel := rn / bn
		switch {
		case rn <= stop && (it > 0 || rn > tol*bn || rn == 0):
			return it, rel, nil
		case math.IsNaN(rel):
			return it, rel, &errLinear{iter: it, relRes: rel, tol: stop / bn}
		case restart == 4 || it >= cg.maxIter:
			if rn <= 10*stop {
				return it, rel, nil
			}
			return it, rel, &errLinear{iter: it, relRes: rel, tol: stop / bn}
		}
		m.precondition(z, r)
		copy(p, z)
		rz := floats.Dot(r, z)
		beta, update := 0.0, false // update: p = z + beta·p is still to be done
		for it < cg.maxIter {
			if cg.ctx != nil {
				if err := cg.ctx.Err(); err != nil {
					return it, rel, fmt.Errorf("thermal: conjugate gradients stopped after %d iterations: %w", it, err)
				}
			}
			it++
			if update {
				lv.updateApply(q, p, z, beta)
			} else {
				lv.apply(q, p)
			}
			pq := floats.Dot(p, q)
			if !(pq > 0) {
				break
			}
			alpha := rz / pq
			floats.AddScaled(x, alpha, p)
			floats.AddScaled(r, -alpha, q)
			if rn := norm(r); rn <= stop {
				if stop > tol*bn {
					f.prevEnd = rn
					return it, rn / bn, nil
				}
				break
			}
			m.precondition(z, r)
			rzNew := floats.Dot(r, z)
			beta, update = rzNew/rz, true
			rz = rzNew
		}
	}
}

// norm returns the Euclidean norm of v (without the overflow guard of
// floats.Norm, which temperatures and powers never need).
func norm(v []float64) float64 { return math.Sqrt(floats.Dot(v, v)) }
