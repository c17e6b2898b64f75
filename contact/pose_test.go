package contact

import (
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"syscall"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"

	"gapflux/scan"
)

// testDisc returns an n×n grid of cellM cells centred on the origin whose
// cells within radius rM are Measured with height f(x, y), m.
func testDisc(n int, cellM, rM float64, f func(x, y float64) float64) *scan.Surface {
	h := float64(n-1) / 2 * cellM
	s := scan.NewSurface(n, n, cellM, -h, -h)
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			x, y := s.X(i), s.Y(j)
			if math.Hypot(x, y) <= rM*(1+1e-12) {
				k := s.Index(i, j)
				s.ZM[k] = f(x, y)
				s.State[k] = scan.Measured
			}
		}
	}
	return s
}

// maxR2 is the largest x² + y² over the measured cells of s.
func maxR2(s *scan.Surface) float64 {
	m := 0.0
	for j := 0; j < s.Ny; j++ {
		for i := 0; i < s.Nx; i++ {
			if s.State[s.Index(i, j)] == scan.Measured {
				m = max(m, s.X(i)*s.X(i)+s.Y(j)*s.Y(j))
			}
		}
	}
	return m
}

func countMeasured(s *scan.Surface) int {
	n := 0
	for _, st := range s.State {
		if st == scan.Measured {
			n++
		}
	}
	return n
}

const (
	mmM    = 1e-3
	cellTM = 1 * mmM
	radTM  = 50 * mmM // disc radius on the 101-cell grid: (±50 mm, 0) are cells
)

