package synth_test

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/scan"
	"gapflux/scan/synth"
)

// baseSpec is a 200 mm base at 0.5 mm spacing seen in the base frame
// (face "down", no rotation: scanner frame = base frame).
func baseSpec(shape synth.Shape, sagM float64) synth.Spec {
	return synth.Spec{Name: string(shape), Shape: shape, DiameterM: 0.2, SagM: sagM, Face: "down", Seed: 1}
}

// fitParaboloid returns c0..c3 of the least-squares z = c0 + c1·x + c2·y + c3·r².
func fitParaboloid(t *testing.T, pts []r3.Vec) [4]float64 {
	t.Helper()
	a := mat.NewDense(len(pts), 4, nil)
	b := mat.NewVecDense(len(pts), nil)
	for i, p := range pts {
		a.SetRow(i, []float64{1, p.X, p.Y, p.X*p.X + p.Y*p.Y})
		b.SetVec(i, p.Z)
	}
	var qr mat.QR
	qr.Factorize(a)
	var x mat.VecDense
	if err := qr.SolveVecTo(&x, false, b); err != nil {
		t.Fatal(err)
	}
	return [4]float64{x.AtVec(0), x.AtVec(1), x.AtVec(2), x.AtVec(3)}
}

// lsPeakToValley returns the peak-to-valley about the least-squares plane.
func lsPeakToValley(t *testing.T, pts []r3.Vec) float64 {
	t.Helper()
	a := mat.NewDense(len(pts), 3, nil)
	b := mat.NewVecDense(len(pts), nil)
	for i, p := range pts {
		a.SetRow(i, []float64{1, p.X, p.Y})
		b.SetVec(i, p.Z)
	}
	var qr mat.QR
	qr.Factorize(a)
	var x mat.VecDense
	if err := qr.SolveVecTo(&x, false, b); err != nil {
		t.Fatal(err)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, p := range pts {
		r := p.Z - (x.AtVec(0) + x.AtVec(1)*p.X + x.AtVec(2)*p.Y)
		lo, hi = min(lo, r), max(hi, r)
	}
	return hi - lo
}

func TestGenerateTruth(t *testing.T) {
	const sag = 0.5e-3 // 0.25 % of a 200 mm diameter, a typical deliberate concavity (TRADE-FACTS 3)
	tests := []struct {
		shape                    synth.Shape
		wantConcMM, wantFlatMM   float64
		wantCentreMM, wantRimXMM float64 // exact z at (0,0) and (R,0)
		wantRimYMM               float64 // exact z at (0,R)
	}{
		// Expected values derived by hand from the forms in synth.Shape's doc.
		{synth.Flat, 0, 0, 0, 0, 0},
		{synth.Dish, 0.5, 0.5, 0.5, 0, 0},
		{synth.Dome, -0.5, 0.5, -0.5, 0, 0},
		{synth.Saddle, 0, 1.0, 0, 0.5, -0.5},
		{synth.Tilt, 0, 0, 0, 0.25, 0},
		{synth.Bend, -0.25, 0.5, 0, 0.5, 0}, // x² = r²/2 + (x²−y²)/2 over the disc
	}
	for _, tc := range tests {
		t.Run(string(tc.shape), func(t *testing.T) {
			sc, err := synth.Generate(baseSpec(tc.shape, sag))
			if err != nil {
				t.Fatal(err)
			}
			tr := sc.Truth
			if tr.Shape != tc.shape || tr.Kind != "pan-base" || tr.Face != "down" || tr.Schema != synth.TruthSchema {
				t.Errorf("truth header = %+v", tr)
			}
			if math.Abs(tr.ConcavityMM-tc.wantConcMM) > 1e-12 || math.Abs(tr.FlatnessMM-tc.wantFlatMM) > 1e-12 {
				t.Errorf("truth concavity %g mm, flatness %g mm; want %g, %g", tr.ConcavityMM, tr.FlatnessMM, tc.wantConcMM, tc.wantFlatMM)
			}
			if tr.DiameterMM != 200 || tr.SagMM != 0.5 || tr.SpacingMM != 0.5 || tr.Points != len(sc.Cloud.Points) {
				t.Errorf("truth sizes = %+v", tr)
			}
			// 200 mm disc at 0.5 mm: π·200²/0.25 ≈ 125 664 grid points.
			if n := len(sc.Cloud.Points); math.Abs(float64(n)-125664) > 800 {
				t.Errorf("%d points, want about 125 664", n)
			}
			// Exact heights at grid points on the axes.
			got := map[[2]float64]float64{}
			for _, p := range sc.Cloud.Points {
				if (p.X == 0 || p.Y == 0) && (math.Abs(p.X)+math.Abs(p.Y) == 0 || math.Abs(math.Abs(p.X)+math.Abs(p.Y)-0.1) < 1e-12) {
					got[[2]float64{math.Round(p.X * 1e3), math.Round(p.Y * 1e3)}] = p.Z * 1e3
				}
			}
			for _, c := range []struct {
				xy [2]float64
				z  float64
			}{{[2]float64{0, 0}, tc.wantCentreMM}, {[2]float64{100, 0}, tc.wantRimXMM}, {[2]float64{0, 100}, tc.wantRimYMM}} {
				if z, ok := got[c.xy]; !ok || math.Abs(z-c.z) > 1e-12 {
					t.Errorf("z(%v mm) = %v (present %v), want %v mm", c.xy, z, ok, c.z)
				}
			}
			// The truth's concavity against a discrete LS paraboloid over
			// the sampled disc. The grid disc is symmetric under quarter
			// turns and mirrors, so x, y and x² − y² stay orthogonal to
			// 1 and r², and the discrete fit equals the continuous one.
			c := fitParaboloid(t, sc.Cloud.Points)
			conc := -c[3] * 0.1 * 0.1 * 1e3
			if math.Abs(conc-tr.ConcavityMM) > 1e-9 {
				t.Errorf("fitted concavity %.6f mm, truth %.6f mm", conc, tr.ConcavityMM)
			}
			// Flatness: the axis points hit the extremes exactly.
			if pv := lsPeakToValley(t, sc.Cloud.Points) * 1e3; math.Abs(pv-tr.FlatnessMM) > 1e-9 {
				t.Errorf("LS peak-to-valley %.9f mm, truth %.9f mm", pv, tr.FlatnessMM)
			}
		})
	}
}

// TestNoiseRMS checks that the noise is white Gaussian along the normal with
// the stated σ: about 50 000 samples put the RMS within 0.3 % (1/√(2N)).
func TestNoiseRMS(t *testing.T) {
	for _, sigma := range []float64{8e-6, 60e-6} {
		for _, mesh := range []bool{false, true} {
			spec := baseSpec(synth.Dish, 1e-3)
			spec.DiameterM = 0.12
			spec.Normals = true
			spec.Mesh = mesh
			spec.CornerRadiusM, spec.WallHeightM = 5e-3, 20e-3
			spec.RotationDeg = [3]float64{10, -20, 30}
			clean, err := synth.Generate(spec)
			if err != nil {
				t.Fatal(err)
			}
			spec.NoiseM = sigma
			noisy, err := synth.Generate(spec)
			if err != nil {
				t.Fatal(err)
			}
			if len(noisy.Cloud.Points) != len(clean.Cloud.Points) {
				t.Fatalf("point counts differ: %d vs %d", len(noisy.Cloud.Points), len(clean.Cloud.Points))
			}
			var sum, sum2, across float64
			for i, p := range noisy.Cloud.Points {
				d := r3.Sub(p, clean.Cloud.Points[i])
				n := clean.Cloud.Normals[i]
				along := r3.Dot(d, n)
				sum += along
				sum2 += along * along
				across = max(across, r3.Norm(r3.Sub(d, r3.Scale(along, n))))
			}
			nf := float64(len(noisy.Cloud.Points))
			rms := math.Sqrt(sum2 / nf)
			if math.Abs(rms/sigma-1) > 0.02 {
				t.Errorf("σ %g mesh %v: RMS %g, want within 2 %%", sigma, mesh, rms)
			}
			if mean := sum / nf; math.Abs(mean) > 4*sigma/math.Sqrt(nf) {
				t.Errorf("σ %g mesh %v: mean %g, want within 4 standard errors of 0", sigma, mesh, mean)
			}
			if across > 1e-12 {
				t.Errorf("σ %g: displacement across the normal %g m, want 0", sigma, across)
			}
			if noisy.Truth.NoiseUM != sigma*1e6 {
				t.Errorf("truth noise %g µm", noisy.Truth.NoiseUM)
			}
		}
	}
}

func TestSpikesAndHoles(t *testing.T) {
	spec := baseSpec(synth.Dome, 0.3e-3)
	spec.SpikeFraction = 0.01
	clean, err := synth.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	spec.SpikeFraction = 0
	ref, err := synth.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	n := len(ref.Cloud.Points)
	if want := int(math.Round(0.01 * float64(n))); clean.Truth.Spikes != want {
		t.Errorf("truth spikes %d, want %d", clean.Truth.Spikes, want)
	}
	var spikes int
	for i, p := range clean.Cloud.Points {
		d := r3.Norm(r3.Sub(p, ref.Cloud.Points[i]))
		switch {
		case d == 0:
		case d >= 0.2e-3-1e-12 && d <= 2e-3+1e-12:
			spikes++
		default:
			t.Fatalf("point %d moved %g m, want 0 or 0.2 … 2 mm", i, d)
		}
	}
	if spikes != clean.Truth.Spikes {
		t.Errorf("%d spike points, truth says %d", spikes, clean.Truth.Spikes)
	}

	for _, mesh := range []bool{false, true} {
		spec := baseSpec(synth.Flat, 0)
		spec.Mesh = mesh
		spec.Holes = 4
		spec.WallHeightM = 10e-3
		full := spec
		full.Holes = 0
		a, err := synth.Generate(full)
		if err != nil {
			t.Fatal(err)
		}
		b, err := synth.Generate(spec)
		if err != nil {
			t.Fatal(err)
		}
		// Each hole is 2 … 4 mm in radius: 50 … 201 points at 0.5 mm
		// spacing, fewer where holes overlap.
		lost := len(a.Cloud.Points) - len(b.Cloud.Points)
		if lost < 40 || lost > 4*210 || b.Truth.Holes != 4 {
			t.Errorf("mesh %v: holes removed %d points (truth holes %d), want 40 … 840", mesh, lost, b.Truth.Holes)
		}
		// The wall (z > 0) is untouched.
		if wallA, wallB := countAbove(a.Cloud.Points, 1e-4), countAbove(b.Cloud.Points, 1e-4); wallA != wallB {
			t.Errorf("mesh %v: wall points %d → %d", mesh, wallA, wallB)
		}
		if mesh {
			checkTriangles(t, b.Cloud)
			if len(b.Cloud.Triangles) >= len(a.Cloud.Triangles) {
				t.Errorf("holes kept all %d triangles", len(a.Cloud.Triangles))
			}
		}
	}
}

func countAbove(pts []r3.Vec, z float64) int {
	n := 0
	for _, p := range pts {
		if p.Z > z {
			n++
		}
	}
	return n
}

func checkTriangles(t *testing.T, c *scan.Cloud) {
	t.Helper()
	if len(c.FacetNormals) != len(c.Triangles) {
		t.Fatalf("%d facet normals for %d triangles", len(c.FacetNormals), len(c.Triangles))
	}
	for i, tri := range c.Triangles {
		for _, k := range tri {
			if k < 0 || int(k) >= len(c.Points) {
				t.Fatalf("triangle %d: index %d out of range %d", i, k, len(c.Points))
			}
		}
	}
}

// TestMeshTopology checks that the mesh is an oriented manifold: no
// directed edge repeats, the only open edges are the rim of the top ring,
// facet normals agree with the analytic outward normals, and the areas
// match the exact surface.
func TestMeshTopology(t *testing.T) {
	tests := []struct {
		name          string
		shape         synth.Shape
		cornerM, wall float64
		wantAreaM2    float64
		minDot        float64 // facet normal · mean vertex normal; a sharp base-wall edge gives 1/√5
	}{
		// Base π R²; corner (torus quarter, outer) π rc (π R + 2 rc);
		// wall 2π (R + rc) (H − rc). Exact for the flat base.
		{"flat-base", synth.Flat, 0, 0, math.Pi * 0.01, 0.99},
		{"flat-wall", synth.Flat, 0, 0.02, math.Pi*0.01 + 2*math.Pi*0.1*0.02, 0.44},
		{"flat-corner-wall", synth.Flat, 0.01, 0.03,
			math.Pi*0.01 + math.Pi*0.01*(math.Pi*0.1+0.02) + 2*math.Pi*0.11*0.02, 0.9},
		{"saddle-corner", synth.Saddle, 0.005, 0, math.NaN(), 0.9},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			spec := baseSpec(tc.shape, 1e-3)
			spec.Mesh, spec.Normals = true, true
			spec.SpacingM = 1e-3
			spec.CornerRadiusM, spec.WallHeightM = tc.cornerM, tc.wall
			sc, err := synth.Generate(spec)
			if err != nil {
				t.Fatal(err)
			}
			c := sc.Cloud
			checkTriangles(t, c)
			edges := map[[2]int32]int{}
			var area float64
			for i, tri := range c.Triangles {
				for k := range 3 {
					e := [2]int32{tri[k], tri[(k+1)%3]}
					edges[e]++
					if edges[e] > 1 {
						t.Fatalf("directed edge %v used twice: inconsistent winding", e)
					}
				}
				a, b, d := c.Points[tri[0]], c.Points[tri[1]], c.Points[tri[2]]
				cr := r3.Cross(r3.Sub(b, a), r3.Sub(d, a))
				area += r3.Norm(cr) / 2
				avg := r3.Unit(r3.Add(r3.Add(c.Normals[tri[0]], c.Normals[tri[1]]), c.Normals[tri[2]]))
				if r3.Dot(avg, c.FacetNormals[i]) < tc.minDot {
					t.Fatalf("triangle %d: facet normal %v against vertex normals %v", i, c.FacetNormals[i], avg)
				}
			}
			open := 0
			for e := range edges {
				if edges[[2]int32{e[1], e[0]}] == 0 {
					open++
				}
			}
			// Open edges: the last ring's, about 2π(R + rc)/h.
			wantOpen := int(math.Round(2 * math.Pi * (0.1 + tc.cornerM) / 1e-3))
			if open != wantOpen {
				t.Errorf("%d open edges, want %d", open, wantOpen)
			}
			// Polygonal rings at 1 mm cut the area by about
			// (2π/n)²/6 ≈ 2e-5 relative; 1e-4 covers the wall facets.
			if !math.IsNaN(tc.wantAreaM2) && math.Abs(area/tc.wantAreaM2-1) > 1e-4 {
				t.Errorf("area %.8g m², want %.8g", area, tc.wantAreaM2)
			}
			// Base facets face the hob (−z in the base frame).
			for i, n := range c.FacetNormals {
				tri := c.Triangles[i]
				if math.Hypot(c.Points[tri[0]].X, c.Points[tri[0]].Y) < 0.099 && n.Z > -0.99 {
					t.Fatalf("base facet %d normal %v, want about −z", i, n)
				}
			}
		})
	}
}

