package scan

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"
	"gonum.org/v1/gonum/spatial/r3"
)

// cubicGrid is z = x³ on the 5×5 grid x, y ∈ {−1, −0.5, 0, 0.5, 1}.
func cubicGrid() (x, y, z []float64) {
	for _, xv := range []float64{-1, -0.5, 0, 0.5, 1} {
		for _, yv := range []float64{-1, -0.5, 0, 0.5, 1} {
			x = append(x, xv)
			y = append(y, yv)
			z = append(z, xv*xv*xv)
		}
	}
	return x, y, z
}

func TestMinimumZoneCheckValues(t *testing.T) {
	cx, cy, cz := cubicGrid()
	shift := func(v []float64, d float64) []float64 {
		out := make([]float64, len(v))
		for i := range v {
			out[i] = v[i] + d
		}
		return out
	}
	cases := []struct {
		name    string
		x, y, z []float64
		width   float64
		plane   []float64 // a, b (nil: not checked)
	}{
		// PHYSICS-REFERENCES.md 12.3 [N]: MZ 0.50 with a = 0.75.
		{"x³ on 5×5", cx, cy, cz, 0.5, []float64{0.75, 0}},
		// Same points far from the origin: conditioning.
		{"x³ shifted", shift(cx, 1000), shift(cy, -2000), shift(cz, 500), 0.5, []float64{0.75, 0}},
		// PHYSICS-REFERENCES.md 12.3 [N]: twisted square MZ 0.5.
		{"twisted square", []float64{0, 1, 0, 1}, []float64{0, 0, 1, 1}, []float64{0, 0, 0, 1}, 0.5, []float64{0.5, 0.5}},
		// Three points span a plane: MZ 0.
		{"three points", []float64{0, 1, 0}, []float64{0, 0, 1}, []float64{0.3, -2, 5}, 0, []float64{-2.3, 4.7}},
		{"flat", []float64{0, 1, 0, 1}, []float64{0, 0, 1, 1}, []float64{2, 2, 2, 2}, 0, []float64{0, 0}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			w, p, err := MinimumZone(tc.x, tc.y, tc.z)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(w-tc.width) > 1e-12*(1+math.Abs(tc.width)) {
				t.Errorf("width %.15g, want %g", w, tc.width)
			}
			if tc.plane != nil && (math.Abs(p[0]-tc.plane[0]) > 1e-12 || math.Abs(p[1]-tc.plane[1]) > 1e-12) {
				t.Errorf("plane %v, want a, b = %v", p, tc.plane)
			}
		})
	}
}

func TestLSPlaneCheckValues(t *testing.T) {
	// PHYSICS-REFERENCES.md 12.3 [N]: LSQ plane a = 0.85, b = c = 0,
	// peak-to-valley 0.60.
	x, y, z := cubicGrid()
	p, err := planeFitLS(x, y, z)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(p[0]-0.85) > 1e-14 || math.Abs(p[1]) > 1e-14 || math.Abs(p[2]) > 1e-14 {
		t.Errorf("LS plane %v, want [0.85 0 0]", p)
	}
	lo, hi := residualRange(x, y, z, p)
	if math.Abs(hi-lo-0.6) > 1e-14 {
		t.Errorf("LS peak-to-valley %.15g, want 0.6", hi-lo)
	}
}

// dualZone solves the minimum-zone dual with gonum's dense simplex:
// minimise Σ −z μ⁺ + z μ⁻ s.t. Σ (μ⁺ − μ⁻)(x, y, 1) = 0, Σ (μ⁺ + μ⁻) = 1,
// μ ≥ 0. The optimum is −h, half the zone width.
func dualZone(x, y, z []float64) (float64, error) {
	n := len(z)
	c := make([]float64, 2*n)
	a := mat.NewDense(4, 2*n, nil)
	for i := range n {
		c[2*i], c[2*i+1] = -z[i], z[i]
		for r, v := range []float64{x[i], y[i], 1} {
			a.Set(r, 2*i, v)
			a.Set(r, 2*i+1, -v)
		}
		a.Set(3, 2*i, 1)
		a.Set(3, 2*i+1, 1)
	}
	opt, _, err := lp.Simplex(c, a, []float64{0, 0, 0, 1}, 1e-13, nil)
	return -2 * opt, err
}

