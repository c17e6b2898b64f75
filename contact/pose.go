package contact

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"gapflux/fluid"
	"gapflux/internal/lowlp"
	"gapflux/scan"
)

// Rest pose defaults.
const (
	// DefaultRockLimitM is the rim drop above which a pan rocks: 0.1 mm, our
	// own choice (DESIGN.md 5.1), not a standard's value.
	DefaultRockLimitM = 0.1e-3
	// DefaultContactTolM is the gap, m, at or below which a support-eligible
	// cell touches the resting plane exactly (round-off); it decides which
	// of the equally good resting planes a point or line contact takes.
	DefaultContactTolM = 1e-9
	// DefaultBandM is the contact band, m, of the support: 4.5 µm, three
	// times the combined RMS roughness of the default interface (1.2 µm and
	// 0.9 µm, σ = 1.5 µm; DESIGN.md 5.2 and 5.3a, our own numbers). Callers
	// pass ContactBandSigmas·σ of their own interface.
	DefaultBandM = ContactBandSigmas * 1.5e-6
	// DefaultWeightN is the weight, N, of the default loaded pan: 1 kg of
	// pan and 1.5 kg of water (DESIGN.md 5.3a, our own scenario).
	DefaultWeightN = 2.5 * fluid.StandardGravityMS2
	// DefaultTipForceLimitN is the rim force, N, below which a pan that
	// tips (and whose rim then drops more than the rock limit) rocks: 5 N,
	// about half a kilogram-force, a deliberate fingertip press on the rim
	// such as an inspector or a cook gives when checking for wobble. Our
	// own choice, not a standard's: it keeps a 200 mm base domed by 0.3 mm
	// (about 3.4 N to tip with the default band and load) rocking, while a
	// base flat over its inner half (W·a/(R − a) ≈ 24.5 N) stands firm.
	DefaultTipForceLimitN = 5.0
)

// supportTol returns the width, m, below which the support counts as a
// point (its contact band fits in a circle of that diameter) or a line
// (the band is no wider than that): two cells, or 1 % of the footprint's
// diameter when that is more (our own choice: at that width the centre of
// mass lies on the support line to within the grid's resolution).
func supportTol(cellM, footDiameterM float64) float64 {
	return max(2*cellM, 0.01*footDiameterM)
}

// Support kinds (Pose.Support), from the cells in the contact band at rest.
const (
	// SupportPoint: the band cells fit in a circle of the support
	// tolerance (supportTol): the pan stands on one point.
	SupportPoint = "point"
	// SupportLine: the band cells lie in a strip no wider than the support
	// tolerance, with the centre of mass inside it: the pan stands on a
	// line through (or nearly through) its centre of mass.
	SupportLine = "line"
	// SupportPolygon: the convex hull of the band cells is wider; whether
	// the pan is stable on it is told by Pose.TipForceN.
	SupportPolygon = "polygon"
)

// tipDirections is the number of tipping directions sampled about a point
// support (every 5°).
const tipDirections = 72

// RestOptions controls Rest. The zero value gives the defaults.
type RestOptions struct {
	// CentreOfMassM is the (x, y) of the pan's centre of mass in the base
	// frame, m; the default (0, 0) is the footprint centre.
	CentreOfMassM [2]float64
	// RockLimitM is the rim drop, m, above which the pan rocks; 0 means
	// DefaultRockLimitM.
	RockLimitM float64
	// ContactTolM is the gap, m, up to which a cell touches the resting
	// plane exactly; 0 means DefaultContactTolM.
	ContactTolM float64
	// BandM is the contact band, m: cells with a gap at rest up to BandM
	// (at least ContactTolM) make up the support; 0 means DefaultBandM.
	BandM float64
	// WeightN is the weight of the loaded pan (pan and load), N; 0 means
	// DefaultWeightN.
	WeightN float64
	// TipForceLimitN is the rim force, N, below which a tipping pan rocks;
	// 0 means DefaultTipForceLimitN.
	TipForceLimitN float64
	// Exclude, if not nil, has one flag per cell (len Nx·Ny); a true cell is
	// never a support point (outliers found by the caller).
	Exclude []bool
	// Seed seeds the random order of the LP solver; the output does not
	// depend on it beyond rounding, and a fixed seed makes it reproducible.
	Seed uint64
}

