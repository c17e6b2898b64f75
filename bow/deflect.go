package bow

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// mapBase assigns each base cell the bending cell whose bicubic gives its
// deflection: the one it lies in, or, in the thin strip of base outside the
// plate's stair-step outline, the nearest plate cell (its polynomial is
// continued over less than a bending cell). It also lists the rim cells.
func (s *Solver) mapBase() {
	g := s.grid
	s.evalEl = make([]int32, g.Nx*g.Ny)
	for j := 0; j < g.Ny; j++ {
		for i := 0; i < g.Nx; i++ {
			c := j*g.Nx + i
			s.evalEl[c] = -1
			if !s.in[c] {
				continue
			}
			x, y := g.X0M+float64(i)*g.CellM, g.Y0M+float64(j)*g.CellM
			s.evalEl[c] = int32(s.nearestCell(x, y))
			if i == 0 || j == 0 || i == g.Nx-1 || j == g.Ny-1 ||
				!s.in[c-1] || !s.in[c+1] || !s.in[c-g.Nx] || !s.in[c+g.Nx] {
				s.rim = append(s.rim, c)
			}
		}
	}
}

// nearestCell returns the plate cell containing (x, y), or the plate cell
// whose centre is nearest to it.
func (s *Solver) nearestCell(x, y float64) int {
	fi, fj := (x-s.ox)/s.cellM, (y-s.oy)/s.cellM
	I, J := int(math.Floor(fi)), int(math.Floor(fj))
	if s.cellActive(I, J) {
		return J*s.ncx + I
	}
	best, bestD := -1, math.Inf(1)
	for ring := 1; ring <= max(s.ncx, s.ncy) && best < 0; ring++ {
		for dJ := -ring; dJ <= ring; dJ++ {
			for dI := -ring; dI <= ring; dI++ {
				if max(abs(dI), abs(dJ)) != ring || !s.cellActive(I+dI, J+dJ) {
					continue
				}
				dx, dy := float64(I+dI)+0.5-fi, float64(J+dJ)+0.5-fj
				if d := dx*dx + dy*dy; d < bestD {
					best, bestD = (J+dJ)*s.ncx+I+dI, d
				}
			}
		}
	}
	return best
}

func abs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}

// Deflect returns the thermal deflection w of every base cell, m (+z into
// the pan; 0 outside the base), for the heat flux fluxWM2 (W/m², from the
// hob into the pan) and the base node temperature tBaseK (K, the plate
// solve's TPanK) per base cell, with the base scanned at tRefK (K). dst is
// reused when it has the grid's length.
//
// Each bending cell carries the mean reduced thermal moment of its base
// cells; base cells outside the plate's outline add no load. The result is
// given relative to the least-squares plane of the rim cells: a rigid tilt
// or lift of the base is the rest pose's to decide.
func (s *Solver) Deflect(ctx context.Context, fluxWM2, tBaseK []float64, tRefK float64, dst []float64) ([]float64, error) {
	moment, err := s.cellMoments(fluxWM2, tBaseK, tRefK)
	if err != nil {
		return nil, err
	}
	return s.DeflectMoments(ctx, moment, dst)
}

// cellMoments returns the reduced thermal moment M_T* of every base cell,
// N·m/m, after checking the inputs.
func (s *Solver) cellMoments(fluxWM2, tBaseK []float64, tRefK float64) ([]float64, error) {
	n := s.grid.Nx * s.grid.Ny
	if len(fluxWM2) != n || len(tBaseK) != n {
		return nil, fmt.Errorf("bow: flux has %d cells and base temperature %d, grid %d", len(fluxWM2), len(tBaseK), n)
	}
	if !(tRefK > 0) || math.IsInf(tRefK, 0) {
		return nil, fmt.Errorf("bow: scan (reference) temperature %g K, want > 0 and finite", tRefK)
	}
	m := make([]float64, n)
	for c, in := range s.in {
		if !in {
			continue
		}
		q, t := fluxWM2[c], tBaseK[c]
		if math.IsNaN(q) || math.IsInf(q, 0) || math.Abs(q) > 1e8 {
			return nil, fmt.Errorf("bow: base cell %d (%d, %d): flux %g W/m², want finite and below 1e8 in size", c, c%s.grid.Nx, c/s.grid.Nx, q)
		}
		if !(t > 0 && t < 5000) {
			return nil, fmt.Errorf("bow: base cell %d (%d, %d): base temperature %g K, want in (0, 5000) K", c, c%s.grid.Nx, c/s.grid.Nx, t)
		}
		m[c] = s.lam.ThermalMomentNm(q, t-tRefK)
	}
	return m, nil
}

