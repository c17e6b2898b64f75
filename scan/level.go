package scan

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/internal/order"
	"gapflux/internal/parallel"
)

// DefaultMaxSlopeDeg is the default rim slope limit, degrees: the base ends
// where the surface's slope departs from the base's own trend by more. A
// corner of radius r_c reaches 3° a distance r_c·sin 3° ≈ 0.05·r_c past
// where it starts, having risen r_c·(1 − cos 3°) ≈ 0.0014·r_c (8 µm for a
// 6 mm corner). Our choice; no standard sets it.
const DefaultMaxSlopeDeg = 3.0

// Face values for LevelOptions.Face.
const (
	// FaceUp: the base's outer face points to scanner +z (the pan lay
	// upside down under the scanner).
	FaceUp = "up"
	// FaceDown: the outer face points to scanner −z.
	FaceDown = "down"
)

// Face sources reported in Levelled.FaceSource.
const (
	FaceFromOption  = "option"
	FaceFromNormals = "normals"
	FaceFromWall    = "wall"
	FaceAssumed     = "assumed"
)

// A wall (or the corner before it) turns steeper than wallSlope, tan 50°,
// within wallRunFrac·r0 of where the base's slope changes; a warped base
// (a rim lifted by up to some 25°) does not. Our choice.
var wallSlope = math.Tan(50 * math.Pi / 180)

const wallRunFrac = 0.25

// minLevelPoints is the fewest points Level works with.
const minLevelPoints = 100

// LevelOptions sets up Level.
type LevelOptions struct {
	// Face is "" (detect), FaceUp or FaceDown.
	Face string
	// DiameterM overrides the fitted base diameter when positive, m.
	DiameterM float64
	// MaxSlopeDeg is the rim slope limit, degrees; 0 means
	// DefaultMaxSlopeDeg. The base ends where the surface's radial slope
	// departs by more from the base's own trend (the corner radius starts).
	MaxSlopeDeg float64
	// HobTop says the scan is of a hob's top rather than a pan's base: the
	// output frame's +z then points out of the measured face, toward where
	// a pan would sit (the hob frame of the README), instead of away from
	// it. Face keeps its meaning: which way the measured face looks in the
	// scanner frame.
	HobTop bool
	// Reuse lets Level build its output in the storage of the input
	// cloud's points, normals, triangles and facet normals, which saves a
	// copy of a large scan; the input cloud must not be used afterwards.
	Reuse bool
	// DropNormals leaves the point and facet normals out of the output
	// cloud: Level uses them only to tell the outer face, and a caller
	// that grids the base does not need them (for a 2 M-point cloud with
	// normals this frees some 48 MB and skips rotating them).
	DropNormals bool
}

// Levelled is a scan moved to the base frame and cut to the base.
type Levelled struct {
	// Cloud holds the base's points in the base frame, m, without the
	// corner, wall and far outliers. Triangles whose three vertices are
	// kept are kept (re-indexed), with their facet normals; point and
	// facet normals are rotated into the base frame.
	Cloud *Cloud
	// RadiusM is the base radius, m: from the rim circle fit, or
	// LevelOptions.DiameterM/2.
	RadiusM float64
	// FittedRadiusM is the radius of the rim circle fit, m.
	FittedRadiusM float64
	// FaceSource says how the outer face was told: FaceFromOption,
	// FaceFromNormals, FaceFromWall or FaceAssumed.
	FaceSource string
	// Rotation and OriginM map the scan frame to the base frame:
	// p_base = Rotation·(p_scan − OriginM). Rotation's rows are the base
	// axes in scan coordinates; the base x axis is the scanner x axis
	// projected on the base plane (the scanner y axis if x is nearly
	// normal to the plane).
	Rotation [3][3]float64
	// OriginM is the centre of the base footprint on the base plane, in
	// scan coordinates, m.
	OriginM r3.Vec
	// RimSectors and RimSectorsUsed count the angular sectors searched for
	// the rim and those whose rim point the circle fit kept.
	RimSectors, RimSectorsUsed int
	// PointsDropped counts the input points that are not part of the base
	// (corner, wall, far outliers).
	PointsDropped int
	// PointsMerged counts the input points that repeat another point
	// exactly (the same scan written twice into a file, or a vertex shared
	// by facets of a triangle soup); they are merged into their first
	// occurrence before segmentation.
	PointsMerged int
	// DroppedFraction is PointsDropped over the distinct input points
	// (PointsMerged not counted).
	DroppedFraction float64
	// DroppedBeyondRim counts the dropped points outside the rim circle;
	// DroppedAtBaseHeight those of them within the base's height band
	// (base-like points cut off: a flange, or a lifted edge taken for a
	// corner), the rest rising into a corner and wall or falling away.
	// DroppedOffPlane counts the dropped points inside the circle but
	// outside the band (strays, a handle).
	DroppedBeyondRim, DroppedAtBaseHeight, DroppedOffPlane int
	// DroppedBySector counts the dropped points in 8 sectors of 45° about
	// the base centre, the first from +x to 45° toward +y, base frame.
	DroppedBySector [8]int
	// DropReason says, when more than DropReportFraction of the points
	// were dropped, how many, where and why; else "".
	DropReason string
	// Warnings holds notes for the report.
	Warnings []string
}

// DropReportFraction is the share of dropped points above which
// Levelled.DropReason explains them. Our choice.
const DropReportFraction = 0.05

// dropTally counts the points Level drops, by reason and sector.
type dropTally struct {
	beyond, level, offPlane int
	sector                  [8]int
}

// add counts a dropped point at base coordinates (u, v, w); out says it
// lies beyond the rim circle, band is the base's height band.
func (d *dropTally) add(u, v, w float64, out bool, band float64) {
	if out {
		d.beyond++
		if w*w <= band*band {
			d.level++
		}
	} else {
		d.offPlane++
	}
	d.sector[octant(u, v)]++
}

// merge adds the counts of e to d.
func (d *dropTally) merge(e *dropTally) {
	d.beyond += e.beyond
	d.level += e.level
	d.offPlane += e.offPlane
	for q := range d.sector {
		d.sector[q] += e.sector[q]
	}
}

// octant returns the 45° sector of (u, v), 0 from +u toward +v, without
// trigonometry: the quadrant by signs, then which of |u| and |v| is larger.
func octant(u, v float64) int {
	q := 0
	if v < 0 {
		q = 4
		u, v = -u, -v
	}
	if u < 0 {
		q += 2
		u, v = v, -u
	}
	if v > u {
		q++
	}
	return q
}

// reason says how many of n points were dropped, why and where.
func (d *dropTally) reason(n int, band, far float64) string {
	total := d.beyond + d.offPlane
	pct := func(k int) float64 { return 100 * float64(k) / float64(n) }
	s := fmt.Sprintf("%.0f %% of the points were not kept as base: %.1f %% beyond the rim circle rising into a corner or wall, "+
		"%.1f %% beyond it within %.1f mm of the base plane (a flange, or a lifted edge taken for a corner?), %.1f %% inside it but more than %.1f mm off the base plane (strays, a handle?)",
		pct(total), pct(d.beyond-d.level), pct(d.level), band*1e3, pct(d.offPlane), far*1e3)
	best := 0
	for q := range d.sector {
		if d.sector[q] > d.sector[best] {
			best = q
		}
	}
	if total > 0 && 4*d.sector[best] > total {
		s += fmt.Sprintf("; %.0f %% of them between %d° and %d°", 100*float64(d.sector[best])/float64(total), 45*best, 45*best+45)
	}
	return s
}

// frame is an orthonormal frame: e[0], e[1] span the base plane, e[2] is
// its normal, o its origin, all in scan coordinates.
type frame struct {
	o r3.Vec
	e [3]r3.Vec
}

func (f *frame) coords(p r3.Vec) (u, v, w float64) {
	d := r3.Sub(p, f.o)
	return r3.Dot(d, f.e[0]), r3.Dot(d, f.e[1]), r3.Dot(d, f.e[2])
}

