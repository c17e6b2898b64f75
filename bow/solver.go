package bow

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Grid is the base grid: square cells, cell (i, j) centred at
// (X0M + i·CellM, Y0M + j·CellM), index j·Nx + i. It has the fields of
// thermal.Grid and scan.Surface's geometry, so a thermal.Grid converts to it
// with bow.Grid(g).
type Grid struct {
	Nx, Ny int
	CellM  float64 // cell side, m
	X0M    float64 // x of the centre of cell (0, 0), m
	Y0M    float64 // y of the centre of cell (0, 0), m
}

// EdgeKind is how the rim of the base is held.
type EdgeKind int

const (
	// EdgeFree leaves the rim free (no moment, no shear): a base whose wall
	// is too thin to matter. The default.
	EdgeFree EdgeKind = iota
	// EdgeClamped holds the rim's deflection and slope: an infinitely stiff
	// wall, the upper bound of the restraint.
	EdgeClamped
	// EdgeWall restrains the rim's rotation with the wall's rotational
	// stiffness (Edge.RotStiffnessN; WallStiffnessN derives it) and leaves
	// it free otherwise: M_n = k_θ ∂w/∂n at the rim.
	EdgeWall
)

// String returns "free", "clamped" or "wall".
func (k EdgeKind) String() string {
	switch k {
	case EdgeFree:
		return "free"
	case EdgeClamped:
		return "clamped"
	case EdgeWall:
		return "wall"
	}
	return fmt.Sprintf("EdgeKind(%d)", int(k))
}

// Edge is the edge condition of the base.
type Edge struct {
	Kind EdgeKind
	// RotStiffnessN is k_θ, N·m per m of rim per radian (= N), for EdgeWall.
	RotStiffnessN float64
}

// Problem is a thermal bending problem on a base grid.
type Problem struct {
	Grid   Grid
	InBase []bool  // base cells (the disc inside the rim), len Nx·Ny
	Layers []Layer // from the hob side up
	Edge   Edge

	// BendCellM is the cell side of the bending grid, m: an integer number
	// of base cells (rounded). Zero chooses the smallest multiple of the
	// base cell with at most MaxBendCells across the base.
	BendCellM float64
	// MaxBendCells bounds the bending cells across the base for the
	// automatic BendCellM (default DefaultBendCells).
	MaxBendCells int
}

// DefaultBendCells is the default number of bending cells across the base:
// 40 bicubic cells resolve a thermal moment that varies over the base
// (TestCoarseningUnbiased) and solve in well under a second.
const DefaultBendCells = 40

// Size limits of the bending grid, checked before anything is allocated.
// The banded matrix of a disc N bending cells across takes about
// 200·N³ bytes with its factor (4 unknowns per node, bandwidth ≈ 4N), so
// MaxBandBytes allows about 70 cells across; the default 40 take 15 MB
// and factorise in about 0.3 s on one core.
const (
	// MaxBendSide bounds the bending cells along either side.
	MaxBendSide = 160
	// MaxBandBytes bounds the banded stiffness matrix and its Cholesky
	// factor together, bytes.
	MaxBandBytes = 64 << 20
	// maxGridCells bounds the base grid the solver maps onto.
	maxGridCells = 1 << 26
)

// Solver holds the factorised bending stiffness of a base; Deflect solves
// for one thermal load. The stiffness depends only on the geometry, the
// layers and the edge, so a coupled hot-state iteration factorises once.
// A Solver is not safe for concurrent use.
type Solver struct {
	grid    Grid
	in      []bool
	lam     *Laminate
	edge    Edge
	factor  int     // base cells per bending cell
	cellM   float64 // bending cell side, m
	ox, oy  float64 // coordinates of bending node (0, 0), m
	ncx     int     // bending cells along x
	ncy     int     // and along y
	active  []bool  // bending cells in the plate
	node    []int   // bending node → node number, −1 if unused
	nNodes  int
	fixed   []bool // constrained dofs
	chol    mat.BandCholesky
	unitF   [16]float64
	evalEl  []int32 // base cell → bending cell whose polynomial gives its w, −1 outside
	rim     []int   // base cells on the rim (a 4-neighbour outside the base)
	centreX float64 // centroid of the base cells, m
	centreY float64
	radiusM float64 // radius of the disc of the same area, m
	load    []float64
	x       *mat.VecDense
}