// Pose is how a rigid pan rests on a hob (DESIGN.md 5.1).
//
// With d(x, y) = pan(x, y) − hob(x, y) on the common grid, the resting plane
// p(x, y) = a·x + b·y + c is the lower convex hull facet of the points
// (x, y, d) over the centre of mass: the plane under all support-eligible
// cells that is highest there. The gap is g = d − p.
type Pose struct {
	// PlaneM holds a, b (dimensionless) and c (m) of the resting plane
	// p = a·x + b·y + c in d-space, base frame.
	PlaneM [3]float64
	// TiltDeg is atan(√(a² + b²)), degrees: the tilt of the pan relative
	// to the hob.
	TiltDeg float64
	// ContactPointsM are the (x, y), m, of the support polygon: the
	// vertices of the convex hull of the cells in the contact band at rest
	// (gap ≤ BandM), counter-clockwise from the one with the least x (then
	// least y).
	ContactPointsM [][2]float64
	// Support is SupportPoint, SupportLine or SupportPolygon, told from
	// the support polygon's size against the support tolerance.
	Support string
	// SupportWidthM is the least width of the support polygon, m (0 for a
	// point or a two-vertex line).
	SupportWidthM float64
	// BandM is the contact band used, m; BandCells counts the
	// support-eligible cells in it.
	BandM     float64
	BandCells int
	// TipForceN is the smallest vertical force, N, that tips the loaded
	// pan off its support when pressed down at the rim: the least over the
	// support polygon's edges of W·d/l, with d the distance from the
	// centre of mass to the edge (inside, ≥ 0) and l the lever from the
	// edge to the farthest rim point beyond it, both perpendicular to the
	// edge (moment balance about the edge, the pan rigid). Edges with no
	// rim beyond them by half a cell or more cannot be tipped about and
	// are skipped; +Inf when none can be.
	TipForceN float64
	// WeightN and TipForceLimitN are the load and the force limit used, N.
	WeightN, TipForceLimitN float64
	// RockM is the largest distance, m, that any point of the base can be
	// pressed down towards the hob from rest, the pan pivoting and rolling
	// on its own base: the maximum over the footprint (the convex hull of
	// the support-eligible cells) of H − p, with H the lower convex hull of
	// the points (x, y, d). H − p is convex, so the maximum lies at a vertex
	// of the footprint, where H = d: RockM is the largest gap at the
	// footprint's outermost cells.
	RockM float64
	// TipM is the rim drop of DESIGN.md 5.1 taken literally: tip the pan
	// about each edge of the support polygon (both sides of a support line;
	// 72 directions about a support point) until a support-eligible cell
	// beyond it touches, and take how far the rim goes down; TipM is the
	// largest such drop, m. On smooth curved bases the next cell touches after a
	// tiny turn (the base rolls), so TipM falls towards 0 with the cell size
	// there and RockM decides.
	TipM float64
	// Rocks is true on a point or line support, or when TipForceN is
	// below TipForceLimitN and RockM above RockLimitM: the pan tips under a
	// light touch and the rim then drops noticeably.
	Rocks bool
	// TouchCells counts the support-eligible cells touching the plane
	// exactly (gap ≤ ContactTolM).
	TouchCells int
	// CentreOfMassM is the centre of mass the pose was found for, m.
	CentreOfMassM [2]float64
}

// restCells holds the support-eligible cells in row-major order.
type restCells struct {
	rx, ry []float64 // position relative to the centre of mass, m
	d      []float64 // d − dmin, m
	row    []int32   // row r's cells are [row[r], row[r+1])
	dmin   float64
	cellM  float64
}

// hullPt is a point of a 2D hull with the index of its restCells entry.
type hullPt struct {
	x, y float64
	i    int32
}