// newFrame returns the frame with origin o, normal n and first axis the
// scanner x axis projected on the plane (scanner y if x is nearly normal).
func newFrame(o, n r3.Vec) frame {
	n = r3.Unit(n)
	ax := r3.Vec{X: 1}
	if math.Abs(n.X) > 0.9 {
		ax = r3.Vec{Y: 1}
	}
	e0 := r3.Unit(r3.Sub(ax, r3.Scale(r3.Dot(ax, n), n)))
	return frame{o: o, e: [3]r3.Vec{e0, r3.Cross(n, e0), n}}
}

// Level finds the base plane and footprint of a scan, moves the scan to
// the base frame (base plane z = 0, +z into the pan, origin at the centre
// of the footprint) and keeps the base only.
//
// Steps:
//  0. Points that repeat another exactly count once (Levelled.PointsMerged).
//  1. A first plane by principal components (the smallest-eigenvalue
//     eigenvector of the covariance) of up to 150 000 points, without
//     those further from their coordinate-wise median than 4 times the
//     median distance (stray points metres away).
//  2. Coarse cells (about 64 across) each get a least-squares plane. The
//     dominant cell slope (the peak of their 2-D slope histogram) tilts the
//     normal onto the base, which stays flat while a wall or corner spreads
//     its slopes out.
//  3. Cells within max(2·MaxSlopeDeg, 8°) of the base plane whose heights
//     agree with their neighbours are flood-filled from the centre: the
//     base candidate. The plane is refitted to its inner 90 % by principal
//     components, trimming points beyond 3.5 robust standard deviations.
//  4. The rim: in 24 to 72 angular sectors about the candidate's centre,
//     the median height profile along the radius (bins of R/400 or wider,
//     out to where the scan ends but at most 3 R) is walked outward from
//     0.6 R until its slope (least squares over five bins) departs from
//     the base's own trend (a quadratic fitted to the profile between
//     0.6 R and 0.9 R) by more than MaxSlopeDeg, or the data end. A
//     departure ends the base only when a wall follows: the profile turns
//     steeper than 50° within R/4 and rises more than R/200. Otherwise the
//     base itself is warped (a lifted rim) and the walk goes on, measuring
//     departures from the new slope. A circle is fitted to these rim
//     points (algebraic fit of Kåsa 1976, then geometric least squares by
//     Gauss-Newton), trimming rim points off by more than 3 robust
//     standard deviations.
//  5. The plane is refitted to the points inside the rim circle.
//  6. The outer face: Face if given; else facet or point normals (the
//     outer face's normals point to the hob, −z); else the wall or corner,
//     which rises into the pan (+z); else the outer face is assumed to
//     face scanner +z, with a warning.
//
// Points beyond the rim circle or further from the base plane than a
// tenth of the radius (or than 1.5 times the base's own height band plus
// R/50, for a warped base) are dropped; Levelled says how many, where and
// why.
//
// A pan base (not a hob top) read from a file whose unit was not given
// as an option (Cloud.UnitSource "default" or "header") must measure
// between MinBaseDiameterM and MaxBaseDiameterM across when another unit
// would put it there: otherwise Level returns a *SizeError that names the
// unit to try. With the unit given as an option it only warns.
func Level(c *Cloud, opt LevelOptions) (*Levelled, error) {
	if c == nil || opt.HobTop || c.UnitSource == "" {
		return level(c, opt)
	}
	unit, source := c.Unit, c.UnitSource
	width, wok := scanWidth(c.Points)
	l, err := level(c, opt)
	if err != nil {
		if hint, ok := UnitsHintRange(width, unit, MinBaseDiameterM, MaxBaseDiameterM); wok && ok {
			return nil, &SizeError{DiameterM: width, Unit: unit, Hint: hint, Scan: true, Err: err}
		}
		return nil, err
	}
	d := 2 * l.FittedRadiusM
	hint, ok := UnitsHintRange(d, unit, MinBaseDiameterM, MaxBaseDiameterM)
	switch {
	case !ok:
	case source == "option":
		l.Warnings = append(l.Warnings, (&SizeError{DiameterM: d, Unit: unit, Hint: hint}).Error()+
			fmt.Sprintf(" (the file was read in %s as asked)", unitWords(unit)))
	default:
		return nil, &SizeError{DiameterM: d, Unit: unit, Hint: hint}
	}
	return l, nil
}

// scanWidth returns the width of the scan, m: the largest spread of a
// coordinate between its 1st and 99th percentiles over up to 20 000
// points. ok is false for fewer than 10 points.
func scanWidth(pts []r3.Vec) (float64, bool) {
	if len(pts) < 10 {
		return 0, false
	}
	step := max(1, len(pts)/20000)
	w := make([]float64, 0, len(pts)/step+1)
	width := 0.0
	for k := range 3 {
		w = w[:0]
		for i := 0; i < len(pts); i += step {
			w = append(w, [3]float64{pts[i].X, pts[i].Y, pts[i].Z}[k])
		}
		n := len(w) - 1
		lo := order.Select(w, n/100)
		hi := order.Select(w, n-n/100)
		width = max(width, hi-lo)
	}
	return width, !math.IsInf(width, 0) && width > 0
}

// level is Level without the size check.
func level(c *Cloud, opt LevelOptions) (*Levelled, error) {
	tanMax, tanCoarse, err := checkLevelInput(c, opt)
	if err != nil {
		return nil, err
	}
	out := &Levelled{}

	// 0. Points repeated exactly count once.
	all := c.Points
	pts, rep, merged := mergeRepeats(c, out)

	// 1. First plane from a subsample, without far strays.
	sc := &levelScratch{}
	sub, f, err := firstPlane(pts, sc)
	if err != nil {
		return nil, err
	}

	// 2. Tilt the normal onto the dominant cell slope.
	f, uvw, cg, g, err := tiltFrame(sub, f, tanCoarse)
	if err != nil {
		return nil, err
	}

	// 3. Base candidate by flood fill; plane on its inner part.
	f, uc, vc, r0, c1, n2, err := baseCandidate(sub, uvw, cg, g, f, tanCoarse, sc)
	if err != nil {
		return nil, err
	}

	// 4. Rim circle, searched out to where the scan ends (a warped base
	// may reach well beyond its flat part).
	rim, radius, err := rimCircle(pts, sub, &f, uc, vc, r0, tanMax, opt, out, sc)
	if err != nil {
		return nil, err
	}
	sc.vecs.put(sub)
	centre := r3.Add(f.o, r3.Add(r3.Scale(rim.u, f.e[0]), r3.Scale(rim.v, f.e[1])))

	// 5. Plane refit on the base inside the rim.
	f = refitPlane(pts, f, rim, radius, centre, c1, n2, sc)

	// 6. Outer face. up is the base normal oriented to scanner +z.
	bf := faceFrame(c, pts, f, radius, rim.dr, opt, out, sc)
	out.Rotation = [3][3]float64{
		{bf.e[0].X, bf.e[0].Y, bf.e[0].Z},
		{bf.e[1].X, bf.e[1].Y, bf.e[1].Z},
		{bf.e[2].X, bf.e[2].Y, bf.e[2].Z},
	}
	out.OriginM = bf.o
	out.RadiusM = radius

	// 7. Keep the base; a repeated point keeps its first occurrence.
	if opt.DropNormals {
		if !opt.Reuse {
			cc := *c // the caller's cloud stays as it is
			c = &cc
		}
		c.Normals, c.FacetNormals = nil, nil
	}
	return keepBase(c, all, rep, merged, &bf, radius, rim.band, opt.Reuse, out)
}

