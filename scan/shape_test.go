package scan

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// shapeDisc returns a 201×201 grid of 1 mm cells whose cells within
// 100 mm of the centre are Measured at height f(x, y), m, plus seeded
// Gaussian noise of sdM RMS.
func shapeDisc(f func(x, y float64) float64, sdM float64, seed uint64) *Surface {
	s := NewSurface(201, 201, 1e-3, -0.1, -0.1)
	rng := rand.New(rand.NewPCG(seed, 3))
	for j := range s.Ny {
		for i := range s.Nx {
			if x, y := s.X(i), s.Y(j); math.Hypot(x, y) <= 0.1+1e-12 {
				k := s.Index(i, j)
				s.ZM[k], s.State[k] = f(x, y)+sdM*rng.NormFloat64(), Measured
			}
		}
	}
	return s
}

// TestMeasureShapeAnalytic checks words, principal rim sags and axes on
// exact quadrics over a 200 mm base (R = 100 mm), where the least-squares
// quadric is the surface itself: sags to 1e-9 mm, angles to 1e-6°. A
// quadric's rim sag along a principal direction is −κR²/2 (hand
// derivation: z = κu²/2 along the unit direction u). Plus two noisy cases
// (10 µm RMS: sags to 2 µm) and a cone, which is not a quadric.
func TestMeasureShapeAnalytic(t *testing.T) {
	const r, mm = 0.1, 1e-3
	rot := func(deg float64) (c, s float64) { return math.Cos(deg * math.Pi / 180), math.Sin(deg * math.Pi / 180) }
	c30, s30 := rot(30)
	tests := []struct {
		name   string
		f      func(x, y float64) float64
		noiseM float64 // added to the surface and passed as the noise
		word   string
		sag    [2]float64 // principal rim sags, mm, larger first; NaN to skip
		axis   float64    // AxisDeg[0] (the larger curvature), NaN to skip
		bend   float64    // BendAxisDeg, NaN to skip
		tilt   float64    // tilt rise, mm
		tol    float64    // on sags, mm
	}{
		{"flat", func(x, y float64) float64 { return 0.3 * mm }, 0, ShapeFlat, [2]float64{0, 0}, math.NaN(), math.NaN(), 0, 1e-9},
		// A plane rising 0.2 mm across the diameter: tilted (a wedge).
		{"tilted", func(x, y float64) float64 { return 1e-3 * x }, 0, ShapeTilted, [2]float64{0, 0}, math.NaN(), math.NaN(), 0.2, 1e-9},
		// z = h(1 − r²/R²): centre h above the rim both ways.
		{"dish", func(x, y float64) float64 { return 0.4 * mm * (1 - (x*x+y*y)/(r*r)) }, 0, ShapeDished, [2]float64{0.4, 0.4}, math.NaN(), math.NaN(), 0, 1e-9},
		{"dome", func(x, y float64) float64 { return 0.3 * mm * (x*x + y*y) / (r * r) }, 0, ShapeDomed, [2]float64{-0.3, -0.3}, math.NaN(), math.NaN(), 0, 1e-9},
		// An oval dish, 0.5 mm across x and 0.2 mm across y (ratio 0.4).
		{"oval dish", func(x, y float64) float64 { return -0.5*mm*x*x/(r*r) - 0.2*mm*y*y/(r*r) }, 0, ShapeDished, [2]float64{0.5, 0.2}, 0, 90, 0, 1e-9},
		// z = k(x² − y²): rim down 0.25 mm along x, up along y. Today's
		// paraboloid calls this flat (its mean curvature is 0).
		{"saddle", func(x, y float64) float64 { return 0.25 * mm * (x*x - y*y) / (r * r) }, 0, ShapeSaddle, [2]float64{-0.25, 0.25}, math.NaN(), math.NaN(), 0, 1e-9},
		// Twist z = 2k·x·y: the same saddle turned by 45°.
		{"twist", func(x, y float64) float64 { return 2 * 0.25 * mm * x * y / (r * r) }, 0, ShapeSaddle, [2]float64{-0.25, 0.25}, math.NaN(), math.NaN(), 0, 1e-9},
		// Cylinder bent about the y axis (90°): curved across x only.
		// Today's paraboloid calls this convex (domed).
		{"bend about y", func(x, y float64) float64 { return 0.5 * mm * x * x / (r * r) }, 0, ShapeBent, [2]float64{-0.5, 0}, 0, 90, 0, 1e-9},
		// Bent about an axis at 30°: curved across 120°.
		{"bend about 30°", func(x, y float64) float64 {
			u := -x*s30 + y*c30
			return -0.4 * mm * u * u / (r * r)
		}, 0, ShapeBent, [2]float64{0.4, 0}, 120, 30, 0, 1e-9},
		// A dish with a weak cross curvature (0.1 of 0.5 mm: ratio 0.2).
		{"bend with weak cross", func(x, y float64) float64 { return -0.5*mm*x*x/(r*r) - 0.1*mm*y*y/(r*r) }, 0, ShapeBent, [2]float64{0.5, 0.1}, 0, 90, 0, 1e-9},
		// Below the 0.02 mm floor: flat.
		{"slight dish", func(x, y float64) float64 { return 0.015 * mm * (1 - (x*x+y*y)/(r*r)) }, 0, ShapeFlat, [2]float64{0.015, 0.015}, math.NaN(), math.NaN(), 0, 1e-9},
		// 0.05 mm dish at 30 µm noise: under 3 × 30 µm, flat; the fit over
		// 31 000 cells still finds the sag to 2 µm.
		{"dish in noise", func(x, y float64) float64 { return 0.05 * mm * (1 - (x*x+y*y)/(r*r)) }, 30e-6, ShapeFlat, [2]float64{0.05, 0.05}, math.NaN(), math.NaN(), 0, 2e-3},
		{"saddle in noise", func(x, y float64) float64 { return 0.25 * mm * (x*x - y*y) / (r * r) }, 10e-6, ShapeSaddle, [2]float64{-0.25, 0.25}, math.NaN(), math.NaN(), 0, 2e-3},
		// A cone 0.4 mm deep (not a quadric): its least-squares quadric
		// is a dish (hand check: only that the word is right).
		{"cone dish", func(x, y float64) float64 { return 0.4 * mm * (1 - math.Hypot(x, y)/r) }, 0, ShapeDished, [2]float64{math.NaN(), math.NaN()}, math.NaN(), math.NaN(), 0, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			sh, err := MeasureShape(shapeDisc(tc.f, tc.noiseM, 1), r, ShapeOptions{NoiseM: tc.noiseM})
			if err != nil {
				t.Fatal(err)
			}
			if sh.Word != tc.word {
				t.Errorf("word %q, want %q (sags %.4f, %.4f mm)", sh.Word, tc.word, sh.RimSagM[0]/mm, sh.RimSagM[1]/mm)
			}
			// Equal sags have no defined order of sign: compare as a set.
			got := sh.RimSagM
			want := tc.sag
			if !math.IsNaN(want[0]) {
				if math.Abs(math.Abs(want[0])-math.Abs(want[1])) < 1e-12 && math.Abs(got[0]/mm-want[0]) > tc.tol {
					got[0], got[1] = got[1], got[0]
				}
				for i := range 2 {
					if math.Abs(got[i]/mm-want[i]) > tc.tol {
						t.Errorf("rim sags %.9f, %.9f mm, want %.9f, %.9f ± %g", got[0]/mm, got[1]/mm, want[0], want[1], tc.tol)
						break
					}
				}
			}
			if !math.IsNaN(tc.axis) && math.Abs(sh.AxisDeg[0]-tc.axis) > 1e-6 {
				t.Errorf("principal axis %.9f°, want %g°", sh.AxisDeg[0], tc.axis)
			}
			if !math.IsNaN(tc.bend) && math.Abs(sh.BendAxisDeg-tc.bend) > 1e-6 {
				t.Errorf("bend axis %.9f°, want %g°", sh.BendAxisDeg, tc.bend)
			}
			if math.Abs(sh.TiltRiseM/mm-tc.tilt) > 1e-9+tc.tol {
				t.Errorf("tilt rise %.9f mm, want %g", sh.TiltRiseM/mm, tc.tilt)
			}
			if wantT := max(DefaultShapeNoiseK*tc.noiseM, DefaultShapeFloorM); sh.ThresholdM != wantT {
				t.Errorf("threshold %g m, want %g m", sh.ThresholdM, wantT)
			}
		})
	}
}

