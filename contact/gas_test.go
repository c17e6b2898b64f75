package contact

import (
	"math"
	"testing"

	"gapflux/fluid"
)

func TestSeparationCorrelation(t *testing.T) {
	// PHYSICS-REFERENCES.md 4.1 / summary #6 [N]: correlation column.
	tests := []struct{ ratio, want float64 }{
		{1e-6, 4.7494}, {1e-5, 4.2561}, {1e-4, 3.7100}, {1e-3, 3.0871}, {1e-2, 2.3360}, {2e-2, 2.0674},
	}
	for _, tt := range tests {
		if got := SeparationM(1, tt.ratio); math.Abs(got-tt.want) > 1e-4 {
			t.Errorf("Y/σ(%g) = %.5f, want %.4f", tt.ratio, got, tt.want)
		}
		if got := SeparationM(2e-6, tt.ratio); rel(got, 2e-6*tt.want) > 3e-5 {
			t.Errorf("Y(σ=2 µm, %g) = %g", tt.ratio, got)
		}
	}
	// Against the exact √2·erfc⁻¹(2x): ≤ 0.66 % over 1e-6…2e-2 (item 4.1;
	// the sweep's worst is 0.663 %, at 2e-2).
	worst := 0.0
	for i := 0; i <= 200; i++ {
		x := math.Pow(10, -6+float64(i)/200*math.Log10(2e4))
		worst = max(worst, rel(SeparationM(1, x), SeparationExact(x)))
	}
	if worst > 0.00665 || worst < 0.001 {
		t.Errorf("worst separation error %.5f, want ≤ 0.66 %%", worst)
	}
	for _, bad := range []float64{0, -1, 1 / 3.132, 0.5, math.NaN()} {
		if got := SeparationM(1e-6, bad); !math.IsNaN(got) {
			t.Errorf("SeparationM(%g) = %g, want NaN", bad, got)
		}
	}
}

func TestGasParameter(t *testing.T) {
	// PHYSICS-REFERENCES.md 4.2 [N]: β = 1.650 at 300 K, 1.706 at 500 K for
	// γ = 1.4; M for air at 1 atm, Λ kinetic, Pr from Table A.4.
	tests := []struct {
		tK, a, wantUM float64
	}{
		{300, 0.8, 0.332}, {300, 0.9, 0.270}, {300, 1.0, 0.221},
		{500, 0.8, 0.648}, {500, 0.9, 0.528}, {500, 1.0, 0.432},
	}
	for _, tt := range tests {
		air, err := fluid.AirAt(tt.tK)
		if err != nil {
			t.Fatal(err)
		}
		beta := GasParameterM(1, 1, 1.4, air.Prandtl, 1) / AccommodationParameter(1, 1)
		wantBeta := map[float64]float64{300: 1.650, 500: 1.706}[tt.tK]
		if math.Abs(beta-wantBeta) > 0.5e-3 {
			t.Errorf("β(%g K) = %.4f, want %.3f", tt.tK, beta, wantBeta)
		}
		m := GasParameterM(tt.a, tt.a, 1.4, air.Prandtl, fluid.AirMeanFreePathM(tt.tK, fluid.StandardPressurePa))
		if math.Abs(m*1e6-tt.wantUM) > 0.5e-3 {
			t.Errorf("M(%g K, a=%g) = %.4f µm, want %.3f", tt.tK, tt.a, m*1e6, tt.wantUM)
		}
	}
	if got := AccommodationParameter(0.8, 0.8); rel(got, 3) > 1e-12 {
		t.Errorf("α(0.8, 0.8) = %g, want 3", got)
	}
}

func TestGasGap(t *testing.T) {
	// PHYSICS-REFERENCES.md 4.4 / summary #7 [N]: air at 500 K,
	// k_g = 0.0407 W/(m·K), M = 0.648 µm. The table was computed with M
	// unrounded (0.6477 µm: 0.0407/0.648e-6 would give 62809 at δ = 0), so
	// M is recomputed here from its parts (a = 0.8, item 4.2).
	air, err := fluid.AirAt(500)
	if err != nil {
		t.Fatal(err)
	}
	m := GasParameterM(0.8, 0.8, 1.4, air.Prandtl, fluid.AirMeanFreePathM(500, fluid.StandardPressurePa))
	if math.Abs(m-0.648e-6) > 0.5e-9 {
		t.Fatalf("M = %g", m)
	}
	tests := []struct{ deltaM, want float64 }{
		{0, 62842}, {1e-6, 24702}, {10e-6, 3822.4}, {100e-6, 404.38},
		{0.5e-3, 81.30}, {1e-3, 40.67}, {2e-3, 20.34},
	}
	for _, tt := range tests {
		if got := GasGapWM2K(air.ConductivityWMK, tt.deltaM, m); rel(got, tt.want) > 2e-4 {
			t.Errorf("h_g(%g m) = %.5g, want %.5g", tt.deltaM, got, tt.want)
		}
	}
	// Flat-contact example (4.4 [N]): σ = √(0.8² + 0.4²) µm, P/H_c = 1e-5:
	// Y = 3.81 µm, h_g = 9137 W/(m²·K).
	y := SeparationM(CombinedRoughnessM(0.8e-6, 0.4e-6), 1e-5)
	if math.Abs(y*1e6-3.81) > 0.005 {
		t.Errorf("Y = %.4f µm, want 3.81", y*1e6)
	}
	if got := GasGapWM2K(air.ConductivityWMK, y, m); rel(got, 9137) > 3e-4 {
		t.Errorf("h_g flat contact = %.5g, want 9137", got)
	}
}
