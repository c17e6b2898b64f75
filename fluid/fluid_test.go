package fluid

import (
	"math"
	"testing"
)

// rel returns |got−want|/|want|.
func rel(got, want float64) float64 { return math.Abs(got-want) / math.Abs(want) }

func TestAirAtRows(t *testing.T) {
	// Incropera Table A.4 rows as given in PHYSICS-REFERENCES.md item 6.1 [C];
	// 550 K is from memory [M] (its c_p 1040 matches two of three copies, 6.1).
	tests := []struct {
		tK                            float64
		rho, cp, mu, nu, k, alpha, pr float64
	}{
		{300, 1.1614, 1007, 184.6e-7, 15.89e-6, 26.3e-3, 22.5e-6, 0.707},
		{350, 0.9950, 1009, 208.2e-7, 20.92e-6, 30.0e-3, 29.9e-6, 0.700},
		{400, 0.8711, 1014, 230.1e-7, 26.41e-6, 33.8e-3, 38.3e-6, 0.690},
		{450, 0.7740, 1021, 250.7e-7, 32.39e-6, 37.3e-3, 47.2e-6, 0.686},
		{500, 0.6964, 1030, 270.1e-7, 38.79e-6, 40.7e-3, 56.7e-6, 0.684},
		{550, 0.6329, 1040, 289.6e-7, 45.57e-6, 43.9e-3, 66.7e-6, 0.683},
		{600, 0.5804, 1051, 305.8e-7, 52.69e-6, 46.9e-3, 76.9e-6, 0.685},
		{700, 0.4975, 1075, 338.8e-7, 68.10e-6, 52.4e-3, 98.0e-6, 0.695},
		{800, 0.4354, 1099, 369.8e-7, 84.93e-6, 57.3e-3, 120e-6, 0.709},
	}
	const tol = 1e-12 // rows must come back exactly, up to unit scaling
	for _, tt := range tests {
		a, err := AirAt(tt.tK)
		if err != nil {
			t.Fatalf("AirAt(%g): %v", tt.tK, err)
		}
		for _, c := range []struct {
			name      string
			got, want float64
		}{
			{"rho", a.DensityKgM3, tt.rho}, {"cp", a.CpJKgK, tt.cp}, {"mu", a.ViscosityPaS, tt.mu},
			{"nu", a.KinViscosityM2S, tt.nu}, {"k", a.ConductivityWMK, tt.k},
			{"alpha", a.DiffusivityM2S, tt.alpha}, {"Pr", a.Prandtl, tt.pr},
		} {
			if rel(c.got, c.want) > tol {
				t.Errorf("AirAt(%g).%s = %.10g, want %.10g", tt.tK, c.name, c.got, c.want)
			}
		}
	}
}

func TestAirAtInterpolated(t *testing.T) {
	// Linear interpolation between the [C] rows of PHYSICS-REFERENCES.md 6.1,
	// computed by hand: midpoint of 300 and 350 K, and 3/4 of the way 400→450 K.
	tests := []struct {
		tK        float64
		k, nu, pr float64
	}{
		{325, 28.15e-3, 18.405e-6, 0.7035},
		{437.5, 36.425e-3, 30.895e-6, 0.687},
		{1000, 66.7e-3, 121.9e-6, 0.726}, // last row [M]
		{250, 22.3e-3, 11.44e-6, 0.720},  // first row [M]
	}
	for _, tt := range tests {
		a, err := AirAt(tt.tK)
		if err != nil {
			t.Fatal(err)
		}
		if rel(a.ConductivityWMK, tt.k) > 1e-12 || rel(a.KinViscosityM2S, tt.nu) > 1e-12 || rel(a.Prandtl, tt.pr) > 1e-12 {
			t.Errorf("AirAt(%g) = k %g ν %g Pr %g, want %g %g %g", tt.tK,
				a.ConductivityWMK, a.KinViscosityM2S, a.Prandtl, tt.k, tt.nu, tt.pr)
		}
	}
}

func TestAirAtConsistency(t *testing.T) {
	// Internal check of the table (no outside source): ν = μ/ρ and
	// Pr = μ c_p/k must hold on every row to the table's printed precision
	// (4 significant figures, so 0.6 %).
	for _, r := range airTable {
		a := airAt(r.t)
		if e := rel(a.ViscosityPaS/a.DensityKgM3, a.KinViscosityM2S); e > 6e-3 {
			t.Errorf("%g K: μ/ρ vs ν off by %.2g", r.t, e)
		}
		if e := rel(a.ViscosityPaS*a.CpJKgK/a.ConductivityWMK, a.Prandtl); e > 6e-3 {
			t.Errorf("%g K: μc_p/k vs Pr off by %.2g", r.t, e)
		}
		if e := rel(a.ConductivityWMK/(a.DensityKgM3*a.CpJKgK), a.DiffusivityM2S); e > 6e-3 {
			t.Errorf("%g K: k/(ρc_p) vs α off by %.2g", r.t, e)
		}
	}
}