// checkLevelInput validates the cloud and the options and returns the
// tangents of the fine slope limit and of the coarse stage's limit.
func checkLevelInput(c *Cloud, opt LevelOptions) (tanMax, tanCoarse float64, err error) {
	if c == nil {
		return 0, 0, errors.New("scan: level: nil cloud")
	}
	switch opt.Face {
	case "", FaceUp, FaceDown:
	default:
		return 0, 0, fmt.Errorf("scan: level: face %q is not %q or %q", opt.Face, FaceUp, FaceDown)
	}
	if math.IsNaN(opt.DiameterM) || math.IsInf(opt.DiameterM, 0) || opt.DiameterM < 0 {
		return 0, 0, fmt.Errorf("scan: level: diameter %g m is not a finite non-negative length", opt.DiameterM)
	}
	slopeDeg := opt.MaxSlopeDeg
	if slopeDeg == 0 {
		slopeDeg = DefaultMaxSlopeDeg
	}
	if !(slopeDeg > 0 && slopeDeg <= 30) {
		return 0, 0, fmt.Errorf("scan: level: slope limit %g° is not in (0°, 30°]", opt.MaxSlopeDeg)
	}
	tanMax = math.Tan(slopeDeg * math.Pi / 180)
	// The coarse stage only separates the base from the corner and wall;
	// it allows a strongly warped base (a 3.5 % dish slopes 8° at the rim).
	tanCoarse = math.Tan(max(2*slopeDeg, 8) * math.Pi / 180)
	pts := c.Points
	if len(pts) < minLevelPoints {
		return 0, 0, fmt.Errorf("scan: level: %d points; need at least %d to find the base", len(pts), minLevelPoints)
	}
	// Parts of the points are checked at once; the first bad one in order
	// is reported.
	if i, bad := parallel.First(len(pts), rowParts(len(pts)), func(lo, hi int) (int, bool) {
		for i := lo; i < hi; i++ {
			// x·0 is ±0 for finite x and NaN for ±Inf and NaN, so the
			// sum is 0 exactly when the three coordinates are finite:
			// one test instead of six.
			if p := pts[i]; p.X*0+p.Y*0+p.Z*0 != 0 {
				return i, true
			}
		}
		return 0, false
	}); bad {
		p := pts[i]
		return 0, 0, fmt.Errorf("scan: level: point %d has a non-finite coordinate (%g, %g, %g)", i, p.X, p.Y, p.Z)
	}
	if len(c.Normals) != 0 && len(c.Normals) != len(pts) {
		return 0, 0, fmt.Errorf("scan: level: %d normals for %d points", len(c.Normals), len(pts))
	}
	if len(c.FacetNormals) != 0 && len(c.FacetNormals) != len(c.Triangles) {
		return 0, 0, fmt.Errorf("scan: level: %d facet normals for %d triangles", len(c.FacetNormals), len(c.Triangles))
	}
	tris := c.Triangles
	if t, bad := parallel.First(len(tris), rowParts(len(tris)), func(lo, hi int) (int, bool) {
		for t := lo; t < hi; t++ {
			if badTriangle(tris[t], len(pts)) >= 0 {
				return t, true
			}
		}
		return 0, false
	}); bad {
		return 0, 0, fmt.Errorf("scan: level: triangle %d refers to vertex %d of %d", t, tris[t][badTriangle(tris[t], len(pts))], len(pts))
	}
	return tanMax, tanCoarse, nil
}

// badTriangle returns the first corner of tri that is not a vertex index
// below n, or −1 when all are.
func badTriangle(tri [3]int32, n int) int {
	for k, v := range tri {
		if v < 0 || int(v) >= n {
			return k
		}
	}
	return -1
}

// mergeRepeats returns the cloud's points with exact repeats counted once,
// the map of each point to its first occurrence (nil when none repeat) and
// the number merged; it records the count, and a warning for a cloud with
// many, in out.
func mergeRepeats(c *Cloud, out *Levelled) (pts []r3.Vec, rep []int32, merged int) {
	all := c.Points
	pts = all
	rep, merged = findRepeats(pts)
	if merged > 0 {
		pts = uniquePoints(pts, rep, merged)
		out.PointsMerged = merged
		// A mesh's repeated vertices are shared corners, not a doubled
		// scan: only a cloud's are worth a warning.
		if len(c.Triangles) == 0 && float64(merged) > 0.01*float64(len(all)) {
			out.Warnings = append(out.Warnings, fmt.Sprintf("%d of %d points (%.0f %%) repeat another point exactly (is the scan written more than once into the file?); "+
				"each was counted once", merged, len(all), 100*float64(merged)/float64(len(all))))
		}
	}
	return pts, rep, merged
}

// firstPlane returns a subsample of at most about 150000 points without
// far strays and the frame of their principal-component plane, its
// normal towards scanner +z. The subsample's buffer comes from sc, large
// enough for refitPlane's subsample too, which takes it over.
func firstPlane(pts []r3.Vec, sc *levelScratch) ([]r3.Vec, frame, error) {
	stride := max(1, (len(pts)+149999)/150000)
	sub := sc.vecs.get(0, max(len(pts)/stride+1, len(pts)/refitStride(len(pts))+1))
	sub = sub[:(len(pts)+stride-1)/stride]
	parallelRows(len(sub), func(t0, t1 int) {
		for t := t0; t < t1; t++ {
			sub[t] = pts[t*stride]
		}
	})
	if t := trimFar(sub); len(t) != len(sub) {
		sub = append(sub[:0], t...) // keep the buffer for refitPlane
	}
	c0, n0, ok := pcaPlane(sub)
	if !ok {
		return nil, frame{}, errors.New("scan: level: points are degenerate (all on a line or a point)")
	}
	if n0.Z < 0 {
		n0 = r3.Scale(-1, n0)
	}
	return sub, newFrame(c0, n0), nil
}

// tiltFrame tilts the frame's normal onto the dominant slope of the
// coarse cells (slopes up to tanCoarse) and returns the new frame, the
// subsample's coordinates in it (m), its coarse grid and the cell edge g (m).
func tiltFrame(sub []r3.Vec, f frame, tanCoarse float64) (frame, [][3]float64, *coarseGrid, float64, error) {
	uvw := make([][3]float64, len(sub))
	project := func() { // parts of the points at once
		parallelRows(len(sub), func(i0, i1 int) {
			for i := i0; i < i1; i++ {
				u, v, w := f.coords(sub[i])
				uvw[i] = [3]float64{u, v, w}
			}
		})
	}
	project()
	g := coarseCellSize(uvw)
	cg := newCoarseGrid(uvw, g)
	a, b, ok := cg.dominantSlope(tanCoarse)
	if !ok {
		return f, nil, nil, 0, errors.New("scan: level: no flat region found (is this a scan of a base?)")
	}
	n1 := r3.Unit(r3.Add(f.e[2], r3.Add(r3.Scale(-a, f.e[0]), r3.Scale(-b, f.e[1]))))
	if n1.Z < 0 {
		n1 = r3.Scale(-1, n1)
	}
	f = newFrame(f.o, n1)
	project()
	cg = newCoarseGrid(uvw, g)
	return f, uvw, cg, g, nil
}

