package scan

import (
	"crypto/sha256"
	"encoding/binary"
	"fmt"
	"math"
	"reflect"
	"runtime"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// levelParallelCases are scans for the check that Level's result does not
// depend on the number of processors: clouds and meshes, face up and
// down, tilted, with normals, spikes, strays, a hole, a triangle soup
// (repeated vertices) and a doubled cloud (repeated points).
func levelParallelCases() []struct {
	name string
	c    func() *Cloud
	opt  LevelOptions
} {
	const R = 0.06
	build := func(sb synthBase, sc scanner) func() *Cloud {
		return func() *Cloud { return sc.apply(sb.build()) }
	}
	up := newScanner(FaceUp, 7, 30, 15, r3.Vec{X: 0.02, Y: -0.01, Z: 0.3})
	down := newScanner(FaceDown, 12, 200, -40, r3.Vec{X: -0.05, Z: 0.25})
	cloud := synthBase{R: R, Shape: dish(0.2e-3, R), CornerM: 5e-3, WallM: 12e-3, NoiseM: 12e-6, N: 60000, Seed: 21}
	spiky := cloud
	spiky.Spikes, spiky.SpikeM, spiky.Junk, spiky.Normals, spiky.Seed = 300, 1.5e-3, 800, true, 22
	holed := cloud
	holed.Hole = func(x, y float64) bool { return math.Hypot(x-0.02, y) < 0.01 }
	holed.Seed = 23
	mesh := synthBase{R: R, Shape: saddle(0.1e-3, R), CornerM: 4e-3, WallM: 8e-3, NoiseM: 5e-6, Mesh: true, StepM: 0.8e-3, Normals: true, Spikes: 50, SpikeM: 1e-3, Seed: 24}
	soup := func() *Cloud {
		m := up.apply(mesh.build())
		s := &Cloud{Format: "stl", FacetNormals: m.FacetNormals}
		for _, tri := range m.Triangles {
			k := int32(len(s.Points))
			s.Points = append(s.Points, m.Points[tri[0]], m.Points[tri[1]], m.Points[tri[2]])
			s.Triangles = append(s.Triangles, [3]int32{k, k + 1, k + 2})
		}
		return s
	}
	doubled := func() *Cloud {
		c := down.apply(cloud.build())
		c.Points = append(c.Points, c.Points[:len(c.Points)/2]...)
		return c
	}
	return []struct {
		name string
		c    func() *Cloud
		opt  LevelOptions
	}{
		{"cloud up", build(cloud, up), LevelOptions{}},
		{"cloud up reused", build(cloud, up), LevelOptions{Reuse: true, DropNormals: true}},
		{"cloud down", build(cloud, down), LevelOptions{Face: FaceDown}},
		{"spiky normals down", build(spiky, down), LevelOptions{}},
		{"spiky normals down reused", build(spiky, down), LevelOptions{Reuse: true}},
		{"holed up diameter", build(holed, up), LevelOptions{DiameterM: 2 * R, MaxSlopeDeg: 2}},
		{"mesh up", build(mesh, up), LevelOptions{}},
		{"mesh down reused", build(mesh, down), LevelOptions{Reuse: true}},
		{"mesh hob top", build(mesh, down), LevelOptions{Face: FaceDown, HobTop: true, Reuse: true, DropNormals: true}},
		{"soup", soup, LevelOptions{}},
		{"soup reused", soup, LevelOptions{Reuse: true, DropNormals: true}},
		{"doubled cloud", doubled, LevelOptions{Reuse: true}},
		{"soup by winding", func() *Cloud { c := soup(); c.FacetNormals = nil; return c }, LevelOptions{}},
	}
}

// levelDigest returns a SHA-256 of everything Level returned, floats by
// their bits: equal digests mean bit-identical results.
func levelDigest(l *Levelled) string {
	h := sha256.New()
	vecs := func(v []r3.Vec) {
		fmt.Fprintf(h, "%d|", len(v))
		for _, p := range v {
			binary.Write(h, binary.LittleEndian, [3]float64{p.X, p.Y, p.Z})
		}
	}
	c := l.Cloud
	vecs(c.Points)
	vecs(c.Normals)
	vecs(c.FacetNormals)
	fmt.Fprintf(h, "%d|", len(c.Triangles))
	binary.Write(h, binary.LittleEndian, c.Triangles)
	m := *l
	m.Cloud = nil
	// %v prints floats in the shortest form that reads back exactly.
	fmt.Fprintf(h, "%v|%s|%s|%s", m, c.Format, c.Unit, c.UnitSource)
	return fmt.Sprintf("%x", h.Sum(nil))
}

// TestLevelSameOnAnyProcessorCount: Level's result, the levelled cloud
// and every figure of the report, is bit-identical on 1 to 4 processors.
func TestLevelSameOnAnyProcessorCount(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for _, tc := range levelParallelCases() {
		t.Run(tc.name, func(t *testing.T) {
			var want *Levelled
			for _, procs := range []int{1, 4, 2, 3} {
				runtime.GOMAXPROCS(procs)
				got, err := Level(tc.c(), tc.opt)
				if err != nil {
					t.Fatalf("%d processors: %v", procs, err)
				}
				if want == nil {
					want = got
					continue
				}
				if !reflect.DeepEqual(got, want) {
					t.Errorf("%d processors: result differs from 1 processor's (digest %s vs %s)", procs, levelDigest(got), levelDigest(want))
				}
			}
		})
	}
}

// TestProfileOwnSector checks that a sector's rim profile holds its own
// bins only, whatever sectors the scratch served before: a valid bin
// (rimMinCount points or more) its median height and mean radius, a
// sparse one height 0 and the bin's centre radius rlo + (k + ½)·dr. (A
// sparse bin once kept the radius of the last sector where it was valid,
// which the walks read; this test fails on that.)
func TestProfileOwnSector(t *testing.T) {
	const ns, nb = 7, 5
	// Points per (sector, bin): sparse (< rimMinCount) bins here and there.
	counts := [ns][nb]int32{
		{4, 0, 5, 1, 6},
		{0, 4, 2, 0, 4},
		{5, 1, 4, 3, 0},
		{1, 1, 1, 1, 1},
		{4, 4, 0, 4, 2},
		{0, 0, 0, 0, 0},
		{6, 2, 4, 4, 4},
	}
	rb := &rimBins{ns: ns, nb: nb, rlo: 0.05, dr: 0.001, start: make([]int32, ns*nb+1), mean: make([]float64, ns*nb)}
	for s := range ns {
		for bb := range nb {
			k := s*nb + bb
			rb.start[k+1] = rb.start[k] + counts[s][bb]
			rb.mean[k] = rb.rlo + (float64(bb)+0.5+0.01*float64(s+1))*rb.dr
			for j := range counts[s][bb] {
				rb.ws = append(rb.ws, 1e-6*float64(s+int(j)))
			}
		}
	}
	used := newProfile(nb)
	for _, order := range [][]int{{0, 1, 2, 3, 4, 5, 6}, {6, 5, 4, 3, 2, 1, 0}, {2, 6, 0, 5, 3, 1, 4}} {
		for _, s := range order {
			rb.profile(s, used)
			for bb := range nb {
				valid := counts[s][bb] >= rimMinCount
				wantPos := rb.rlo + (float64(bb)+0.5)*rb.dr
				wantH := 0.0
				if valid {
					lo := rb.start[s*nb+bb]
					wantPos = rb.mean[s*nb+bb]
					wantH = medianInPlace(append([]float64(nil), rb.ws[lo:lo+counts[s][bb]]...))
				}
				if used.valid[bb] != valid || used.pos[bb] != wantPos || used.prof[bb] != wantH {
					t.Errorf("order %v, sector %d, bin %d: valid %v, radius %g m, height %g m; want %v, %g m, %g m",
						order, s, bb, used.valid[bb], used.pos[bb], used.prof[bb], valid, wantPos, wantH)
				}
			}
		}
	}
}

// TestLevelFirstBadInput: with the input checked in parts at once, the
// error still names the first bad point or triangle in order.
func TestLevelFirstBadInput(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	base := synthBase{R: 0.05, Mesh: true, StepM: 2e-3, Seed: 3}
	for _, tc := range []struct {
		name  string
		spoil func(c *Cloud)
		want  string
	}{
		{"points", func(c *Cloud) {
			n := len(c.Points)
			c.Points[n-5].Y = math.Inf(1)
			c.Points[n/2+1].X = math.NaN()
			c.Points[n/3].Z = math.Inf(-1)
		}, "point %d has a non-finite coordinate (%g, %g, %g)"},
		{"triangles", func(c *Cloud) {
			n := len(c.Triangles)
			c.Triangles[n-2][0] = -1
			c.Triangles[n/2+3][2] = int32(len(c.Points))
			c.Triangles[n/4][1] = int32(len(c.Points) + 7)
		}, "triangle %d refers to vertex %d of %d"},
	} {
		for _, procs := range []int{1, 2, 4} {
			runtime.GOMAXPROCS(procs)
			c := base.build()
			tc.spoil(c)
			var want string
			if tc.name == "points" {
				i := len(c.Points) / 3
				p := c.Points[i]
				want = fmt.Sprintf(tc.want, i, p.X, p.Y, p.Z)
			} else {
				i := len(c.Triangles) / 4
				want = fmt.Sprintf(tc.want, i, len(c.Points)+7, len(c.Points))
			}
			_, err := Level(c, LevelOptions{})
			if err == nil || !strings.Contains(err.Error(), want) {
				t.Errorf("%s, %d processors: error %v, want one containing %q", tc.name, procs, err, want)
			}
		}
	}
}

// TestOrderedSum: the sum over values computed in parts is bit for bit
// the sequential loop's, for values whose sum depends on the order of
// addition, over several blocks, on 1 to 4 processors.
func TestOrderedSum(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	value := func(i int) (float64, bool) {
		// The conversion rounds the product, so that no build fuses it
		// into the sum (Go specification, "Floating-point operators").
		x := float64(math.Sin(float64(i)) * math.Pow(10, float64(i%31-15)))
		return x, i%7 != 3
	}
	for _, n := range []int{0, 1, 17, 1 << 15, 100003} {
		want, wantN := 0.0, 0
		for i := range n {
			if x, ok := value(i); ok {
				want += x
				wantN++
			}
		}
		for _, procs := range []int{1, 2, 3, 4} {
			runtime.GOMAXPROCS(procs)
			got, gotN := orderedSum(n, value)
			if math.Float64bits(got) != math.Float64bits(want) || gotN != wantN {
				t.Errorf("n %d, %d processors: sum %v of %d values, want %v of %d", n, procs, got, gotN, want, wantN)
			}
		}
	}
}

// TestLevelNonFiniteEachCoordinate: a NaN or infinite value in any one
// coordinate is reported; the largest finite values are not.
func TestLevelNonFiniteEachCoordinate(t *testing.T) {
	base := synthBase{R: 0.05, Mesh: true, StepM: 3e-3, Seed: 4}
	for _, x := range []float64{math.NaN(), math.Inf(1), math.Inf(-1), math.MaxFloat64, -math.MaxFloat64, math.SmallestNonzeroFloat64} {
		for k := range 3 {
			c := base.build()
			c.Triangles = nil
			p := &c.Points[len(c.Points)/2]
			*[3]*float64{&p.X, &p.Y, &p.Z}[k] = x
			_, err := Level(c, LevelOptions{})
			bad := err != nil && strings.Contains(err.Error(), "non-finite")
			if want := math.IsNaN(x) || math.IsInf(x, 0); bad != want {
				t.Errorf("coordinate %d = %g: error %v, want a non-finite error %v", k, x, err, want)
			}
		}
	}
}