func TestAirAtOutside(t *testing.T) {
	for _, tK := range []float64{249.99, 1000.01, 0, -5, math.NaN(), math.Inf(1)} {
		if _, err := AirAt(tK); err == nil {
			t.Errorf("AirAt(%g): no error", tK)
		}
	}
}

// TestGapAirAt checks that GapAirAt gives AirAt's properties to the bit
// inside the table (rows, between rows, the ends), AirAt's at the nearer
// end outside it, and NaN for NaN.
func TestGapAirAt(t *testing.T) {
	tests := []struct {
		tK, atK float64 // asked, and where AirAt must agree
	}{
		{250, 250}, {300, 300}, {312.5, 312.5}, {373.15, 373.15}, {549.999, 549.999},
		{550, 550}, {987.6, 987.6}, {1000, 1000},
		{249.99, 250}, {-5, 250}, {1000.01, 1000}, {math.Inf(1), 1000},
	}
	for _, tt := range tests {
		want, err := AirAt(tt.atK)
		if err != nil {
			t.Fatal(err)
		}
		got := GapAirAt(tt.tK)
		for _, c := range []struct {
			name      string
			got, want float64
		}{
			{"ViscosityPaS", got.ViscosityPaS, want.ViscosityPaS},
			{"KinViscosityM2S", got.KinViscosityM2S, want.KinViscosityM2S},
			{"ConductivityWMK", got.ConductivityWMK, want.ConductivityWMK},
			{"DiffusivityM2S", got.DiffusivityM2S, want.DiffusivityM2S},
			{"Prandtl", got.Prandtl, want.Prandtl},
		} {
			if math.Float64bits(c.got) != math.Float64bits(c.want) {
				t.Errorf("GapAirAt(%g).%s = %.17g, want AirAt(%g)'s %.17g", tt.tK, c.name, c.got, tt.atK, c.want)
			}
		}
	}
	if g := GapAirAt(math.NaN()); !math.IsNaN(g.ViscosityPaS) || !math.IsNaN(g.ConductivityWMK) ||
		!math.IsNaN(g.Prandtl) || !math.IsNaN(g.KinViscosityM2S) || !math.IsNaN(g.DiffusivityM2S) {
		t.Errorf("GapAirAt(NaN) = %+v, want NaNs", g)
	}
}

func TestWaterAtRows(t *testing.T) {
	// Incropera Table A.6 rows as given in PHYSICS-REFERENCES.md item 6.2 [C].
	tests := []struct {
		tK                      float64
		vf, cp, mu, k, pr, beta float64
	}{
		{290, 1.001e-3, 4184, 1080e-6, 598e-3, 7.56, 174.0e-6},
		{295, 1.002e-3, 4181, 959e-6, 606e-3, 6.62, 227.5e-6},
		{310, 1.007e-3, 4178, 695e-6, 628e-3, 4.62, 361.9e-6},
		{315, 1.009e-3, 4179, 631e-6, 634e-3, 4.16, 400.4e-6},
		{330, 1.016e-3, 4184, 489e-6, 650e-3, 3.15, 504.0e-6},
		{335, 1.018e-3, 4186, 453e-6, 656e-3, 2.88, 535.5e-6},
		{350, 1.027e-3, 4195, 365e-6, 668e-3, 2.29, 624.2e-6},
		{355, 1.030e-3, 4199, 343e-6, 671e-3, 2.14, 652.3e-6},
		{373.15, 1.044e-3, 4217, 279e-6, 680e-3, 1.76, 750.1e-6},
	}
	const tol = 1e-12
	for _, tt := range tests {
		w, err := WaterAt(tt.tK)
		if err != nil {
			t.Fatalf("WaterAt(%g): %v", tt.tK, err)
		}
		for _, c := range []struct {
			name      string
			got, want float64
		}{
			{"v_f", 1 / w.DensityKgM3, tt.vf}, {"cp", w.CpJKgK, tt.cp}, {"mu", w.ViscosityPaS, tt.mu},
			{"k", w.ConductivityWMK, tt.k}, {"Pr", w.Prandtl, tt.pr}, {"beta", w.ExpansionPerK, tt.beta},
		} {
			if rel(c.got, c.want) > tol {
				t.Errorf("WaterAt(%g).%s = %.10g, want %.10g", tt.tK, c.name, c.got, c.want)
			}
		}
	}
}