// TestMeasureShapeTwistAxes: a twist z = 2k·x·y has its principal axes at
// ±45°: the larger-magnitude curvature's axis is 45° or 135°.
func TestMeasureShapeTwistAxes(t *testing.T) {
	sh, err := MeasureShape(shapeDisc(func(x, y float64) float64 { return 5e-2 * x * y }, 0, 1), 0.1, ShapeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if a := sh.AxisDeg[0]; math.Abs(a-45) > 1e-6 && math.Abs(a-135) > 1e-6 {
		t.Errorf("axis %g°, want 45° or 135°", a)
	}
	if d := math.Abs(sh.AxisDeg[1] - sh.AxisDeg[0]); math.Abs(d-90) > 1e-6 {
		t.Errorf("axes %v° are not perpendicular", sh.AxisDeg)
	}
}

func TestMeasureShapeBadInput(t *testing.T) {
	flat := func() *Surface { return shapeDisc(func(x, y float64) float64 { return 0 }, 0, 1) }
	few := NewSurface(5, 5, 1e-3, 0, 0)
	for i := range 5 {
		few.ZM[i], few.State[i] = 0, Measured // one row: five collinear cells
	}
	line := NewSurface(21, 21, 1e-3, -0.01, -0.01)
	for i := range 21 {
		k := line.Index(i, 10)
		line.ZM[k], line.State[k] = 0, Measured // 21 collinear cells
	}
	tests := []struct {
		name string
		s    *Surface
		r    float64
		opt  ShapeOptions
		want string
	}{
		{"nil", nil, 0.1, ShapeOptions{}, "nil surface"},
		{"zero radius", flat(), 0, ShapeOptions{}, "radius"},
		{"NaN radius", flat(), math.NaN(), ShapeOptions{}, "radius"},
		{"five cells", few, 0.1, ShapeOptions{}, "need at least 6"},
		{"collinear cells", line, 0.1, ShapeOptions{}, "singular"},
		{"negative noise", flat(), 0.1, ShapeOptions{NoiseM: -1}, "noise"},
		{"infinite floor", flat(), 0.1, ShapeOptions{FloorM: math.Inf(1)}, "floor"},
	}
	for _, tc := range tests {
		_, err := MeasureShape(tc.s, tc.r, tc.opt)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want one containing %q", tc.name, err, tc.want)
		}
	}
}