// rotate applies the Face flip, rotation and offset with gonum's
// quaternion rotations, independently of the package's matrices.
func rotate(p r3.Vec, face string, deg [3]float64, off r3.Vec) r3.Vec {
	if face == "up" {
		p = r3.NewRotation(math.Pi, r3.Vec{X: 1}).Rotate(p)
	}
	p = r3.NewRotation(deg[0]*math.Pi/180, r3.Vec{X: 1}).Rotate(p)
	p = r3.NewRotation(deg[1]*math.Pi/180, r3.Vec{Y: 1}).Rotate(p)
	p = r3.NewRotation(deg[2]*math.Pi/180, r3.Vec{Z: 1}).Rotate(p)
	return r3.Add(p, off)
}

func TestScannerFrame(t *testing.T) {
	spec := baseSpec(synth.Saddle, 0.4e-3)
	spec.DiameterM, spec.SpacingM = 0.1, 1e-3
	spec.Normals = true
	spec.CornerRadiusM, spec.WallHeightM = 3e-3, 12e-3
	base, err := synth.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		face string
		deg  [3]float64
		off  [3]float64
	}{
		{"up", [3]float64{}, [3]float64{}},
		{"down", [3]float64{5, 0, 0}, [3]float64{0.01, 0, 0}},
		{"up", [3]float64{12, -40, 170}, [3]float64{-0.3, 0.2, 1.5}},
		{"", [3]float64{0, 90, 0}, [3]float64{}},
	}
	for _, tc := range tests {
		s := spec
		s.Face, s.RotationDeg, s.OffsetM = tc.face, tc.deg, tc.off
		sc, err := synth.Generate(s)
		if err != nil {
			t.Fatal(err)
		}
		face := tc.face
		if face == "" {
			face = "up"
		}
		if sc.Truth.Face != face || sc.Truth.RotationDeg != tc.deg ||
			sc.Truth.OffsetMM != [3]float64{tc.off[0] * 1e3, tc.off[1] * 1e3, tc.off[2] * 1e3} {
			t.Errorf("%v: truth %+v", tc, sc.Truth)
		}
		off := r3.Vec{X: tc.off[0], Y: tc.off[1], Z: tc.off[2]}
		var worst, worstN float64
		for i, p := range base.Cloud.Points {
			want := rotate(p, face, tc.deg, off)
			worst = max(worst, r3.Norm(r3.Sub(want, sc.Cloud.Points[i])))
			wantN := rotate(base.Cloud.Normals[i], face, tc.deg, r3.Vec{})
			worstN = max(worstN, r3.Norm(r3.Sub(wantN, sc.Cloud.Normals[i])))
		}
		if worst > 1e-14 || worstN > 1e-14 {
			t.Errorf("%v: points off by %g m, normals by %g", tc, worst, worstN)
		}
	}
	// Face up with no rotation: the outer face looks at the scanner (+z).
	s := spec
	s.Face = "up"
	sc, _ := synth.Generate(s)
	if n := sc.Cloud.Normals[len(sc.Cloud.Normals)/2]; n.Z < 0.99 {
		t.Errorf("face up: base normal %v, want +z", n)
	}
}

