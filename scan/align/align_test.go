package align

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gapflux/scan"
)

// surface samples f on a grid of cellM over a disc of radiusM, turned by
// thetaDeg and shifted by s: the surface holds z(q) = f(R(−θ)(q − s)), so
// Fit(a, this) should return θ and s. noiseM adds seeded Gaussian noise.
func surface(f func(x, y float64) float64, radiusM, cellM, thetaDeg float64, s [2]float64, noiseM float64, seed uint64) *scan.Surface {
	n := int(math.Ceil(radiusM/cellM)) + 2
	sf := scan.NewSurface(2*n+1, 2*n+1, cellM, -float64(n)*cellM, -float64(n)*cellM)
	rng := rand.New(rand.NewPCG(seed, 7))
	sin, cos := math.Sincos(-thetaDeg * math.Pi / 180)
	for j := range sf.Ny {
		for i := range sf.Nx {
			x, y := sf.X(i)-s[0], sf.Y(j)-s[1]
			if math.Hypot(sf.X(i), sf.Y(j)) > radiusM {
				continue
			}
			k := sf.Index(i, j)
			sf.State[k] = scan.Measured
			sf.ZM[k] = f(cos*x-sin*y, sin*x+cos*y) + noiseM*rng.NormFloat64()
		}
	}
	return sf
}

const testR = 0.09 // base radius, m

// saddleBend is a non-symmetric form: a 0.2 mm saddle and a 0.1 mm bend at
// 30° (no symmetry but the identity).
func saddleBend(x, y float64) float64 {
	r2 := testR * testR
	u := math.Cos(0.5)*x + math.Sin(0.5)*y
	return 0.2e-3*(x*x-y*y)/r2 + 0.1e-3*u*u/r2 + 0.05e-3*x/testR
}

func saddle(x, y float64) float64 { return 0.2e-3 * (x*x - y*y) / (testR * testR) }

// fourLobes is r⁴·cos 4φ: the same turned by 90°.
func fourLobes(x, y float64) float64 {
	r2 := testR * testR
	return 0.2e-3 * (x*x*x*x - 6*x*x*y*y + y*y*y*y) / (r2 * r2)
}

func dish(x, y float64) float64 { return 0.3e-3 * (1 - (x*x+y*y)/(testR*testR)) }

func angleErrDeg(gotRad, wantDeg float64) float64 {
	d := math.Mod(gotRad*180/math.Pi-wantDeg+540, 360) - 180
	return math.Abs(d)
}

func TestFit(t *testing.T) {
	const noise = 5e-6
	tests := []struct {
		name        string
		f           func(x, y float64) float64
		thetaDeg    float64
		shift       [2]float64
		wantDefined bool
		wantFold    int
	}{
		{"saddle+bend turned 37°", saddleBend, 37, [2]float64{}, true, 1},
		{"saddle+bend turned 211.5°, shifted 0.6 mm", saddleBend, 211.5, [2]float64{0.6e-3, -0.3e-3}, true, 1},
		{"saddle alone turned 37°: the same every 180°", saddle, 37, [2]float64{}, true, 2},
		{"four-lobed form turned 37°: the same every 90°", fourLobes, 37, [2]float64{}, true, 4},
		{"symmetric dish turned 37°", dish, 37, [2]float64{}, false, 1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			a := surface(tc.f, testR, 1e-3, 0, [2]float64{}, noise, 1)
			b := surface(tc.f, testR+1e-3, 1e-3, tc.thetaDeg, tc.shift, noise, 2)
			r, err := Fit(context.Background(), a, b, testR, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if r.Defined != tc.wantDefined {
				t.Fatalf("Defined = %v (swing %.2f µm), want %v", r.Defined, r.SwingM*1e6, tc.wantDefined)
			}
			// Two independent N(0, σ) fields differ by σ√2; bilinear
			// sampling of B averages its noise down a little.
			if want := noise * math.Sqrt2 * 1.1; r.RMSM > want {
				t.Errorf("RMS at the fit %.2f µm, want ≤ %.2f µm (noise level)", r.RMSM*1e6, want*1e6)
			}
			if r.Fold != tc.wantFold {
				t.Errorf("Fold = %d, want %d", r.Fold, tc.wantFold)
			}
			if !tc.wantDefined {
				return
			}
			period := 360 / float64(tc.wantFold)
			if e := math.Mod(angleErrDeg(r.AngleRad, tc.thetaDeg), period); math.Min(e, period-e) > 0.1 {
				t.Errorf("angle %.3f°, want %.1f° ± 0.1°", r.AngleRad*180/math.Pi, tc.thetaDeg)
			}
			// A shift s of a quadratic form of rim sag S moves heights by
			// only about 2·S·s/R at the rim (2.7 µm for s = 0.6 mm here),
			// so under 5 µm noise the shift is fixed to a few tenths of a
			// millimetre, not better; it matters as little to the heights.
			for i := range 2 {
				if math.Abs(r.ShiftM[i]-tc.shift[i]) > 0.25e-3 {
					t.Errorf("shift %v m, want %v ± 0.25 mm", r.ShiftM, tc.shift)
				}
			}
		})
	}
}

