package scan

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// lift returns a base flat out to r1 that rises into the pan from r1 to
// the rim R, to h at R: linearly (p = 1, a cone) or as (t)^p.
func lift(r1, R, h, p float64) func(x, y float64) float64 {
	return func(x, y float64) float64 {
		r := math.Hypot(x, y)
		if r <= r1 {
			return 0
		}
		return h * math.Pow((r-r1)/(R-r1), p)
	}
}

// TestLevelWarpedBase: strongly warped bases without a wall (issue 8,
// item 4) are taken whole; with a corner and wall beyond the warped rim,
// the base still ends where the corner starts. Before: the base flat over
// its inner half and lifting linearly to 10 mm at the rim measured 140 mm
// across instead of 200 mm.
func TestLevelWarpedBase(t *testing.T) {
	const R = 0.1
	tests := []struct {
		name    string
		sb      synthBase
		tol     float64 // on the radius, m
		dropped float64 // most fraction of points dropped
	}{
		{"flat inner half, linear lift to 10 mm (11°), no wall",
			synthBase{R: R, Shape: lift(R/2, R, 10e-3, 1), NoiseM: 10e-6, N: 120000, Seed: 31}, 1e-3, 0.01},
		{"linear lift to 15 mm at 25°, no wall",
			synthBase{R: R, Shape: lift(R-15e-3/math.Tan(25*math.Pi/180), R, 15e-3, 1), NoiseM: 10e-6, N: 120000, Seed: 32}, 1e-3, 0.01},
		{"quadratic lift to 15 mm, 25° at the rim, no wall",
			synthBase{R: R, Shape: lift(R-2*15e-3/math.Tan(25*math.Pi/180), R, 15e-3, 2), NoiseM: 10e-6, N: 120000, Seed: 33}, 1e-3, 0.01},
		{"linear lift to 10 mm, hand-held noise, no wall",
			synthBase{R: R, Shape: lift(R/2, R, 10e-3, 1), NoiseM: 60e-6, N: 120000, Seed: 34}, 1e-3, 0.01},
		{"linear lift to 10 mm, then corner and wall",
			synthBase{R: R, Shape: lift(R/2, R, 10e-3, 1), CornerM: 5e-3, WallM: 20e-3, NoiseM: 10e-6, N: 120000, Seed: 35}, 1e-3, 0.5},
		{"linear lift to 6 mm, then corner and wall, sparse",
			synthBase{R: 0.08, Shape: lift(0.04, 0.08, 6e-3, 1), CornerM: 6e-3, WallM: 15e-3, NoiseM: 10e-6, N: 20000, Seed: 36}, 1e-3, 0.5},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			sc := newScanner(FaceDown, 4, 60, 25, r3.Vec{X: 0.05, Y: 0.02, Z: 0.4})
			c := sc.apply(tt.sb.build())
			c.Unit, c.UnitSource = "mm", "default"
			l, err := Level(c, LevelOptions{})
			if err != nil {
				t.Fatal(err)
			}
			t.Logf("radius %.2f mm (truth %.1f), dropped %d (%.1f %%), face %s, warnings %q",
				l.RadiusM*1e3, tt.sb.R*1e3, l.PointsDropped, 100*l.DroppedFraction, l.FaceSource, strings.Join(l.Warnings, "; "))
			if d := l.RadiusM - tt.sb.R; math.Abs(d) > tt.tol {
				t.Errorf("diameter %.1f mm, want %.1f ± %.1f mm", 2e3*l.RadiusM, 2e3*tt.sb.R, 2e3*tt.tol)
			}
			if l.DroppedFraction > tt.dropped {
				t.Errorf("%.1f %% of the points dropped, want at most %.1f %%", 100*l.DroppedFraction, 100*tt.dropped)
			}
			// The true base axis must map to +z within 0.1°.
			o := l.toBase(sc.point(r3.Vec{}))
			ez := r3.Sub(l.toBase(sc.point(r3.Vec{Z: 1})), o)
			if ang := math.Acos(min(1, math.Abs(ez.Z))) * 180 / math.Pi; ang > 0.1 {
				t.Errorf("base axis off by %.3f°", ang)
			}
		})
	}
}