// Info describes the bending grid of a Solver.
type Info struct {
	BendCellM float64 // bending cell side, m
	Cells     int     // bending cells in the plate
	Dofs      int     // unknowns (4 per node)
	Bandwidth int     // superdiagonals of the banded matrix
	RadiusM   float64 // radius of the disc with the base's area, m
	BandBytes int     // memory of the matrix and its factor, bytes
	Factor    int     // base cells per bending cell side
	Stiffness float64 // D*_s of the laminate, N·m
	CentreXM  float64 // centroid of the base, m
	CentreYM  float64
	Edge      EdgeKind // edge condition
}

// Info returns the bending grid's description.
func (s *Solver) Info() Info {
	n := 4 * s.nNodes
	_, k := s.chol.SymBand()
	return Info{BendCellM: s.cellM, Cells: count(s.active), Dofs: n, Bandwidth: k, RadiusM: s.radiusM,
		BandBytes: 16 * n * (k + 1), Factor: s.factor, Stiffness: s.lam.BiaxialStiffnessNm(),
		CentreXM: s.centreX, CentreYM: s.centreY, Edge: s.edge.Kind}
}

// Laminate returns the solver's laminate.
func (s *Solver) Laminate() *Laminate { return s.lam }

func count(b []bool) int {
	n := 0
	for _, v := range b {
		if v {
			n++
		}
	}
	return n
}

// NewSolver validates p, lays the bending grid over the base, assembles the
// stiffness of the plate and its edge and factorises it (banded Cholesky,
// gonum mat.BandCholesky). Its cost grows like cells·bandwidth², about
// 0.3 s for the default 40 cells across; ctx is checked between stages and
// during assembly.
func NewSolver(ctx context.Context, p Problem) (*Solver, error) {
	if err := p.validate(); err != nil {
		return nil, err
	}
	lam, err := NewLaminate(p.Layers)
	if err != nil {
		return nil, err
	}
	s := &Solver{grid: p.Grid, in: p.InBase, lam: lam, edge: p.Edge, unitF: elementLoad()}
	if err := s.layout(p); err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if err := s.assemble(ctx); err != nil {
		return nil, err
	}
	s.mapBase()
	return s, nil
}

func (p *Problem) validate() error {
	g := p.Grid
	switch {
	case g.Nx <= 0 || g.Ny <= 0 || int64(g.Nx)*int64(g.Ny) > maxGridCells:
		return fmt.Errorf("bow: base grid %d×%d cells, want 1 to %d cells", g.Nx, g.Ny, maxGridCells)
	case !(g.CellM > 0 && g.CellM < 1):
		return fmt.Errorf("bow: base grid cell %g m, want in (0, 1) m", g.CellM)
	case math.IsNaN(g.X0M) || math.IsInf(g.X0M, 0) || math.IsNaN(g.Y0M) || math.IsInf(g.Y0M, 0):
		return fmt.Errorf("bow: base grid origin (%g, %g) m is not finite", g.X0M, g.Y0M)
	case len(p.InBase) != g.Nx*g.Ny:
		return fmt.Errorf("bow: base mask has %d cells, grid %d×%d", len(p.InBase), g.Nx, g.Ny)
	case count(p.InBase) == 0:
		return errors.New("bow: the base mask is empty")
	case p.BendCellM < 0 || math.IsNaN(p.BendCellM) || p.BendCellM > 1:
		return fmt.Errorf("bow: bending cell %g m, want 0 (automatic) or a positive size below 1 m", p.BendCellM)
	case p.MaxBendCells < 0 || p.MaxBendCells > MaxBendSide:
		return fmt.Errorf("bow: %d bending cells across, want 0 (default %d) to %d", p.MaxBendCells, DefaultBendCells, MaxBendSide)
	}
	switch p.Edge.Kind {
	case EdgeFree, EdgeClamped:
	case EdgeWall:
		if !(p.Edge.RotStiffnessN >= 0) || math.IsInf(p.Edge.RotStiffnessN, 0) {
			return fmt.Errorf("bow: wall rotational stiffness %g N·m/(m·rad), want ≥ 0 and finite", p.Edge.RotStiffnessN)
		}
	default:
		return fmt.Errorf("bow: unknown edge condition %d (want free, clamped or wall)", p.Edge.Kind)
	}
	return nil
}
