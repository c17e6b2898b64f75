package thermal

import (
	"math"
	"testing"

	"gapflux/fluid"
)

// example101 returns the liquid and vapour properties of Incropera, 6th ed.,
// Example 10.1 (water at 1 atm, Table A.6 values at 373.15 K, g = 9.8).
func example101() (fluid.Water, SatProps) {
	w, s := WaterAt1Atm()
	s.GravityMS2 = 9.8
	return w, s
}

func TestWaterAt1Atm(t *testing.T) {
	// Incropera Table A.6 at 373.15 K (PHYSICS-REFERENCES.md item 6.2 [C]):
	// v_f 1.044e-3, c_p 4217, μ 279e-6, k 0.680, printed Pr 1.76, σ 58.9e-3,
	// h_fg 2257 kJ/kg, ρ_v 0.5955.
	w, s := WaterAt1Atm()
	checks := []struct {
		name      string
		got, want float64
	}{
		{"T_sat", s.TempK, 373.15},
		{"ρ_l", w.DensityKgM3, 1 / 1.044e-3},
		{"c_p", w.CpJKgK, 4217},
		{"μ", w.ViscosityPaS, 279e-6},
		{"Pr", w.Prandtl, 1.76},
		{"h_fg", s.LatentHeatJKg, 2257e3},
		{"σ", s.SurfaceTensionNM, 58.9e-3},
		{"ρ_v", s.VapourDensityKgM3, 0.5955},
	}
	for _, c := range checks {
		if fracDiff(c.got, c.want) > 1e-12 {
			t.Errorf("%s = %g, want %g", c.name, c.got, c.want)
		}
	}
	if s.gravity() != fluid.StandardGravityMS2 {
		t.Errorf("default gravity %g, want %g", s.gravity(), fluid.StandardGravityMS2)
	}
}

func TestRohsenowExample101(t *testing.T) {
	w, s := example101()
	// Incropera Example 10.1 (copper pan, polished, C_sf 0.0128, n 1,
	// ΔT_e 18 K): q″ = 8.36e5 W/m²; D = 0.30 m gives q = 59.1 kW and an
	// evaporation rate of 0.0262 kg/s; C_sf 0.013 gives 7.98e5
	// (PHYSICS-REFERENCES.md items 8.4 [M], reproduced [N], summary item 1).
	tests := []struct {
		csf, want, tol float64
	}{
		{CsfCopperPolished, 8.36e5, 0.005e5},
		{0.013, 7.98e5, 0.005e5},
	}
	for _, tc := range tests {
		q := RohsenowFluxWM2(18, tc.csf, RohsenowNWater, w, s)
		if math.Abs(q-tc.want) > tc.tol {
			t.Errorf("C_sf %g: q″ = %.5g W/m², want %.3g", tc.csf, q, tc.want)
		}
	}
	q := RohsenowFluxWM2(18, CsfCopperPolished, RohsenowNWater, w, s)
	area := math.Pi * 0.3 * 0.3 / 4
	if p := q * area; math.Abs(p-59.1e3) > 0.05e3 {
		t.Errorf("q = %.4g W, want 59.1 kW", p)
	}
	if m := q * area / s.LatentHeatJKg; math.Abs(m-0.0262) > 0.00005 {
		t.Errorf("evaporation %.4g kg/s, want 0.0262", m)
	}
	// Cubic in ΔT_e, zero at and below saturation.
	if r := RohsenowFluxWM2(36, CsfCopperPolished, 1, w, s) / q; math.Abs(r-8) > 1e-12 {
		t.Errorf("q″(2ΔT)/q″(ΔT) = %g, want 8", r)
	}
	for _, dt := range []float64{0, -5, math.NaN()} {
		if got := RohsenowFluxWM2(dt, CsfCopperPolished, 1, w, s); got != 0 {
			t.Errorf("q″(ΔT_e %g) = %g, want 0", dt, got)
		}
	}
}