func TestWaterAtInterpolated(t *testing.T) {
	// PHYSICS-REFERENCES.md item 6.2, "linear interpolation at the requested
	// temperatures" [N], printed to 3–4 significant figures; tolerances are
	// half a unit in the last printed digit.
	tests := []struct {
		c                            float64
		rho, cp, mu, nu, k, pr, beta float64
	}{
		{20, 998.4, 4182, 1.004e-3, 1.005e-6, 0.603, 6.97, 2.08e-4},
		{40, 991.8, 4179, 6.55e-4, 6.60e-7, 0.632, 4.33, 3.86e-4},
		{60, 983.0, 4185, 4.66e-4, 4.74e-7, 0.654, 2.98, 5.24e-4},
		{80, 971.9, 4198, 3.51e-4, 3.61e-7, 0.670, 2.20, 6.42e-4},
		{100, 957.9, 4217, 2.79e-4, 2.91e-7, 0.680, 1.76, 7.50e-4},
	}
	for _, tt := range tests {
		w, err := WaterAt(tt.c + CelsiusZeroK)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			name           string
			got, want, abs float64
		}{
			{"rho", w.DensityKgM3, tt.rho, 0.05},
			{"cp", w.CpJKgK, tt.cp, 0.5},
			{"mu", w.ViscosityPaS, tt.mu, 0.005 * math.Pow(10, math.Floor(math.Log10(tt.mu))-0)},
			{"nu", w.KinViscosityM2S, tt.nu, 0.005 * math.Pow(10, math.Floor(math.Log10(tt.nu)))},
			{"k", w.ConductivityWMK, tt.k, 0.0005},
			{"Pr", w.Prandtl, tt.pr, 0.005},
			{"beta", w.ExpansionPerK, tt.beta, 0.005e-4},
		} {
			if math.Abs(c.got-c.want) > c.abs {
				t.Errorf("WaterAt(%g °C).%s = %.5g, want %.5g ± %.2g", tt.c, c.name, c.got, c.want, c.abs)
			}
		}
	}
}

func TestWaterAtOutside(t *testing.T) {
	for _, tK := range []float64{273.14, 373.16, 0, math.NaN(), math.Inf(-1)} {
		if _, err := WaterAt(tK); err == nil {
			t.Errorf("WaterAt(%g): no error", tK)
		}
	}
	// Both ends are inside.
	for _, tK := range []float64{WaterMinK, WaterMaxK} {
		if _, err := WaterAt(tK); err != nil {
			t.Errorf("WaterAt(%g): %v", tK, err)
		}
	}
}

func TestSaturatedWater373(t *testing.T) {
	// PHYSICS-REFERENCES.md item 6.2 [C]: σ 58.9e-3 N/m, h_fg 2257 kJ/kg,
	// ρ_v 0.5955 kg/m³ (v_g 1.679 m³/kg); liquid row at 373.15 K.
	s := SaturatedWater373()
	if s.TempK != 373.15 || s.LatentHeatJKg != 2257e3 || s.SurfaceTensionNM != 58.9e-3 || s.VapourDensityKgM3 != 0.5955 {
		t.Errorf("SaturatedWater373 = %+v", s)
	}
	if rel(1/s.VapourDensityKgM3, 1.679) > 5e-4 {
		t.Errorf("v_g = %g, want 1.679", 1/s.VapourDensityKgM3)
	}
	if s.Liquid.Prandtl != 1.76 || rel(s.Liquid.DensityKgM3, 1/1.044e-3) > 1e-12 {
		t.Errorf("liquid = %+v", s.Liquid)
	}
	// The same σ must come out of the table column at 373.15 K.
	if s.Liquid.SurfaceTensionNM != s.SurfaceTensionNM {
		t.Errorf("table σ %g vs constant %g", s.Liquid.SurfaceTensionNM, s.SurfaceTensionNM)
	}
	// Saturation pressure at 373.15 K is 1.0133 bar in Table A.6 (from memory [M]).
	if rel(s.Liquid.SaturationPressurePa, 101330) > 1e-9 {
		t.Errorf("p_sat = %g", s.Liquid.SaturationPressurePa)
	}
}

