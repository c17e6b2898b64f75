package thermal

import (
	"math"
	"testing"

	"gapflux/fluid"
)

// Every water side satisfies WaterSide, as a value and as a pointer.
var (
	_ WaterSide = FixedWater{}
	_ WaterSide = NaturalWater{}
	_ WaterSide = BoilingWater{}
	_ WaterSide = (*BoilingWater)(nil)
)

func TestFixedWater(t *testing.T) {
	w := FixedWater{HWM2K: 1000}
	if h := w.H(400, 300); h != 1000 {
		t.Errorf("H = %g, want 1000", h)
	}
	if err := w.Validate(); err != nil {
		t.Error(err)
	}
	for _, v := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		if err := (FixedWater{HWM2K: v}).Validate(); err == nil {
			t.Errorf("FixedWater{%g}.Validate() = nil", v)
		}
	}
}

func TestNaturalWater(t *testing.T) {
	// Base 70 °C under water at 50 °C, film 60 °C, D = 0.2 m (L = 0.05 m).
	// Expected value from the water properties at 60 °C interpolated in
	// PHYSICS-REFERENCES.md item 6.2 [N] (ν 4.74e-7, k 0.654, Pr 2.98,
	// β 5.24e-4; α = ν/Pr), g = 9.80665: Ra = 1.704e8, Nu = 0.15 Ra^(1/3),
	// h ≈ 1088 W/(m²·K). Those inputs are rounded to 3 figures: 1 %.
	const nu, k, pr, beta, l = 4.74e-7, 0.654, 2.98, 5.24e-4, 0.05
	ra := Rayleigh(fluid.StandardGravityMS2, beta, 20, l, nu, nu/pr)
	want := HotPlateUpNu(ra) * k / l
	w := NaturalWater{DiameterM: 0.2}
	if h := w.H(343.15, 323.15); fracDiff(h, want) > 0.01 {
		t.Errorf("H(70 °C, 50 °C) = %.5g W/(m²·K), want %.5g within 1 %%", h, want)
	}

	// Laminar branch (Ra < 1e7 with D = 0.04 m): a base 20 K cooler than the
	// water (cold plate facing up, 0.27 form) has exactly half the
	// coefficient of one 20 K hotter at the same film temperature.
	small := NaturalWater{DiameterM: 0.04}
	up, down := small.H(343.15, 323.15), small.H(323.15, 343.15)
	if math.Abs(up/down-2) > 1e-12 {
		t.Errorf("hot/cold ratio %g, want 2 (0.54/0.27)", up/down)
	}

	// Continuous in the base temperature (no step at Ra = 1e7): no jump
	// above 0.5 % between bases 0.01 K apart from 1 to 40 K above 60 °C
	// water.
	prev := 0.0
	for dt := 1.0; dt < 40; dt += 0.01 {
		h := w.H(333.15+dt, 333.15)
		if prev > 0 && fracDiff(h, prev) > 5e-3 {
			t.Fatalf("H jumps from %g to %g at ΔT %.2f K", prev, h, dt)
		}
		prev = h
	}

	// Small differences are evaluated at 0.1 K: positive at ΔT = 0 and equal
	// to the 0.1 K value there (film temperature aside, 1e-3).
	h0 := w.H(330, 330)
	h01 := w.H(330.1, 330)
	if !(h0 > 0) || fracDiff(h0, h01) > 1e-3 {
		t.Errorf("H at ΔT 0: %g, at 0.1 K: %g", h0, h01)
	}
	// Film temperature beyond the table is clamped, not an error.
	if h := w.H(420, 370); !(h > 0) {
		t.Errorf("H(420, 370) = %g, want positive", h)
	}
	// Below 277 K β ≤ 0: no buoyant convection.
	if h := w.H(274, 273.5); h != 0 {
		t.Errorf("H near 0 °C = %g, want 0", h)
	}
	for _, d := range []float64{0, -0.1, math.NaN()} {
		if h := (NaturalWater{DiameterM: d}).H(350, 330); !math.IsNaN(h) {
			t.Errorf("diameter %g: H = %g, want NaN", d, h)
		}
		if err := (NaturalWater{DiameterM: d}).Validate(); err == nil {
			t.Errorf("diameter %g: Validate() = nil", d)
		}
	}
	if h := w.H(math.NaN(), 330); !math.IsNaN(h) {
		t.Errorf("NaN temperature: H = %g, want NaN", h)
	}
}