// TestRestAnalytic checks rest poses with closed-form answers. Every value
// here is computed by hand from the geometry (no outside source).
func TestRestAnalytic(t *testing.T) {
	const h = 0.5 * mmM
	even := testDisc(100, cellTM, radTM, func(x, y float64) float64 { return h * (x*x + y*y) / (radTM * radTM) })
	evenMax := maxR2(even)
	tilt := func(x, y float64) float64 { return 2e-3*x - 1e-3*y + 0.1*mmM }
	bumps := [][2]float64{{0, 20 * mmM}, {-17 * mmM, -10 * mmM}, {17 * mmM, -10 * mmM}}
	tests := []struct {
		name     string
		pan, hob *scan.Surface
		com      [2]float64
		support  string
		plane    [3]float64 // PlaneM, to 1e-12 (a, b) and 1e-12 m (c)
		contacts [][2]float64
		nContact int     // if contacts is nil: how many, 0 to skip
		rock     float64 // RockM, m, to 1e-12 m
		tipMax   float64 // TipM ≤ tipMax, m (and TipM ≤ RockM)
		tipEq    bool    // TipM equals tipMax to 1e-12 m
		rocks    bool
		weightN  float64 // WeightN; 0 = the default 24.5 N
		forceN   float64 // TipForceN to 1 %, when > 0
	}{
		// Dome, centre lowest, on the odd grid: the centre of mass is over
		// the centre cell: point support, held level; the rim (±50 mm, 0) is
		// h above the hob. Tipping about the apex, the neighbour cell
		// touches after t* = h·cell/R², so TipM ≈ h·cell/R.
		{name: "dome", pan: testDisc(101, cellTM, radTM, func(x, y float64) float64 { return h * (x*x + y*y) / (radTM * radTM) }),
			support: SupportPoint, contacts: [][2]float64{{0, 0}}, rock: h, tipMax: 2 * h * cellTM / radTM, rocks: true},
		// The same dome on an even grid: the centre of mass falls between
		// the four central cells (r² = 0.5 mm²), a square 1 mm across, well
		// inside the two-cell support tolerance: a point support; pressing
		// the rim brings it h·(r²max − 0.5 mm²)/R² down, so it rocks. The
		// pivot is a corner of that square, 0.7 cell off the apex, so the
		// first roll is up to half as long again as on the odd grid.
		{name: "dome even grid", pan: even, support: SupportPoint,
			plane:    [3]float64{0, 0, h * 0.5 * mmM * mmM / (radTM * radTM)},
			contacts: [][2]float64{{-0.5 * mmM, -0.5 * mmM}, {0.5 * mmM, -0.5 * mmM}, {0.5 * mmM, 0.5 * mmM}, {-0.5 * mmM, 0.5 * mmM}},
			rock:     h * (evenMax - 0.5*mmM*mmM) / (radTM * radTM), tipMax: 3 * h * cellTM / radTM, rocks: true},
		// Dish, centre highest: stands on the twenty rim cells at r = 50 mm
		// ((±50, 0), (0, ±50), (±30, ±40), (±40, ±30), (±14, ±48),
		// (±48, ±14) mm: the lattice points of that circle); the other hull
		// vertices of the digitised rim are within a cell of r = R, so the
		// largest rim gap is below h·(1 − (R − cell)²/R²) < 2h·cell/R.
		{name: "dish", pan: testDisc(101, cellTM, radTM, func(x, y float64) float64 { return h * (1 - (x*x+y*y)/(radTM*radTM)) }),
			support: SupportPolygon, nContact: 20, rock: -1, tipMax: 2 * h * cellTM / radTM},
		// Saddle z = k(x² − y²): lowest at (0, ±R), a line through the
		// centre of mass; held level the high rim (±R, 0) is 2kR² up.
		{name: "saddle", pan: testDisc(101, cellTM, radTM, func(x, y float64) float64 { return 0.3 * mmM * (x*x - y*y) / (radTM * radTM) }),
			support: SupportLine, plane: [3]float64{0, 0, -0.3 * mmM},
			contacts: [][2]float64{{0, -radTM}, {0, radTM}}, rock: 0.6 * mmM, tipMax: 0.6 * mmM, rocks: true},
		// Tilted plane: the plane itself, every cell touching.
		{name: "tilted plane", pan: testDisc(101, cellTM, radTM, tilt), support: SupportPolygon,
			plane: [3]float64{2e-3, -1e-3, 0.1 * mmM}, rock: 0, tipMax: 0},
		{name: "tilted plane off-centre load", pan: testDisc(101, cellTM, radTM, tilt), com: [2]float64{10 * mmM, -5 * mmM},
			support: SupportPolygon, plane: [3]float64{2e-3, -1e-3, 0.1 * mmM}, rock: 0, tipMax: 0},
		// Flat base: broad contact.
		{name: "flat", pan: testDisc(101, cellTM, radTM, func(x, y float64) float64 { return 0 }),
			support: SupportPolygon, rock: 0, tipMax: 0},
		// Three bumps 0.3 mm below an otherwise flat base: the plane z = 0
		// through them; pressing anywhere on the rim, it tips until the rim
		// touches, 0.3 mm down; about each edge t* = h/max w, drop h.
		// Tip force: the edge nearest the centre of mass is a slanted one,
		// from (17, −10) to (0, 20) mm, 340/√1189 = 9.860 mm away; the rim
		// lies R − 9.860 = 40.140 mm beyond it, so F = W·9.860/40.140 =
		// 6.02 N with the default 24.52 N: above the 5 N light touch, the
		// pan stands; at 10 N of weight, F = 2.46 N and it rocks.
		{name: "three bumps", pan: withBumps(testDisc(101, cellTM, radTM, func(x, y float64) float64 { return 0.3 * mmM }), bumps, 0),
			support: SupportPolygon, contacts: [][2]float64{{-17 * mmM, -10 * mmM}, {17 * mmM, -10 * mmM}, {0, 20 * mmM}},
			rock: 0.3 * mmM, tipMax: 0.3 * mmM, tipEq: true, rocks: false, forceN: DefaultWeightN * 9.860 / 40.140},
		{name: "three bumps light pan", pan: withBumps(testDisc(101, cellTM, radTM, func(x, y float64) float64 { return 0.3 * mmM }), bumps, 0),
			support: SupportPolygon, contacts: [][2]float64{{-17 * mmM, -10 * mmM}, {17 * mmM, -10 * mmM}, {0, 20 * mmM}},
			rock: 0.3 * mmM, tipMax: 0.3 * mmM, tipEq: true, rocks: true, weightN: 10, forceN: 10 * 9.860 / 40.140},
		// The same bumps under a base tilted by 0.002: still the plane z = 0;
		// the rim point (R, 0) has the largest gap, 0.3 mm + 0.002·R. The
		// support and so the tip force are those of the level base.
		{name: "three bumps tilted base", pan: withBumps(testDisc(101, cellTM, radTM, func(x, y float64) float64 { return 0.3*mmM + 2e-3*x }), bumps, 0),
			support: SupportPolygon, contacts: [][2]float64{{-17 * mmM, -10 * mmM}, {17 * mmM, -10 * mmM}, {0, 20 * mmM}},
			rock: 0.4 * mmM, tipMax: 0.4 * mmM, rocks: false, forceN: DefaultWeightN * 9.860 / 40.140},
		// Flat pan on a conical hob 0.2 mm high in the middle: d = −hob is
		// lowest at the centre: point support, rim gap 0.2 mm. A cone does
		// not roll: tipping about the apex towards +x, the cells on the +x
		// axis all touch together at t* = h/R, drop t*·R = h.
		{name: "flat pan on domed hob", pan: testDisc(101, cellTM, radTM, func(x, y float64) float64 { return 0 }),
			hob:     mustRadial(testDisc(101, cellTM, radTM, func(x, y float64) float64 { return 0 }), []float64{0, radTM}, []float64{0.2 * mmM, 0}),
			support: SupportPoint, plane: [3]float64{0, 0, -0.2 * mmM}, contacts: [][2]float64{{0, 0}},
			rock: 0.2 * mmM, tipMax: 0.2 * mmM, tipEq: true, rocks: true},
		// Dome with the load over (10, 0) mm, a cell: point support there;
		// the least tilted resting plane has slope h·(10² − 9²) mm²/(R²·cell)
		// = 19 mm·h/R² in x (the chord to the cell at 9 mm, which touches too).
		{name: "dome off-centre load", pan: testDisc(101, cellTM, radTM, func(x, y float64) float64 { return h * (x*x + y*y) / (radTM * radTM) }),
			com: [2]float64{10 * mmM, 0}, support: SupportPoint,
			plane: [3]float64{19 * mmM * h / (radTM * radTM), 0, h*100*mmM*mmM/(radTM*radTM) - 10*mmM*19*mmM*h/(radTM*radTM)},
			// Rim (−R, 0): gap h + R·19 mm·h/R² + 90 mm²·h/R² = h·(1 + 1040/2500).
			contacts: [][2]float64{{9 * mmM, 0}, {10 * mmM, 0}}, rock: h * (1 + 1040.0/2500), tipMax: h, rocks: true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p, err := Rest(tc.pan, tc.hob, RestOptions{CentreOfMassM: tc.com, Seed: 1, BandM: DefaultContactTolM, WeightN: tc.weightN})
			if err != nil {
				t.Fatal(err)
			}
			if p.Support != tc.support {
				t.Errorf("support %q, want %q", p.Support, tc.support)
			}
			for m := 0; m < 3; m++ {
				if math.Abs(p.PlaneM[m]-tc.plane[m]) > 1e-12 {
					t.Errorf("plane %v, want %v", p.PlaneM, tc.plane)
					break
				}
			}
			wantTilt := math.Atan(math.Hypot(tc.plane[0], tc.plane[1])) * 180 / math.Pi
			if math.Abs(p.TiltDeg-wantTilt) > 1e-9 {
				t.Errorf("tilt %.12g°, want %.12g°", p.TiltDeg, wantTilt)
			}
			if tc.contacts != nil {
				if !closePoints(p.ContactPointsM, tc.contacts, 1e-12) {
					t.Errorf("contacts %v, want %v", p.ContactPointsM, tc.contacts)
				}
			} else if tc.nContact > 0 && len(p.ContactPointsM) != tc.nContact {
				t.Errorf("%d contacts %v, want %d", len(p.ContactPointsM), p.ContactPointsM, tc.nContact)
			}
			switch {
			case tc.rock >= 0 && math.Abs(p.RockM-tc.rock) > 1e-12:
				t.Errorf("RockM %.6g mm, want %.6g mm", p.RockM/mmM, tc.rock/mmM)
			case tc.rock < 0 && tc.name == "dish" && !(p.RockM > 0 && p.RockM < 2*h*cellTM/radTM):
				t.Errorf("RockM %.6g mm, want in (0, %.6g) mm", p.RockM/mmM, 2*h*cellTM/radTM/mmM)
			}
			if p.TipM > tc.tipMax+1e-12 || p.TipM > p.RockM+1e-12 || (tc.tipEq && math.Abs(p.TipM-tc.tipMax) > 1e-12) {
				t.Errorf("TipM %.6g mm, want ≤ %.6g mm (= if exact) and ≤ RockM %.6g mm", p.TipM/mmM, tc.tipMax/mmM, p.RockM/mmM)
			}
			if p.Rocks != tc.rocks {
				t.Errorf("rocks %v, want %v (RockM %.4g mm, tip force %.4g N)", p.Rocks, tc.rocks, p.RockM/mmM, p.TipForceN)
			}
			if tc.forceN > 0 && math.Abs(p.TipForceN-tc.forceN) > 0.01*tc.forceN {
				t.Errorf("tip force %.4g N, want %.4g N ± 1 %%", p.TipForceN, tc.forceN)
			}
			if p.CentreOfMassM != tc.com {
				t.Errorf("centre of mass %v, want %v", p.CentreOfMassM, tc.com)
			}
			// The gap is never negative and is 0 at every contact point.
			g := Gap(tc.pan, tc.hob, p)
			for _, c := range p.ContactPointsM {
				i := int(math.Round((c[0] - tc.pan.X0M) / cellTM))
				j := int(math.Round((c[1] - tc.pan.Y0M) / cellTM))
				if gk := g[tc.pan.Index(i, j)]; gk > DefaultContactTolM {
					t.Errorf("gap %g m at contact %v", gk, c)
				}
			}
			for k, gk := range g {
				if tc.pan.InBase(k) && !(gk >= 0) {
					t.Fatalf("gap %g at cell %d", gk, k)
				}
			}
		})
	}
}