// Rest finds the rest pose of pan on hob and how stable it is (DESIGN.md
// 5.1). A nil hob is an
// ideal flat hob z = 0; otherwise hob must be on pan's grid (see FlatHob,
// RadialHob, ResampleHob) and cover every base cell of pan. Only Measured
// cells of pan that opt.Exclude does not flag are support-eligible; filled
// cells never carry the pan.
//
// The plane is found by Seidel's randomised LP (internal/lowlp) in three
// variables, in O(N) expected time. When the support is a point or a line
// the plane is not unique; Rest then takes the least tilted of the resting
// planes (the pan held balanced).
//
// The support is then taken from every eligible cell in the contact band
// at rest (gap ≤ BandM), not from the few cells the LP ends on: a ring of
// rim cells or a flat patch is a polygon however the noise picks the LP's
// three points. Its tip force and the rim drop decide whether it rocks.
//
// Rest works on the surface it is given; pass the form-filtered surface.
func Rest(pan, hob *scan.Surface, opt RestOptions) (*Pose, error) {
	if err := checkSurface("pan", pan); err != nil {
		return nil, err
	}
	if hob != nil {
		if err := checkSurface("hob", hob); err != nil {
			return nil, err
		}
		if err := sameGrid(pan, hob); err != nil {
			return nil, err
		}
	}
	if err := opt.setDefaults(pan.Nx * pan.Ny); err != nil {
		return nil, err
	}
	com := opt.CentreOfMassM

	c, err := collectCells(pan, hob, opt.Exclude, com)
	if err != nil {
		return nil, err
	}
	foot := hull2D(c.rowExtremes(nil))
	if len(foot) < 3 {
		return nil, errors.New("contact: rest: the support-eligible cells are collinear; no plane rests on them")
	}
	// delta: how far the centre of mass is inside the footprint.
	delta := math.Inf(1)
	for e := range foot {
		delta = min(delta, edgeDistance(foot[e], foot[(e+1)%len(foot)], 0, 0))
	}
	if delta < 0.5*c.cellM {
		return nil, fmt.Errorf("contact: rest: centre of mass (%.3f, %.3f) mm is not inside the measured footprint "+
			"(%.3f mm from its edge; at least half a cell needed)", com[0]*1e3, com[1]*1e3, delta*1e3)
	}

	pl, g, err := c.restingPlane(delta, opt)
	if err != nil {
		return nil, err
	}

	p := &Pose{CentreOfMassM: com}
	p.PlaneM = [3]float64{pl[0], pl[1], pl[2] + c.dmin - pl[0]*com[0] - pl[1]*com[1]}
	p.TiltDeg = math.Atan(math.Hypot(pl[0], pl[1])) * 180 / math.Pi
	c.stability(p, g, foot, opt)
	return p, nil
}

// restingPlane solves the rest pose's LP (DESIGN.md 5.1) for the plane
// pl = (a, b, c') about the centre of mass and returns it with the gaps g
// of every eligible cell. delta is how far the centre of mass lies inside
// the footprint, m. A point or line contact leaves the plane free to turn;
// the least tilted resting plane is taken then.
func (c *restCells) restingPlane(delta float64, opt RestOptions) (pl [3]float64, g []float64, err error) {
	// Resting plane: maximise c' subject to a·rx + b·ry + c' ≤ d at every
	// eligible cell, with p = a·rx + b·ry + c' about the centre of mass.
	// Every optimal plane has |(a, b)| ≤ R/delta, with R the range of d, so
	// the box below never binds.
	rangeM := 0.0
	for _, v := range c.d {
		rangeM = max(rangeM, v)
	}
	rb := rangeM + 1e-12
	n := len(c.d)
	prob := &lowlp.Problem{
		C:     []float64{0, 0, 1},
		A:     make([]float64, 3*n),
		B:     c.d,
		Bound: []float64{2 * rb / delta, 2 * rb / delta, 2 * rb},
	}
	for i := 0; i < n; i++ {
		prob.A[3*i], prob.A[3*i+1], prob.A[3*i+2] = c.rx[i], c.ry[i], 1
	}
	rng := rand.New(rand.NewPCG(opt.Seed, 0x9e3779b97f4a7c15))
	x, _, err := lowlp.Solve(prob, rng)
	if err != nil {
		return pl, nil, fmt.Errorf("contact: rest: %w", err)
	}
	pl = [3]float64{x[0], x[1], x[2]}

	g = make([]float64, n)
	c.gaps(pl, g)
	touch := hull2D(c.rowExtremes(func(i int) bool { return g[i] <= opt.ContactTolM }))
	eps := 1e-6 * c.cellM
	support, v0, v1, err := classify(touch, eps)
	if err != nil {
		return pl, nil, err
	}
	var va, vb hullPt // the support point, or the ends of the support line
	if support != SupportPolygon {
		va, vb = touch[v0], touch[v1]
	}

	// A point or line support leaves the plane free to turn: take the
	// least tilted resting plane.
	switch support {
	case SupportLine:
		pl = balanceLine(c, g, pl, va, vb, eps)
	case SupportPoint:
		pl = balancePoint(c, pl, va, eps, rng)
	}
	if support != SupportPolygon {
		c.gaps(pl, g)
	}
	return pl, g, nil
}

