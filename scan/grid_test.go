package scan

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// cellCloud returns points in the base frame sampling f on the grid Grid
// builds for radius r and cell length h: one point at each cell centre
// (perCell = 0), or perCell points spread uniformly over each cell, with
// Gaussian noise of noiseM.
func cellCloud(r, h float64, f func(x, y float64) float64, perCell int, noiseM float64, rng *rand.Rand) []r3.Vec {
	k := int(math.Floor(r/h + 1e-9))
	var pts []r3.Vec
	for j := -k; j <= k; j++ {
		for i := -k; i <= k; i++ {
			x, y := float64(i)*h, float64(j)*h
			if x*x+y*y > r*r*(1+1e-12) {
				continue
			}
			if perCell == 0 {
				pts = append(pts, r3.Vec{X: x, Y: y, Z: f(x, y) + noiseM*rng.NormFloat64()})
				continue
			}
			for range perCell {
				px := x + h*(rng.Float64()-0.5)
				py := y + h*(rng.Float64()-0.5)
				pts = append(pts, r3.Vec{X: px, Y: py, Z: f(px, py) + noiseM*rng.NormFloat64()})
			}
		}
	}
	return pts
}

func levelled(c *Cloud, r float64) *Levelled { return &Levelled{Cloud: c, RadiusM: r} }

func plane(a, b, c float64) func(x, y float64) float64 {
	return func(x, y float64) float64 { return a*x + b*y + c }
}

func TestGridSpikesOnePointPerCell(t *testing.T) {
	const (
		r, h  = 0.04, 0.5e-3
		noise = 5e-6
	)
	rng := rand.New(rand.NewPCG(1, 2))
	f := dish(0.2e-3, r)
	pts := cellCloud(r, h, f, 0, noise, rng)
	// 25 spikes of ±0.3 mm, at least 4 cells apart.
	var spikes []int
	for len(spikes) < 25 {
		i := rng.IntN(len(pts))
		ok := math.Hypot(pts[i].X, pts[i].Y) < r-3*h
		for _, j := range spikes {
			ok = ok && math.Hypot(pts[i].X-pts[j].X, pts[i].Y-pts[j].Y) > 4*h
		}
		if ok {
			spikes = append(spikes, i)
		}
	}
	for n, i := range spikes {
		pts[i].Z += 0.3e-3 * float64(1-2*(n%2))
	}
	g, err := Grid(levelled(&Cloud{Points: pts}, r), GridOptions{CellM: h})
	if err != nil {
		t.Fatal(err)
	}
	if g.OutliersRemoved != len(spikes) {
		t.Errorf("removed %d outliers, want %d", g.OutliersRemoved, len(spikes))
	}
	s := g.Raw
	for _, i := range spikes {
		k := gridIndex(s, pts[i].X, pts[i].Y)
		if s.State[k] != Filled {
			t.Errorf("spike cell %d is %v", k, s.State[k])
		}
		// The filled height follows the surface within 4σ of the noise.
		if d := s.ZM[k] - f(pts[i].X, pts[i].Y); math.Abs(d) > 4*noise {
			t.Errorf("spike cell filled %.1f µm off the surface", d*1e6)
		}
	}
	wantCov := 100 * float64(len(pts)-len(spikes)) / float64(len(pts))
	if math.Abs(g.MeasuredCellsPct-wantCov) > 1e-9 {
		t.Errorf("measured cells %.4f %%, want %.4f %%", g.MeasuredCellsPct, wantCov)
	}
	// A lattice with isolated points removed: every place lies within 1.5
	// spacings of a kept point.
	if g.CoveragePct != 100 || math.Abs(g.PointSpacingM-h) > 1e-12 || g.RimCompletenessPct != 100 {
		t.Errorf("coverage %g %%, spacing %g m, rim %g %%", g.CoveragePct, g.PointSpacingM, g.RimCompletenessPct)
	}
}