// TestZernikePlainName checks the plain-words names beside the optics
// names of the terms MeasureForm lists (our own wording; the optics names
// follow Thibos et al. 2002).
func TestZernikePlainName(t *testing.T) {
	tests := []struct {
		n, m int
		want string
	}{
		{0, 0, "piston (height offset)"},
		{1, 1, "tilt along x"},
		{1, -1, "tilt along y"},
		{2, 0, "dish/dome"},
		{2, 2, "saddle, axes at 0°"},
		{2, -2, "saddle, axes at 45°"},
		{3, 1, "one-sided ramp along x (coma-like)"},
		{3, -3, "three-lobed rim wave, a lobe at 30°"},
		{4, 0, "ring wave"},
		{4, -2, "secondary saddle, axes at 45°"},
		{4, 4, "four-lobed rim wave, a lobe at 0°"},
		{5, -3, "secondary three-lobed rim wave, a lobe at 30°"},
		{6, 0, "double ring wave"},
		{6, -2, "tertiary saddle, axes at 45°"},
		{12, 0, "5-ring wave"},
	}
	for _, tc := range tests {
		if got := ZernikePlainName(tc.n, tc.m); got != tc.want {
			t.Errorf("(%d, %d): %q, want %q", tc.n, tc.m, got, tc.want)
		}
	}
	// Every fitted term carries both names.
	terms, err := FitZernike(shapeDisc(func(x, y float64) float64 { return 0 }, 1e-6, 2), 0.1, DefaultZernikeOrder)
	if err != nil {
		t.Fatal(err)
	}
	for _, tm := range terms {
		if tm.Name == "" || tm.Plain == "" || tm.Plain != ZernikePlainName(tm.N, tm.M) {
			t.Errorf("term %d: names %q / %q", tm.Index, tm.Name, tm.Plain)
		}
	}
}

// BenchmarkMeasureShape fits the quadric on a 200 mm base of 1 mm cells
// (31 000 cells).
func BenchmarkMeasureShape(b *testing.B) {
	s := shapeDisc(func(x, y float64) float64 { return 1e-2 * x * x }, 5e-6, 1)
	for b.Loop() {
		if _, err := MeasureShape(s, 0.1, ShapeOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}