func TestGenerateHob(t *testing.T) {
	tests := []struct {
		shape     synth.Shape
		sag       float64
		wantCrown float64 // mm
	}{
		{synth.Flat, 0, 0},
		{synth.Dome, 0.1e-3, 0.1},
		{synth.Dish, 0.1e-3, -0.1},
	}
	for _, tc := range tests {
		for _, mesh := range []bool{false, true} {
			h := synth.HobSpec{Shape: tc.shape, SagM: tc.sag, SideM: 0.3, SpacingM: 2e-3, Mesh: mesh, Normals: true}
			sc, err := synth.GenerateHob(h)
			if err != nil {
				t.Fatal(err)
			}
			c := sc.Cloud
			if len(c.Points) != 151*151 || sc.Truth.Kind != "hob-top" || sc.Truth.SideMM != 300 {
				t.Fatalf("%s: %d points, truth %+v", tc.shape, len(c.Points), sc.Truth)
			}
			if sc.Truth.CrownMM != tc.wantCrown || math.Abs(sc.Truth.FlatnessMM-2*math.Abs(tc.wantCrown)) > 1e-15 {
				t.Errorf("%s: crown %g mm, flatness %g mm", tc.shape, sc.Truth.CrownMM, sc.Truth.FlatnessMM)
			}
			centre := c.Points[75*151+75]
			corner := c.Points[0]
			if centre.X != 0 || math.Abs(centre.Z*1e3-tc.wantCrown) > 1e-12 || math.Abs(corner.Z*1e3+tc.wantCrown) > 1e-12 {
				t.Errorf("%s: centre %v, corner %v", tc.shape, centre, corner)
			}
			if mesh {
				checkTriangles(t, c)
				if len(c.Triangles) != 2*150*150 {
					t.Errorf("%d triangles", len(c.Triangles))
				}
				for i, n := range c.FacetNormals {
					if n.Z < 0.99 {
						t.Fatalf("facet %d normal %v, want up", i, n)
					}
				}
			}
		}
	}
}