func TestGridSpikesDenseCloud(t *testing.T) {
	const (
		r, h  = 0.03, 1e-3
		noise = 5e-6
	)
	rng := rand.New(rand.NewPCG(3, 4))
	f := plane(2e-3, -1e-3, 0.1e-3)
	pts := cellCloud(r, h, f, 8, noise, rng)
	const nSpikes = 40
	hit := map[int]bool{}
	for len(hit) < nSpikes {
		i := rng.IntN(len(pts))
		if !hit[i] {
			hit[i] = true
			pts[i].Z += 0.5e-3
		}
	}
	g, err := Grid(levelled(&Cloud{Points: pts}, r), GridOptions{CellM: h})
	if err != nil {
		t.Fatal(err)
	}
	// Eight points per cell: the local test drops the spike points
	// themselves; the cells keep their medians.
	if g.OutliersRemoved != nSpikes {
		t.Errorf("removed %d outliers, want %d", g.OutliersRemoved, nSpikes)
	}
	if g.MeasuredCellsPct != 100 {
		t.Errorf("measured cells %.3f %%, want 100 %%", g.MeasuredCellsPct)
	}
	// Eight random points per 1 mm cell: for a Poisson cloud the 90th
	// percentile of the nearest-neighbour distance is sqrt(ln 10/(πρ)),
	// so 1.5 of it leaves 10^−2.25 ≈ 0.6 % of the disc uncovered (our own
	// derivation); points stratified by cell leave less.
	if g.CoveragePct < 98.5 {
		t.Errorf("coverage %.3f %%, want ≥ 98.5 %%", g.CoveragePct)
	}
	s := g.Raw
	for k := range s.ZM {
		if !s.InBase(k) {
			continue
		}
		// Median of ≤ 8 points spread over the cell: the plane varies by
		// 1 µm across it, the noise adds about 2 µm RMS.
		if d := s.ZM[k] - f(s.X(k%s.Nx), s.Y(k/s.Nx)); math.Abs(d) > 12e-6 {
			t.Fatalf("cell %d off by %.1f µm", k, d*1e6)
		}
	}
}

func TestGridOutlierTestsOff(t *testing.T) {
	const r, h = 0.02, 1e-3
	rng := rand.New(rand.NewPCG(5, 6))
	pts := cellCloud(r, h, plane(0, 0, 0), 0, 2e-6, rng)
	pts[100].Z += 1e-3
	g, err := Grid(levelled(&Cloud{Points: pts}, r), GridOptions{CellM: h, OutlierK: math.Inf(1)})
	if err != nil {
		t.Fatal(err)
	}
	if g.OutliersRemoved != 0 || g.CoveragePct != 100 || g.MeasuredCellsPct != 100 {
		t.Errorf("tests off: removed %d, coverage %g", g.OutliersRemoved, g.CoveragePct)
	}
	if k := gridIndex(g.Raw, pts[100].X, pts[100].Y); g.Raw.ZM[k] != pts[100].Z {
		t.Errorf("spike not kept")
	}
}