// baseCandidate finds the flat base by flood fill of the coarse cells and
// fits a robust plane to its inner part (radius 0.9 r0). It returns that
// plane's frame, the candidate's centre (uc, vc) in it and its
// equal-area radius r0 (m), and the plane's point c1 and normal n2.
func baseCandidate(sub []r3.Vec, uvw [][3]float64, cg *coarseGrid, g float64, f frame, tanCoarse float64, sc *levelScratch) (
	nf frame, uc, vc, r0 float64, c1, n2 r3.Vec, err error) {
	comp := cg.baseComponent(tanCoarse)
	if len(comp) < 4 {
		return f, 0, 0, 0, c1, n2, errors.New("scan: level: no flat base found (fewer than 4 flat cells connected to the centre)")
	}
	for _, q := range comp {
		u, v := cg.centre(q)
		uc += u
		vc += v
	}
	uc /= float64(len(comp))
	vc /= float64(len(comp))
	r0 = math.Sqrt(float64(len(comp)) * g * g / math.Pi)
	inComp := make([]bool, cg.nu*cg.nv)
	for _, q := range comp {
		inComp[q] = true
	}
	inner := sc.vecs.get(0, len(sub))
	defer func() { sc.vecs.put(inner) }()
	for i, p := range sub {
		du, dv := uvw[i][0]-uc, uvw[i][1]-vc
		if du*du+dv*dv <= 0.81*r0*r0 && inComp[cg.cellOfPt[i]] {
			inner = append(inner, p)
		}
	}
	centre := r3.Add(f.o, r3.Add(r3.Scale(uc, f.e[0]), r3.Scale(vc, f.e[1])))
	c1, n2, ok := robustPlane(inner, sc)
	if !ok {
		return f, 0, 0, 0, c1, n2, errors.New("scan: level: base candidate is degenerate")
	}
	if n2.Z < 0 {
		n2 = r3.Scale(-1, n2)
	}
	f = newFrame(c1, n2)
	uc, vc, _ = f.coords(centre)
	return f, uc, vc, r0, c1, n2, nil
}

// rimCircle fits the footprint circle (fitRim, or outlineRim for sparse
// scans) and returns it with the base radius used (m): the fitted one, or
// half opt.DiameterM when given. Warnings go to out.
func rimCircle(pts, sub []r3.Vec, f *frame, uc, vc, r0, tanMax float64, opt LevelOptions, out *Levelled, sc *levelScratch) (rimFit, float64, error) {
	rq := extentRadius(sub, f, uc, vc)
	rim, err := fitRim(pts, f, uc, vc, r0, rq, tanMax, sc)
	if err != nil {
		// Sparse scans (a few points per millimetre of rim) defeat the
		// profile search: fall back to a circle through the outline of
		// the points near the base plane.
		fb, ok := outlineRim(pts, f, uc, vc, r0)
		if !ok {
			return rim, 0, err
		}
		rim = fb
		out.Warnings = append(out.Warnings, fmt.Sprintf("too few points for the rim profile search (%v); the footprint circle was fitted to the outline of the points near the base plane", err))
	}
	out.RimSectors, out.RimSectorsUsed = rim.sectors, rim.used
	if rim.used < rim.sectors/2 {
		out.Warnings = append(out.Warnings, fmt.Sprintf("base rim found in only %d of %d sectors; the footprint may be uncertain", rim.used, rim.sectors))
	}
	radius := rim.r
	out.FittedRadiusM = rim.r
	if opt.DiameterM > 0 {
		radius = opt.DiameterM / 2
		if d := math.Abs(radius-rim.r) / rim.r; d > 0.05 {
			out.Warnings = append(out.Warnings, fmt.Sprintf("diameter option %.1f mm differs from the fitted rim %.1f mm by %.0f %%",
				opt.DiameterM*1e3, 2e3*rim.r, 100*d))
		}
	}
	return rim, radius, nil
}

// refitPlane refits the robust plane on the points inside the rim circle
// (a subsample of at most about 200000) and returns its frame with origin
// at the footprint centre moved onto the plane; when the fit fails, the
// candidate plane (c1, n2) is kept.
func refitPlane(pts []r3.Vec, f frame, rim rimFit, radius float64, centre, c1, n2 r3.Vec, sc *levelScratch) frame {
	stride2 := refitStride(len(pts))
	// Parts of the subsample are tested at once, each packing its base
	// points at its own start; the blocks are then packed in order.
	nTake := (len(pts) + stride2 - 1) / stride2
	basePts := sc.vecs.get(nTake, 0)
	defer func() { sc.vecs.put(basePts) }()
	parts := rowParts(nTake)
	cnt := make([]int, parts)
	parallel.Do(nTake, parts, func(k, t0, t1 int) {
		o := t0
		for t := t0; t < t1; t++ {
			p := pts[t*stride2]
			u, v, _ := f.coords(p)
			du, dv := u-rim.u, v-rim.v
			if du*du+dv*dv <= radius*radius {
				basePts[o] = p
				o++
			}
		}
		cnt[k] = o - t0
	})
	basePts = basePts[:packBlocks(basePts, nTake, cnt)[parts]]
	if c2, n3, ok := robustPlane(basePts, sc); ok {
		if n3.Z < 0 {
			n3 = r3.Scale(-1, n3)
		}
		// Keep the footprint centre; move it onto the new plane.
		centre = r3.Sub(centre, r3.Scale(r3.Dot(r3.Sub(centre, c2), n3), n3))
		return newFrame(centre, n3)
	}
	return newFrame(r3.Sub(centre, r3.Scale(r3.Dot(r3.Sub(centre, c1), n2), n2)), n2)
}

// refitStride is the step of refitPlane's subsample of n points: at most
// about 200000 of them.
func refitStride(n int) int { return max(1, (n+199999)/200000) }

// faceFrame decides which side of the base is the outer face (from the
// face option, the normals, the wall, or assumed towards the scanner) and
// returns the base frame: +z into the pan (out of the hob with
// opt.HobTop). The source and any warnings go to out.
func faceFrame(c *Cloud, pts []r3.Vec, f frame, radius, dr float64, opt LevelOptions, out *Levelled, sc *levelScratch) frame {
	up := f.e[2]
	if math.Abs(up.Z) < 0.5 {
		out.Warnings = append(out.Warnings, fmt.Sprintf("the base plane is %.0f° from the scanner's x-y plane; face up/down refers to scanner +z",
			math.Acos(math.Abs(up.Z))*180/math.Pi))
	}
	nSign, nDetail := normalsFace(c, &f, radius)
	wSign := wallFace(pts, &f, radius, dr, sc)
	var zSign float64 // +1: base +z along up, −1: against up
	switch {
	case opt.Face != "":
		out.FaceSource = FaceFromOption
		zSign = -1
		if opt.Face == FaceDown {
			zSign = 1
		}
		if nSign != 0 && nSign != zSign {
			out.Warnings = append(out.Warnings, fmt.Sprintf("face option %q disagrees with the %s", opt.Face, nDetail))
		} else if nSign == 0 && wSign != 0 && wSign != zSign {
			out.Warnings = append(out.Warnings, fmt.Sprintf("face option %q disagrees with the wall, which rises on the other side", opt.Face))
		}
	case nSign != 0:
		out.FaceSource = FaceFromNormals
		zSign = nSign
		if wSign != 0 && wSign != nSign {
			out.Warnings = append(out.Warnings, fmt.Sprintf("the %s disagree with the wall; the normals were followed", nDetail))
		}
	case wSign != 0:
		out.FaceSource = FaceFromWall
		zSign = wSign
	default:
		out.FaceSource = FaceAssumed
		zSign = -1
		out.Warnings = append(out.Warnings, "outer face assumed to face the scanner (+z); use --face to override")
	}
	if nDetail != "" && nSign == 0 {
		out.Warnings = append(out.Warnings, nDetail)
	}
	ez := r3.Scale(zSign, up)
	if opt.HobTop {
		ez = r3.Scale(-1, ez)
	}
	return newFrame(f.o, ez)
}

// rotate expresses the direction d in the frame's axes.
func (f *frame) rotate(d r3.Vec) r3.Vec {
	return r3.Vec{X: r3.Dot(d, f.e[0]), Y: r3.Dot(d, f.e[1]), Z: r3.Dot(d, f.e[2])}
}

// pcaPlane returns the centroid of pts and the unit eigenvector of their
// covariance with the smallest eigenvalue. ok is false when the points do
// not span a plane.
func pcaPlane(pts []r3.Vec) (c, n r3.Vec, ok bool) {
	return pcaPlaneNear(pts, nil, 0, 0)
}