// stability fills p's support, tip force, rim drops and rocking verdict
// from the gaps g at rest (DESIGN.md 5.1); foot is the footprint's hull.
func (c *restCells) stability(p *Pose, g []float64, foot []hullPt, opt RestOptions) {
	p.WeightN, p.TipForceLimitN = opt.WeightN, opt.TipForceLimitN
	for _, gi := range g {
		if gi <= opt.ContactTolM {
			p.TouchCells++
		}
	}
	for _, v := range foot {
		p.RockM = max(p.RockM, g[v.i])
	}

	// The support: the hull of the cells in the contact band at rest.
	p.BandM = max(opt.BandM, opt.ContactTolM)
	inBand := func(i int) bool { return g[i] <= p.BandM }
	for i := range g {
		if inBand(i) {
			p.BandCells++
		}
	}
	band := hull2D(c.rowExtremes(inBand))
	com := p.CentreOfMassM
	for _, v := range band {
		p.ContactPointsM = append(p.ContactPointsM, [2]float64{v.x + com[0], v.y + com[1]})
	}
	var ends [2]hullPt
	p.Support, p.SupportWidthM, ends = classifyBand(band, supportTol(c.cellM, hullDiameter(foot)))
	p.TipForceN = opt.WeightN * tipRatio(band, foot, 0.5*c.cellM)
	p.TipM = c.tipDrop(g, foot, band, p.Support, ends[0], ends[1], 1e-6*c.cellM)
	p.Rocks = p.Support != SupportPolygon || (p.TipForceN < opt.TipForceLimitN && p.RockM > opt.RockLimitM)
}

// classifyBand tells a point, line or polygon support from the convex
// hull h of the band cells (DESIGN.md 5.1): a point when h's diameter is
// at most tol, a line when its least width is, else a polygon. It returns
// the least width and, for a point or line, the support point (twice) or
// the line's two farthest vertices. h is never empty (the cells the plane
// rests on are in the band).
func classifyBand(h []hullPt, tol float64) (support string, widthM float64, ends [2]hullPt) {
	widthM = hullWidth(h)
	// The farthest pair of vertices (O(n²) on the hull's few hundred
	// vertices at most).
	a, b, dmax := 0, 0, 0.0
	for i := range h {
		for j := i + 1; j < len(h); j++ {
			if d := math.Hypot(h[j].x-h[i].x, h[j].y-h[i].y); d > dmax {
				a, b, dmax = i, j, d
			}
		}
	}
	switch {
	case dmax <= tol:
		// The vertex nearest the centre of mass is the pivot.
		k := 0
		for i, v := range h {
			if math.Hypot(v.x, v.y) < math.Hypot(h[k].x, h[k].y) {
				k = i
			}
		}
		return SupportPoint, widthM, [2]hullPt{h[k], h[k]}
	case widthM <= tol:
		return SupportLine, widthM, [2]hullPt{h[a], h[b]}
	}
	return SupportPolygon, widthM, ends
}

// hullDiameter is the largest distance between two vertices of h, m.
func hullDiameter(h []hullPt) float64 {
	d := 0.0
	for i := range h {
		for j := i + 1; j < len(h); j++ {
			d = max(d, math.Hypot(h[j].x-h[i].x, h[j].y-h[i].y))
		}
	}
	return d
}

// hullWidth is the least width of the convex polygon h (counter-clockwise),
// m: the least over its edges of the largest distance of a vertex from the
// edge's line (the minimum is reached with an edge flush, Houle &
// Toussaint 1988, from memory). 0 for fewer than three vertices.
func hullWidth(h []hullPt) float64 {
	if len(h) < 3 {
		return 0
	}
	w := math.Inf(1)
	for e := range h {
		a, b := h[e], h[(e+1)%len(h)]
		far := 0.0
		for _, v := range h {
			far = max(far, edgeDistance(a, b, v.x, v.y))
		}
		w = min(w, far)
	}
	return w
}