func withBumps(s *scan.Surface, at [][2]float64, z float64) *scan.Surface {
	for _, b := range at {
		i := int(math.Round((b[0] - s.X0M) / s.CellM))
		j := int(math.Round((b[1] - s.Y0M) / s.CellM))
		s.ZM[s.Index(i, j)] = z
	}
	return s
}

func mustRadial(like *scan.Surface, rM, zM []float64) *scan.Surface {
	h, err := RadialHob(like, rM, zM, [2]float64{})
	if err != nil {
		panic(err)
	}
	return h
}

func closePoints(a, b [][2]float64, tol float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Abs(a[i][0]-b[i][0]) > tol || math.Abs(a[i][1]-b[i][1]) > tol {
			return false
		}
	}
	return true
}

// TestTipAngleByHand checks t* for one support edge against a hand
// computation: three bumps at z = 0 under a base 0.3 mm up, and a fourth
// bump 0.1 mm up at (30, 5) mm beyond the edge from (17, −10) to (0, 20) mm.
// That edge's outward unit normal is (30, 17)/√1189, so the fourth bump is
// w = (13·30 + 15·17)/√1189 = 645/√1189 mm beyond it, and it touches first:
// t* = 0.1 mm / w (the rim, 0.3 mm up and at most 50 mm away, needs more).
func TestTipAngleByHand(t *testing.T) {
	pan := withBumps(testDisc(101, cellTM, radTM, func(x, y float64) float64 { return 0.3 * mmM }),
		[][2]float64{{0, 20 * mmM}, {-17 * mmM, -10 * mmM}, {17 * mmM, -10 * mmM}}, 0)
	pan = withBumps(pan, [][2]float64{{30 * mmM, 5 * mmM}}, 0.1*mmM)
	c, err := collectCells(pan, nil, nil, [2]float64{})
	if err != nil {
		t.Fatal(err)
	}
	g := append([]float64(nil), c.d...) // the resting plane is z = 0 = dmin
	l := math.Sqrt(1189)
	nx, ny := 30/l, 17/l
	off := -(17*mmM*nx - 10*mmM*ny)
	got := c.tipAngle(g, nx, ny, off, 1e-9)
	want := 0.1 * mmM / (645 / l * mmM)
	if math.Abs(got-want) > 1e-12*want {
		t.Errorf("t* = %.15g, want %.15g", got, want)
	}
	p, err := Rest(pan, nil, RestOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// The other two edges see only the 0.3 mm base: drop 0.3 mm each.
	if math.Abs(p.TipM-0.3*mmM) > 1e-12 || math.Abs(p.RockM-0.3*mmM) > 1e-12 {
		t.Errorf("TipM %g mm, RockM %g mm, want 0.3 and 0.3", p.TipM/mmM, p.RockM/mmM)
	}
}

// TestRestFilledAndExcluded checks that filled and excluded cells never
// carry the pan, while the same cell, measured, does.
func TestRestFilledAndExcluded(t *testing.T) {
	dish := func() *scan.Surface {
		return testDisc(101, cellTM, radTM, func(x, y float64) float64 { return 0.5 * mmM * (1 - (x*x+y*y)/(radTM*radTM)) })
	}
	low := [2]float64{20 * mmM, 0} // pushed 1 mm below the rim plane
	k := dish().Index(70, 50)

	measured := withBumps(dish(), [][2]float64{low}, -1*mmM)
	p, err := Rest(measured, nil, RestOptions{BandM: DefaultContactTolM})
	if err != nil {
		t.Fatal(err)
	}
	if !containsPoint(p.ContactPointsM, low) {
		t.Errorf("measured low cell: contacts %v miss %v", p.ContactPointsM, low)
	}

	filled := withBumps(dish(), [][2]float64{low}, -1*mmM)
	filled.State[k] = scan.Filled
	excluded := withBumps(dish(), [][2]float64{low}, -1*mmM)
	ex := make([]bool, len(excluded.ZM))
	ex[k] = true
	for _, tc := range []struct {
		name string
		s    *scan.Surface
		ex   []bool
	}{{"filled", filled, nil}, {"excluded", excluded, ex}} {
		p, err := Rest(tc.s, nil, RestOptions{Exclude: tc.ex, BandM: DefaultContactTolM})
		if err != nil {
			t.Fatal(err)
		}
		if containsPoint(p.ContactPointsM, low) || len(p.ContactPointsM) != 20 || math.Abs(p.PlaneM[2]) > 1e-12 {
			t.Errorf("%s: contacts %v, plane %v; want the 20 rim cells and z = 0", tc.name, p.ContactPointsM, p.PlaneM)
		}
		if g := Gap(tc.s, nil, p); g[k] != 0 {
			t.Errorf("%s: gap %g below the plane, want clamped to 0", tc.name, g[k])
		}
	}
}

func containsPoint(ps [][2]float64, q [2]float64) bool {
	for _, p := range ps {
		if math.Abs(p[0]-q[0]) < 1e-9 && math.Abs(p[1]-q[1]) < 1e-9 {
			return true
		}
	}
	return false
}

// randomBase is a warped, noisy base: dish or dome, saddle, tilt and
// 20 µm noise (scanner-like; our own invented scenario).
func randomBase(rng *rand.Rand, n int, cellM float64) *scan.Surface {
	r := float64(n-1) / 2 * cellM
	conc := (rng.Float64()*2 - 1) * 0.5 * mmM
	sad := (rng.Float64()*2 - 1) * 0.2 * mmM
	tx, ty := rng.NormFloat64()*1e-3, rng.NormFloat64()*1e-3
	s := testDisc(n, cellM, r, func(x, y float64) float64 {
		return conc*(1-(x*x+y*y)/(r*r)) + sad*(x*x-y*y)/(r*r) + tx*x + ty*y
	})
	for k := range s.ZM {
		if s.State[k] == scan.Measured {
			s.ZM[k] += rng.NormFloat64() * 20e-6
		}
	}
	return s
}

// lowerHullAt is the height of the lower convex hull of (x, y, d) above
// (xc, yc) by gonum's dense simplex on the dual LP (GO-NOTES.md (e)):
// minimise Σ λ_i d_i subject to Σ λ_i (x_i, y_i, 1) = (xc, yc, 1), λ ≥ 0.
func lowerHullAt(t *testing.T, s *scan.Surface, xc, yc float64) float64 {
	t.Helper()
	var xs, ys, ds []float64
	for j := 0; j < s.Ny; j++ {
		for i := 0; i < s.Nx; i++ {
			if k := s.Index(i, j); s.State[k] == scan.Measured {
				xs = append(xs, s.X(i)-xc)
				ys = append(ys, s.Y(j)-yc)
				ds = append(ds, s.ZM[k])
			}
		}
	}
	n := len(ds)
	a := mat.NewDense(3, n, nil)
	for i := 0; i < n; i++ {
		a.Set(0, i, xs[i])
		a.Set(1, i, ys[i])
		a.Set(2, i, 1)
	}
	f, _, err := lp.Simplex(ds, a, []float64{0, 0, 1}, 0, nil)
	if err != nil {
		t.Fatalf("gonum simplex: %v", err)
	}
	return f
}

// TestRestAgainstSimplex compares the resting plane's height over the
// centre of mass with gonum's simplex on the dual LP, on ~2000-cell grids.
func TestRestAgainstSimplex(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for trial := 0; trial < 12; trial++ {
		s := randomBase(rng, 51, cellTM) // 1961 measured cells
		com := [2]float64{(rng.Float64()*2 - 1) * 10 * mmM, (rng.Float64()*2 - 1) * 10 * mmM}
		p, err := Rest(s, nil, RestOptions{CentreOfMassM: com, Seed: uint64(trial)})
		if err != nil {
			t.Fatal(err)
		}
		got := p.PlaneM[0]*com[0] + p.PlaneM[1]*com[1] + p.PlaneM[2]
		want := lowerHullAt(t, s, com[0], com[1])
		scale := 0.0
		for k, z := range s.ZM {
			if s.State[k] == scan.Measured {
				scale = max(scale, math.Abs(z))
			}
		}
		if math.Abs(got-want) > 1e-9*scale {
			t.Errorf("trial %d: plane at centre of mass %.15g m, simplex %.15g m", trial, got, want)
		}
		if p.Support != SupportPolygon || len(p.ContactPointsM) < 3 {
			t.Errorf("trial %d: support %s with %d contacts, want a polygon", trial, p.Support, len(p.ContactPointsM))
		}
	}
}

// TestRestDeterministic: the same seed gives the same pose; another seed
// the same plane to rounding.
func TestRestDeterministic(t *testing.T) {
	s := randomBase(rand.New(rand.NewPCG(5, 6)), 151, 0.5*mmM)
	p1, err := Rest(s, nil, RestOptions{Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	p2, _ := Rest(s, nil, RestOptions{Seed: 3})
	if !reflect.DeepEqual(p1, p2) {
		t.Errorf("same seed, different poses:\n%+v\n%+v", p1, p2)
	}
	p3, _ := Rest(s, nil, RestOptions{Seed: 99})
	for m := 0; m < 3; m++ {
		if math.Abs(p3.PlaneM[m]-p1.PlaneM[m]) > 1e-12 {
			t.Errorf("seeds 3 and 99: planes %v and %v", p1.PlaneM, p3.PlaneM)
		}
	}
	if !closePoints(p1.ContactPointsM, p3.ContactPointsM, 0) {
		t.Errorf("seeds 3 and 99: contacts %v and %v", p1.ContactPointsM, p3.ContactPointsM)
	}
}

func TestRestBadInput(t *testing.T) {
	good := func() *scan.Surface { return testDisc(21, cellTM, 10*mmM, func(x, y float64) float64 { return 0 }) }
	nanCell := good()
	nanCell.ZM[nanCell.Index(10, 10)] = math.NaN()
	allFilled := good()
	for k := range allFilled.State {
		if allFilled.State[k] == scan.Measured {
			allFilled.State[k] = scan.Filled
		}
	}
	oneRow := scan.NewSurface(21, 21, cellTM, -10*mmM, -10*mmM)
	for i := 0; i < 21; i++ {
		oneRow.ZM[oneRow.Index(i, 10)] = 0
		oneRow.State[oneRow.Index(i, 10)] = scan.Measured
	}
	short := good()
	short.ZM = short.ZM[:10]
	shiftedHob := FlatHob(good())
	shiftedHob.X0M += cellTM
	holeHob := FlatHob(good())
	holeHob.State[holeHob.Index(10, 10)] = scan.Outside
	holeHob.ZM[holeHob.Index(10, 10)] = math.NaN()

	tests := []struct {
		name     string
		pan, hob *scan.Surface
		opt      RestOptions
		want     string
	}{
		{"nil pan", nil, nil, RestOptions{}, "nil"},
		{"short heights", short, nil, RestOptions{}, "heights"},
		{"hob grid", good(), shiftedHob, RestOptions{}, "differs"},
		{"hob hole", good(), holeHob, RestOptions{}, "does not cover"},
		{"NaN height", nanCell, nil, RestOptions{}, "not finite"},
		{"no measured cell", allFilled, nil, RestOptions{}, "no measured"},
		{"collinear cells", oneRow, nil, RestOptions{}, "collinear"},
		{"centre of mass outside", good(), nil, RestOptions{CentreOfMassM: [2]float64{12 * mmM, 0}}, "not inside"},
		{"centre of mass on the edge", good(), nil, RestOptions{CentreOfMassM: [2]float64{10 * mmM, 0}}, "not inside"},
		{"centre of mass NaN", good(), nil, RestOptions{CentreOfMassM: [2]float64{math.NaN(), 0}}, "not finite"},
		{"exclude length", good(), nil, RestOptions{Exclude: make([]bool, 3)}, "exclusion"},
		{"negative rock limit", good(), nil, RestOptions{RockLimitM: -1}, "rock limit"},
		{"negative tolerance", good(), nil, RestOptions{ContactTolM: -1}, "tolerance"},
		{"NaN band", good(), nil, RestOptions{BandM: math.NaN()}, "contact band"},
		{"negative weight", good(), nil, RestOptions{WeightN: -1}, "weight"},
		{"infinite force limit", good(), nil, RestOptions{TipForceLimitN: math.Inf(1)}, "tip force limit"},
	}
	for _, tc := range tests {
		_, err := Rest(tc.pan, tc.hob, tc.opt)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want one containing %q", tc.name, err, tc.want)
		}
	}
}

// noisyDisc is testDisc with seeded Gaussian noise of sdM (m RMS) added to
// every measured cell.
func noisyDisc(n int, cellM, rM, sdM float64, seed uint64, f func(x, y float64) float64) *scan.Surface {
	s := testDisc(n, cellM, rM, f)
	rng := rand.New(rand.NewPCG(seed, 77))
	for k, st := range s.State {
		if st == scan.Measured {
			s.ZM[k] += sdM * rng.NormFloat64()
		}
	}
	return s
}

// TestRestSymmetricDishNeverRocks is issue 8's check: a symmetric dish
// (centre raised, standing on its rim ring) at 1 µm noise never rocks and
// stands on a polygon, whichever three rim cells the LP ends on. Before
// the band support, 1 seed of these 50 came out as a "line" that rocks.
// 200 mm bases on 1 mm cells, sag drawn from 0.1–1 mm.
func TestRestSymmetricDishNeverRocks(t *testing.T) {
	const r = 100 * mmM
	seeds := 50
	if testing.Short() {
		seeds = 10
	}
	for seed := range seeds {
		sag := (0.1 + 0.9*rand.New(rand.NewPCG(uint64(seed), 1)).Float64()) * mmM
		s := noisyDisc(201, cellTM, r, 1e-6, uint64(seed), func(x, y float64) float64 { return sag * (1 - (x*x+y*y)/(r*r)) })
		p, err := Rest(s, nil, RestOptions{Seed: uint64(seed)})
		if err != nil {
			t.Fatal(err)
		}
		// The band ring hugs the rim: the support polygon spans the base.
		if p.Rocks || p.Support != SupportPolygon || p.SupportWidthM < 1.9*r {
			t.Errorf("seed %d, sag %.3f mm: %s support %.1f mm wide, tip force %.4g N, rock %.4f mm, rocks %v; want a polygon across the base that does not rock",
				seed, sag/mmM, p.Support, p.SupportWidthM/mmM, p.TipForceN, p.RockM/mmM, p.Rocks)
		}
	}
}

// TestRestTipForceClosedForm checks TipForceN on bases flat (to 1 µm noise)
// over a centred disc of radius a and lifted beyond it, linearly to 2 mm
// at the rim radius R. Closed form (our derivation, moment balance of the
// rigid pan about a tipping edge): the support is the disc r ≤ a; the
// pan tips about a tangent line of that circle, at distance a − e from
// the centre of mass (e its offset towards that tangent). The weight W
// acts at the centre of mass, a − e inside the line; a vertical force F at
// the rim point farthest beyond the line acts R − a outside it. The pan
// starts to tip when F·(R − a) > W·(a − e):
//
//	F = W·(a − e)/(R − a),  and for a centred load F = W·a/(R − a).
//
// A base lifted steeply enough to leave the band within a fraction of a
// cell of r = a keeps the digitised support within 1 % of the circle, so
// 5 % (issue 8) holds with room. With a = R/2, F = W: 24.5 N for the
// default 1 kg pan and 1.5 kg of water; with a = 0.7 R, F = 2.33 W ≈ 57 N.
func TestRestTipForceClosedForm(t *testing.T) {
	const r = 100 * mmM
	tests := []struct {
		name    string
		aM, eM  float64
		weightN float64
	}{
		{"flat inner half", 0.5 * r, 0, 0},
		{"flat inner 70 %", 0.7 * r, 0, 0},
		{"flat inner half, load 10 mm off centre", 0.5 * r, 10 * mmM, 0},
		{"flat inner half, empty 1 kg pan", 0.5 * r, 0, 9.80665},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s := noisyDisc(201, cellTM, r, 1e-6, 3, func(x, y float64) float64 {
				return 2 * mmM * max(0, math.Hypot(x, y)-tc.aM) / (r - tc.aM)
			})
			p, err := Rest(s, nil, RestOptions{Seed: 1, CentreOfMassM: [2]float64{tc.eM, 0}, WeightN: tc.weightN})
			if err != nil {
				t.Fatal(err)
			}
			w := p.WeightN
			if tc.weightN == 0 && w != DefaultWeightN {
				t.Errorf("weight %g N, want the default %g N", w, DefaultWeightN)
			}
			want := w * (tc.aM - tc.eM) / (r - tc.aM)
			if math.Abs(p.TipForceN-want) > 0.05*want {
				t.Errorf("tip force %.4g N, want %.4g N ± 5 %%", p.TipForceN, want)
			}
			wantRock := want < DefaultTipForceLimitN
			if p.Support != SupportPolygon || p.Rocks != wantRock {
				t.Errorf("%s support, rocks %v (tip force %.3g N, rock %.3f mm); want a polygon, rocks %v",
					p.Support, p.Rocks, p.TipForceN, p.RockM/mmM, wantRock)
			}
			// The rim is 2 mm up: pressed down, it drops that far.
			if math.Abs(p.RockM-2*mmM) > 0.01*mmM {
				t.Errorf("rock %.4f mm, want 2 mm", p.RockM/mmM)
			}
		})
	}
}

