package scan

import (
	"gapflux/internal/fpfuse"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// parallelCloud is a random cloud over a disc of radius r (m) for the
// parallel-equals-sequential tests: n points of a dish with noise, a hole
// (empty cells), a dense clump, spikes, points repeated exactly (some
// in a run at the end, some scattered) and points on cell edges.
type parallelCloud struct {
	name    string
	n       int
	r       float64
	seed    uint64
	repeats int // exact copies of earlier points, scattered
	edges   int // points on the edges of 0.5 mm cells
}

func (pc parallelCloud) build() []r3.Vec {
	rng := rand.New(rand.NewPCG(pc.seed, 7))
	f := dish(0.2e-3, pc.r)
	pts := make([]r3.Vec, 0, pc.n+pc.repeats+pc.edges)
	for len(pts) < pc.n {
		rr := pc.r * math.Sqrt(rng.Float64())
		th := 2 * math.Pi * rng.Float64()
		x, y := rr*math.Cos(th), rr*math.Sin(th)
		if math.Hypot(x-0.3*pc.r, y) < 0.2*pc.r {
			continue // the hole
		}
		if rng.IntN(10) == 0 { // the clump
			x, y = -0.5*pc.r+1e-3*rng.Float64(), 0.1*pc.r+1e-3*rng.Float64()
		}
		z := f(x, y) + 5e-6*rng.NormFloat64()
		if rng.IntN(500) == 0 {
			z += 0.3e-3 // a spike
		}
		pts = append(pts, r3.Vec{X: x, Y: y, Z: z})
	}
	for range pc.edges {
		i, j := rng.IntN(101)-50, rng.IntN(101)-50
		x, y := (float64(i)+0.5)*0.5e-3, float64(j)*0.5e-3
		if x*x+y*y < pc.r*pc.r {
			pts = append(pts, r3.Vec{X: x, Y: y, Z: f(x, y)})
		}
	}
	for range pc.repeats {
		p := pts[rng.IntN(len(pts))]
		at := rng.IntN(len(pts) + 1)
		pts = slices.Insert(pts, at, p)
	}
	return pts
}

var parallelClouds = []parallelCloud{
	{name: "tiny", n: 40, r: 0.01, seed: 1, repeats: 5, edges: 3},
	{name: "small", n: 3000, r: 0.03, seed: 2, repeats: 300, edges: 200},
	{name: "sparse", n: 2000, r: 0.1, seed: 3, repeats: 50, edges: 50},
	{name: "dense", n: 120000, r: 0.05, seed: 4, repeats: 20000, edges: 5000},
	{name: "subsampled MAD", n: 450000, r: 0.06, seed: 5, repeats: 1000, edges: 100},
}

// withProcs runs f with GOMAXPROCS set to p.
func withProcs(p int, f func()) {
	old := runtime.GOMAXPROCS(p)
	defer runtime.GOMAXPROCS(old)
	f()
}

// sameFloats reports the first place where a and b differ in their bits,
// or −1.
func sameFloats(a, b []float64) int {
	if len(a) != len(b) {
		return 0
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return i
		}
	}
	return -1
}

// TestLocalOutliersParallel checks that the outlier test flags the same
// points with the same σ, to the bit, as the sequential one, on 1, 2 and
// 4 processors.
func TestLocalOutliersParallel(t *testing.T) {
	if fpfuse.Fuses() {
		t.Skip("this build fuses multiply-add (internal/fpfuse): the sequential reference copy rounds differently")
	}
	for _, pc := range parallelClouds {
		if testing.Short() && pc.n > 100000 {
			continue
		}
		pts := pc.build()
		bp := basePoints(pts, pc.r)
		sp := PointSpacing(bp.x, bp.y, math.Pi*pc.r*pc.r).MedianM
		var wantOut []bool
		var wantSigma float64
		withProcs(1, func() { wantOut, wantSigma = localOutliersSeq(bp.x, bp.y, bp.z, sp, DefaultOutlierK) })
		flagged := 0
		for _, o := range wantOut {
			if o {
				flagged++
			}
		}
		if pc.n >= 3000 && flagged == 0 {
			t.Errorf("%s: no outliers flagged; the spikes should be", pc.name)
		}
		for _, p := range []int{1, 2, 4} {
			withProcs(p, func() {
				out, sigma := LocalOutliers(bp.x, bp.y, bp.z, sp, DefaultOutlierK)
				if math.Float64bits(sigma) != math.Float64bits(wantSigma) {
					t.Errorf("%s, %d procs: σ %g, want %g", pc.name, p, sigma, wantSigma)
				}
				if i := slices.Index(out, true); !slices.Equal(out, wantOut) {
					t.Errorf("%s, %d procs: outliers differ (first flagged %d)", pc.name, p, i)
				}
			})
		}
	}
}