func TestMinimumZoneAgainstGonumSimplex(t *testing.T) {
	// An independent solver of the same linear programme on a random
	// subsample of 300 points of a noisy warped base.
	for seed := uint64(1); seed <= 4; seed++ {
		rng := rand.New(rand.NewPCG(seed, 77))
		const n = 300
		x, y, z := make([]float64, n), make([]float64, n), make([]float64, n)
		for i := range n {
			r := 0.1 * math.Sqrt(rng.Float64())
			th := 2 * math.Pi * rng.Float64()
			x[i], y[i] = r*math.Cos(th), r*math.Sin(th)
			z[i] = 0.2e-3*(x[i]*x[i]-0.5*y[i]*y[i])/0.01 + 1e-3*x[i] + 5e-6*rng.NormFloat64()
		}
		w, p, err := MinimumZone(x, y, z)
		if err != nil {
			t.Fatal(err)
		}
		want, err := dualZone(x, y, z)
		if err != nil {
			t.Fatalf("gonum simplex: %v", err)
		}
		if math.Abs(w-want) > 1e-9*want {
			t.Errorf("seed %d: zone %.15g, gonum simplex %.15g (rel %.2g)", seed, w, want, math.Abs(w-want)/want)
		}
		// Every point lies in the zone, which is no wider than LS.
		lo, hi := residualRange(x, y, z, p)
		if math.Abs(hi+lo) > 1e-9*w {
			t.Errorf("seed %d: zone not centred on its plane: %g, %g", seed, lo, hi)
		}
		ls, _ := planeFitLS(x, y, z)
		llo, lhi := residualRange(x, y, z, ls)
		if w > lhi-llo {
			t.Errorf("seed %d: MZ %g wider than LS %g", seed, w, lhi-llo)
		}
	}
}