// TestRestCurvedBasesRock is issue 8's check that domed and bent
// (cylindrical) bases rock, and a saddle too, on 200 mm bases at 1 µm
// noise with the default 4.5 µm band and 24.5 N load. For z = s·u²/R²
// (u = r for the dome, u = x for the bend) the band u ≤ a = R·√(b/s) is
// the support, and by the closed form above F = W·a/(R − a): 3.4 N for a
// 0.3 mm dome, 2.6 N for a 0.5 mm bend. Without noise we check it with a
// taken anywhere from one cell less (the digitised band's edge) to 2 %
// more; with 1 µm noise the plane rests on the
// lowest noisy cells, a few µm down, so the band shrinks and F is lower
// still: the bases rock either way.
func TestRestCurvedBasesRock(t *testing.T) {
	const r = 100 * mmM
	closed := func(sag float64) float64 { return r * math.Sqrt(DefaultBandM/sag) } // band radius a
	tests := []struct {
		name string
		f    func(x, y float64) float64
		aM   float64 // band half-width a; 0: no closed form
	}{
		{"dome 0.3 mm", func(x, y float64) float64 { return 0.3 * mmM * (x*x + y*y) / (r * r) }, closed(0.3 * mmM)},
		{"dome 1 mm", func(x, y float64) float64 { return 1 * mmM * (x*x + y*y) / (r * r) }, closed(1 * mmM)},
		{"bend 0.5 mm about y", func(x, y float64) float64 { return 0.5 * mmM * x * x / (r * r) }, closed(0.5 * mmM)},
		{"bend 0.3 mm about 30°", func(x, y float64) float64 {
			u := -x*math.Sin(math.Pi/6) + y*math.Cos(math.Pi/6)
			return 0.3 * mmM * u * u / (r * r)
		}, closed(0.3 * mmM)},
		{"saddle 0.25 mm", func(x, y float64) float64 { return 0.25 * mmM * (x*x - y*y) / (r * r) }, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			for _, sd := range []float64{0, 1e-6} {
				s := noisyDisc(201, cellTM, r, sd, 5, tc.f)
				p, err := Rest(s, nil, RestOptions{Seed: 1})
				if err != nil {
					t.Fatal(err)
				}
				if !p.Rocks || !(p.TipForceN < DefaultTipForceLimitN) || p.RockM <= DefaultRockLimitM {
					t.Errorf("noise %g µm: %s support %.1f mm wide, tip force %.3g N, rock %.3f mm, rocks %v; want it to rock",
						sd*1e6, p.Support, p.SupportWidthM/mmM, p.TipForceN, p.RockM/mmM, p.Rocks)
				}
				if a := tc.aM; sd == 0 && a > 0 {
					lo, hi := DefaultWeightN*(a-cellTM)/(r-a+cellTM), DefaultWeightN*1.02*a/(r-1.02*a)
					if !(p.TipForceN >= lo && p.TipForceN <= hi) {
						t.Errorf("tip force %.4g N, closed form %.4g N (from %.4g to %.4g N)", p.TipForceN, DefaultWeightN*a/(r-a), lo, hi)
					}
				}
			}
		})
	}
}