func TestGridHoles(t *testing.T) {
	const r, h = 0.04, 0.5e-3
	rng := rand.New(rand.NewPCG(7, 8))
	f := plane(1e-3, -2e-3, 1e-4)
	all := cellCloud(r, h, f, 0, 0, rng)
	inHole := func(p r3.Vec) bool { return math.Hypot(p.X-0.010, p.Y+0.005) < 0.008 }
	inRimHole := func(p r3.Vec) bool { return math.Hypot(p.X+0.04, p.Y) < 0.006 }
	var pts []r3.Vec
	nHole, nRim := 0, 0
	for _, p := range all {
		switch {
		case inHole(p):
			nHole++
		case inRimHole(p):
			nRim++
		default:
			pts = append(pts, p)
		}
	}
	g, err := Grid(levelled(&Cloud{Points: pts}, r), GridOptions{CellM: h})
	if err != nil {
		t.Fatal(err)
	}
	s := g.Raw
	nBase, nFilled := 0, 0
	for k := range s.State {
		if s.InBase(k) {
			nBase++
		}
		if s.State[k] == Filled {
			nFilled++
		}
	}
	if nBase != len(all) {
		t.Fatalf("%d base cells, want %d", nBase, len(all))
	}
	if nFilled != nHole+nRim {
		t.Errorf("%d filled cells, want %d", nFilled, nHole+nRim)
	}
	want := 100 * float64(len(all)-nHole-nRim) / float64(len(all))
	if math.Abs(g.MeasuredCellsPct-want) > 1e-9 {
		t.Errorf("measured cells %.4f %%, want %.4f %%", g.MeasuredCellsPct, want)
	}
	// Coverage reaches 1.5 spacings into the holes: more than the
	// measured cells, less than all.
	if g.CoveragePct <= want || g.CoveragePct >= 100 {
		t.Errorf("coverage %.4f %%, want between %.4f %% and 100 %%", g.CoveragePct, want)
	}
	// The 16 mm inner hole is the largest empty circle: its diameter lies
	// between 16 mm and 16 mm + a cell's diagonal.
	if d := g.LargestHoleM; d < 15.9e-3 || d > 16.8e-3 {
		t.Errorf("largest hole %.2f mm, want 16 … 16.7 mm", d*1e3)
	}
	// The rim hole (radius 6 mm at the rim, ±8.6° about 180°) empties
	// the sectors 34 … 37 (170° … 190°) at least partly.
	if m := g.RimSectorsMissing; len(m) < 2 || len(m) > 4 || m[0] < 34 || m[len(m)-1] > 37 {
		t.Errorf("missing rim sectors %v, want 2 … 4 within 34 … 37", m)
	}
	if g.OutliersRemoved != 0 {
		t.Errorf("%d outliers on noise-free data", g.OutliersRemoved)
	}
	// A plane is discrete-harmonic: the inner hole is filled exactly.
	// The rim hole has zero-slope rim conditions: it stays within the
	// plane's range over the hole.
	for k := range s.State {
		if s.State[k] != Filled {
			continue
		}
		p := r3.Vec{X: s.X(k % s.Nx), Y: s.Y(k / s.Nx)}
		d := s.ZM[k] - f(p.X, p.Y)
		switch {
		case inHole(p) && math.Abs(d) > 1e-12:
			t.Fatalf("inner hole cell off the plane by %g m", d)
		case inRimHole(p) && math.Abs(d) > 2.3e-3*0.012:
			t.Fatalf("rim hole cell off the plane by %g m", d)
		}
	}
	if len(g.Warnings) != 0 {
		t.Errorf("warnings at %.1f %% coverage: %q", g.CoveragePct, g.Warnings)
	}
}

func TestGridMesh(t *testing.T) {
	const r = 0.04
	// The mesh reaches 1 mm past the grid's disc, so every base cell is
	// covered.
	sb := synthBase{R: r + 1e-3, Shape: dish(0.4e-3, r), Mesh: true, StepM: 2e-3, Seed: 1}
	c := sb.build()
	g, err := Grid(levelled(c, r), GridOptions{CellM: 0.5e-3})
	if err != nil {
		t.Fatal(err)
	}
	if g.MeasuredCellsPct != 100 || g.CoveragePct != 100 || g.OutliersRemoved != 0 {
		t.Errorf("measured cells %g %%, coverage %g %%, %d outliers", g.MeasuredCellsPct, g.CoveragePct, g.OutliersRemoved)
	}
	// Linear interpolation of z = c0 + c3 r² over triangles with edges up
	// to about 2·StepM errs by at most |c3|·(2·StepM)²/4 = 1 µm.
	s := g.Raw
	for k := range s.ZM {
		if s.State[k] != Measured {
			continue
		}
		x, y := s.X(k%s.Nx), s.Y(k/s.Nx)
		if d := s.ZM[k] - sb.height(x, y); math.Abs(d) > 1e-6 {
			t.Fatalf("cell (%g, %g) off by %.3f µm", x, y, d*1e6)
		}
	}
}

func TestGridMeshKeepsLowestFacet(t *testing.T) {
	const r = 0.02
	lower := (&synthBase{R: r, Mesh: true, StepM: 1e-3}).build()
	upper := (&synthBase{R: r, Mesh: true, StepM: 1.3e-3}).build()
	c := &Cloud{Points: lower.Points, Triangles: lower.Triangles}
	off := int32(len(c.Points))
	for _, p := range upper.Points {
		c.Points = append(c.Points, r3.Vec{X: p.X, Y: p.Y, Z: p.Z + 3e-3})
	}
	for _, tr := range upper.Triangles {
		c.Triangles = append(c.Triangles, [3]int32{tr[0] + off, tr[1] + off, tr[2] + off})
	}
	g, err := Grid(levelled(c, r), GridOptions{CellM: 0.5e-3})
	if err != nil {
		t.Fatal(err)
	}
	for k, z := range g.Raw.ZM {
		if g.Raw.InBase(k) && z != 0 {
			t.Fatalf("cell %d at %g m, want the lower face at 0", k, z)
		}
	}
}

