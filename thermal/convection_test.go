package thermal

import (
	"math"
	"testing"

	"gapflux/fluid"
)

func fracDiff(got, want float64) float64 { return math.Abs(got-want) / math.Abs(want) }

func TestChurchillChuNu(t *testing.T) {
	tests := []struct {
		name    string
		ra, pr  float64
		want    float64
		relTol  float64
		comment string
	}{
		// Incropera Example 9.2 via the heat-transfer library docstring,
		// Nu_free_vertical_plate(0.69, 2.63e9) = 147.16185223770603
		// (PHYSICS-REFERENCES.md item 7.1 and summary item 3 [C]).
		{"Incropera Ex. 9.2", 0.69 * 2.63e9, 0.69, 147.16185223770603, 1e-12, "[C]"},
		// Ra → 0: the bracket is 0.825, Nu = 0.680625 (the formula as
		// written, [N]).
		{"Ra 0", 0, 0.7, 0.825 * 0.825, 1e-15, "[N]"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := ChurchillChuNu(tc.ra, tc.pr)
			if fracDiff(got, tc.want) > tc.relTol {
				t.Errorf("ChurchillChuNu(%g, %g) = %.10g, want %.10g %s", tc.ra, tc.pr, got, tc.want, tc.comment)
			}
		})
	}
	for _, bad := range [][2]float64{{-1, 0.7}, {1e6, 0}, {math.NaN(), 0.7}, {1e6, -1}} {
		if got := ChurchillChuNu(bad[0], bad[1]); !math.IsNaN(got) {
			t.Errorf("ChurchillChuNu(%g, %g) = %g, want NaN", bad[0], bad[1], got)
		}
	}
}

// TestIncroperaExample92 reproduces Incropera, 6th ed., Example 9.2 (a
// vertical glass door 0.71 m high at 232 °C in a 23 °C room), as computed in
// PHYSICS-REFERENCES.md item 7.1 [N]: air at 400 K, g = 9.8, β = 1/400 K,
// Ra = 1.812e9, Nu = 147.1, h = 7.00 W/(m²·K).
func TestIncroperaExample92(t *testing.T) {
	a, err := fluid.AirAt(400)
	if err != nil {
		t.Fatal(err)
	}
	// Incropera Table A.4 at 400 K: ν 26.41e-6, k 0.0338, Pr 0.690
	// (PHYSICS-REFERENCES.md summary item 13 [C]).
	if fracDiff(a.KinViscosityM2S, 26.41e-6) > 1e-12 || fracDiff(a.ConductivityWMK, 0.0338) > 1e-12 || fracDiff(a.Prandtl, 0.690) > 1e-12 {
		t.Fatalf("air at 400 K: ν %g, k %g, Pr %g; want 26.41e-6, 0.0338, 0.690", a.KinViscosityM2S, a.ConductivityWMK, a.Prandtl)
	}
	const l = 0.71
	ra := Rayleigh(9.8, 1.0/400, 232-23, l, a.KinViscosityM2S, a.DiffusivityM2S)
	if fracDiff(ra, 1.812e9) > 5e-4 {
		t.Errorf("Ra = %.5g, want 1.812e9", ra)
	}
	nu := ChurchillChuNu(ra, a.Prandtl)
	if math.Abs(nu-147.1) > 0.1 {
		t.Errorf("Nu = %.5g, want 147.1", nu)
	}
	h := nu * a.ConductivityWMK / l
	if math.Abs(h-7.00) > 0.005 {
		t.Errorf("h = %.5g W/(m²·K), want 7.00", h)
	}
	// The same door through AirVerticalHWM2K: film temperature 400.65 K,
	// g = 9.80665; within 0.5 % of the example.
	h2, err := AirVerticalHWM2K(232+273.15, 23+273.15, l)
	if err != nil {
		t.Fatal(err)
	}
	if fracDiff(h2, 7.00) > 5e-3 {
		t.Errorf("AirVerticalHWM2K = %.5g W/(m²·K), want 7.00 within 0.5 %%", h2)
	}
}