// tipRatio returns the least over the edges of the support polygon h of
// d/l (DESIGN.md 5.1): d the distance of the centre of mass (the origin)
// inside the edge, l the farthest a footprint vertex lies beyond it. Edges
// with l ≤ minLever (no rim beyond them) are skipped; +Inf when every edge
// is. A one-vertex support gives 0; a two-vertex one is a degenerate
// polygon with the edge taken both ways.
func tipRatio(h, foot []hullPt, minLever float64) float64 {
	if len(h) == 1 {
		return 0
	}
	r := math.Inf(1)
	for e := range h {
		if len(h) == 2 && e == 1 {
			break
		}
		a, b := h[e], h[(e+1)%len(h)]
		for _, side := range []float64{1, -1} {
			if side < 0 && len(h) > 2 {
				break
			}
			d := max(side*edgeDistance(a, b, 0, 0), 0)
			lever := 0.0
			for _, v := range foot {
				lever = max(lever, -side*edgeDistance(a, b, v.x, v.y))
			}
			if lever > minLever {
				r = min(r, d/lever)
			}
		}
	}
	return r
}

// setDefaults fills the zero options with their defaults and checks them;
// cells is the number of grid cells.
func (o *RestOptions) setDefaults(cells int) error {
	if o.RockLimitM == 0 {
		o.RockLimitM = DefaultRockLimitM
	}
	if o.ContactTolM == 0 {
		o.ContactTolM = DefaultContactTolM
	}
	if o.BandM == 0 {
		o.BandM = DefaultBandM
	}
	if o.WeightN == 0 {
		o.WeightN = DefaultWeightN
	}
	if o.TipForceLimitN == 0 {
		o.TipForceLimitN = DefaultTipForceLimitN
	}
	com := o.CentreOfMassM
	switch {
	case !(o.RockLimitM > 0) || math.IsInf(o.RockLimitM, 0):
		return fmt.Errorf("contact: rest: rock limit %g m must be positive and finite", o.RockLimitM)
	case !(o.ContactTolM > 0) || math.IsInf(o.ContactTolM, 0):
		return fmt.Errorf("contact: rest: contact tolerance %g m must be positive and finite", o.ContactTolM)
	case !(o.BandM > 0) || math.IsInf(o.BandM, 0):
		return fmt.Errorf("contact: rest: contact band %g m must be positive and finite", o.BandM)
	case !(o.WeightN > 0) || math.IsInf(o.WeightN, 0):
		return fmt.Errorf("contact: rest: weight %g N must be positive and finite", o.WeightN)
	case !(o.TipForceLimitN > 0) || math.IsInf(o.TipForceLimitN, 0):
		return fmt.Errorf("contact: rest: tip force limit %g N must be positive and finite", o.TipForceLimitN)
	case !finite64(com[0]) || !finite64(com[1]):
		return fmt.Errorf("contact: rest: centre of mass (%g, %g) m is not finite", com[0], com[1])
	case o.Exclude != nil && len(o.Exclude) != cells:
		return fmt.Errorf("contact: rest: %d exclusion flags for %d cells", len(o.Exclude), cells)
	}
	return nil
}

func checkSurface(what string, s *scan.Surface) error {
	if s == nil {
		return fmt.Errorf("contact: %s surface is nil", what)
	}
	n := s.Nx * s.Ny
	if s.Nx <= 0 || s.Ny <= 0 || len(s.ZM) != n || len(s.State) != n {
		return fmt.Errorf("contact: %s surface: %d×%d grid with %d heights and %d states", what, s.Nx, s.Ny, len(s.ZM), len(s.State))
	}
	if !(s.CellM > 0) || math.IsInf(s.CellM, 0) || !finite64(s.X0M) || !finite64(s.Y0M) {
		return fmt.Errorf("contact: %s surface: bad grid geometry (cell %g m, origin %g, %g m)", what, s.CellM, s.X0M, s.Y0M)
	}
	return nil
}

// sameGrid reports an error unless a and b have the same cells.
func sameGrid(a, b *scan.Surface) error {
	tol := 1e-9 * a.CellM
	if a.Nx != b.Nx || a.Ny != b.Ny || math.Abs(a.CellM-b.CellM) > tol ||
		math.Abs(a.X0M-b.X0M) > tol || math.Abs(a.Y0M-b.Y0M) > tol {
		return fmt.Errorf("contact: hob grid (%d×%d, cell %g m, origin %g, %g m) differs from the pan grid (%d×%d, cell %g m, origin %g, %g m)",
			b.Nx, b.Ny, b.CellM, b.X0M, b.Y0M, a.Nx, a.Ny, a.CellM, a.X0M, a.Y0M)
	}
	return nil
}