// TestSortByCellParts checks the binning against a sequential stable
// sort for every number of ranges, with samples left out and empty cells.
func TestSortByCellParts(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	for _, tc := range []struct{ n, nc int }{{0, 5}, {1, 1}, {17, 3}, {1000, 7}, {5000, 4000}, {100000, 300}} {
		cell := make([]int32, tc.n)
		for i := range cell {
			cell[i] = int32(rng.IntN(tc.nc+1)) - 1 // −1: left out
			if i%3 == 0 && tc.nc > 2 {
				cell[i] = int32(tc.nc / 2) // a crowded cell
			}
		}
		var want []int32
		wantStart := make([]int32, tc.nc+1)
		for q := range tc.nc {
			wantStart[q] = int32(len(want))
			for i, c := range cell {
				if int(c) == q {
					want = append(want, int32(i))
				}
			}
		}
		wantStart[tc.nc] = int32(len(want))
		for _, p := range []int{1, 2, 3, 4} {
			withProcs(p, func() {
				order, start := sortByCell(cell, tc.nc)
				if !slices.Equal(order, want) || !slices.Equal(start, wantStart) {
					t.Errorf("n=%d nc=%d, %d procs: binning differs from the sequential sort", tc.n, tc.nc, p)
				}
			})
		}
	}
}

// TestBinCloudParallel checks the cells' median heights against the
// sequential binning on 1, 2 and 4 processors, and the coverage measures
// (with the bins handed on, and binned afresh as for a mesh) against a
// search of every cell among all points, for reaches below and above
// half a cell's diagonal.
func TestBinCloudParallel(t *testing.T) {
	for _, pc := range parallelClouds {
		if testing.Short() && pc.n > 100000 {
			continue
		}
		pts := pc.build()
		bp := basePoints(pts, pc.r)
		sp := PointSpacing(bp.x, bp.y, math.Pi*pc.r*pc.r)
		for _, cell := range []float64{0.5e-3, 1e-3, 2e-3} {
			s0, base, _ := baseSurface(pc.r, cell)
			have0 := make([]bool, len(base))
			withProcs(1, func() { binCloudSeq(s0, base, have0, bp) })
			for q := range base {
				if !have0[q] {
					s0.State[q] = Filled
					if !base[q] {
						s0.State[q] = Outside
					}
				}
			}
			for _, reachSp := range []Spacing{sp, {MedianM: sp.MedianM, P90M: 0.2 * cell}, {MedianM: sp.MedianM, P90M: 3 * cell}} {
				var want Coverage
				withProcs(1, func() { want = measureCoverageSeq(s0, bp.x, bp.y, pc.r, reachSp) })
				for _, p := range []int{1, 2, 4} {
					withProcs(p, func() {
						s, _, _ := baseSurface(pc.r, cell)
						have := make([]bool, len(base))
						bins := binCloud(s, base, have, bp)
						if !slices.Equal(have, have0) || sameFloats(s.ZM, s0.ZM) >= 0 {
							t.Fatalf("%s, %g mm cells, %d procs: binned heights differ at cell %d", pc.name, cell*1e3, p, sameFloats(s.ZM, s0.ZM))
						}
						copy(s.State, s0.State)
						for _, b := range []cellBins{bins, {}} {
							got := measureCoverage(s, bp.x, bp.y, b.order, b.start, pc.r, reachSp)
							if !equalCoverage(got, want) {
								t.Errorf("%s, %g mm cells, reach %g mm, %d procs, bins %t: coverage %+v, want %+v",
									pc.name, cell*1e3, CoverageSpacings*reachSp.P90M*1e3, p, b.start != nil, got, want)
							}
						}
					})
				}
			}
		}
	}
}

func equalCoverage(a, b Coverage) bool {
	return math.Float64bits(a.CoveragePct) == math.Float64bits(b.CoveragePct) &&
		math.Float64bits(a.LargestHoleM) == math.Float64bits(b.LargestHoleM) &&
		math.Float64bits(a.RimCompletenessPct) == math.Float64bits(b.RimCompletenessPct) &&
		slices.Equal(a.RimSectorsMissing, b.RimSectorsMissing)
}

