package pipeline

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gapflux/scan"
)

// discSurface returns a grid of cells of cellM over a base of radius
// radiusM; base cells are Measured where measured(x, y) says so, else
// Filled.
func discSurface(radiusM, cellM float64, measured func(x, y float64) bool) *scan.Surface {
	half := int(math.Floor(radiusM / cellM))
	n := 2*half + 1
	s := scan.NewSurface(n, n, cellM, -float64(half)*cellM, -float64(half)*cellM)
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			k, x, y := s.Index(i, j), s.X(i), s.Y(j)
			switch {
			case math.Hypot(x, y) > radiusM:
				s.State[k] = scan.Outside
			case measured(x, y):
				s.State[k] = scan.Measured
			default:
				s.State[k] = scan.Filled
			}
		}
	}
	return s
}

// TestMeasureCover checks the stand-in coverage figures on bases with known
// holes and missing rim arcs (exact figures from the geometry; tolerances
// of a cell or a sector).
func TestMeasureCover(t *testing.T) {
	const r, cell = 0.1, 0.5e-3
	pointsAt := func(spacingM float64) int { return int(math.Round(math.Pi * r * r / (spacingM * spacingM))) }
	deg := func(x, y float64) float64 { return math.Mod(math.Atan2(y, x)*180/math.Pi+360, 360) }
	tests := []struct {
		name                    string
		measured                func(x, y float64) bool
		points                  int
		coverage, hole, gap, rm float64 // %, mm, degrees, %
		tolCov, tolHole         float64
	}{
		{"whole base", func(x, y float64) bool { return true }, pointsAt(cell), 100, 0, 0, 0, 1e-9, 1e-9},
		// A 40 mm hole in the middle: covered except the inner 20 − 0.75 mm.
		{"40 mm hole", func(x, y float64) bool { return math.Hypot(x, y) >= 0.02 }, pointsAt(cell),
			100 * (1 - math.Pow(0.02-0.75e-3, 2)/(r*r)), 40, 0, 0, 0.3, 1},
		// Points every second cell (spacing 1 mm): cell coverage is 25 %,
		// every cell is within 1.5 mm of a point; the largest empty circle
		// is a cell diagonal wide.
		{"sparse points, no hole", func(x, y float64) bool {
			i, j := int(math.Round(x/cell)), int(math.Round(y/cell))
			return i%2 == 0 && j%2 == 0
		}, pointsAt(2 * cell), 100, 2 * math.Sqrt2 * 0.5, 0, 0, 1e-9, 1e-6},
		// A quarter of the rim missing beyond 60 mm from the centre.
		{"90° rim sector missing", func(x, y float64) bool { return math.Hypot(x, y) < 0.06 || deg(x, y) >= 90 }, pointsAt(cell),
			100 - 25*(1-math.Pow(0.06+0.75e-3, 2)/(r*r)), 80, 90, 25, 0.3, 1.5},
		// Half the base missing: the far edge is a radius from the rest.
		{"half base missing", func(x, y float64) bool { return x >= 0 }, pointsAt(cell) / 2,
			50, 200, 180, 50, 1.5, 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := measureCover(discSurface(r, cell, tc.measured), r, tc.points)
			if math.Abs(c.CoveragePct-tc.coverage) > tc.tolCov {
				t.Errorf("coverage %.3f %%, want %.3f ± %.3f", c.CoveragePct, tc.coverage, tc.tolCov)
			}
			if tc.tolHole >= 0 && math.Abs(c.LargestHoleM*1e3-tc.hole) > tc.tolHole {
				t.Errorf("largest hole %.3f mm, want %.3f ± %.3f", c.LargestHoleM*1e3, tc.hole, tc.tolHole)
			}
			// Sectors are 1° here (2 cells at the rim are 0.57°).
			if math.Abs(c.RimLargestGapDeg-tc.gap) > 2 || math.Abs(c.RimMissingPct-tc.rm) > 0.6 {
				t.Errorf("rim gap %.1f°, missing %.2f %%; want %.1f°, %.2f %%", c.RimLargestGapDeg, c.RimMissingPct, tc.gap, tc.rm)
			}
		})
	}
}

// TestMeasuredDistance2 compares the separable transform with brute force
// on random masks, including empty rows and an empty grid.
func TestMeasuredDistance2(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial, frac := range []float64{0, 0.002, 0.05, 0.3, 1} {
		nx, ny := 23+trial, 17
		s := scan.NewSurface(nx, ny, 1, 0, 0)
		var pts [][2]int
		for j := 0; j < ny; j++ {
			for i := 0; i < nx; i++ {
				s.State[s.Index(i, j)] = scan.Filled
				if rng.Float64() < frac {
					s.State[s.Index(i, j)] = scan.Measured
					pts = append(pts, [2]int{i, j})
				}
			}
		}
		d := measuredDistance2(s)
		for j := 0; j < ny; j++ {
			for i := 0; i < nx; i++ {
				want := math.Inf(1)
				for _, p := range pts {
					want = math.Min(want, float64((i-p[0])*(i-p[0])+(j-p[1])*(j-p[1])))
				}
				if got := d[s.Index(i, j)]; got != want {
					t.Fatalf("fraction %g, cell (%d, %d): %g, want %g", frac, i, j, got, want)
				}
			}
		}
	}
}

// BenchmarkMeasureCover measures the coverage figures of a base with two
// holes: 200 mm on the default 0.5 mm cells (401 × 401) and 300 mm on
// 0.3 mm cells (1001 × 1001). The work is linear in the cells.
func BenchmarkMeasureCover(b *testing.B) {
	for _, bc := range []struct{ r, cell float64 }{{0.1, 0.5e-3}, {0.15, 0.3e-3}} {
		s := discSurface(bc.r, bc.cell, func(x, y float64) bool {
			return math.Hypot(x-0.03, y) > 0.01 && math.Hypot(x+0.05, y-0.04) > 0.02
		})
		b.Run(fmt.Sprintf("%dx%d", s.Nx, s.Ny), func(b *testing.B) {
			for b.Loop() {
				measureCover(s, bc.r, 700000)
			}
		})
	}
}