// DeflectMoments is Deflect for a given reduced thermal moment per base
// cell, N·m/m (read only over base cells).
func (s *Solver) DeflectMoments(ctx context.Context, momentNm []float64, dst []float64) ([]float64, error) {
	g := s.grid
	if len(momentNm) != g.Nx*g.Ny {
		return nil, fmt.Errorf("bow: thermal moment has %d cells, grid %d", len(momentNm), g.Nx*g.Ny)
	}
	// Mean moment per bending cell.
	cellM := make([]float64, s.ncx*s.ncy)
	cellN := make([]int, s.ncx*s.ncy)
	for c, in := range s.in {
		if !in {
			continue
		}
		x, y := g.X0M+float64(c%g.Nx)*g.CellM, g.Y0M+float64(c/g.Nx)*g.CellM
		I, J := int(math.Floor((x-s.ox)/s.cellM)), int(math.Floor((y-s.oy)/s.cellM))
		if s.cellActive(I, J) {
			cellM[J*s.ncx+I] += momentNm[c]
			cellN[J*s.ncx+I]++
		}
	}
	clear(s.load)
	for J := 0; J < s.ncy; J++ {
		for I := 0; I < s.ncx; I++ {
			e := J*s.ncx + I
			if !s.active[e] || cellN[e] == 0 {
				continue
			}
			m := cellM[e] / float64(cellN[e])
			for a, d := range s.cellDofs(I, J) {
				if !s.fixed[d] {
					s.load[d] += m * s.unitF[a]
				}
			}
		}
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if err := s.chol.SolveVecTo(s.x, mat.NewVecDense(len(s.load), s.load)); err != nil {
		var c mat.Condition
		if !errors.As(err, &c) {
			return nil, fmt.Errorf("bow: bending solve: %w", err)
		}
		return nil, fmt.Errorf("bow: the bending stiffness is near singular (condition %.3g): is the base mask in one piece?", float64(c))
	}
	if len(dst) != g.Nx*g.Ny {
		dst = make([]float64, g.Nx*g.Ny)
	}
	if err := s.evaluate(ctx, dst); err != nil {
		return nil, err
	}
	s.removeRimPlane(dst)
	return dst, nil
}

// evaluate writes the solved deflection at the base cells' centres into
// dst (0 outside the base).
func (s *Solver) evaluate(ctx context.Context, dst []float64) error {
	g := s.grid
	u := s.x.RawVector().Data
	for j := 0; j < g.Ny; j++ {
		if err := ctx.Err(); err != nil {
			return err
		}
		for i := 0; i < g.Nx; i++ {
			c := j*g.Nx + i
			e := s.evalEl[c]
			if e < 0 {
				dst[c] = 0
				continue
			}
			I, J := int(e)%s.ncx, int(e)/s.ncx
			xi := (g.X0M + float64(i)*g.CellM - s.ox - float64(I)*s.cellM) / s.cellM
			eta := (g.Y0M + float64(j)*g.CellM - s.oy - float64(J)*s.cellM) / s.cellM
			// Tensor-product values only: value and slope functions of each
			// end, in ξ and in η.
			var hx, hy [2][2]float64
			for a := range 2 {
				for sl := range 2 {
					hx[a][sl], _, _ = hermite(a, sl == 1, xi)
					hy[a][sl], _, _ = hermite(a, sl == 1, eta)
				}
			}
			w := 0.0
			dofs := s.cellDofs(I, J)
			for ln := range 4 {
				a, b := ln%2, ln/2
				o := 4 * ln
				w += hx[a][0]*hy[b][0]*u[dofs[o]] + hx[a][1]*hy[b][0]*u[dofs[o+1]] +
					hx[a][0]*hy[b][1]*u[dofs[o+2]] + hx[a][1]*hy[b][1]*u[dofs[o+3]]
			}
			dst[c] = w
		}
	}
	return nil
}

// removeRimPlane subtracts from w (base cells only) the least-squares plane
// a + b·x + c·y of its rim cells.
func (s *Solver) removeRimPlane(w []float64) {
	g := s.grid
	var ata mat.SymDense
	ata.ReuseAsSym(3)
	atb := mat.NewVecDense(3, nil)
	for _, c := range s.rim {
		x := g.X0M + float64(c%g.Nx)*g.CellM - s.centreX
		y := g.Y0M + float64(c/g.Nx)*g.CellM - s.centreY
		row := [3]float64{1, x, y}
		for a := range 3 {
			for b := a; b < 3; b++ {
				ata.SetSym(a, b, ata.At(a, b)+row[a]*row[b])
			}
			atb.SetVec(a, atb.AtVec(a)+row[a]*w[c])
		}
	}
	var coef [3]float64
	var ch mat.Cholesky
	var p mat.VecDense
	if ch.Factorize(&ata) && ch.SolveVecTo(&p, atb) == nil {
		coef = [3]float64{p.AtVec(0), p.AtVec(1), p.AtVec(2)}
	} else {
		// The rim is a line or a point: remove its mean only.
		for _, c := range s.rim {
			coef[0] += w[c] / float64(len(s.rim))
		}
	}
	for c, in := range s.in {
		if in {
			x := g.X0M + float64(c%g.Nx)*g.CellM - s.centreX
			y := g.Y0M + float64(c/g.Nx)*g.CellM - s.centreY
			w[c] -= coef[0] + coef[1]*x + coef[2]*y
		}
	}
}