// collectCells gathers the support-eligible cells: measured in pan, not
// excluded; their d = pan − hob must be finite.
func collectCells(pan, hob *scan.Surface, exclude []bool, com [2]float64) (*restCells, error) {
	n := 0
	for k, st := range pan.State {
		if st == scan.Measured && (exclude == nil || !exclude[k]) {
			n++
		}
	}
	c := &restCells{row: make([]int32, pan.Ny+1), cellM: pan.CellM, dmin: math.Inf(1),
		rx: make([]float64, 0, n), ry: make([]float64, 0, n), d: make([]float64, 0, n)}
	for j := 0; j < pan.Ny; j++ {
		c.row[j] = int32(len(c.d))
		y := pan.Y(j)
		for i := 0; i < pan.Nx; i++ {
			k := j*pan.Nx + i
			if pan.State[k] != scan.Measured || (exclude != nil && exclude[k]) {
				continue
			}
			d := pan.ZM[k]
			if hob != nil {
				if hob.State[k] == scan.Outside {
					return nil, fmt.Errorf("contact: rest: the hob does not cover cell (%d, %d) at (%.3f, %.3f) mm",
						i, j, pan.X(i)*1e3, y*1e3)
				}
				d -= hob.ZM[k]
			}
			if !finite64(d) {
				return nil, fmt.Errorf("contact: rest: cell (%d, %d) at (%.3f, %.3f) mm: height difference %g is not finite",
					i, j, pan.X(i)*1e3, y*1e3, d)
			}
			c.rx = append(c.rx, pan.X(i)-com[0])
			c.ry = append(c.ry, y-com[1])
			c.d = append(c.d, d)
			c.dmin = min(c.dmin, d)
		}
	}
	c.row[pan.Ny] = int32(len(c.d))
	if len(c.d) == 0 {
		return nil, errors.New("contact: rest: no measured base cell to rest on")
	}
	for i := range c.d {
		c.d[i] -= c.dmin
	}
	return c, nil
}

// gaps sets g[i] = d_i − (a·rx + b·ry + c') for the plane pl = (a, b, c').
func (c *restCells) gaps(pl [3]float64, g []float64) {
	for i, d := range c.d {
		g[i] = d - (pl[0]*c.rx[i] + pl[1]*c.ry[i] + pl[2])
	}
}

// rowExtremes returns, per row, the first and last cell for which keep is
// true (all cells if keep is nil): enough for the convex hull of the set.
func (c *restCells) rowExtremes(keep func(i int) bool) []hullPt {
	var pts []hullPt
	for r := 0; r+1 < len(c.row); r++ {
		lo, hi := int(c.row[r]), int(c.row[r+1])
		first, last := -1, -1
		for i := lo; i < hi; i++ {
			if keep == nil || keep(i) {
				first = i
				break
			}
		}
		if first < 0 {
			continue
		}
		for i := hi - 1; i >= first; i-- {
			if keep == nil || keep(i) {
				last = i
				break
			}
		}
		pts = append(pts, hullPt{c.rx[first], c.ry[first], int32(first)})
		if last != first {
			pts = append(pts, hullPt{c.rx[last], c.ry[last], int32(last)})
		}
	}
	return pts
}

// hull2D returns the convex hull of p by Andrew's monotone chain:
// counter-clockwise, without collinear points, from the point with the
// least x (then least y). One distinct point gives one vertex, collinear
// points the two ends. p is sorted in place.
func hull2D(p []hullPt) []hullPt {
	sort.Slice(p, func(a, b int) bool {
		if p[a].x != p[b].x {
			return p[a].x < p[b].x
		}
		return p[a].y < p[b].y
	})
	// Drop duplicates.
	u := p[:0]
	for i, q := range p {
		if i == 0 || q.x != u[len(u)-1].x || q.y != u[len(u)-1].y {
			u = append(u, q)
		}
	}
	p = u
	if len(p) < 3 {
		return append([]hullPt(nil), p...)
	}
	h := make([]hullPt, 0, 2*len(p))
	for _, q := range p { // lower chain
		for len(h) >= 2 && cross2(h[len(h)-2], h[len(h)-1], q) <= 0 {
			h = h[:len(h)-1]
		}
		h = append(h, q)
	}
	lower := len(h) + 1
	for i := len(p) - 2; i >= 0; i-- { // upper chain
		q := p[i]
		for len(h) >= lower && cross2(h[len(h)-2], h[len(h)-1], q) <= 0 {
			h = h[:len(h)-1]
		}
		h = append(h, q)
	}
	return h[:len(h)-1]
}

