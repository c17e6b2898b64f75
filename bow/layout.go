package bow

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// layout chooses the bending grid, marks its cells and nodes, numbers the
// unknowns, applies the edge constraints and checks the memory the banded
// matrix will take, all before the matrix is allocated.
//
// The bending grid is aligned with the base grid (a bending cell is
// factor × factor base cells) and centred on the base's bounding box. A
// bending cell belongs to the plate when at least half its area is base,
// so the plate's stair-step outline lies within half a bending cell of the
// rim and its area matches the base's to within the stair-step's scatter.
func (s *Solver) layout(p Problem) error {
	g := p.Grid
	imin, imax, jmin, jmax := g.Nx, -1, g.Ny, -1
	var sx, sy float64
	nIn := 0
	for j := 0; j < g.Ny; j++ {
		for i := 0; i < g.Nx; i++ {
			if !p.InBase[j*g.Nx+i] {
				continue
			}
			imin, imax = min(imin, i), max(imax, i)
			jmin, jmax = min(jmin, j), max(jmax, j)
			sx += g.X0M + float64(i)*g.CellM
			sy += g.Y0M + float64(j)*g.CellM
			nIn++
		}
	}
	s.centreX, s.centreY = sx/float64(nIn), sy/float64(nIn)
	s.radiusM = math.Sqrt(float64(nIn)/math.Pi) * g.CellM
	ext := max(imax-imin+1, jmax-jmin+1)
	switch {
	case p.BendCellM > 0:
		s.factor = max(1, int(math.Round(p.BendCellM/g.CellM)))
	default:
		cells := p.MaxBendCells
		if cells == 0 {
			cells = DefaultBendCells
		}
		s.factor = max(1, (ext+cells-1)/cells)
	}
	f := s.factor
	s.cellM = float64(f) * g.CellM
	s.ncx = (imax - imin + f) / f
	s.ncy = (jmax - jmin + f) / f
	if s.ncx > MaxBendSide || s.ncy > MaxBendSide {
		return fmt.Errorf("bow: bending grid %d×%d cells of %.3g mm exceeds %d per side; raise the bending cell size",
			s.ncx, s.ncy, s.cellM*1e3, MaxBendSide)
	}
	// First base cell of bending cell (0, 0), centring the padding.
	i0 := imin - (s.ncx*f-(imax-imin+1))/2
	j0 := jmin - (s.ncy*f-(jmax-jmin+1))/2
	s.ox = g.X0M + (float64(i0)-0.5)*g.CellM
	s.oy = g.Y0M + (float64(j0)-0.5)*g.CellM

	s.active = make([]bool, s.ncx*s.ncy)
	for J := 0; J < s.ncy; J++ {
		for I := 0; I < s.ncx; I++ {
			n := 0
			for j := j0 + J*f; j < j0+(J+1)*f; j++ {
				for i := i0 + I*f; i < i0+(I+1)*f; i++ {
					if i >= 0 && i < g.Nx && j >= 0 && j < g.Ny && p.InBase[j*g.Nx+i] {
						n++
					}
				}
			}
			s.active[J*s.ncx+I] = 2*n >= f*f
		}
	}
	if count(s.active) < 4 {
		return fmt.Errorf("bow: the base spans only %d bending cells of %.3g mm; lower the bending cell size",
			count(s.active), s.cellM*1e3)
	}
	s.numberNodes()
	return s.constrain()
}

// numberNodes numbers the corners of the plate's cells row by row.
func (s *Solver) numberNodes() {
	nx1 := s.ncx + 1
	s.node = make([]int, nx1*(s.ncy+1))
	for k := range s.node {
		s.node[k] = -1
	}
	for J := 0; J < s.ncy; J++ {
		for I := 0; I < s.ncx; I++ {
			if s.active[J*s.ncx+I] {
				for _, c := range [4][2]int{{0, 0}, {1, 0}, {0, 1}, {1, 1}} {
					s.node[(J+c[1])*nx1+I+c[0]] = 0
				}
			}
		}
	}
	s.nNodes = 0
	for k := range s.node {
		if s.node[k] == 0 {
			s.node[k] = s.nNodes
			s.nNodes++
		}
	}
}