// TestTipRatio checks the lever rule on hand-made polygons: a square
// support of half-side 10 mm in a 50 mm disc footprint (d/l = 10/40); a
// two-point line through the centre (0); a support reaching the rim on
// every side (+Inf).
func TestTipRatio(t *testing.T) {
	pt := func(xy ...float64) []hullPt {
		var p []hullPt
		for i := 0; i+1 < len(xy); i += 2 {
			p = append(p, hullPt{xy[i] * mmM, xy[i+1] * mmM, int32(i / 2)})
		}
		return p
	}
	foot := pt(50, 0, 0, 50, -50, 0, 0, -50) // a square footprint, its vertices 50 mm out
	tests := []struct {
		name string
		h    []hullPt
		want float64
	}{
		// Edges at 10 mm; the footprint vertex beyond each is 50 mm out
		// along the normal: lever 40 mm.
		{"square", pt(-10, -10, 10, -10, 10, 10, -10, 10), 10.0 / 40},
		{"line through the centre", pt(-30, 0, 30, 0), 0},
		{"point", pt(0, 0), 0},
		{"the footprint itself", foot, math.Inf(1)},
	}
	for _, tc := range tests {
		got := tipRatio(tc.h, foot, 0.5*mmM)
		if math.Abs(got-tc.want) > 1e-12 && got != tc.want {
			t.Errorf("%s: %g, want %g", tc.name, got, tc.want)
		}
	}
}