func TestBoilingWater(t *testing.T) {
	bw := BoilingWater{Csf: CsfStainlessMechPolished, DiameterM: 0.2}
	nat := NaturalWater{DiameterM: 0.2}
	if err := bw.Validate(); err != nil {
		t.Fatal(err)
	}

	// Below saturation it is natural convection.
	if a, b := bw.H(365, 340), nat.H(365, 340); a != b {
		t.Errorf("below saturation: %g, natural convection %g", a, b)
	}

	// Saturated pool, base 10 K above: h = Rohsenow q″/ΔT_e (standard
	// gravity, n = 1).
	w, s := WaterAt1Atm()
	want := RohsenowFluxWM2(10, CsfStainlessMechPolished, 1, w, s) / 10
	if h := bw.H(383.15, 373.15); fracDiff(h, want) > 1e-12 {
		t.Errorf("ΔT_e 10 K: H = %g, want %g", h, want)
	}
	// N = 1 is the same as N = 0.
	if a, b := bw.H(383.15, 373.15), (BoilingWater{Csf: bw.Csf, N: 1, DiameterM: 0.2}).H(383.15, 373.15); a != b {
		t.Errorf("N 0 gives %g, N 1 gives %g", a, b)
	}

	// Far above saturation the flux is held at the Lienhard–Dhir peak.
	qmax := CriticalFluxWM2(LienhardDhirC, w, s)
	if q := bw.H(473.15, 373.15) * 100; fracDiff(q, qmax) > 1e-12 {
		t.Errorf("ΔT_e 100 K: flux %g, want the peak %g", q, qmax)
	}

	// The flux into subcooled water (at 90 °C) rises continuously with the
	// base temperature through saturation and the natural/boiling switch:
	// no step above 2 % between bases 0.01 K apart, never decreasing.
	const tw = 363.15
	prev := 0.0
	for tb := 364.0; tb < 400; tb += 0.01 {
		q := bw.H(tb, tw) * (tb - tw)
		if q < prev*(1-1e-12) || (prev > 0 && q > prev*1.02) {
			t.Fatalf("flux %g at %.2f K after %g", q, tb, prev)
		}
		prev = q
	}

	bad := []BoilingWater{
		{Csf: 0, DiameterM: 0.2},
		{Csf: math.NaN(), DiameterM: 0.2},
		{Csf: 0.013, N: -1, DiameterM: 0.2},
		{Csf: 0.013, DiameterM: 0},
	}
	for _, b := range bad {
		if err := b.Validate(); err == nil {
			t.Errorf("%+v: Validate() = nil", b)
		}
		if h := b.H(390, 373.15); b.N >= 0 && !math.IsNaN(h) {
			t.Errorf("%+v: H = %g, want NaN", b, h)
		}
	}
}

func BenchmarkNaturalWaterH(b *testing.B) {
	w := NaturalWater{DiameterM: 0.2}
	s := 0.0
	for i := 0; b.Loop(); i++ {
		s += w.H(340+float64(i&31)*0.5, 333.15)
	}
	_ = s
}

func BenchmarkBoilingWaterH(b *testing.B) {
	w := BoilingWater{Csf: CsfStainlessMechPolished, DiameterM: 0.2}
	s := 0.0
	for i := 0; b.Loop(); i++ {
		s += w.H(374+float64(i&31)*0.5, 373.15)
	}
	_ = s
}