func TestAirMeanFreePath(t *testing.T) {
	// PHYSICS-REFERENCES.md item 4.2 [N], kinetic definition with Table A.4 μ.
	tests := []struct {
		tK, pPa, wantUM, tol float64
	}{
		{288, StandardPressurePa, 0.0635, 0.0001}, // μ(288 K) interpolated 250→300 K [M row]
		{300, StandardPressurePa, 0.0670, 0.00005},
		{400, StandardPressurePa, 0.0964, 0.00005},
		{500, StandardPressurePa, 0.1266, 0.00005},
		{600, StandardPressurePa, 0.157, 0.0005},
		{300, StandardPressurePa / 2, 0.1340, 0.0001}, // Λ ∝ 1/p
	}
	for _, tt := range tests {
		got := AirMeanFreePathM(tt.tK, tt.pPa) * 1e6
		if math.Abs(got-tt.wantUM) > tt.tol {
			t.Errorf("Λ(%g K, %g Pa) = %.5f µm, want %.4f ± %g", tt.tK, tt.pPa, got, tt.wantUM, tt.tol)
		}
	}
	for _, bad := range [][2]float64{{0, 1e5}, {-1, 1e5}, {300, 0}, {300, -1}} {
		if v := AirMeanFreePathM(bad[0], bad[1]); !math.IsNaN(v) {
			t.Errorf("Λ(%g, %g) = %g, want NaN", bad[0], bad[1], v)
		}
	}
}

func TestKineticMeanFreePath(t *testing.T) {
	// AirMeanFreePathM is the kinetic formula with air's μ and molar mass.
	for _, tK := range []float64{260, 300, 777, 1200} {
		want := KineticMeanFreePathM(AirViscosityPaS(tK), tK, 2e5, AirMolarMassKgMol)
		if got := AirMeanFreePathM(tK, 2e5); got != want {
			t.Errorf("Λ(%g K) = %g, want %g", tK, got, want)
		}
	}
	// Hand computation at 300 K, 1 atm: μ 184.6e-7 Pa·s,
	// √(π·8.314462618·300/(2·0.0289647)) = 367.79 m/s → 6.7007e-8 m [N].
	if got := KineticMeanFreePathM(184.6e-7, 300, StandardPressurePa, AirMolarMassKgMol); rel(got, 6.7007e-8) > 1e-4 {
		t.Errorf("Λ = %g", got)
	}
	for _, bad := range [][2]float64{{0, 1e5}, {300, 0}, {math.NaN(), 1e5}} {
		if v := KineticMeanFreePathM(1e-5, bad[0], bad[1], AirMolarMassKgMol); !math.IsNaN(v) {
			t.Errorf("Λ(%g K, %g Pa) = %g, want NaN", bad[0], bad[1], v)
		}
	}
}

func TestAirViscosityOutsideTable(t *testing.T) {
	// Continuous at both ends of the table; Sutherland's law beyond.
	for _, end := range []float64{AirMinK, AirMaxK} {
		in := AirViscosityPaS(end)
		for _, d := range []float64{1e-9, -1e-9} {
			if rel(AirViscosityPaS(end+d), in) > 1e-9 {
				t.Errorf("μ jumps at %g K", end)
			}
		}
	}
	// Sutherland's law with its usual reference (from memory [M]:
	// μ0 = 1.716e-5 Pa·s at 273.15 K, S = 110.4 K). Beyond the table our
	// curve has Sutherland's shape exactly (ratios to the end row), and is
	// within 3 % of the reference curve (which is itself 2.2 % below the
	// table's 1000 K row).
	suth := func(tK float64) float64 {
		return 1.716e-5 * math.Pow(tK/273.15, 1.5) * (273.15 + 110.4) / (tK + 110.4)
	}
	for _, tt := range []struct{ tK, endK float64 }{{150, 250}, {220, 250}, {1100, 1000}, {1400, 1000}} {
		got, want := AirViscosityPaS(tt.tK), suth(tt.tK)
		if rel(got/AirViscosityPaS(tt.endK), want/suth(tt.endK)) > 1e-12 {
			t.Errorf("μ(%g K)/μ(%g K) = %.6g, Sutherland %.6g", tt.tK, tt.endK,
				got/AirViscosityPaS(tt.endK), want/suth(tt.endK))
		}
		if rel(got, want) > 0.03 {
			t.Errorf("μ(%g K) = %.5g, Sutherland %.5g", tt.tK, got, want)
		}
	}
	// Monotone increasing.
	prev := 0.0
	for tK := 100.0; tK <= 1500; tK += 10 {
		mu := AirViscosityPaS(tK)
		if !(mu > prev) {
			t.Fatalf("μ not increasing at %g K", tK)
		}
		prev = mu
	}
}

func BenchmarkAirAt(b *testing.B) {
	var s float64
	for i := range b.N {
		a, _ := AirAt(300 + float64(i%500))
		s += a.ConductivityWMK
	}
	_ = s
}

func BenchmarkWaterAt(b *testing.B) {
	var s float64
	for i := range b.N {
		w, _ := WaterAt(280 + float64(i%90))
		s += w.ConductivityWMK
	}
	_ = s
}

func BenchmarkAirMeanFreePathM(b *testing.B) {
	var s float64
	for i := range b.N {
		s += AirMeanFreePathM(300+float64(i%500), StandardPressurePa)
	}
	_ = s
}