// pcaPlaneNear is pcaPlane over the points i of pts with |d[i] − med| ≤
// lim (every point when d is nil), summed in order as over a list of them.
func pcaPlaneNear(pts []r3.Vec, d []float64, med, lim float64) (c, n r3.Vec, ok bool) {
	in := func(i int) bool { return d == nil || math.Abs(d[i]-med) <= lim }
	m := 0
	for i, p := range pts {
		if in(i) {
			c = r3.Add(c, p)
			m++
		}
	}
	if m < 3 {
		return r3.Vec{}, n, false
	}
	c = r3.Scale(1/float64(m), c)
	var sxx, sxy, sxz, syy, syz, szz float64
	for i, p := range pts {
		if !in(i) {
			continue
		}
		q := r3.Sub(p, c)
		sxx += q.X * q.X
		sxy += q.X * q.Y
		sxz += q.X * q.Z
		syy += q.Y * q.Y
		syz += q.Y * q.Z
		szz += q.Z * q.Z
	}
	return planeNormal(c, [6]float64{sxx, sxy, sxz, syy, syz, szz})
}

// planeNormal returns c and the unit eigenvector of the covariance s (xx,
// xy, xz, yy, yz, zz) with the smallest eigenvalue; ok is false when the
// points do not span a plane.
func planeNormal(c r3.Vec, s [6]float64) (r3.Vec, r3.Vec, bool) {
	cov := mat.NewSymDense(3, []float64{s[0], s[1], s[2], s[1], s[3], s[4], s[2], s[4], s[5]})
	var es mat.EigenSym
	if !es.Factorize(cov, true) {
		return c, r3.Vec{}, false
	}
	vals := es.Values(nil)
	if !(vals[1] > 1e-12*vals[2]) {
		return c, r3.Vec{}, false
	}
	var vec mat.Dense
	es.VectorsTo(&vec)
	return c, r3.Unit(r3.Vec{X: vec.At(0, 0), Y: vec.At(1, 0), Z: vec.At(2, 0)}), true
}

// robustPlane fits a plane by principal components, then refits without
// the points further than 3.5 robust standard deviations (1.4826 × median
// absolute deviation) from it, up to five times. Its scratch comes from
// and goes back to sc.
func robustPlane(pts []r3.Vec, sc *levelScratch) (c, n r3.Vec, ok bool) {
	c, n, ok = pcaPlane(pts)
	if !ok {
		return c, n, false
	}
	d := sc.floats.get(len(pts), 0)
	work := sc.floats.get(len(pts), 0)
	defer sc.floats.put(d, work)
	for range 5 {
		parallelRows(len(pts), func(i0, i1 int) {
			for i := i0; i < i1; i++ {
				d[i] = r3.Dot(r3.Sub(pts[i], c), n)
				work[i] = d[i]
			}
		})
		med := medianInPlace(work)
		parallelRows(len(pts), func(i0, i1 int) {
			for i := i0; i < i1; i++ {
				work[i] = math.Abs(d[i] - med)
			}
		})
		lim := 3.5 * 1.4826 * medianInPlace(work)
		kept := 0
		for i := range pts {
			if math.Abs(d[i]-med) <= lim {
				kept++
			}
		}
		if kept == len(pts) || kept < 3 {
			break
		}
		c2, n2, ok2 := pcaPlaneNear(pts, d, med, lim)
		if !ok2 {
			break
		}
		if r3.Dot(n2, n) < 0 {
			n2 = r3.Scale(-1, n2)
		}
		moved := r3.Norm(r3.Sub(n2, n))
		c, n = c2, n2
		if moved < 1e-12 {
			break
		}
	}
	return c, n, true
}

// coarseCellSize picks the coarse cell edge: about 64 cells across the
// larger extent, but large enough for some 20 points per cell.
func coarseCellSize(uvw [][3]float64) float64 {
	umin, umax, vmin, vmax := uvBounds(uvw)
	ext := max(umax-umin, vmax-vmin)
	area := (umax - umin) * (vmax - vmin)
	return max(ext/64, math.Sqrt(20*area/float64(len(uvw))))
}

// coarseGrid holds least-squares planes w = h + a·du + b·dv fitted per
// coarse cell, du and dv measured from the cell centre.
type coarseGrid struct {
	nu, nv   int
	u0, v0   float64 // lower corner
	g        float64
	n        []int
	h, a, b  []float64
	rms      []float64
	fitted   []bool
	cellOfPt []int32
}

// newCoarseGrid fits a plane to the points uvw (base coordinates, m) of
// each coarse cell of edge g (m). Parts of the points find their cells at
// once; then parts of the cells (bands of whole rows) each sum their own
// cells' points in point order (each part reads every point's cell, to
// keep that order), and parts of the cells are fitted at once, so every
// cell's sums are those of a sequential pass.
func newCoarseGrid(uvw [][3]float64, g float64) *coarseGrid {
	umin, umax, vmin, vmax := uvBounds(uvw)
	cg := &coarseGrid{g: g, u0: umin, v0: vmin}
	cg.nu = int((umax-umin)/g) + 1
	cg.nv = int((vmax-vmin)/g) + 1
	nc := cg.nu * cg.nv
	cg.cellOfPt = make([]int32, len(uvw))
	parallelRows(len(uvw), func(i0, i1 int) {
		for i := i0; i < i1; i++ {
			cg.cellOfPt[i] = int32(cg.cell(uvw[i][0], uvw[i][1]))
		}
	})
	sums := make([]cellSums, nc)
	cg.n = make([]int, nc)
	parallelRows(cg.nv, func(j0, j1 int) {
		q0, q1 := int32(j0*cg.nu), int32(j1*cg.nu)
		for i, q := range cg.cellOfPt {
			if q >= q0 && q < q1 {
				cg.add(&sums[q], int(q), uvw[i])
			}
		}
	})
	cg.h = make([]float64, nc)
	cg.a = make([]float64, nc)
	cg.b = make([]float64, nc)
	cg.rms = make([]float64, nc)
	cg.fitted = make([]bool, nc)
	parallelRows(nc, func(q0, q1 int) {
		for q := q0; q < q1; q++ {
			cg.fit(q, &sums[q])
		}
	})
	return cg
}

// uvBounds returns the smallest and largest u and v of uvw (m); parts of
// the points at once (a minimum does not depend on the order).
func uvBounds(uvw [][3]float64) (umin, umax, vmin, vmax float64) {
	parts := rowParts(len(uvw))
	b := make([][4]float64, parts)
	parallel.Do(len(uvw), parts, func(k, i0, i1 int) {
		umin, umax := math.Inf(1), math.Inf(-1)
		vmin, vmax := math.Inf(1), math.Inf(-1)
		for _, p := range uvw[i0:i1] {
			umin, umax = min(umin, p[0]), max(umax, p[0])
			vmin, vmax = min(vmin, p[1]), max(vmax, p[1])
		}
		b[k] = [4]float64{umin, umax, vmin, vmax}
	})
	umin, umax = math.Inf(1), math.Inf(-1)
	vmin, vmax = math.Inf(1), math.Inf(-1)
	for _, x := range b {
		umin, umax = min(umin, x[0]), max(umax, x[1])
		vmin, vmax = min(vmin, x[2]), max(vmax, x[3])
	}
	return umin, umax, vmin, vmax
}

// cellSums holds the sums of a coarse cell's plane fit: offsets du, dv
// from the cell centre in cell units, height w (m), and their products.
type cellSums struct{ su, sv, sw, suu, suv, svv, suw, svw, sww float64 }

// add adds point p (base coordinates, m) of cell q to its sums s.
func (cg *coarseGrid) add(s *cellSums, q int, p [3]float64) {
	uc, vc := cg.centre(q)
	// Offsets in cell units keep the normal equations well scaled.
	du, dv, w := (p[0]-uc)/cg.g, (p[1]-vc)/cg.g, p[2]
	cg.n[q]++
	s.su += du
	s.sv += dv
	s.sw += w
	s.suu += du * du
	s.suv += du * dv
	s.svv += dv * dv
	s.suw += du * w
	s.svw += dv * w
	s.sww += w * w
}