func TestFitBadInput(t *testing.T) {
	a := surface(saddleBend, testR, 1e-3, 0, [2]float64{}, 0, 1)
	far := surface(saddleBend, testR, 1e-3, 0, [2]float64{}, 0, 1)
	far.X0M += 1 // a metre away: no common cell
	tests := []struct {
		name string
		b    *scan.Surface
		r    float64
		opt  Options
		is   error
	}{
		{"nil B", nil, testR, Options{}, nil},
		{"no overlap", far, testR, Options{}, ErrNoOverlap},
		{"zero radius", a, 0, Options{}, nil},
		{"NaN radius", a, math.NaN(), Options{}, nil},
		{"bad step", a, testR, Options{CoarseStepDeg: 90}, nil},
		{"bad shift", a, testR, Options{MaxShiftM: 1}, nil},
		{"short slice", &scan.Surface{Nx: 3, Ny: 3, CellM: 1e-3, ZM: make([]float64, 4), State: make([]scan.CellState, 4)}, testR, Options{}, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Fit(context.Background(), a, tc.b, tc.r, tc.opt)
			if err == nil {
				t.Fatal("want an error")
			}
			if tc.is != nil && !errors.Is(err, tc.is) {
				t.Fatalf("error %v, want %v", err, tc.is)
			}
		})
	}
}

func TestFitCancelled(t *testing.T) {
	a := surface(saddleBend, testR, 1e-3, 0, [2]float64{}, 0, 1)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Fit(ctx, a, a, testR, Options{}); !errors.Is(err, context.Canceled) {
		t.Fatalf("error %v, want context.Canceled", err)
	}
}

func TestBilinear(t *testing.T) {
	s := scan.NewSurface(3, 3, 1, 0, 0)
	for k := range s.ZM {
		i, j := k%3, k/3
		s.ZM[k] = float64(2*i + 10*j) // a plane: bilinear is exact
	}
	tests := []struct {
		x, y, want float64
		ok         bool
	}{
		{0.5, 0.5, 6, true},
		{1.25, 1.75, 20, true},
		{2, 2, 24, true},
		{-0.1, 0, 0, false},
		{2.5, 1, 0, false},
	}
	for _, tc := range tests {
		got, ok := Bilinear(s, s.ZM, tc.x, tc.y)
		if ok != tc.ok || ok && math.Abs(got-tc.want) > 1e-12 {
			t.Errorf("Bilinear(%g, %g) = %g, %v; want %g, %v", tc.x, tc.y, got, ok, tc.want, tc.ok)
		}
	}
	s.ZM[4] = math.NaN()
	if _, ok := Bilinear(s, s.ZM, 0.5, 0.5); ok {
		t.Error("a NaN neighbour must make the sample invalid")
	}
}

// BenchmarkFit aligns a 200 mm base at 0.5 mm cells (the size).
func BenchmarkFit(b *testing.B) {
	const r = 0.1
	f := func(x, y float64) float64 { return 0.2e-3*(x*x-y*y)/(r*r) + 0.05e-3*x/r }
	a := surface(f, r, 0.5e-3, 0, [2]float64{}, 5e-6, 1)
	s := surface(f, r, 0.5e-3, 37, [2]float64{}, 5e-6, 2)
	b.ResetTimer()
	for b.Loop() {
		if _, err := Fit(context.Background(), a, s, r, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}