// TestRohsenowAluminium reproduces the heat-transfer library's docstring
// example for water at 1 atm on oxidised aluminium after Cao (2009):
// Rohsenow(rhol=957.854, rhog=0.595593, mul=2.79e-4, kl=0.680, Cpl=4217,
// Hvap=2.257e6, sigma=0.0589, Te=4.9, Csf=0.011, n=1.26) = 3723.655267067467
// W/(m²·K) (PHYSICS-REFERENCES.md item 8.2 [C]). It reproduces with these
// properties: Pr computed as c_p·μ/k = 1.7302 (not the printed 1.76),
// standard gravity 9.80665, and h = q″/ΔT_e.
func TestRohsenowAluminium(t *testing.T) {
	w := fluid.Water{DensityKgM3: 957.854, CpJKgK: 4217, ViscosityPaS: 2.79e-4, ConductivityWMK: 0.680}
	w.Prandtl = w.CpJKgK * w.ViscosityPaS / w.ConductivityWMK
	s := SatProps{TempK: 373.15, LatentHeatJKg: 2.257e6, SurfaceTensionNM: 0.0589, VapourDensityKgM3: 0.595593}
	const dte = 4.9
	h := RohsenowFluxWM2(dte, CsfAluminiumOxidised, RohsenowNAluminiumOxidised, w, s) / dte
	if fracDiff(h, 3723.655267067467) > 1e-9 {
		t.Errorf("h = %.12g W/(m²·K), want 3723.655267067467", h)
	}
}

func TestCriticalFlux(t *testing.T) {
	w, s := example101()
	// PHYSICS-REFERENCES.md items 8.3/8.4 and summary item 2 ([C] constants,
	// [N] values): 1.258e6 W/m² with C = 0.149, 1.105e6 with π/24.
	tests := []struct {
		name    string
		c, want float64
	}{
		{"Lienhard–Dhir", LienhardDhirC, 1.258e6},
		{"Zuber", ZuberC, 1.105e6},
	}
	for _, tc := range tests {
		if q := CriticalFluxWM2(tc.c, w, s); math.Abs(q-tc.want) > 0.0005e6 {
			t.Errorf("%s: q″_max = %.5g W/m², want %.4g", tc.name, q, tc.want)
		}
	}
	// Capillary length of water at 100 °C: 2.51 mm (item 8.3 [N]).
	if l := CapillaryLengthM(w, s); math.Abs(l-2.51e-3) > 0.005e-3 {
		t.Errorf("capillary length %.4g m, want 2.51e-3", l)
	}
}

func BenchmarkRohsenowFluxWM2(b *testing.B) {
	w, s := WaterAt1Atm()
	x := 0.0
	for i := 0; b.Loop(); i++ {
		x += RohsenowFluxWM2(1+float64(i&15), CsfStainlessMechPolished, 1, w, s)
	}
	_ = x
}

// TestRohsenowSurfaces: the named pairings carry the table's values
// (Incropera Table 10.1 after Vachon, Nix & Tanger 1968, PHYSICS-REFERENCES
// 8.2 [M]; aluminium after Cao 2009, 8.2 [C]) and unique names.
func TestRohsenowSurfaces(t *testing.T) {
	want := map[string][2]float64{
		"copper-polished":         {0.0128, 1},
		"stainless-mech-polished": {0.0132, 1},
		"brass":                   {0.0060, 1},
		"aluminium-oxidised":      {0.011, 1.26},
	}
	seen := map[string]bool{}
	for _, s := range RohsenowSurfaces() {
		if seen[s.Name] {
			t.Errorf("%s listed twice", s.Name)
		}
		seen[s.Name] = true
		if w, ok := want[s.Name]; ok && (s.Csf != w[0] || s.N != w[1]) {
			t.Errorf("%s: C_sf %g n %g, want %g %g", s.Name, s.Csf, s.N, w[0], w[1])
		}
	}
	for n := range want {
		if !seen[n] {
			t.Errorf("%s missing", n)
		}
	}
}
