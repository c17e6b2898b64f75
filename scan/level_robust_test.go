package scan

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// TestLevelStrayAndRepeated: valid scans that Level used to refuse or
// misread (issue 14, item 7): one stray point 3 m away (the first plane
// fit used every point, and the coarse grid spanned the stray point), and
// the same points written ten times over (the rim search saw ten times the
// density in as many distinct places). Each must give the radius of its
// clean scan within 0.3 mm, and the repeats are counted and reported.
//
// Before the fix: "no flat region found" or "no flat base found" for the
// stray points; for ten copies a radius of 2.3 mm instead of 22.2 mm
// (sparse) and 80.18 mm instead of 79.46 mm (with a wall).
func TestLevelStrayAndRepeated(t *testing.T) {
	sparse := synthBase{R: 0.02, Shape: dish(0.1e-3, 0.02), NoiseM: 5e-6, N: 700, Seed: 9}
	walled := synthBase{R: 0.08, Shape: dish(0.2e-3, 0.08), CornerM: 5e-3, WallM: 15e-3, NoiseM: 10e-6, N: 20000, Seed: 3}
	small := synthBase{R: 0.04, Shape: dish(0.2e-3, 0.04), CornerM: 5e-3, WallM: 15e-3, NoiseM: 10e-6, N: 5000, Seed: 3}
	sc := newScanner(FaceUp, 2, 10, 30, r3.Vec{X: 0.01, Y: -0.004, Z: 0.25})
	stray := func(d r3.Vec) func(*Cloud) {
		return func(c *Cloud) { c.Points = append(c.Points, r3.Add(c.Points[0], d)) }
	}
	copies := func(c *Cloud) {
		n := len(c.Points)
		for range 9 {
			c.Points = append(c.Points, c.Points[:n]...)
		}
	}
	inRow := func(c *Cloud) {
		p := make([]r3.Vec, 0, 10*len(c.Points))
		for _, q := range c.Points {
			for range 10 {
				p = append(p, q)
			}
		}
		c.Points = p
	}
	tests := []struct {
		name   string
		sb     synthBase
		change func(*Cloud)
		repeat bool
	}{
		{"small, one point 3 m away sideways", small, stray(r3.Vec{X: 3}), false},
		{"small, one point 3 m away diagonally", small, stray(r3.Vec{X: 2.1, Y: 2.1}), false},
		{"small, one point 3 m along the axis", small, stray(r3.Vec{Z: 3}), false},
		{"walled, one point 3 m away", walled, stray(r3.Vec{X: 2.1, Y: 2.1}), false},
		{"sparse, ten copies", sparse, copies, true},
		{"walled, ten copies", walled, copies, true},
		{"walled, each point ten times in a row", walled, inRow, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			ref, err := Level(sc.apply(tt.sb.build()), LevelOptions{})
			if err != nil {
				t.Fatalf("clean scan: %v", err)
			}
			c := sc.apply(tt.sb.build())
			n := len(c.Points)
			tt.change(c)
			l, err := Level(c, LevelOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if d := math.Abs(l.RadiusM - ref.RadiusM); d > 0.3e-3 {
				t.Errorf("radius %.3f mm, clean scan %.3f mm", l.RadiusM*1e3, ref.RadiusM*1e3)
			}
			want := 0
			if tt.repeat {
				want = 9 * n
			}
			if l.PointsMerged != want {
				t.Errorf("%d points merged, want %d", l.PointsMerged, want)
			}
			warn := strings.Join(l.Warnings, "; ")
			if tt.repeat && !strings.Contains(warn, "repeat another point") {
				t.Errorf("warnings %q say nothing of the repeats", warn)
			}
			if tt.repeat && len(l.Cloud.Points) != len(ref.Cloud.Points) {
				t.Errorf("%d points kept, clean scan %d", len(l.Cloud.Points), len(ref.Cloud.Points))
			}
		})
	}
}

// TestFindRepeatsMesh: merging repeated vertices re-points triangles to
// the first occurrence, and a cloud without repeats costs no table.
func TestFindRepeatsMesh(t *testing.T) {
	sb := synthBase{R: 0.05, Shape: dish(0.2e-3, 0.05), CornerM: 4e-3, WallM: 8e-3, Mesh: true, StepM: 1.5e-3, Normals: true, Seed: 13}
	sc := newScanner(FaceUp, 5, 20, 10, r3.Vec{Z: 0.4})
	ref, err := Level(sc.apply(sb.build()), LevelOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// A triangle soup: every triangle gets its own three vertices.
	c := sc.apply(sb.build())
	soup := &Cloud{FacetNormals: c.FacetNormals, Format: "stl-binary"}
	for _, tri := range c.Triangles {
		k := int32(len(soup.Points))
		soup.Points = append(soup.Points, c.Points[tri[0]], c.Points[tri[1]], c.Points[tri[2]])
		soup.Triangles = append(soup.Triangles, [3]int32{k, k + 1, k + 2})
	}
	l, err := Level(soup, LevelOptions{Reuse: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(l.Cloud.Points) != len(ref.Cloud.Points) || len(l.Cloud.Triangles) != len(ref.Cloud.Triangles) {
		t.Errorf("soup: %d points, %d triangles; indexed mesh: %d, %d", len(l.Cloud.Points), len(l.Cloud.Triangles),
			len(ref.Cloud.Points), len(ref.Cloud.Triangles))
	}
	if math.Abs(l.RadiusM-ref.RadiusM) > 1e-9 {
		t.Errorf("soup radius %.4f mm, indexed %.4f mm", l.RadiusM*1e3, ref.RadiusM*1e3)
	}
	for _, tri := range l.Cloud.Triangles {
		for _, v := range tri {
			if v < 0 || int(v) >= len(l.Cloud.Points) {
				t.Fatalf("triangle %v refers past %d points", tri, len(l.Cloud.Points))
			}
		}
	}
	big := make([]r3.Vec, 3*dupFull)
	for i := range big {
		big[i] = r3.Vec{X: float64(i), Y: -float64(i) / 7}
	}
	if rep, m := findRepeats(big); rep != nil || m != 0 {
		t.Errorf("distinct points: %d merged", m)
	}
	small := append([]r3.Vec(nil), big[:1000]...)
	small[999] = r3.Vec{X: 5, Y: -5.0 / 7}
	small[700] = r3.Vec{X: -0.0, Y: 0}
	rep, m := findRepeats(small)
	if m != 2 || rep[999] != 5 || rep[700] != 0 || rep[5] != 5 || rep[998] != 998 {
		t.Errorf("small cloud: %d merged, rep[999] = %d, rep[700] = %d; want 2, 5, 0", m, rep[999], rep[700])
	}
}