// cross2 is the z component of (b − a) × (c − a): positive when a, b, c turn
// counter-clockwise.
func cross2(a, b, c hullPt) float64 {
	return (b.x-a.x)*(c.y-a.y) - (b.y-a.y)*(c.x-a.x)
}

// edgeDistance is the signed distance of (x, y) from the line through a
// and b, positive on the left (inside a counter-clockwise polygon).
func edgeDistance(a, b hullPt, x, y float64) float64 {
	ex, ey := b.x-a.x, b.y-a.y
	return (ex*(y-a.y) - ey*(x-a.x)) / math.Hypot(ex, ey)
}

// classify finds the smallest face of the touching hull h that holds the
// centre of mass (the origin), to within eps: a vertex (point support,
// index v0), an edge (line support, v0 → v1) or the inside (polygon).
func classify(h []hullPt, eps float64) (support string, v0, v1 int, err error) {
	for i, v := range h {
		if math.Hypot(v.x, v.y) <= eps {
			return SupportPoint, i, i, nil
		}
	}
	inside := len(h) >= 3
	for e := range h {
		if len(h) < 2 || (len(h) == 2 && e == 1) {
			break
		}
		a, b := h[e], h[(e+1)%len(h)]
		dist := edgeDistance(a, b, 0, 0)
		ex, ey := b.x-a.x, b.y-a.y
		along := -(a.x*ex + a.y*ey) / (ex*ex + ey*ey) // origin's projection, 0..1 on the edge
		if math.Abs(dist) <= eps && along >= 0 && along <= 1 {
			return SupportLine, e, (e + 1) % len(h), nil
		}
		if dist <= eps {
			inside = false
		}
	}
	if inside {
		return SupportPolygon, -1, -1, nil
	}
	return "", 0, 0, errors.New("contact: rest: internal error: the resting plane's contacts do not surround the centre of mass")
}

// balanceLine turns the plane pl about the support line through a and b
// to the least tilted resting plane. g holds pl's gaps.
func balanceLine(c *restCells, g []float64, pl [3]float64, a, b hullPt, eps float64) [3]float64 {
	ex, ey := b.x-a.x, b.y-a.y
	l := math.Hypot(ex, ey)
	nx, ny := ey/l, -ex/l
	// p + τ·w stays under every cell for τ in [lo, hi], w = (r − a)·n.
	lo, hi := math.Inf(-1), math.Inf(1)
	for i := range g {
		w := (c.rx[i]-a.x)*nx + (c.ry[i]-a.y)*ny
		gi := max(g[i], 0)
		if w > eps {
			hi = min(hi, gi/w)
		} else if w < -eps {
			lo = max(lo, gi/w)
		}
	}
	tau := -(pl[0]*nx + pl[1]*ny) // slope component along n, removed
	tau = max(lo, min(hi, tau))
	if math.IsInf(tau, 0) || math.IsNaN(tau) {
		return pl
	}
	return [3]float64{pl[0] + tau*nx, pl[1] + tau*ny, pl[2] - tau*(a.x*nx+a.y*ny)}
}

// balancePoint returns the least tilted plane through the contact v that
// stays under every cell: minimise |s|² subject to s·(r_i − v) ≤ d_i − d_v,
// solved by randomised incremental construction (Seidel's method with a
// quadratic objective in two variables; expected O(N)). pl is a feasible
// fallback.
func balancePoint(c *restCells, pl [3]float64, v hullPt, eps float64, rng *rand.Rand) [3]float64 {
	dv := c.d[v.i]
	n := len(c.d)
	tol := func(e, sr float64) float64 { return 1e-12*(math.Abs(e)+math.Abs(sr)) + 1e-18 }
	feasible := func(sx, sy float64, i int) bool {
		px, py := c.rx[i]-v.x, c.ry[i]-v.y
		e := c.d[i] - dv
		sr := sx*px + sy*py
		return sr <= e+tol(e, sr)
	}
	var sx, sy float64
	ok := true
	for i := 0; i < n && ok; i++ {
		ok = feasible(0, 0, i)
	}
	if !ok {
		order := rng.Perm(n)
		for ii, i := range order {
			if feasible(sx, sy, i) {
				continue
			}
			px, py := c.rx[i]-v.x, c.ry[i]-v.y
			p2 := px*px + py*py
			if p2 <= eps*eps {
				return pl
			}
			e := c.d[i] - dv
			// On the line s·p = e: s = s0 + τ·t, t ⊥ p, |s|² = |s0|² + τ².
			s0x, s0y := e*px/p2, e*py/p2
			tx, ty := -py/math.Sqrt(p2), px/math.Sqrt(p2)
			lo, hi := math.Inf(-1), math.Inf(1)
			for _, j := range order[:ii] {
				qx, qy := c.rx[j]-v.x, c.ry[j]-v.y
				al := tx*qx + ty*qy
				be := c.d[j] - dv - (s0x*qx + s0y*qy)
				if math.Abs(al) <= 1e-12*math.Hypot(qx, qy) {
					continue
				}
				if y := be / al; al > 0 {
					hi = min(hi, y)
				} else {
					lo = max(lo, y)
				}
			}
			tau := max(lo, min(hi, 0))
			if lo > hi {
				tau = 0.5 * (lo + hi)
			}
			sx, sy = s0x+tau*tx, s0y+tau*ty
		}
	}
	np := [3]float64{sx, sy, dv - sx*v.x - sy*v.y}
	// Keep the result only if it really stays under every cell.
	for i := range c.d {
		if c.d[i]-(np[0]*c.rx[i]+np[1]*c.ry[i]+np[2]) < -DefaultContactTolM {
			return pl
		}
	}
	return np
}