func TestConvexHull(t *testing.T) {
	pts := func(xy ...float64) []hullPt {
		var p []hullPt
		for i := 0; i < len(xy); i += 2 {
			p = append(p, hullPt{xy[i], xy[i+1], int32(i / 2)})
		}
		return p
	}
	tests := []struct {
		name string
		in   []hullPt
		want []hullPt
	}{
		{"one", pts(1, 2), pts(1, 2)},
		{"duplicates", pts(1, 2, 1, 2, 1, 2), pts(1, 2)},
		{"collinear", pts(0, 0, 2, 2, 1, 1, 3, 3), pts(0, 0, 3, 3)},
		{"square with inner and edge points", pts(0, 0, 2, 0, 2, 2, 0, 2, 1, 1, 1, 0, 2, 1), pts(0, 0, 2, 0, 2, 2, 0, 2)},
	}
	for _, tc := range tests {
		got := hull2D(tc.in)
		if len(got) != len(tc.want) {
			t.Errorf("%s: %v, want %v", tc.name, got, tc.want)
			continue
		}
		for i := range got {
			if got[i].x != tc.want[i].x || got[i].y != tc.want[i].y {
				t.Errorf("%s: %v, want %v", tc.name, got, tc.want)
				break
			}
		}
	}
}

func benchmarkRest(b *testing.B, n int) {
	// A 200 mm base on an n×n grid: dish, saddle, tilt and noise.
	s := randomBase(rand.New(rand.NewPCG(1, 2)), n, 200*mmM/float64(n-1))
	b.ResetTimer()
	cpu0 := benchCPUTime()
	for b.Loop() {
		if _, err := Rest(s, nil, RestOptions{Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(benchCPUTime()-cpu0)/float64(b.N), "cpu-ns/op")
	b.ReportMetric(float64(countMeasured(s)), "cells")
}

func BenchmarkRest250(b *testing.B)  { benchmarkRest(b, 250) }
func BenchmarkRest500(b *testing.B)  { benchmarkRest(b, 500) }
func BenchmarkRest1000(b *testing.B) { benchmarkRest(b, 1000) }

// benchCPUTime returns the process's user+system CPU time, ns: steadier than
// wall time on a shared machine.
func benchCPUTime() int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return ru.Utime.Nano() + ru.Stime.Nano()
}