func TestGridBadInput(t *testing.T) {
	pts := []r3.Vec{{X: 0, Y: 0}, {X: 1e-3, Y: 0}, {X: 0, Y: 1e-3}}
	ok := &Cloud{Points: pts}
	cases := []struct {
		name string
		l    *Levelled
		opt  GridOptions
		want string
	}{
		{"nil", nil, GridOptions{}, "no levelled scan"},
		{"cell", levelled(ok, 0.01), GridOptions{CellM: -1}, "cell length"},
		{"k", levelled(ok, 0.01), GridOptions{OutlierK: -2}, "outlier threshold"},
		{"radius", levelled(ok, 0), GridOptions{}, "base radius"},
		{"huge", levelled(ok, 10), GridOptions{CellM: 1e-4}, "too many"},
		{"nan", levelled(&Cloud{Points: []r3.Vec{{X: math.NaN()}}}, 0.01), GridOptions{}, "point 0 is not finite"},
		{"triangle", levelled(&Cloud{Points: pts, Triangles: [][3]int32{{0, 1, 7}}}, 0.01), GridOptions{}, "triangle 0 refers to vertex 7"},
		{"outside", levelled(&Cloud{Points: []r3.Vec{{X: 0.5}}}, 0.01), GridOptions{}, "no scan data"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Grid(tc.l, tc.opt)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

func TestMedianInPlace(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	for _, n := range []int{1, 2, 3, 16, 17, 18, 100, 1001} {
		a := make([]float64, n)
		for i := range a {
			a[i] = math.Round(rng.NormFloat64() * 4) // with ties
		}
		b := append([]float64(nil), a...)
		got := medianInPlace(a)
		// Reference: sort.
		for i := 1; i < n; i++ {
			for j := i; j > 0 && b[j] < b[j-1]; j-- {
				b[j], b[j-1] = b[j-1], b[j]
			}
		}
		want := b[n/2]
		if n%2 == 0 {
			want = 0.5 * (b[n/2-1] + b[n/2])
		}
		if got != want {
			t.Errorf("n=%d: median %g, want %g", n, got, want)
		}
	}
}

func benchmarkGridCloud(b *testing.B, n int) {
	const r = 0.1
	rng := rand.New(rand.NewPCG(1, 1))
	pts := make([]r3.Vec, n)
	f := dish(0.3e-3, r)
	for i := range pts {
		rr := r * math.Sqrt(rng.Float64())
		th := 2 * math.Pi * rng.Float64()
		x, y := rr*math.Cos(th), rr*math.Sin(th)
		pts[i] = r3.Vec{X: x, Y: y, Z: f(x, y) + 15e-6*rng.NormFloat64()}
	}
	l := levelled(&Cloud{Points: pts}, r)
	b.ResetTimer()
	for b.Loop() {
		if _, err := Grid(l, GridOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkGridCloud2M grids 2 million points over a 200 mm base at
// 0.5 mm cells (125 629 base cells).
func BenchmarkGridCloud2M(b *testing.B) { benchmarkGridCloud(b, 2000000) }

// BenchmarkGridMesh grids a mesh of about 1 million triangles (vertex
// step 0.25 mm) over a 200 mm base at 0.5 mm cells.
func BenchmarkGridMesh(b *testing.B) {
	const r = 0.1
	c := (&synthBase{R: r, Shape: dish(0.3e-3, r), Mesh: true, StepM: 0.25e-3, NoiseM: 15e-6, Seed: 1}).build()
	l := levelled(c, r)
	b.ResetTimer()
	for b.Loop() {
		if _, err := Grid(l, GridOptions{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(c.Triangles)), "triangles")
}