func TestBadSpec(t *testing.T) {
	ok := synth.Spec{Shape: synth.Dish, DiameterM: 0.2, SagM: 0.5e-3}
	tests := []struct {
		name string
		edit func(*synth.Spec)
	}{
		{"zero diameter", func(s *synth.Spec) { s.DiameterM = 0 }},
		{"negative diameter", func(s *synth.Spec) { s.DiameterM = -0.2 }},
		{"unknown shape", func(s *synth.Spec) { s.Shape = "wobble" }},
		{"bad face", func(s *synth.Spec) { s.Face = "left" }},
		{"nan sag", func(s *synth.Spec) { s.SagM = math.NaN() }},
		{"inf offset", func(s *synth.Spec) { s.OffsetM[2] = math.Inf(1) }},
		{"negative noise", func(s *synth.Spec) { s.NoiseM = -1e-6 }},
		{"spike fraction > 0.5", func(s *synth.Spec) { s.SpikeFraction = 0.9 }},
		{"negative holes", func(s *synth.Spec) { s.Holes = -1 }},
		{"negative corner", func(s *synth.Spec) { s.CornerRadiusM = -1e-3 }},
		{"negative spacing", func(s *synth.Spec) { s.SpacingM = -1e-3 }},
		{"spacing too coarse", func(s *synth.Spec) { s.SpacingM = 0.1 }},
		{"too many points", func(s *synth.Spec) { s.SpacingM = 1e-6 }},
		{"huge sag", func(s *synth.Spec) { s.SagM = 0.1 }},
	}
	for _, tc := range tests {
		s := ok
		tc.edit(&s)
		if _, err := synth.Generate(s); !errors.Is(err, synth.ErrSpec) {
			t.Errorf("%s: err = %v, want ErrSpec", tc.name, err)
		}
	}
	if _, err := synth.Generate(ok); err != nil {
		t.Errorf("valid spec: %v", err)
	}
	hobs := []synth.HobSpec{
		{Shape: synth.Saddle},
		{SideM: -1},
		{SagM: math.NaN()},
		{NoiseM: -1},
		{SpacingM: 1e-6},
		{SpikeFraction: 1},
	}
	for _, h := range hobs {
		if _, err := synth.GenerateHob(h); !errors.Is(err, synth.ErrSpec) {
			t.Errorf("hob %+v: err = %v, want ErrSpec", h, err)
		}
	}
}

func BenchmarkGenerate(b *testing.B) {
	for _, mesh := range []bool{false, true} {
		name := "cloud"
		if mesh {
			name = "mesh"
		}
		b.Run(name, func(b *testing.B) {
			spec := synth.Spec{Shape: synth.Dish, DiameterM: 0.2, SagM: 0.5e-3, NoiseM: 8e-6,
				SpikeFraction: 1e-3, Holes: 3, CornerRadiusM: 5e-3, WallHeightM: 10e-3,
				Mesh: mesh, Normals: true, RotationDeg: [3]float64{3, 4, 5}, Seed: 7}
			for b.Loop() {
				if _, err := synth.Generate(spec); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
