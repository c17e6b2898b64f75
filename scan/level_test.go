package scan

import (
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// synthBase describes an invented pan base for the tests, built in the base
// frame (+z into the pan, origin at the footprint centre) and then moved
// to a scanner frame.
type synthBase struct {
	R       float64                    // base radius, m
	Shape   func(x, y float64) float64 // base height, m; nil = flat
	CornerM float64                    // corner radius, m (0: none)
	WallM   float64                    // wall height above the corner, m (0: none)
	NoiseM  float64                    // Gaussian noise along base z, m
	Spikes  int                        // points (or vertices) raised by SpikeM
	SpikeM  float64
	Junk    int                     // cloud: stray points anywhere in a box 3R × 3R × R
	Hole    func(x, y float64) bool // drop base points where true
	N       int                     // cloud: points on the base disc
	Mesh    bool                    // build a polar mesh instead of a cloud
	StepM   float64                 // mesh: vertex spacing, m
	Normals bool                    // cloud: point normals; mesh: facet normals
	Seed    uint64
}

func dish(sag, r float64) func(x, y float64) float64 {
	return func(x, y float64) float64 { return sag * (1 - (x*x+y*y)/(r*r)) }
}

func saddle(amp, r float64) func(x, y float64) float64 {
	return func(x, y float64) float64 { return amp * (x*x - y*y) / (r * r) }
}

func (sb *synthBase) height(x, y float64) float64 {
	if sb.Shape == nil {
		return 0
	}
	return sb.Shape(x, y)
}

// profile maps the meridian arc length s to the radius, the height above
// the rim's base height and the outer normal's radial and z parts.
func (sb *synthBase) profile(s float64) (r, dz, nr, nz float64, onBase bool) {
	if s <= sb.R {
		return s, 0, 0, -1, true
	}
	s -= sb.R
	arc := sb.CornerM * math.Pi / 2
	if s <= arc {
		phi := s / sb.CornerM
		return sb.R + sb.CornerM*math.Sin(phi), sb.CornerM * (1 - math.Cos(phi)), math.Sin(phi), -math.Cos(phi), false
	}
	return sb.R + sb.CornerM, sb.CornerM + (s - arc), 1, 0, false
}

// build returns the scan in the base frame.
func (sb *synthBase) build() *Cloud {
	rng := rand.New(rand.NewPCG(sb.Seed, 0x5ca1ab1e))
	c := &Cloud{}
	total := sb.R + sb.CornerM*math.Pi/2 + sb.WallM
	outerNormal := func(x, y, nr, nz float64, onBase bool) r3.Vec {
		if onBase {
			const d = 1e-6
			fx := (sb.height(x+d, y) - sb.height(x-d, y)) / (2 * d)
			fy := (sb.height(x, y+d) - sb.height(x, y-d)) / (2 * d)
			return r3.Unit(r3.Vec{X: fx, Y: fy, Z: -1})
		}
		rr := math.Hypot(x, y)
		return r3.Vec{X: nr * x / rr, Y: nr * y / rr, Z: nz}
	}
	point := func(s, th float64) (r3.Vec, r3.Vec, bool) {
		r, dz, nr, nz, onBase := sb.profile(s)
		x, y := r*math.Cos(th), r*math.Sin(th)
		var z float64
		if onBase {
			z = sb.height(x, y)
		} else {
			z = sb.height(sb.R*math.Cos(th), sb.R*math.Sin(th)) + dz
		}
		return r3.Vec{X: x, Y: y, Z: z}, outerNormal(x, y, nr, nz, onBase), onBase
	}
	if !sb.Mesh {
		density := float64(sb.N) / (math.Pi * sb.R * sb.R)
		for range sb.N {
			r := sb.R * math.Sqrt(rng.Float64())
			th := 2 * math.Pi * rng.Float64()
			p, n, _ := point(r, th)
			if sb.Hole != nil && sb.Hole(p.X, p.Y) {
				continue
			}
			p.Z += sb.NoiseM * rng.NormFloat64()
			c.Points = append(c.Points, p)
			if sb.Normals {
				c.Normals = append(c.Normals, n)
			}
		}
		// Corner and wall, with the density of the base along the surface.
		extra := total - sb.R
		if extra > 0 {
			m := int(density * 2 * math.Pi * (sb.R + sb.CornerM) * extra)
			for range m {
				s := sb.R + extra*rng.Float64()
				th := 2 * math.Pi * rng.Float64()
				p, n, _ := point(s, th)
				p.Z += sb.NoiseM * rng.NormFloat64()
				c.Points = append(c.Points, p)
				if sb.Normals {
					c.Normals = append(c.Normals, n)
				}
			}
		}
		for range sb.Spikes {
			i := rng.IntN(len(c.Points))
			c.Points[i].Z += sb.SpikeM
		}
		for range sb.Junk {
			p := r3.Vec{X: 3 * sb.R * (rng.Float64() - 0.5), Y: 3 * sb.R * (rng.Float64() - 0.5), Z: sb.R * (rng.Float64() - 0.5)}
			c.Points = append(c.Points, p)
			if sb.Normals {
				c.Normals = append(c.Normals, r3.Vec{Z: 1})
			}
		}
		return c
	}
	// Polar mesh: a centre vertex, then rings every StepM of arc length.
	h := sb.StepM
	nRing := int(math.Ceil(total / h))
	nTh := max(12, int(math.Ceil(2*math.Pi*(sb.R+sb.CornerM)/h)))
	add := func(p r3.Vec) int32 {
		p.Z += sb.NoiseM * rng.NormFloat64()
		c.Points = append(c.Points, p)
		return int32(len(c.Points) - 1)
	}
	p0, _, _ := point(0, 0)
	centre := add(p0)
	ring := make([][]int32, nRing+1)
	for k := 1; k <= nRing; k++ {
		s := min(total, float64(k)*h)
		ring[k] = make([]int32, nTh)
		for j := range nTh {
			p, _, _ := point(s, 2*math.Pi*float64(j)/float64(nTh))
			ring[k][j] = add(p)
		}
	}
	// Winding: counter-clockwise seen from outside (from −z on the base).
	tri := func(a, b, d int32) {
		if sb.Hole != nil {
			m := r3.Scale(1.0/3, r3.Add(c.Points[a], r3.Add(c.Points[b], c.Points[d])))
			if sb.Hole(m.X, m.Y) {
				return
			}
		}
		c.Triangles = append(c.Triangles, [3]int32{a, b, d})
		if sb.Normals {
			n := r3.Cross(r3.Sub(c.Points[b], c.Points[a]), r3.Sub(c.Points[d], c.Points[a]))
			c.FacetNormals = append(c.FacetNormals, r3.Unit(n))
		}
	}
	for j := range nTh {
		jn := (j + 1) % nTh
		tri(centre, ring[1][jn], ring[1][j])
		for k := 1; k < nRing; k++ {
			a, b := ring[k][j], ring[k][jn]
			d, e := ring[k+1][j], ring[k+1][jn]
			tri(a, b, d)
			tri(b, e, d)
		}
	}
	for range sb.Spikes {
		i := rng.IntN(len(c.Points))
		c.Points[i].Z += sb.SpikeM
	}
	return c
}

// scanner is a rigid move from the base frame to a scanner frame:
// p_scan = Q·p_base + T.
type scanner struct {
	Q [3][3]float64
	T r3.Vec
}

// newScanner returns the move for a base whose outer face looks to scanner
// +z (face "up") or −z ("down"), then tilted by tiltDeg about an axis at
// azimuth azDeg, turned by yawDeg about scanner z and offset by t.
func newScanner(face string, tiltDeg, azDeg, yawDeg float64, t r3.Vec) scanner {
	var q [3][3]float64
	id := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	q = id
	if face == FaceUp {
		// Base +z (into the pan) to scanner −z: half turn about x.
		q = [3][3]float64{{1, 0, 0}, {0, -1, 0}, {0, 0, -1}}
	}
	axis := r3.Vec{X: math.Cos(azDeg * math.Pi / 180), Y: math.Sin(azDeg * math.Pi / 180)}
	q = matMul(rotAbout(axis, tiltDeg*math.Pi/180), q)
	q = matMul(rotAbout(r3.Vec{Z: 1}, yawDeg*math.Pi/180), q)
	return scanner{Q: q, T: t}
}

func rotAbout(axis r3.Vec, a float64) [3][3]float64 {
	var m [3][3]float64
	for i, e := range []r3.Vec{{X: 1}, {Y: 1}, {Z: 1}} {
		v := r3.Rotate(e, a, axis)
		m[0][i], m[1][i], m[2][i] = v.X, v.Y, v.Z
	}
	return m
}

func matMul(a, b [3][3]float64) [3][3]float64 {
	var c [3][3]float64
	for i := range 3 {
		for j := range 3 {
			for k := range 3 {
				c[i][j] += a[i][k] * b[k][j]
			}
		}
	}
	return c
}

func (s scanner) dir(v r3.Vec) r3.Vec {
	return r3.Vec{
		X: s.Q[0][0]*v.X + s.Q[0][1]*v.Y + s.Q[0][2]*v.Z,
		Y: s.Q[1][0]*v.X + s.Q[1][1]*v.Y + s.Q[1][2]*v.Z,
		Z: s.Q[2][0]*v.X + s.Q[2][1]*v.Y + s.Q[2][2]*v.Z,
	}
}

func (s scanner) point(v r3.Vec) r3.Vec { return r3.Add(s.dir(v), s.T) }

func (s scanner) apply(c *Cloud) *Cloud {
	out := &Cloud{Triangles: c.Triangles, Format: c.Format}
	for _, p := range c.Points {
		out.Points = append(out.Points, s.point(p))
	}
	for _, n := range c.Normals {
		out.Normals = append(out.Normals, s.dir(n))
	}
	for _, n := range c.FacetNormals {
		out.FacetNormals = append(out.FacetNormals, s.dir(n))
	}
	return out
}

// toBase maps a scanner-frame point into the levelled base frame.
func (l *Levelled) toBase(p r3.Vec) r3.Vec {
	d := r3.Sub(p, l.OriginM)
	m := l.Rotation
	return r3.Vec{
		X: m[0][0]*d.X + m[0][1]*d.Y + m[0][2]*d.Z,
		Y: m[1][0]*d.X + m[1][1]*d.Y + m[1][2]*d.Z,
		Z: m[2][0]*d.X + m[2][1]*d.Y + m[2][2]*d.Z,
	}
}

func TestLevelFrame(t *testing.T) {
	const R = 0.08
	cases := []struct {
		name       string
		sb         synthBase
		face       string // scanner pose
		opt        LevelOptions
		tilt, yaw  float64
		wantSource string
		wantWarn   string
	}{
		{name: "dish cloud, wall, face up", face: FaceUp, tilt: 7, yaw: 30,
			sb:         synthBase{R: R, Shape: dish(0.3e-3, R), CornerM: 6e-3, WallM: 20e-3, NoiseM: 10e-6, N: 120000, Seed: 1},
			wantSource: FaceFromWall},
		{name: "dome cloud, wall, face down", face: FaceDown, tilt: 25, yaw: -70,
			sb:         synthBase{R: R, Shape: dish(-0.2e-3, R), CornerM: 4e-3, WallM: 30e-3, NoiseM: 20e-6, N: 120000, Seed: 2},
			wantSource: FaceFromWall},
		{name: "saddle cloud, normals, face down", face: FaceDown, tilt: 3, yaw: 100,
			sb:         synthBase{R: R, Shape: saddle(0.15e-3, R), CornerM: 5e-3, NoiseM: 10e-6, N: 80000, Normals: true, Seed: 3},
			wantSource: FaceFromNormals},
		{name: "dish cloud, wall, spikes and 1 % stray points", face: FaceUp, tilt: 20, yaw: 130,
			sb:         synthBase{R: R, Shape: dish(0.3e-3, R), CornerM: 6e-3, WallM: 20e-3, NoiseM: 10e-6, N: 100000, Spikes: 200, SpikeM: 1e-3, Junk: 1200, Seed: 8},
			wantSource: FaceFromWall},
		{name: "flat cloud cropped at the rim, convention", face: FaceUp, tilt: 12, yaw: 0,
			sb:         synthBase{R: R, NoiseM: 8e-6, N: 80000, Seed: 4},
			wantSource: FaceAssumed, wantWarn: "outer face assumed"},
		{name: "flat cloud cropped, option down", face: FaceDown, tilt: 12, yaw: 45, opt: LevelOptions{Face: FaceDown},
			sb:         synthBase{R: R, NoiseM: 8e-6, N: 80000, Seed: 5},
			wantSource: FaceFromOption},
		{name: "dish mesh with facet normals, face up", face: FaceUp, tilt: 40, yaw: 10,
			sb:         synthBase{R: R, Shape: dish(0.4e-3, R), CornerM: 5e-3, WallM: 10e-3, Mesh: true, StepM: 1e-3, Normals: true, Seed: 6},
			wantSource: FaceFromNormals},
		{name: "scanner looking along the base plane", face: FaceDown, tilt: 85, yaw: 15,
			sb:         synthBase{R: R, Shape: dish(0.3e-3, R), CornerM: 6e-3, WallM: 20e-3, NoiseM: 10e-6, N: 80000, Seed: 9},
			wantSource: FaceFromWall, wantWarn: "from the scanner's x-y plane"},
		{name: "dish mesh, no normals, wall", face: FaceDown, tilt: 5, yaw: 200,
			sb:         synthBase{R: R, Shape: dish(0.4e-3, R), CornerM: 5e-3, WallM: 10e-3, Mesh: true, StepM: 1e-3, Seed: 7},
			wantSource: FaceFromWall},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			sc := newScanner(tc.face, tc.tilt, 20, tc.yaw, r3.Vec{X: 0.31, Y: -1.2, Z: 0.45})
			base := tc.sb.build()
			l, err := Level(sc.apply(base), tc.opt)
			if err != nil {
				t.Fatal(err)
			}
			if l.FaceSource != tc.wantSource {
				t.Errorf("face source %q, want %q", l.FaceSource, tc.wantSource)
			}
			warn := strings.Join(l.Warnings, "; ")
			if tc.wantWarn != "" && !strings.Contains(warn, tc.wantWarn) {
				t.Errorf("warnings %q lack %q", warn, tc.wantWarn)
			}
			if tc.wantWarn == "" && warn != "" {
				t.Logf("warnings: %s", warn)
			}
			// The true base axis +z must map to +z (within 0.05°).
			o := l.toBase(sc.point(r3.Vec{}))
			ez := r3.Sub(l.toBase(sc.point(r3.Vec{Z: 1})), o)
			if ang := math.Acos(min(1, ez.Z)) * 180 / math.Pi; ang > 0.05 {
				t.Errorf("base +z off by %.3f°", ang)
			}
			t.Logf("radius %.3f mm (fit %.3f), centre (%.3f, %.3f) mm, +z off %.4f°, rim %d/%d, dropped %d",
				l.RadiusM*1e3, l.FittedRadiusM*1e3, o.X*1e3, o.Y*1e3, math.Acos(min(1, ez.Z))*180/math.Pi,
				l.RimSectorsUsed, l.RimSectors, l.PointsDropped)
			// The true centre must map to x = y = 0 within 0.2 mm.
			if d := math.Hypot(o.X, o.Y); d > 0.2e-3 {
				t.Errorf("centre off by %.3f mm", d*1e3)
			}
			// Radius: the rim is where the slope departs from the base's
			// trend by 3°, 0.05 corner radii past the tangent point; the
			// profile bins (0.2 mm here) and, for a mesh, its vertex step
			// set the resolution.
			lo, hi := R-0.3e-3-tc.sb.StepM, R+0.05*tc.sb.CornerM+0.3e-3
			if l.RadiusM < lo || l.RadiusM > hi {
				t.Errorf("radius %.3f mm, want %.3f..%.3f mm", l.RadiusM*1e3, lo*1e3, hi*1e3)
			}
			// Every kept point lies on the base, near its true height.
			for i, p := range l.Cloud.Points {
				if math.Hypot(p.X, p.Y) > l.RadiusM*(1+1e-12) {
					t.Fatalf("point %d outside the radius", i)
				}
			}
			if l.PointsDropped <= 0 && (tc.sb.CornerM > 0 || tc.sb.WallM > 0) {
				t.Errorf("no points dropped from a scan with a corner")
			}
		})
	}
}