// cellActive reports whether bending cell (I, J) is in the plate.
func (s *Solver) cellActive(I, J int) bool {
	return I >= 0 && I < s.ncx && J >= 0 && J < s.ncy && s.active[J*s.ncx+I]
}

// boundaryNode reports whether bending node (I, J) is on the plate's
// outline (fewer than four of its cells are in the plate).
func (s *Solver) boundaryNode(I, J int) bool {
	return !(s.cellActive(I-1, J-1) && s.cellActive(I, J-1) && s.cellActive(I-1, J) && s.cellActive(I, J))
}

// constrain fixes the unknowns the edge condition prescribes (all zero):
// clamped, every unknown of the outline's nodes; free, the deflection and
// both slopes of the node nearest the centroid (the rigid motions, which
// a thermal load leaves undetermined); wall, that node's deflection only
// (the wall's springs resist tilting), or as free for a wall of no
// rotational stiffness, whose tilt nothing else fixes. Then it checks the
// bandwidth and the memory of the banded matrix.
func (s *Solver) constrain() error {
	nx1 := s.ncx + 1
	s.fixed = make([]bool, 4*s.nNodes)
	switch s.edge.Kind {
	case EdgeClamped:
		for J := 0; J <= s.ncy; J++ {
			for I := 0; I <= s.ncx; I++ {
				if n := s.node[J*nx1+I]; n >= 0 && s.boundaryNode(I, J) {
					for d := range 4 {
						s.fixed[4*n+d] = true
					}
				}
			}
		}
		if count(s.fixed) == len(s.fixed) {
			return fmt.Errorf("bow: a clamped base of %d bending cells has no free node; lower the bending cell size", count(s.active))
		}
	default:
		best, bestD := -1, math.Inf(1)
		for J := 0; J <= s.ncy; J++ {
			for I := 0; I <= s.ncx; I++ {
				if n := s.node[J*nx1+I]; n >= 0 {
					dx, dy := s.ox+float64(I)*s.cellM-s.centreX, s.oy+float64(J)*s.cellM-s.centreY
					if d := dx*dx + dy*dy; d < bestD {
						best, bestD = n, d
					}
				}
			}
		}
		s.fixed[4*best] = true
		if s.edge.Kind == EdgeFree || !(s.edge.RotStiffnessN > 0) {
			s.fixed[4*best+1], s.fixed[4*best+2] = true, true
		}
	}
	k := s.bandwidth()
	n := 4 * s.nNodes
	if bytes := 16 * float64(n) * float64(k+1); bytes > MaxBandBytes {
		return fmt.Errorf("bow: the bending matrix (%d unknowns, bandwidth %d) needs %.0f MB, limit %d MB; raise the bending cell size",
			n, k, bytes/1e6, MaxBandBytes>>20)
	}
	return nil
}

// bandwidth returns the largest distance between two unknowns of one cell.
func (s *Solver) bandwidth() int {
	k := 0
	for J := 0; J < s.ncy; J++ {
		for I := 0; I < s.ncx; I++ {
			if s.active[J*s.ncx+I] {
				dofs := s.cellDofs(I, J)
				k = max(k, dofs[15]-dofs[0])
			}
		}
	}
	return k
}

// cellDofs returns the global unknowns of bending cell (I, J), in element
// order (local node 2b + a at corner (I + a, J + b), dof d), ascending.
func (s *Solver) cellDofs(I, J int) [16]int {
	var dofs [16]int
	nx1 := s.ncx + 1
	for ln := range 4 {
		a, b := ln%2, ln/2
		n := s.node[(J+b)*nx1+I+a]
		for d := range 4 {
			dofs[4*ln+d] = 4*n + d
		}
	}
	return dofs
}

