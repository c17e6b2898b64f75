package scan

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/internal/hugemem"
)

// Cloud is a scan's raw geometry in metres, in the frame it was read in
// (scanner frame) or, after Level, in the base frame.
type Cloud struct {
	// Points are the vertex or point positions, m.
	Points []r3.Vec
	// Normals holds one unit normal per point when the file carries them,
	// else nil.
	Normals []r3.Vec
	// Triangles indexes Points, three per facet; nil for a point cloud.
	Triangles [][3]int32
	// FacetNormals holds one normal per triangle when the file carries them
	// (STL), else nil. A zero vector means the file left it blank.
	FacetNormals []r3.Vec

	// Format names the decoded format, e.g. "stl-binary", "stl-ascii",
	// "ply-ascii", "ply-binary-le", "ply-binary-be", "xyz", "csv"; with a
	// "+gz" suffix when the file was gzip-compressed.
	Format string
	// Unit is the length unit the file's numbers were read in: "mm", "m",
	// "um" or "in".
	Unit string
	// UnitSource says where Unit came from: "option", "header" or "default".
	UnitSource string
	// Warnings are the readers' doubts about the file that did not stop
	// them (e.g. a comma that may be a decimal separator).
	Warnings []string
}

// CellState says what a grid cell holds.
type CellState uint8

const (
	// Outside marks a cell that is not part of the base.
	Outside CellState = iota
	// Measured marks a base cell whose height comes from scan data.
	Measured
	// Filled marks a base cell with no usable data (a hole or a rejected
	// outlier) whose height was interpolated from its neighbours.
	Filled
)

// String returns "outside", "measured" or "filled".
func (s CellState) String() string {
	switch s {
	case Outside:
		return "outside"
	case Measured:
		return "measured"
	case Filled:
		return "filled"
	}
	return "invalid"
}

// Surface is a height field on a regular square grid in the base frame.
// Cell (i, j) has its centre at (X0M + i·CellM, Y0M + j·CellM) and its value
// at index j·Nx + i.
type Surface struct {
	Nx, Ny int
	// CellM is the cell edge length, m.
	CellM float64
	// X0M and Y0M locate the centre of cell (0, 0), m.
	X0M, Y0M float64
	// ZM is the height, m, +z into the pan; NaN where State is Outside.
	ZM []float64
	// State tells measured, filled and outside cells apart.
	State []CellState
}

// NewSurface returns a surface of nx×ny cells, all Outside,
// with heights set to NaN.
func NewSurface(nx, ny int, cellM, x0M, y0M float64) *Surface {
	s := &Surface{Nx: nx, Ny: ny, CellM: cellM, X0M: x0M, Y0M: y0M,
		ZM: hugemem.Make[float64](nx*ny, 0), State: hugemem.Make[CellState](nx*ny, 0)}
	for k := range s.ZM {
		s.ZM[k] = nan
	}
	return s
}

// X returns the x coordinate of column i's cell centres, m.
func (s *Surface) X(i int) float64 { return s.X0M + float64(i)*s.CellM }

// Y returns the y coordinate of row j's cell centres, m.
func (s *Surface) Y(j int) float64 { return s.Y0M + float64(j)*s.CellM }

// Index returns the slice index of cell (i, j).
func (s *Surface) Index(i, j int) int { return j*s.Nx + i }

// InBase reports whether cell k belongs to the base (measured or filled).
func (s *Surface) InBase(k int) bool { return s.State[k] != Outside }

// Clone returns a deep copy of s.
func (s *Surface) Clone() *Surface {
	c := *s
	c.ZM = append([]float64(nil), s.ZM...)
	c.State = append([]CellState(nil), s.State...)
	return &c
}

var nan = math.NaN()