// fit fits cell q's plane from its sums s, when it has at least 6 points
// spread over both directions.
func (cg *coarseGrid) fit(q int, s *cellSums) {
	cnt := float64(cg.n[q])
	if cg.n[q] < 6 {
		return
	}
	cuu := s.suu/cnt - (s.su/cnt)*(s.su/cnt)
	cvv := s.svv/cnt - (s.sv/cnt)*(s.sv/cnt)
	cuv := s.suv/cnt - (s.su/cnt)*(s.sv/cnt)
	if cuu < 0.01 || cvv < 0.01 || cuu*cvv-cuv*cuv < 1e-4 {
		return
	}
	x, ok := solveSmall(3, []float64{cnt, s.su, s.sv, s.su, s.suu, s.suv, s.sv, s.suv, s.svv}, []float64{s.sw, s.suw, s.svw})
	if !ok {
		return
	}
	g := cg.g
	cg.h[q], cg.a[q], cg.b[q] = x[0], x[1]/g, x[2]/g
	ssr := s.sww - x[0]*s.sw - x[1]*s.suw - x[2]*s.svw
	cg.rms[q] = math.Sqrt(max(ssr, 0) / cnt)
	cg.fitted[q] = true
}

func (cg *coarseGrid) cell(u, v float64) int {
	i := min(cg.nu-1, max(0, int((u-cg.u0)/cg.g)))
	j := min(cg.nv-1, max(0, int((v-cg.v0)/cg.g)))
	return j*cg.nu + i
}

func (cg *coarseGrid) centre(q int) (u, v float64) {
	return cg.u0 + (float64(q%cg.nu)+0.5)*cg.g, cg.v0 + (float64(q/cg.nu)+0.5)*cg.g
}

// dominantSlope returns the cell slope (a, b) at the peak of the slope
// histogram: bins of tanMax/4, summed over 3×3 bins, then the mean slope
// of the cells within tanMax of the peak, twice.
func (cg *coarseGrid) dominantSlope(tanMax float64) (a, b float64, ok bool) {
	d := tanMax / 4
	nb := int(math.Ceil(2/d)) + 1
	hist := make([]int, nb*nb)
	bin := func(s float64) int { return int(math.Floor((s + 1) / d)) }
	any := false
	for q, f := range cg.fitted {
		if !f || math.Abs(cg.a[q]) >= 1 || math.Abs(cg.b[q]) >= 1 {
			continue
		}
		hist[bin(cg.b[q])*nb+bin(cg.a[q])]++
		any = true
	}
	if !any {
		return 0, 0, false
	}
	best, bi, bj := -1, 0, 0
	for j := 1; j < nb-1; j++ {
		for i := 1; i < nb-1; i++ {
			s := 0
			for dj := -1; dj <= 1; dj++ {
				for di := -1; di <= 1; di++ {
					s += hist[(j+dj)*nb+i+di]
				}
			}
			if s > best {
				best, bi, bj = s, i, j
			}
		}
	}
	a = (float64(bi)+0.5)*d - 1
	b = (float64(bj)+0.5)*d - 1
	for range 3 {
		var sa, sb float64
		cnt := 0
		for q, f := range cg.fitted {
			if !f {
				continue
			}
			da, db := cg.a[q]-a, cg.b[q]-b
			if da*da+db*db <= tanMax*tanMax {
				sa += cg.a[q]
				sb += cg.b[q]
				cnt++
			}
		}
		if cnt == 0 {
			return 0, 0, false
		}
		a, b = sa/float64(cnt), sb/float64(cnt)
	}
	return a, b, true
}

// baseComponent returns the flat cells connected to the centre of the
// flat cells: cells with slope within tanMax whose centre heights differ
// from a 4-neighbour's by at most tanMax·g plus twice their summed RMS
// residuals.
func (cg *coarseGrid) baseComponent(tanMax float64) []int {
	nc := cg.nu * cg.nv
	flat := make([]bool, nc)
	var su, sv float64
	cnt := 0
	for q := range nc {
		if cg.fitted[q] && cg.a[q]*cg.a[q]+cg.b[q]*cg.b[q] <= tanMax*tanMax {
			flat[q] = true
			u, v := cg.centre(q)
			su += u
			sv += v
			cnt++
		}
	}
	if cnt == 0 {
		return nil
	}
	su /= float64(cnt)
	sv /= float64(cnt)
	seed, seedInner := -1, false
	bestD := math.Inf(1)
	for q := range nc {
		if !flat[q] {
			continue
		}
		i, j := q%cg.nu, q/cg.nu
		inner := i > 0 && j > 0 && i < cg.nu-1 && j < cg.nv-1 &&
			flat[q-1] && flat[q+1] && flat[q-cg.nu] && flat[q+cg.nu]
		u, v := cg.centre(q)
		dd := (u-su)*(u-su) + (v-sv)*(v-sv)
		if (inner && !seedInner) || (inner == seedInner && dd < bestD) {
			seed, seedInner, bestD = q, inner, dd
		}
	}
	in := make([]bool, nc)
	in[seed] = true
	queue := []int{seed}
	for t := 0; t < len(queue); t++ {
		q := queue[t]
		i, j := q%cg.nu, q/cg.nu
		for _, d := range [4][2]int{{1, 0}, {-1, 0}, {0, 1}, {0, -1}} {
			ii, jj := i+d[0], j+d[1]
			if ii < 0 || jj < 0 || ii >= cg.nu || jj >= cg.nv {
				continue
			}
			p := jj*cg.nu + ii
			if in[p] || !flat[p] {
				continue
			}
			if math.Abs(cg.h[p]-cg.h[q]) > tanMax*cg.g+2*(cg.rms[p]+cg.rms[q]) {
				continue
			}
			in[p] = true
			queue = append(queue, p)
		}
	}
	return queue
}

// rimFit is the result of fitRim.
type rimFit struct {
	u, v, r       float64 // circle centre in the frame's (u, v) and radius, m
	dr            float64 // radial bin width, m
	sectors, used int
	// band is the largest |height| of the sectors' median profiles inside
	// their rim, m: how far the base itself departs from the plane.
	band float64
	// warped counts the sectors whose base goes on past a change of slope
	// that is not the corner before a wall.
	warped int
}

// rimProfile is one sector's radial profile: per radial bin the median
// height (m), the mean radius (m) and whether the bin holds enough points.
type rimProfile struct {
	prof, pos []float64
	valid     []bool
}

// profile fills sp with sector s's profile (the median may reorder the
// bins' heights). A bin too sparse to count (fewer than rimMinCount
// points) is not valid; its height is 0 and its radius
// the bin's centre, rlo + (k + ½)·dr, m, so that the walks, which stop on
// a bin's radius before they look at its validity (slopeLimit, wallNear),
// read a sector's own bins and nothing another sector left.
func (rb *rimBins) profile(s int, sp *rimProfile) {
	for bb := range rb.nb {
		lo, hi := rb.start[s*rb.nb+bb], rb.start[s*rb.nb+bb+1]
		sp.valid[bb] = hi-lo >= rimMinCount
		if !sp.valid[bb] {
			sp.prof[bb], sp.pos[bb] = 0, rb.rlo+(float64(bb)+0.5)*rb.dr
			continue
		}
		sp.prof[bb] = medianOf(rb.ws[lo:hi])
		sp.pos[bb] = rb.mean[s*rb.nb+bb]
	}
}

// slope is the least-squares slope (m/m) of the profile over bins
// k−2 … k+2, against the bins' mean radii.
func (sp *rimProfile) slope(k int) (float64, bool) {
	nb := len(sp.prof)
	var sx, sy, sxx, sxy float64
	m := 0
	for t := k - 2; t <= k+2; t++ {
		if t < 0 || t >= nb || !sp.valid[t] {
			continue
		}
		x := sp.pos[t] - sp.pos[k]
		sx += x
		sy += sp.prof[t]
		sxx += x * x
		sxy += x * sp.prof[t]
		m++
	}
	if m < 4 || !sp.valid[k] {
		return 0, false
	}
	fm := float64(m)
	den := sxx - sx*sx/fm
	if !(den > 0) {
		return 0, false
	}
	return (sxy - sx*sy/fm) / den, true
}