func TestHotPlateNu(t *testing.T) {
	// Heat-transfer library docstring, Nu_horizontal_plate_McAdams(5.54,
	// 3.21e8) = 181.73121274384457 (buoyant) and 55.44564799362829
	// (not buoyant) (PHYSICS-REFERENCES.md item 7.2 and summary item 4 [C]).
	ra := 5.54 * 3.21e8
	if got := HotPlateUpNu(ra); fracDiff(got, 181.73121274384457) > 1e-12 {
		t.Errorf("HotPlateUpNu(%g) = %.12g, want 181.73121274384457", ra, got)
	}
	if got := HotPlateDownNu(ra); fracDiff(got, 55.44564799362829) > 1e-12 {
		t.Errorf("HotPlateDownNu(%g) = %.12g, want 55.44564799362829", ra, got)
	}
	// Laminar branch at and below the switch Ra = 1e7: 0.54·(1e7)^(1/4)
	// = 30.366 [N]; just above it the 0.15 form gives 32.32 [N].
	if got := HotPlateUpNu(1e7); math.Abs(got-0.54*math.Sqrt(math.Sqrt(1e7))) > 1e-12 {
		t.Errorf("HotPlateUpNu(1e7) = %g, want the 0.54 form", got)
	}
	if got := HotPlateUpNu(1.0000001e7); math.Abs(got-32.317) > 1e-3 {
		t.Errorf("HotPlateUpNu(1e7+) = %g, want 32.317 (0.15 form)", got)
	}
	// The continuous form: the two forms meet at Ra = 3.6¹² [N]; it equals
	// HotPlateUpNu outside (3.6¹², 1e7] and the 0.15 form inside.
	meet := math.Pow(3.6, 12)
	if a, b := 0.54*math.Pow(meet, 0.25), 0.15*math.Cbrt(meet); fracDiff(a, b) > 1e-12 {
		t.Errorf("forms at Ra %g: %g and %g", meet, a, b)
	}
	for _, r := range []float64{1e4, 1e6, 4.7e6, 1.01e7, 1e9} {
		if a, b := HotPlateUpNuContinuous(r), HotPlateUpNu(r); a != b {
			t.Errorf("Ra %g: continuous %g, McAdams %g", r, a, b)
		}
	}
	if got := HotPlateUpNuContinuous(7e6); fracDiff(got, 0.15*math.Cbrt(7e6)) > 1e-15 {
		t.Errorf("HotPlateUpNuContinuous(7e6) = %g, want the 0.15 form", got)
	}
	for _, f := range []func(float64) float64{HotPlateUpNu, HotPlateUpNuContinuous, HotPlateDownNu} {
		if got := f(-1); !math.IsNaN(got) {
			t.Errorf("negative Ra gives %g, want NaN", got)
		}
	}
}

// TestAirPlateDisk is the disk check of PHYSICS-REFERENCES.md item 7.2 [N]:
// D = 0.2 m (L = D/4 = 0.05 m), surface 400 K, air 300 K, air properties at
// the 350 K film temperature: Ra = 5.599e5; facing up Nu = 14.77,
// h = 8.86 W/(m²·K); the 0.27 form gives h = 4.43.
func TestAirPlateDisk(t *testing.T) {
	tests := []struct {
		name        string
		tSurf, tAir float64
		want        float64
	}{
		{"hot facing up", 400, 300, 8.86},
		{"cold facing up uses the 0.27 form", 300, 400, 4.43},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			h, err := AirPlateUpHWM2K(tc.tSurf, tc.tAir, 0.05)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(h-tc.want) > 0.005 {
				t.Errorf("h = %.5g W/(m²·K), want %.3g", h, tc.want)
			}
		})
	}
	a, _ := fluid.AirAt(350)
	ra := Rayleigh(fluid.StandardGravityMS2, 1.0/350, 100, 0.05, a.KinViscosityM2S, a.DiffusivityM2S)
	if fracDiff(ra, 5.599e5) > 2e-4 {
		t.Errorf("Ra = %.5g, want 5.599e5", ra)
	}
	if nu := HotPlateUpNu(ra); math.Abs(nu-14.77) > 0.005 {
		t.Errorf("Nu = %.5g, want 14.77", nu)
	}
	if h, err := AirPlateUpHWM2K(300, 300, 0.05); err != nil || h != 0 {
		t.Errorf("equal temperatures: h = %g, err %v; want 0, nil", h, err)
	}
}

func TestAirConvectionErrors(t *testing.T) {
	tests := []struct {
		name string
		f    func() (float64, error)
	}{
		{"plate length 0", func() (float64, error) { return AirPlateUpHWM2K(350, 300, 0) }},
		{"plate length NaN", func() (float64, error) { return AirPlateUpHWM2K(350, 300, math.NaN()) }},
		{"plate film below table", func() (float64, error) { return AirPlateUpHWM2K(200, 200, 0.05) }},
		{"wall height negative", func() (float64, error) { return AirVerticalHWM2K(350, 300, -1) }},
		{"wall film above table", func() (float64, error) { return AirVerticalHWM2K(2000, 300, 0.1) }},
		{"wall NaN temperature", func() (float64, error) { return AirVerticalHWM2K(math.NaN(), 300, 0.1) }},
	}
	for _, tc := range tests {
		if _, err := tc.f(); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
}

func BenchmarkChurchillChuNu(b *testing.B) {
	s := 0.0
	for i := 0; b.Loop(); i++ {
		s += ChurchillChuNu(1e6+float64(i&1023), 0.7)
	}
	_ = s
}

func BenchmarkAirPlateUpHWM2K(b *testing.B) {
	s := 0.0
	for i := 0; b.Loop(); i++ {
		h, _ := AirPlateUpHWM2K(350+float64(i&63), 296, 0.05)
		s += h
	}
	_ = s
}