func TestLevelTrianglesAndNormals(t *testing.T) {
	const R = 0.06
	sb := synthBase{R: R, Shape: dish(0.2e-3, R), CornerM: 4e-3, WallM: 8e-3, Mesh: true, StepM: 1.5e-3, Normals: true, Seed: 11}
	base := sb.build()
	sc := newScanner(FaceUp, 15, 60, 33, r3.Vec{X: -0.2, Y: 0.1, Z: 0.9})
	l, err := Level(sc.apply(base), LevelOptions{})
	if err != nil {
		t.Fatal(err)
	}
	c := l.Cloud
	if len(c.Triangles) == 0 || len(c.FacetNormals) != len(c.Triangles) {
		t.Fatalf("%d triangles, %d facet normals", len(c.Triangles), len(c.FacetNormals))
	}
	for k, tri := range c.Triangles {
		for _, v := range tri {
			if v < 0 || int(v) >= len(c.Points) {
				t.Fatalf("triangle %d index %d out of range", k, v)
			}
		}
		// Outer normals point to −z in the base frame.
		if c.FacetNormals[k].Z > -0.99 {
			t.Fatalf("facet %d normal %v does not point to the hob", k, c.FacetNormals[k])
		}
	}
	// Heights: kept points match the true shape (mean plane offset aside).
	var off float64
	for _, p := range c.Points {
		off += p.Z - sb.height(p.X, p.Y)
	}
	off /= float64(len(c.Points))
	for i, p := range c.Points {
		// Small tilt and centre errors allow a few µm.
		if d := p.Z - sb.height(p.X, p.Y) - off; math.Abs(d) > 5e-6 {
			t.Fatalf("point %d height off by %.2f µm", i, d*1e6)
		}
	}
}