// assemble builds the banded stiffness (cells plus the wall's springs) and
// factorises it.
func (s *Solver) assemble(ctx context.Context) error {
	n, k := 4*s.nNodes, s.bandwidth()
	ke := elementStiffness(s.cellM, s.lam.D11Nm, s.lam.D12Nm)
	band := make([]float64, n*(k+1))
	add := func(i, j int, v float64) {
		if s.fixed[i] || s.fixed[j] || i > j {
			return
		}
		band[i*(k+1)+j-i] += v
	}
	for J := 0; J < s.ncy; J++ {
		if err := ctx.Err(); err != nil {
			return err
		}
		for I := 0; I < s.ncx; I++ {
			if !s.active[J*s.ncx+I] {
				continue
			}
			dofs := s.cellDofs(I, J)
			for a := range 16 {
				for b := range 16 {
					add(dofs[a], dofs[b], ke[a][b])
				}
			}
		}
	}
	if s.edge.Kind == EdgeWall && s.edge.RotStiffnessN > 0 {
		s.addWallSprings(add)
	}
	for i, f := range s.fixed {
		if f {
			band[i*(k+1)] = 1
		}
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	if !s.chol.Factorize(mat.NewSymBandDense(n, k, band)) {
		return fmt.Errorf("bow: the bending stiffness of the base (%d cells of %.3g mm) is singular: is the base mask in one piece?",
			count(s.active), s.cellM*1e3)
	}
	s.load = make([]float64, n)
	s.x = mat.NewVecDense(n, nil)
	return nil
}

// addWallSprings adds the wall's rotational springs, ½ k_θ ∮ (∂w/∂n)² ds,
// along the plate's stair-step outline. The rim's normal is taken radial
// from the base centroid, and each outline edge of side H with outward
// normal e counts for the rim length H·(e·r̂), shared by its two nodes: by
// the divergence theorem the weights sum to ∫ 1/r dA = 2πR over a disc, the
// rim's length, however the steps fall.
func (s *Solver) addWallSprings(add func(i, j int, v float64)) {
	nx1 := s.ncx + 1
	weight := make([]float64, s.nNodes)
	edges := [4]struct{ di, dj, a0, b0, a1, b1 int }{
		{-1, 0, 0, 0, 0, 1}, {1, 0, 1, 0, 1, 1}, {0, -1, 0, 0, 1, 0}, {0, 1, 0, 1, 1, 1},
	}
	for J := 0; J < s.ncy; J++ {
		for I := 0; I < s.ncx; I++ {
			if !s.active[J*s.ncx+I] {
				continue
			}
			for _, e := range edges {
				if s.cellActive(I+e.di, J+e.dj) {
					continue
				}
				for _, c := range [2][2]int{{e.a0, e.b0}, {e.a1, e.b1}} {
					nI, nJ := I+c[0], J+c[1]
					rx, ry := s.ox+float64(nI)*s.cellM-s.centreX, s.oy+float64(nJ)*s.cellM-s.centreY
					r := math.Hypot(rx, ry)
					if r == 0 {
						continue
					}
					if dot := (float64(e.di)*rx + float64(e.dj)*ry) / r; dot > 0 {
						weight[s.node[nJ*nx1+nI]] += s.cellM / 2 * dot
					}
				}
			}
		}
	}
	for J := 0; J <= s.ncy; J++ {
		for I := 0; I <= s.ncx; I++ {
			n := s.node[J*nx1+I]
			if n < 0 || weight[n] == 0 {
				continue
			}
			rx, ry := s.ox+float64(I)*s.cellM-s.centreX, s.oy+float64(J)*s.cellM-s.centreY
			r := math.Hypot(rx, ry)
			nr := [2]float64{rx / r, ry / r}
			// Scaled slopes: ∂w/∂x = u_x / H.
			c := s.edge.RotStiffnessN * weight[n] / (s.cellM * s.cellM)
			for a := range 2 {
				for b := range 2 {
					add(4*n+1+a, 4*n+1+b, c*nr[a]*nr[b])
				}
			}
		}
	}
}