// tipDrop returns the rim drop of DESIGN.md 5.1: tip the plane about each
// edge of the support (each side of a line, tipDirections directions about
// a point) until another eligible cell touches; the drop is t*·max w over
// the footprint, w the distance beyond the tipping axis. va and vb are the
// support point or the ends of the support line.
func (c *restCells) tipDrop(g []float64, foot, touch []hullPt, support string, va, vb hullPt, eps float64) float64 {
	// Tipping axes: a point on the axis and the unit normal pointing to the
	// side that goes down.
	type axis struct{ px, py, nx, ny float64 }
	var axes []axis
	switch support {
	case SupportPolygon:
		for e := range touch {
			a, b := touch[e], touch[(e+1)%len(touch)]
			l := math.Hypot(b.x-a.x, b.y-a.y)
			axes = append(axes, axis{a.x, a.y, (b.y - a.y) / l, -(b.x - a.x) / l})
		}
	case SupportLine:
		a, b := va, vb
		l := math.Hypot(b.x-a.x, b.y-a.y)
		nx, ny := (b.y-a.y)/l, -(b.x-a.x)/l
		axes = append(axes, axis{a.x, a.y, nx, ny}, axis{a.x, a.y, -nx, -ny})
	case SupportPoint:
		v := va
		for k := 0; k < tipDirections; k++ {
			th := 2 * math.Pi * float64(k) / tipDirections
			axes = append(axes, axis{v.x, v.y, math.Cos(th), math.Sin(th)})
		}
	}
	drop := 0.0
	for _, ax := range axes {
		off := -(ax.px*ax.nx + ax.py*ax.ny) // w = rx·nx + ry·ny + off
		maxW := 0.0
		for _, v := range foot {
			maxW = max(maxW, v.x*ax.nx+v.y*ax.ny+off)
		}
		if maxW <= eps {
			continue
		}
		if t := c.tipAngle(g, ax.nx, ax.ny, off, eps); !math.IsInf(t, 1) {
			drop = max(drop, t*maxW)
		}
	}
	return drop
}

// tipAngle returns min g_i/w_i over cells with w_i = rx·nx + ry·ny + off >
// eps, visiting in each row only the run of cells on that side.
func (c *restCells) tipAngle(g []float64, nx, ny, off, eps float64) float64 {
	t := math.Inf(1)
	for r := 0; r+1 < len(c.row); r++ {
		lo, hi := int(c.row[r]), int(c.row[r+1])
		if lo == hi {
			continue
		}
		// In a row ry is fixed: w > eps ⇔ rx·nx > eps − ry·ny − off.
		lim := eps - c.ry[lo]*ny - off
		switch {
		case nx > 0:
			lo += sort.SearchFloat64s(c.rx[lo:hi], lim/nx)
		case nx < 0:
			hi = lo + sort.SearchFloat64s(c.rx[lo:hi], lim/nx)
		case lim >= 0:
			continue
		}
		for i := lo; i < hi; i++ {
			w := c.rx[i]*nx + c.ry[i]*ny + off
			if w > eps {
				t = min(t, max(g[i], 0)/w)
			}
		}
	}
	return t
}

func finite64(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