func TestLevelSTLWinding(t *testing.T) {
	// STL facets run counter-clockwise seen from outside: with blank
	// facet normals the winding tells the outer face.
	const R = 0.05
	sb := synthBase{R: R, Shape: dish(0.2e-3, R), CornerM: 4e-3, Mesh: true, StepM: 1.5e-3, Seed: 12}
	for _, face := range []string{FaceUp, FaceDown} {
		c := newScanner(face, 10, 0, 0, r3.Vec{}).apply(sb.build())
		c.FacetNormals = make([]r3.Vec, len(c.Triangles))
		c.Format = "stl-binary"
		l, err := Level(c, LevelOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if l.FaceSource != FaceFromNormals {
			t.Errorf("%s: source %q", face, l.FaceSource)
		}
		sc := newScanner(face, 10, 0, 0, r3.Vec{})
		if ez := r3.Sub(l.toBase(sc.point(r3.Vec{Z: 1})), l.toBase(sc.point(r3.Vec{}))); ez.Z < 0.9999 {
			t.Errorf("%s: base +z maps to %v", face, ez)
		}
		// Without the format, the winding is not trusted.
		c.Format = "ply-ascii"
		if l, err = Level(c, LevelOptions{}); err != nil || l.FaceSource == FaceFromNormals {
			t.Errorf("PLY winding used: %v, %v", l.FaceSource, err)
		}
	}
}

func TestLevelNoPanic(t *testing.T) {
	// Odd point sets must give an error or a result, never a panic.
	rng := rand.New(rand.NewPCG(5, 5))
	shapes := map[string]func() r3.Vec{
		"box": func() r3.Vec { return r3.Vec{X: rng.Float64(), Y: rng.Float64(), Z: rng.Float64()} },
		"sphere": func() r3.Vec {
			v := r3.Unit(r3.Vec{X: rng.NormFloat64(), Y: rng.NormFloat64(), Z: rng.NormFloat64()})
			return r3.Scale(0.1, v)
		},
		"line": func() r3.Vec { u := rng.Float64(); return r3.Vec{X: u, Y: 2 * u, Z: 1e-9 * rng.NormFloat64()} },
		"two planes": func() r3.Vec {
			return r3.Vec{X: rng.Float64(), Y: rng.Float64(), Z: float64(rng.IntN(2)) * 0.2}
		},
		"tiny square": func() r3.Vec { return r3.Vec{X: 1e-6 * rng.Float64(), Y: 1e-6 * rng.Float64()} },
		"same point":  func() r3.Vec { return r3.Vec{X: 1, Y: 2, Z: 3} },
	}
	for _, name := range []string{"box", "sphere", "line", "two planes", "tiny square", "same point"} {
		c := &Cloud{}
		for range 3000 {
			c.Points = append(c.Points, shapes[name]())
		}
		func() {
			defer func() {
				if r := recover(); r != nil {
					t.Errorf("%s: panic %v", name, r)
				}
			}()
			l, err := Level(c, LevelOptions{})
			if err != nil {
				t.Logf("%s: %v", name, err)
				return
			}
			if _, err := Grid(l, GridOptions{}); err != nil {
				t.Logf("%s: grid: %v", name, err)
			}
		}()
	}
}

func TestLevelDiameterOverride(t *testing.T) {
	const R = 0.05
	sb := synthBase{R: R, CornerM: 3e-3, WallM: 10e-3, NoiseM: 5e-6, N: 40000, Seed: 21}
	c := newScanner(FaceUp, 0, 0, 0, r3.Vec{}).apply(sb.build())
	l, err := Level(c, LevelOptions{DiameterM: 0.09})
	if err != nil {
		t.Fatal(err)
	}
	if l.RadiusM != 0.045 {
		t.Errorf("radius %g, want 0.045", l.RadiusM)
	}
	if math.Abs(l.FittedRadiusM-R) > 0.6e-3 {
		t.Errorf("fitted radius %g, want %g ± 0.6 mm", l.FittedRadiusM, R)
	}
	if !strings.Contains(strings.Join(l.Warnings, ";"), "differs from the fitted rim") {
		t.Errorf("no warning for a diameter 10 %% off: %q", l.Warnings)
	}
	for _, p := range l.Cloud.Points {
		if math.Hypot(p.X, p.Y) > 0.045 {
			t.Fatal("point beyond the overridden radius")
		}
	}
}

func TestLevelFaceOverrideDisagrees(t *testing.T) {
	const R = 0.05
	sb := synthBase{R: R, CornerM: 3e-3, WallM: 15e-3, NoiseM: 5e-6, N: 40000, Seed: 22}
	c := newScanner(FaceUp, 4, 0, 0, r3.Vec{}).apply(sb.build())
	l, err := Level(c, LevelOptions{Face: FaceDown})
	if err != nil {
		t.Fatal(err)
	}
	if l.FaceSource != FaceFromOption {
		t.Errorf("source %q", l.FaceSource)
	}
	if !strings.Contains(strings.Join(l.Warnings, ";"), "disagrees with the wall") {
		t.Errorf("warnings %q", l.Warnings)
	}
	// The option wins: base +z now points out of the pan.
	o := l.toBase(r3.Vec{})
	_ = o
	ez := r3.Sub(l.toBase(newScanner(FaceUp, 4, 0, 0, r3.Vec{}).point(r3.Vec{Z: 1})),
		l.toBase(newScanner(FaceUp, 4, 0, 0, r3.Vec{}).point(r3.Vec{})))
	if ez.Z > -0.999 {
		t.Errorf("option not followed: true +z maps to %v", ez)
	}
}

func TestLevelBadInput(t *testing.T) {
	good := newScanner(FaceUp, 0, 0, 0, r3.Vec{}).apply((&synthBase{R: 0.05, N: 2000, Seed: 1}).build())
	nan := &Cloud{Points: append([]r3.Vec(nil), good.Points...)}
	nan.Points[17].Y = math.NaN()
	line := &Cloud{}
	for i := range 500 {
		line.Points = append(line.Points, r3.Vec{X: float64(i), Y: 2 * float64(i)})
	}
	cases := []struct {
		name string
		c    *Cloud
		opt  LevelOptions
		want string
	}{
		{"nil", nil, LevelOptions{}, "nil cloud"},
		{"few points", &Cloud{Points: good.Points[:50]}, LevelOptions{}, "need at least 100"},
		{"nan", nan, LevelOptions{}, "point 17 has a non-finite"},
		{"face", good, LevelOptions{Face: "sideways"}, "face \"sideways\""},
		{"diameter", good, LevelOptions{DiameterM: -1}, "diameter"},
		{"slope", good, LevelOptions{MaxSlopeDeg: 45}, "slope limit"},
		{"normals", &Cloud{Points: good.Points, Normals: good.Points[:3]}, LevelOptions{}, "3 normals"},
		{"triangle", &Cloud{Points: good.Points, Triangles: [][3]int32{{0, 1, 99999}}}, LevelOptions{}, "triangle 0 refers to vertex 99999"},
		{"line", line, LevelOptions{}, "degenerate"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Level(tc.c, tc.opt)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

func BenchmarkLevel2M(b *testing.B) {
	const R = 0.1
	sb := synthBase{R: R, Shape: dish(0.3e-3, R), CornerM: 5e-3, WallM: 10e-3, NoiseM: 15e-6, N: 1800000, Seed: 9}
	c := newScanner(FaceUp, 5, 10, 20, r3.Vec{X: 0.1, Y: 0.2, Z: 0.3}).apply(sb.build())
	b.ResetTimer()
	for b.Loop() {
		if _, err := Level(c, LevelOptions{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(c.Points)), "points")
}

// TestLevelSparseFallsBackToOutline: a 40 mm base with about one point per
// 1.3 mm is too sparse for the rim profile search; the outline fallback
// still finds the footprint (radius within two point spacings) and says so.
func TestLevelSparseFallsBackToOutline(t *testing.T) {
	sb := &synthBase{R: 0.02, Shape: dish(0.1e-3, 0.02), NoiseM: 5e-6, N: 700, Seed: 9}
	c := newScanner(FaceUp, 2, 10, 30, r3.Vec{X: 0.01, Y: -0.004, Z: 0.25}).apply(sb.build())
	l, err := Level(c, LevelOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(l.RadiusM-sb.R) > 2*1.34e-3 {
		t.Errorf("radius %.2f mm, want %.2f mm within two spacings", l.RadiusM*1e3, sb.R*1e3)
	}
	found := false
	for _, w := range l.Warnings {
		found = found || strings.Contains(w, "outline")
	}
	if !found {
		t.Errorf("no warning about the outline fallback: %v", l.Warnings)
	}
}

// TestLevelNoisyDenseRim: a dense hand-held-scanner-like cloud (60 µm noise,
// about 0.45 mm spacing) must not end the base early where a noise spike
// steepens one radial bin; the rim lands within 1 mm.
func TestLevelNoisyDenseRim(t *testing.T) {
	sb := &synthBase{R: 0.08, Shape: dish(0.3e-3, 0.08), CornerM: 8e-3, WallM: 10e-3, NoiseM: 60e-6, N: 100000, Seed: 12}
	c := newScanner(FaceUp, 1, 0, 0, r3.Vec{Z: 0.3}).apply(sb.build())
	l, err := Level(c, LevelOptions{Face: FaceUp})
	if err != nil {
		t.Fatal(err)
	}
	if d := l.RadiusM - sb.R; math.Abs(d) > 1e-3 {
		t.Errorf("radius %.2f mm, want %.2f ± 1 mm", l.RadiusM*1e3, sb.R*1e3)
	}
}

// TestLevelReuse: building the output in the input's storage gives the same
// result as a fresh copy.
func TestLevelReuse(t *testing.T) {
	sb := synthBase{R: 0.05, Shape: dish(0.2e-3, 0.05), CornerM: 4e-3, WallM: 8e-3, Mesh: true, StepM: 1.5e-3, Normals: true, Seed: 13}
	sc := newScanner(FaceUp, 5, 20, 10, r3.Vec{Z: 0.4})
	a, err := Level(sc.apply(sb.build()), LevelOptions{})
	if err != nil {
		t.Fatal(err)
	}
	in := sc.apply(sb.build())
	b, err := Level(in, LevelOptions{Reuse: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(a.Cloud.Points) != len(b.Cloud.Points) || len(a.Cloud.Triangles) != len(b.Cloud.Triangles) ||
		len(a.Cloud.FacetNormals) != len(b.Cloud.FacetNormals) {
		t.Fatalf("sizes differ: %d/%d points, %d/%d triangles", len(a.Cloud.Points), len(b.Cloud.Points),
			len(a.Cloud.Triangles), len(b.Cloud.Triangles))
	}
	for i := range a.Cloud.Points {
		if a.Cloud.Points[i] != b.Cloud.Points[i] {
			t.Fatalf("point %d: %v vs %v", i, a.Cloud.Points[i], b.Cloud.Points[i])
		}
	}
	for i := range a.Cloud.Triangles {
		if a.Cloud.Triangles[i] != b.Cloud.Triangles[i] || a.Cloud.FacetNormals[i] != b.Cloud.FacetNormals[i] {
			t.Fatalf("triangle %d differs", i)
		}
	}
	if in.Points != nil {
		t.Error("the reused input still holds its points")
	}
}

// TestLevelDropNormals: without the normals in the output, the points,
// triangles and frame are those of a normal Level, and a cloud that is
// not reused keeps its normals.
func TestLevelDropNormals(t *testing.T) {
	mesh := synthBase{R: 0.05, Shape: dish(0.2e-3, 0.05), CornerM: 4e-3, WallM: 8e-3, Mesh: true, StepM: 1.5e-3, Normals: true, Seed: 13}
	cloud := synthBase{R: 0.05, Shape: dish(0.2e-3, 0.05), CornerM: 4e-3, WallM: 8e-3, N: 30000, Normals: true, Seed: 5}
	sc := newScanner(FaceUp, 5, 20, 10, r3.Vec{Z: 0.4})
	for _, tc := range []struct {
		name  string
		sb    synthBase
		reuse bool
	}{{"mesh", mesh, false}, {"mesh reused", mesh, true}, {"cloud", cloud, false}, {"cloud reused", cloud, true}} {
		a, err := Level(sc.apply(tc.sb.build()), LevelOptions{})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		in := sc.apply(tc.sb.build())
		nIn, fIn := len(in.Normals), len(in.FacetNormals)
		b, err := Level(in, LevelOptions{Reuse: tc.reuse, DropNormals: true})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if b.Cloud.Normals != nil || b.Cloud.FacetNormals != nil {
			t.Errorf("%s: %d normals, %d facet normals kept", tc.name, len(b.Cloud.Normals), len(b.Cloud.FacetNormals))
		}
		if a.Rotation != b.Rotation || a.OriginM != b.OriginM || a.RadiusM != b.RadiusM || a.FaceSource != b.FaceSource {
			t.Errorf("%s: frame or face differs: %v %v %v %s / %v %v %v %s", tc.name,
				a.Rotation, a.OriginM, a.RadiusM, a.FaceSource, b.Rotation, b.OriginM, b.RadiusM, b.FaceSource)
		}
		if !slices.Equal(a.Cloud.Points, b.Cloud.Points) || !slices.Equal(a.Cloud.Triangles, b.Cloud.Triangles) {
			t.Errorf("%s: points or triangles differ", tc.name)
		}
		if !tc.reuse && (len(in.Normals) != nIn || len(in.FacetNormals) != fIn) {
			t.Errorf("%s: the input lost its normals: %d/%d, %d/%d", tc.name, len(in.Normals), nIn, len(in.FacetNormals), fIn)
		}
	}
}

// TestLevelProcessors: Level's parallel passes (rim annulus, base mask)
// give the same result on one processor as on four.
func TestLevelProcessors(t *testing.T) {
	sb := synthBase{R: 0.05, Shape: dish(0.2e-3, 0.05), CornerM: 4e-3, WallM: 8e-3, N: 40000, Normals: true, Seed: 21}
	sc := newScanner(FaceUp, 5, 20, 10, r3.Vec{Z: 0.4})
	run := func(procs int) *Levelled {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		l, err := Level(sc.apply(sb.build()), LevelOptions{})
		if err != nil {
			t.Fatal(err)
		}
		return l
	}
	a, b := run(1), run(4)
	if a.Rotation != b.Rotation || a.OriginM != b.OriginM || a.RadiusM != b.RadiusM || a.PointsDropped != b.PointsDropped ||
		a.DroppedBeyondRim != b.DroppedBeyondRim || a.DroppedOffPlane != b.DroppedOffPlane || a.DroppedBySector != b.DroppedBySector {
		t.Errorf("1 vs 4 processors: frame, radius or drops differ: %+v / %+v", a, b)
	}
	if a.PointsDropped == 0 {
		t.Error("no point dropped: the test does not reach the tally")
	}
	if !slices.Equal(a.Cloud.Points, b.Cloud.Points) || !slices.Equal(a.Cloud.Normals, b.Cloud.Normals) {
		t.Error("1 vs 4 processors: levelled points or normals differ")
	}
}

// TestLevelHobTop: a hob top's frame is the base frame turned over about x
// (+z out of the measured face): y and z change sign, x stays.
func TestLevelHobTop(t *testing.T) {
	sb := synthBase{R: 0.05, Shape: dish(0.1e-3, 0.05), N: 20000, Seed: 14}
	sc := newScanner(FaceUp, 3, 0, 20, r3.Vec{Z: 0.3})
	a, err := Level(sc.apply(sb.build()), LevelOptions{Face: FaceUp})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Level(sc.apply(sb.build()), LevelOptions{Face: FaceUp, HobTop: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(a.Cloud.Points) != len(b.Cloud.Points) {
		t.Fatalf("%d vs %d points", len(a.Cloud.Points), len(b.Cloud.Points))
	}
	for i, p := range a.Cloud.Points {
		q := b.Cloud.Points[i]
		if math.Abs(p.X-q.X) > 1e-12 || math.Abs(p.Y+q.Y) > 1e-12 || math.Abs(p.Z+q.Z) > 1e-12 {
			t.Fatalf("point %d: %v vs %v", i, p, q)
		}
	}
}
