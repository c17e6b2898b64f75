package pipeline

import (
	"math"
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

// TestRimCover checks the rim figures on bases with missing rim arcs
// (exact figures from the geometry; tolerances of a sector: sectors are 1°
// here, 2 cells at the rim are 0.57°).
func TestRimCover(t *testing.T) {
	const r, cell = 0.1, 0.5e-3
	deg := func(x, y float64) float64 { return math.Mod(math.Atan2(y, x)*180/math.Pi+360, 360) }
	tests := []struct {
		name     string
		measured func(x, y float64) bool
		spacingM float64
		gap, rm  float64 // degrees, %
	}{
		{"whole base", func(x, y float64) bool { return true }, cell, 0, 0},
		{"40 mm hole in the middle", func(x, y float64) bool { return math.Hypot(x, y) >= 0.02 }, cell, 0, 0},
		{"sparse points, no hole", func(x, y float64) bool {
			i, j := int(math.Round(x/cell)), int(math.Round(y/cell))
			return i%2 == 0 && j%2 == 0
		}, 2 * cell, 0, 0},
		{"90° rim sector missing", func(x, y float64) bool { return math.Hypot(x, y) < 0.06 || deg(x, y) >= 90 }, cell, 90, 25},
		{"half base missing", func(x, y float64) bool { return x >= 0 }, cell, 180, 50},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			gap, missing := rimCover(discSurface(r, cell, tc.measured), r, tc.spacingM)
			if math.Abs(gap-tc.gap) > 2 || math.Abs(missing-tc.rm) > 0.6 {
				t.Errorf("rim gap %.1f°, missing %.2f %%; want %.1f°, %.2f %%", gap, missing, tc.gap, tc.rm)
			}
		})
	}
}