// TestLevelDropReport: Levelled says how many points were dropped, where
// and why, once more than DropReportFraction of them were.
func TestLevelDropReport(t *testing.T) {
	const R = 0.08
	walled := synthBase{R: R, Shape: dish(0.2e-3, R), CornerM: 5e-3, WallM: 15e-3, NoiseM: 10e-6, N: 40000, Seed: 41}
	tests := []struct {
		name                string
		sb                  synthBase
		tab                 int // points of a flat tab at base height, 0°–30°, r 1.25R–1.6R
		wantReason          []string
		beyondMin, levelMin int
		sector              int // the sector holding most dropped points, -1: none asked
	}{
		{name: "lifted rim, no wall: nothing to report",
			sb: synthBase{R: 0.1, Shape: lift(0.05, 0.1, 10e-3, 1), NoiseM: 10e-6, N: 40000, Seed: 42}, sector: -1},
		{name: "corner and wall", sb: walled, wantReason: []string{"beyond the rim circle rising into a corner or wall"},
			beyondMin: 10000, sector: -1},
		{name: "corner, wall and a flat tab beyond", sb: walled, tab: 8000,
			wantReason: []string{"of the base plane (a flange", "between 0° and 45°"}, beyondMin: 18000, levelMin: 7900, sector: 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			c := tt.sb.build()
			for i := range tt.tab {
				r := R * (1.25 + 0.35*float64(i%97)/97)
				th := math.Pi / 6 * float64(i/97) / float64(tt.tab/97+1)
				c.Points = append(c.Points, r3.Vec{X: r * math.Cos(th), Y: r * math.Sin(th), Z: 0.3e-3 * float64(i%7) / 7})
			}
			l, err := Level(newScanner(FaceDown, 0, 0, 0, r3.Vec{Z: 0.3}).apply(c), LevelOptions{})
			if err != nil {
				t.Fatal(err)
			}
			t.Logf("radius %.2f mm, dropped %d: beyond %d (at base height %d), off plane %d, sectors %v; %q",
				l.RadiusM*1e3, l.PointsDropped, l.DroppedBeyondRim, l.DroppedAtBaseHeight, l.DroppedOffPlane, l.DroppedBySector, l.DropReason)
			if got := l.DroppedBeyondRim + l.DroppedOffPlane; got != l.PointsDropped {
				t.Errorf("reasons add up to %d, dropped %d", got, l.PointsDropped)
			}
			sum := 0
			for _, k := range l.DroppedBySector {
				sum += k
			}
			if sum != l.PointsDropped {
				t.Errorf("sectors add up to %d, dropped %d", sum, l.PointsDropped)
			}
			if len(tt.wantReason) == 0 && tt.beyondMin == 0 && l.DropReason != "" {
				t.Errorf("reason %q, want none", l.DropReason)
			}
			for _, w := range tt.wantReason {
				if !strings.Contains(l.DropReason, w) {
					t.Errorf("reason %q lacks %q", l.DropReason, w)
				}
			}
			if l.DroppedBeyondRim < tt.beyondMin || l.DroppedAtBaseHeight < tt.levelMin {
				t.Errorf("beyond %d (at base height %d), want at least %d (%d)", l.DroppedBeyondRim, l.DroppedAtBaseHeight, tt.beyondMin, tt.levelMin)
			}
			if tt.sector >= 0 {
				best := 0
				for q, k := range l.DroppedBySector {
					if k > l.DroppedBySector[best] {
						best = q
					}
				}
				if best != tt.sector {
					t.Errorf("most dropped points in sector %d, want %d", best, tt.sector)
				}
			}
		})
	}
}

func TestOctant(t *testing.T) {
	for q := range 8 {
		for _, off := range []float64{1, 22.5, 44} {
			a := (45*float64(q) + off) * math.Pi / 180
			if got := octant(math.Cos(a), math.Sin(a)); got != q {
				t.Errorf("octant at %.1f° = %d, want %d", 45*float64(q)+off, got, q)
			}
		}
	}
}