// TestGridProcs checks that Grid gives the same grid, to the bit, on 1,
// 2 and 4 processors, for point clouds and a mesh.
func TestGridProcs(t *testing.T) {
	var cases []*Levelled
	for _, pc := range parallelClouds {
		if testing.Short() && pc.n > 100000 {
			continue
		}
		cases = append(cases, levelled(&Cloud{Points: pc.build()}, pc.r))
	}
	mesh := (&synthBase{R: 0.03, Shape: dish(0.1e-3, 0.03), Mesh: true, StepM: 0.5e-3, NoiseM: 5e-6, Spikes: 20, SpikeM: 0.2e-3, Seed: 3}).build()
	cases = append(cases, levelled(mesh, 0.03))
	for n, l := range cases {
		var want *Gridded
		withProcs(1, func() {
			var err error
			if want, err = Grid(l, GridOptions{}); err != nil {
				t.Fatal(err)
			}
		})
		for _, p := range []int{2, 4} {
			withProcs(p, func() {
				got, err := Grid(l, GridOptions{})
				if err != nil {
					t.Fatal(err)
				}
				if i := sameFloats(got.Raw.ZM, want.Raw.ZM); i >= 0 || !slices.Equal(got.Raw.State, want.Raw.State) ||
					!slices.Equal(got.Outliers, want.Outliers) || got.OutliersRemoved != want.OutliersRemoved ||
					sameFloats([]float64{got.OutlierSigmaM, got.PointSpacingM, got.CoveragePct, got.LargestHoleM, got.RimCompletenessPct, got.MeasuredCellsPct},
						[]float64{want.OutlierSigmaM, want.PointSpacingM, want.CoveragePct, want.LargestHoleM, want.RimCompletenessPct, want.MeasuredCellsPct}) >= 0 {
					t.Errorf("case %d, %d procs: grid differs from 1 processor's (first height at %d)", n, p, i)
				}
			})
		}
	}
}

// TestBracketMedian checks the bracketing median against the selection
// over the whole slice, to the bit, on odd and even lengths, many ties, a
// skewed sample that puts the median outside the bracket, and the MAD of
// such values.
func TestBracketMedian(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	gens := []struct {
		name string
		v    func(i, n int) float64
	}{
		{"normal", func(int, int) float64 { return rng.NormFloat64() }},
		{"ties", func(int, int) float64 { return float64(rng.IntN(5)) }},
		{"zeros", func(int, int) float64 { return []float64{0, math.Copysign(0, -1), 1, -1}[rng.IntN(4)] }},
		{"sorted", func(i, _ int) float64 { return float64(i) }},
		// The stride sample sees only the small values: the median is
		// above its bracket.
		{"skewed", func(i, n int) float64 {
			if i%max(1, n/bracketSample) == 0 {
				return -1 - rng.Float64()
			}
			return rng.Float64()
		}},
	}
	// Half ones, half twos, the stride sample all twos: the bracket
	// starts at the median, whose lower neighbour lies below it.
	gens = append(gens, struct {
		name string
		v    func(i, n int) float64
	}{"edge", func(i, n int) float64 {
		step := max(1, n/bracketSample)
		ones := n / 2 // of the n − ⌈n/step⌉ places off the sample
		if i%step != 0 && i-i/step-1 < ones {
			return 1
		}
		return 2
	}})
	for _, g := range gens {
		for _, n := range []int{1, 2, 1000, bracketMin - 1, bracketMin, bracketMin + 1, 100000, 200001, 200000} {
			a := make([]float64, n)
			for i := range a {
				a[i] = g.v(i, n)
			}
			want := medianInPlace(slices.Clone(a))
			if got := bracketMedian(slices.Clone(a)); math.Float64bits(got) != math.Float64bits(want) {
				t.Errorf("%s, n=%d: median %g, want %g", g.name, n, got, want)
			}
			wantMAD := madOfValuesSeq(slices.Clone(a))
			if got := madOfValues(slices.Clone(a)); math.Float64bits(got) != math.Float64bits(wantMAD) {
				t.Errorf("%s, n=%d: MAD %g, want %g", g.name, n, got, wantMAD)
			}
		}
	}
}

// madOfValuesSeq is madOfValues with medianInPlace.
func madOfValuesSeq(a []float64) float64 {
	m := medianInPlace(a)
	for i := range a {
		a[i] = math.Abs(a[i] - m)
	}
	return medianInPlace(a)
}