// slopeLimit returns the slope limit (m/m) that ends the base: tanMax, or
// more with the scatter of the detrended slopes on the inner part of the
// profile (3 robust standard deviations), so that scanner noise alone
// does not end the base early.
func (sp *rimProfile) slopeLimit(trend [3]float64, kStart int, r0, tanMax float64) float64 {
	nb := len(sp.prof)
	thr := tanMax
	var inner []float64
	for k := kStart; k < nb && sp.pos[k] < 0.9*r0; k++ {
		if sl, okS := sp.slope(k); okS {
			inner = append(inner, sl-trend[1]-2*trend[2]*sp.pos[k])
		}
	}
	if len(inner) >= 8 {
		med := medianInPlace(append([]float64(nil), inner...))
		for i := range inner {
			inner[i] = math.Abs(inner[i] - med)
		}
		thr = max(thr, 3*1.4826*medianInPlace(inner))
	}
	return thr
}

// wallNear reports whether a wall follows bin k: the profile turns steeper
// than wallSlope within wallRunFrac·r0. The slope is the local
// least-squares one or, where too few bins are left for it (a vertical
// wall fills one bin), the step from the previous measured bin; the rise
// since k must exceed 0.5 % of r0, which no noise in the bins' medians
// does.
func (sp *rimProfile) wallNear(k int, r0 float64) bool {
	nb := len(sp.prof)
	prof, pos, valid := sp.prof, sp.pos, sp.valid
	wallRun := wallRunFrac * r0
	prev := k
	for t := k + 1; t < nb && pos[t] <= pos[k]+wallRun; t++ {
		if !valid[t] {
			continue
		}
		st, okT := sp.slope(t)
		step := math.Abs(prof[t]-prof[prev]) / (pos[t] - pos[prev])
		prev = t
		if math.Abs(prof[t]-prof[k]) > 0.005*r0 && (okT && math.Abs(st) > wallSlope || step > wallSlope) {
			return true
		}
	}
	return false
}

// edge walks the profile outwards from bin kStart and returns the rim
// radius (m, negative when none is found), the largest |height| inside it
// (m) and whether the base goes on past a change of slope that is not the
// corner (warp). The edge is where the detrended slope crosses thr and a
// wall follows (interpolated), or where the data end. A change of slope
// with no wall after it is the base itself warping (a lifted rim): the
// walk goes on against the new slope.
func (sp *rimProfile) edge(trend [3]float64, thr float64, kStart int, rlo, dr, r0 float64) (edge, top float64, warp bool) {
	nb := len(sp.prof)
	prof, pos, valid := sp.prof, sp.pos, sp.valid
	bias := 0.0 // after a warp: the slope followed instead of the trend
	edge = -1.0
	good, prevK, prevS := 0, -1, 0.0
	for k := kStart; k < nb; k++ {
		if !valid[k] {
			more := false
			for t := k + 1; t < min(nb, k+4); t++ {
				more = more || valid[t]
			}
			if !more {
				// Data end: the last bin holding points. For points
				// spread evenly up to the edge their mean radius lies
				// halfway between the bin's inner bound and the edge.
				if good >= 3 {
					last := k - 1
					for !valid[last] {
						last--
					}
					binLo := rlo + float64(last)*dr
					edge = min(2*pos[last]-binLo, binLo+dr)
				}
				break
			}
			continue
		}
		sl, okS := sp.slope(k)
		if !okS {
			continue
		}
		raw := sl
		if warp {
			sl -= bias
		} else {
			sl -= trend[1] + 2*trend[2]*pos[k]
		}
		if math.Abs(sl) > thr {
			// A corner keeps rising; a noise spike does not: the edge
			// needs one of the next two measured slopes over the limit
			// too.
			confirmed, seen := false, 0
			for t := k + 1; t < nb && seen < 2; t++ {
				if st, okT := sp.slope(t); okT {
					seen++
					confirmed = confirmed || math.Abs(st-trend[1]-2*trend[2]*pos[t]) > thr
				}
			}
			if !confirmed && seen == 2 {
				continue
			}
			if !sp.wallNear(k, r0) {
				warp, bias = true, raw
				good, prevK, prevS = good+1, k, 0
				top = max(top, math.Abs(prof[k]))
				continue
			}
			if good >= 3 {
				// Interpolate where the slope crosses the limit.
				a, b := math.Abs(prevS), math.Abs(sl)
				edge = pos[prevK] + (thr-a)/(b-a)*(pos[k]-pos[prevK])
			}
			break
		}
		good, prevK, prevS = good+1, k, sl
		top = max(top, math.Abs(prof[k]))
	}
	return edge, top, warp
}

// extentRadius returns the 99.5th percentile of the distance of pts (up to
// 20 000 of them) from (uc, vc) in the plane of f: how far out the scan
// reaches, strays aside.
func extentRadius(pts []r3.Vec, f *frame, uc, vc float64) float64 {
	if len(pts) == 0 {
		return 0
	}
	step := max(1, len(pts)/20000)
	d := make([]float64, 0, len(pts)/step+1)
	for i := 0; i < len(pts); i += step {
		u, v, _ := f.coords(pts[i])
		d = append(d, math.Hypot(u-uc, v-vc))
	}
	return order.Select(d, int(0.995*float64(len(d)-1)))
}

// profileTrend fits w = t0 + t1·r + t2·r² by least squares to the valid
// profile bins with mean radius in [r1, r2]: the base's own trend, which the
// rim search subtracts from the profile's slope. It falls back to a line,
// then to zero, when the bins are too few.
func profileTrend(prof, pos []float64, valid []bool, r1, r2 float64) [3]float64 {
	var idx []int
	for k := range prof {
		if valid[k] && pos[k] >= r1 && pos[k] <= r2 {
			idx = append(idx, k)
		}
	}
	for terms := 3; terms >= 2; terms-- {
		if len(idx) < 2*terms {
			continue
		}
		a := make([]float64, terms*terms)
		b := make([]float64, terms)
		for _, k := range idx {
			f := [3]float64{1, pos[k], pos[k] * pos[k]}
			for p := range terms {
				b[p] += f[p] * prof[k]
				for q := range terms {
					a[p*terms+q] += f[p] * f[q]
				}
			}
		}
		x, ok := solveSmall(terms, a, b)
		if !ok {
			continue
		}
		var t [3]float64
		copy(t[:], x)
		return t
	}
	return [3]float64{}
}

// robustCircle fits a circle to (u, v) by the algebraic method of Kåsa
// (1976), trims points off by more than max(3 robust standard deviations,
// floor) and refits, then refines the centre and radius by geometric
// least squares (Gauss-Newton). It returns the number of points used.
func robustCircle(u, v []float64, floor float64) (cu, cv, r float64, used int, ok bool) {
	keep := lmedsKeep(u, v, floor)
	for range 4 {
		cu, cv, r, ok = kasaCircle(u, v, keep)
		if !ok {
			return 0, 0, 0, 0, false
		}
		d := make([]float64, 0, len(u))
		for i := range u {
			if keep[i] {
				d = append(d, math.Abs(math.Hypot(u[i]-cu, v[i]-cv)-r))
			}
		}
		lim := max(3*1.4826*medianInPlace(d), floor)
		changed := false
		for i := range u {
			k := math.Abs(math.Hypot(u[i]-cu, v[i]-cv)-r) <= lim
			if k != keep[i] {
				changed = true
				keep[i] = k
			}
		}
		if !changed {
			break
		}
	}
	used = 0
	for _, k := range keep {
		if k {
			used++
		}
	}
	if used < 3 {
		return 0, 0, 0, used, false
	}
	// Gauss-Newton on Σ (|p − c| − r)².
	for range 10 {
		var jtj [9]float64
		var jtr [3]float64
		for i := range u {
			if !keep[i] {
				continue
			}
			dx, dy := u[i]-cu, v[i]-cv
			d := math.Hypot(dx, dy)
			if d == 0 {
				continue
			}
			j := [3]float64{-dx / d, -dy / d, -1}
			res := d - r
			for p := range 3 {
				jtr[p] += j[p] * res
				for q := range 3 {
					jtj[p*3+q] += j[p] * j[q]
				}
			}
		}
		step, okS := solveSmall(3, jtj[:], jtr[:])
		if !okS {
			break
		}
		cu -= step[0]
		cv -= step[1]
		r -= step[2]
		if math.Abs(step[0])+math.Abs(step[1])+math.Abs(step[2]) < 1e-12*r {
			break
		}
	}
	return cu, cv, r, used, r > 0
}