func TestMinimumZoneBadInput(t *testing.T) {
	nan := math.NaN()
	cases := []struct {
		name    string
		x, y, z []float64
		want    string
	}{
		{"two points", []float64{0, 1}, []float64{0, 1}, []float64{0, 1}, "need at least 3"},
		{"collinear", []float64{0, 1, 2, 3}, []float64{0, 1, 2, 3}, []float64{0, 1, 0, 1}, "collinear"},
		{"one position", []float64{1, 1, 1}, []float64{2, 2, 2}, []float64{0, 1, 2}, "one x-y position"},
		{"nan", []float64{0, 1, 0, 1}, []float64{0, 0, 1, nan}, []float64{0, 0, 0, 1}, "point 3 is not finite"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, _, err := MinimumZone(tc.x, tc.y, tc.z)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

func TestMeasureFormShapes(t *testing.T) {
	const r, h = 0.05, 1e-3
	// Largest cell-centre radius² on the grid, for the bowl's range.
	var rmax2 float64
	k := int(r / h)
	for j := -k; j <= k; j++ {
		for i := -k; i <= k; i++ {
			if d := float64(i*i+j*j) * h * h; d <= r*r*(1+1e-12) {
				rmax2 = max(rmax2, d)
			}
		}
	}
	tilt := plane(1e-3, -2e-3, 0.1e-3)
	cases := []struct {
		name    string
		f       func(x, y float64) float64
		conc    float64 // expected concavity, m
		flat    float64 // expected flatness (MZ and LS), m; < 0: unchecked
		term    int     // OSA index of the dominant Zernike term
		termVal float64
	}{
		// DESIGN.md section 3: a dished base (centre raised, c3 < 0) has
		// positive concavity −c3·R² = sag.
		{"dish", dish(0.3e-3, r), 0.3e-3, 0.3e-3 * rmax2 / (r * r), 4, -0.3e-3 / (2 * math.Sqrt(3))},
		{"dome", dish(-0.2e-3, r), -0.2e-3, 0.2e-3 * rmax2 / (r * r), 4, 0.2e-3 / (2 * math.Sqrt(3))},
		// z = A ρ² cos 2θ = (A/√6)·Z(2,2): no concavity.
		{"saddle", saddle(0.1e-3, r), 0, -1, 5, 0.1e-3 / math.Sqrt(6)},
		{"tilted dish", func(x, y float64) float64 { return dish(0.3e-3, r)(x, y) + tilt(x, y) }, 0.3e-3,
			0.3e-3 * rmax2 / (r * r) / math.Sqrt(1+1e-6+4e-6), 4, -0.3e-3 / (2 * math.Sqrt(3))},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s := discSurface(r, h, tc.f)
			f, err := MeasureForm(s, r)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(f.ConcavityM-tc.conc) > 1e-12 {
				t.Errorf("concavity %.9g mm, want %.9g mm", f.ConcavityM*1e3, tc.conc*1e3)
			}
			if math.Abs(f.ConcavityPctOfDiameter-100*tc.conc/(2*r)) > 1e-9 || f.DiameterM != 2*r {
				t.Errorf("concavity %% %g, diameter %g", f.ConcavityPctOfDiameter, f.DiameterM)
			}
			if tc.flat >= 0 {
				if math.Abs(f.FlatnessMZM-tc.flat) > 1e-12 || math.Abs(f.FlatnessLSM-tc.flat) > 1e-12 {
					t.Errorf("flatness MZ %.9g LS %.9g mm, want %.9g mm", f.FlatnessMZM*1e3, f.FlatnessLSM*1e3, tc.flat*1e3)
				}
			}
			if f.FlatnessMZM > f.FlatnessLSM*(1+1e-12) {
				t.Errorf("MZ %g > LS %g", f.FlatnessMZM, f.FlatnessLSM)
			}
			if len(f.Zernike) != ZernikeTerms(DefaultZernikeOrder) {
				t.Fatalf("%d Zernike terms", len(f.Zernike))
			}
			// Exact data in the span of the basis: recovered to round-off.
			if got := f.Zernike[tc.term].CoefM; math.Abs(got-tc.termVal) > 1e-12 {
				t.Errorf("Zernike %d (%s) = %g, want %g", tc.term, f.Zernike[tc.term].Name, got, tc.termVal)
			}
		})
	}
}

func TestMeasureFormIgnoresFilledCells(t *testing.T) {
	s := discSurface(0.03, 1e-3, dish(0.1e-3, 0.03))
	f0, err := MeasureForm(s, 0.03)
	if err != nil {
		t.Fatal(err)
	}
	k := s.Index(10, 30)
	s.State[k] = Filled
	s.ZM[k] = 1 // wild interpolated value
	f1, err := MeasureForm(s, 0.03)
	if err != nil {
		t.Fatal(err)
	}
	if f1.Cells != f0.Cells-1 || math.Abs(f1.FlatnessMZM-f0.FlatnessMZM) > 1e-12 || math.Abs(f1.ConcavityM-f0.ConcavityM) > 1e-12 {
		t.Errorf("a filled cell changed the form: %+v vs %+v", f1, f0)
	}
}

func TestMeasureFormBadInput(t *testing.T) {
	few := NewSurface(3, 3, 1e-3, -1e-3, -1e-3)
	few.State[4], few.ZM[4] = Measured, 0
	cases := []struct {
		name string
		s    *Surface
		r    float64
		want string
	}{
		{"nil", nil, 0.1, "nil surface"},
		{"radius", discSurface(0.01, 1e-3, plane(0, 0, 0)), 0, "radius"},
		{"few", few, 0.01, "1 measured cells"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := MeasureForm(tc.s, tc.r)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

// TestChainConcavity runs Level, Grid, FormFilter and MeasureForm on
// noisy clouds of a dished and a domed base with corner and wall, seen
// from a tilted scanner: concavity within 2 % + 3× the noise.
func TestChainConcavity(t *testing.T) {
	if testing.Short() {
		t.Skip("slow")
	}
	const r, noise = 0.09, 15e-6
	for _, sag := range []float64{0.4e-3, -0.25e-3} {
		sb := synthBase{R: r, Shape: dish(sag, r), CornerM: 5e-3, WallM: 15e-3, NoiseM: noise, N: 250000, Seed: 31}
		sc := newScanner(FaceUp, 9, 70, 15, r3.Vec{X: 0.05, Y: 0.02, Z: 0.3})
		l, err := Level(sc.apply(sb.build()), LevelOptions{})
		if err != nil {
			t.Fatal(err)
		}
		g, err := Grid(l, GridOptions{})
		if err != nil {
			t.Fatal(err)
		}
		fr, err := FormFilter(g.Raw, 8e-3)
		if err != nil {
			t.Fatal(err)
		}
		f, err := MeasureForm(fr.Form, l.RadiusM)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("sag %.3f mm: concavity %.4f mm (%.3f %% of D), R %.2f mm, MZ %.4f mm, noise %.1f µm, outliers %d, coverage %.1f %%",
			sag*1e3, f.ConcavityM*1e3, f.ConcavityPctOfDiameter, l.RadiusM*1e3, f.FlatnessMZM*1e3, fr.NoiseM*1e6, g.OutliersRemoved, g.CoveragePct)
		if d := math.Abs(f.ConcavityM - sag); d > 0.02*math.Abs(sag)+3*noise {
			t.Errorf("sag %.3f mm: concavity %.4f mm", sag*1e3, f.ConcavityM*1e3)
		}
	}
}

// BenchmarkMeasureForm measures a 200 mm base at 0.5 mm cells (125 629
// cells): LS and minimum-zone flatness, concavity, 28 Zernike terms.
// cells/s counts the cells measured per second of wall time.
func BenchmarkMeasureForm(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	s := discSurface(0.1, 0.5e-3, func(x, y float64) float64 {
		return dish(0.3e-3, 0.1)(x, y) + saddle(0.05e-3, 0.1)(x, y) + 1e-6*rng.NormFloat64()
	})
	t0 := cpuTime()
	var cells int
	for b.Loop() {
		f, err := MeasureForm(s, 0.1)
		if err != nil {
			b.Fatal(err)
		}
		cells = f.Cells
	}
	b.ReportMetric(float64(cpuTime()-t0)/1e6/float64(b.N), "cpu-ms/op")
	b.ReportMetric(float64(cells)*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
}

// BenchmarkMinimumZoneSmooth is the minimum zone of a filtered (smooth)
// 200 mm base: many near-ties on the zone's planes.
func BenchmarkMinimumZoneSmooth(b *testing.B) {
	s := discSurface(0.1, 0.5e-3, func(x, y float64) float64 {
		return dish(0.3e-3, 0.1)(x, y) + saddle(0.05e-3, 0.1)(x, y)
	})
	idx := formCells(s, 0.1)
	x, y, z := make([]float64, len(idx)), make([]float64, len(idx)), make([]float64, len(idx))
	for n, k := range idx {
		x[n], y[n], z[n] = s.X(k%s.Nx), s.Y(k/s.Nx), s.ZM[k]
	}
	b.ResetTimer()
	for b.Loop() {
		if _, _, err := MinimumZone(x, y, z); err != nil {
			b.Fatal(err)
		}
	}
}