// lmedsKeep marks the points to start the circle fit from: those near the
// circle of least median of squared residuals over seeded random triples
// (Rousseeuw 1984, least median of squares; scale s0 = 1.4826 (1 + 5/(n−3))
// × the median absolute residual, Rousseeuw & Leroy 1987, from memory),
// kept when within max(2.5 s0, floor). A contiguous arc of the rim whose
// edge the search found too far in (a missing sector: the data end there)
// then cannot pull the first fit off centre, as it can pull the algebraic
// fit over every point. With fewer than 8 points, no usable triple, or an
// algebraic fit whose median residual is within 3 × the least median (+
// floor), every point is kept.
func lmedsKeep(u, v []float64, floor float64) []bool {
	n := len(u)
	keep := make([]bool, n)
	for i := range keep {
		keep[i] = true
	}
	if n < 8 {
		return keep
	}
	rng := rand.New(rand.NewPCG(0x5eed, uint64(n)))
	res := make([]float64, n)
	best, bu, bv, br := math.Inf(1), 0.0, 0.0, 0.0
	for range 300 {
		i, j, k := rng.IntN(n), rng.IntN(n), rng.IntN(n)
		cu, cv, r, ok := circleThrough(u[i], v[i], u[j], v[j], u[k], v[k])
		if !ok {
			continue
		}
		for p := range n {
			res[p] = math.Abs(math.Hypot(u[p]-cu, v[p]-cv) - r)
		}
		if m := order.Select(res, n/2); m < best {
			best, bu, bv, br = m, cu, cv, r
		}
	}
	if math.IsInf(best, 1) {
		return keep
	}
	// Only when the algebraic fit over every point is far worse (a group
	// of rim points off the circle pulls it) does the least-median circle
	// choose the start; else every point starts, as before.
	if cu, cv, r, ok := kasaCircle(u, v, keep); ok {
		for p := range n {
			res[p] = math.Abs(math.Hypot(u[p]-cu, v[p]-cv) - r)
		}
		if all := order.Select(res, n/2); all <= 3*best+floor {
			return keep
		}
	}
	lim := max(2.5*1.4826*(1+5/float64(n-3))*best, floor)
	kept := 0
	for p := range n {
		keep[p] = math.Abs(math.Hypot(u[p]-bu, v[p]-bv)-br) <= lim
		if keep[p] {
			kept++
		}
	}
	if kept < n/2 { // not a majority: fall back to every point
		for p := range keep {
			keep[p] = true
		}
	}
	return keep
}

// circleThrough returns the circle through three points; ok is false when
// they are (nearly) collinear.
func circleThrough(x1, y1, x2, y2, x3, y3 float64) (cu, cv, r float64, ok bool) {
	ax, ay := x2-x1, y2-y1
	bx, by := x3-x1, y3-y1
	d := 2 * (ax*by - ay*bx)
	scale := (ax*ax + ay*ay) * (bx*bx + by*by)
	if d == 0 || d*d < 1e-18*scale {
		return 0, 0, 0, false
	}
	a2, b2 := ax*ax+ay*ay, bx*bx+by*by
	ux := (by*a2 - ay*b2) / d
	uy := (ax*b2 - bx*a2) / d
	return x1 + ux, y1 + uy, math.Hypot(ux, uy), true
}

// kasaCircle fits u² + v² + D·u + E·v + F = 0 by linear least squares over
// the kept points (Kåsa 1976, IEEE Trans. Instrum. Meas. 25:8, from
// memory).
func kasaCircle(u, v []float64, keep []bool) (cu, cv, r float64, ok bool) {
	var mu, mv float64
	n := 0
	for i := range u {
		if keep[i] {
			mu += u[i]
			mv += v[i]
			n++
		}
	}
	if n < 3 {
		return 0, 0, 0, false
	}
	mu /= float64(n)
	mv /= float64(n)
	// Scale to unit size for the normal equations.
	sc := 0.0
	for i := range u {
		if keep[i] {
			sc = max(sc, math.Abs(u[i]-mu), math.Abs(v[i]-mv))
		}
	}
	if sc == 0 {
		return 0, 0, 0, false
	}
	var a [9]float64
	var b [3]float64
	for i := range u {
		if !keep[i] {
			continue
		}
		x, y := (u[i]-mu)/sc, (v[i]-mv)/sc
		row := [3]float64{x, y, 1}
		rhs := -(x*x + y*y)
		for p := range 3 {
			b[p] += row[p] * rhs
			for q := range 3 {
				a[p*3+q] += row[p] * row[q]
			}
		}
	}
	x, ok := solveSmall(3, a[:], b[:])
	if !ok {
		return 0, 0, 0, false
	}
	cu, cv = -x[0]/2, -x[1]/2
	r2 := cu*cu + cv*cv - x[2]
	if !(r2 > 0) {
		return 0, 0, 0, false
	}
	return cu*sc + mu, cv*sc + mv, math.Sqrt(r2) * sc, true
}

// outlineRim fits the footprint circle to the outermost point near the base
// plane in each of 36 angular sectors about (uc, vc): the fallback for scans
// too sparse for fitRim. Near the plane means within max(0.03·r0, 3 × the
// 95th percentile of |w| inside 0.8·r0), which keeps a warped base and
// drops a wall.
func outlineRim(pts []r3.Vec, f *frame, uc, vc, r0 float64) (rimFit, bool) {
	const ns = 36
	var inner []float64
	for _, p := range pts {
		u, v, w := f.coords(p)
		if du, dv := u-uc, v-vc; du*du+dv*dv < 0.64*r0*r0 {
			inner = append(inner, math.Abs(w))
		}
	}
	if len(inner) < 10 {
		return rimFit{}, false
	}
	band := max(0.03*r0, 3*order.Select(inner, int(0.95*float64(len(inner)-1))))
	best := make([]float64, ns)
	bu, bv := make([]float64, ns), make([]float64, ns)
	for _, p := range pts {
		u, v, w := f.coords(p)
		du, dv := u-uc, v-vc
		rr := math.Hypot(du, dv)
		if math.Abs(w) > band || rr > 1.5*r0 {
			continue
		}
		s := min(ns-1, int((math.Atan2(dv, du)+math.Pi)/(2*math.Pi)*ns))
		if rr > best[s] {
			best[s], bu[s], bv[s] = rr, u, v
		}
	}
	var eu, ev []float64
	for s := range ns {
		if best[s] > 0.5*r0 {
			eu, ev = append(eu, bu[s]), append(ev, bv[s])
		}
	}
	if len(eu) < ns/2 {
		return rimFit{}, false
	}
	cu, cv, r, used, ok := robustCircle(eu, ev, 0.01*r0)
	if !ok {
		return rimFit{}, false
	}
	return rimFit{u: cu, v: cv, r: r, dr: r0 / 50, sectors: ns, used: used}, true
}
