package thermal

import (
	"math"
	"testing"
)

// TestBlackbodyFraction checks F(0→λT) against the published table:
// Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass
// Transfer, 6th ed., Table 12.1 (Table 12.2 in the 7th), six decimals
// (values from memory [M]). The table sits up to 4e-5 above the exact
// integral of Planck's law (checked here by Simpson quadrature, which our
// series matches to 1e-11), so the tolerance against it is 5e-5.
func TestBlackbodyFraction(t *testing.T) {
	tests := []struct{ lambdaTUMK, want float64 }{
		{1000, 0.000321},
		{2000, 0.066728},
		{2898, 0.250108},
		{3000, 0.273232},
		{4000, 0.480877},
		{5000, 0.633747},
		{6000, 0.737818},
		{8000, 0.856288},
		{10000, 0.914199},
	}
	for _, tc := range tests {
		got := BlackbodyFraction(tc.lambdaTUMK * 1e-6)
		if math.Abs(got-tc.want) > 5e-5 {
			t.Errorf("F(0→%g µm·K) = %.7f, table %.6f", tc.lambdaTUMK, got, tc.want)
		}
		if q := planckQuadrature(tc.lambdaTUMK * 1e-6); math.Abs(got-q) > 1e-11 {
			t.Errorf("F(0→%g µm·K) = %.13f, quadrature %.13f", tc.lambdaTUMK, got, q)
		}
	}
	// The two series meet at ζ = 0.5 (λT ≈ 28776 µm·K) to 1e-12.
	at := SecondRadiationConstantMK / 0.5
	if d := math.Abs(BlackbodyFraction(at*(1-1e-12)) - BlackbodyFraction(at*(1+1e-12))); d > 1e-12 {
		t.Errorf("series disagree at ζ = 2 by %g", d)
	}
	for _, v := range []float64{0, -1, math.NaN()} {
		if BlackbodyFraction(v) != 0 {
			t.Errorf("F(%g) = %g, want 0", v, BlackbodyFraction(v))
		}
	}
	if BlackbodyFraction(math.Inf(1)) != 1 {
		t.Error("F(+Inf) is not 1")
	}
	// Monotone from 0 to 1.
	prev := 0.0
	for lt := 100.0; lt < 1e6; lt *= 1.05 {
		f := BlackbodyFraction(lt * 1e-6)
		if f < prev || f > 1 {
			t.Fatalf("F not monotone in [0, 1] at %g µm·K: %g after %g", lt, f, prev)
		}
		prev = f
	}
}

// TestCoilShare: an element at 1000 to 1300 K under the default glass
// window (0.7 to 2.7 µm, τ = 0.65; see the hob keys in pipeline for its
// sources) sends the share τ·F(λ₁T→λ₂T)·ε_c σT⁴/q of its power through the
// glass. For the band alone F is 0.21 to 0.39 over that range (table
// above, interpolated: F(0→2.7·1000) = 0.21 to F(0→2.7·1300 = 3510) = 0.38),
// so the share is about 0.1 to 0.35 of the power; and the balance's
// element temperature gives back the power.
func TestCoilShare(t *testing.T) {
	c := Coil{Emissivity: 0.85, BandLoM: 0.7e-6, BandHiM: 2.7e-6, Tau: 0.65}
	if err := c.validate(); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ q, glassK float64 }{
		{70.7e3, 800}, {30e3, 700}, {120e3, 850}, {70.7e3, 600},
	} {
		s, err := c.Balance(tc.q, tc.glassK, 0.9)
		if err != nil {
			t.Fatal(err)
		}
		sb := 5.670374419e-8
		back := sb * (math.Pow(s.TempK, 4) - math.Pow(tc.glassK, 4)) / (1/0.85 + 1/0.9 - 1)
		if d := math.Abs(back-tc.q) / tc.q; d > 1e-12 {
			t.Errorf("q %g: element at %.6g K gives %g W/m²", tc.q, s.TempK, back)
		}
		f := BandFraction(0.7e-6, 2.7e-6, s.TempK)
		t.Logf("q %.0f W/m², glass %.0f K: element %.1f K, band F %.4f, share %.4f", tc.q, tc.glassK, s.TempK, f, s.Share)
		if s.TempK >= 1000 && s.TempK <= 1300 {
			if !(f > 0.2 && f < 0.4) || !(s.Share > 0.1 && s.Share < 0.35) {
				t.Errorf("element %.1f K: band F %.4f, share %.4f outside 0.2–0.4 and 0.1–0.35", s.TempK, f, s.Share)
			}
		}
	}
	bad := []Coil{{0, 0.7e-6, 2.7e-6, 0.6}, {0.8, 2.7e-6, 0.7e-6, 0.6}, {0.8, 0.7e-6, 2.7e-6, 1}, {0.8, 0.7e-6, math.Inf(1), 0.5}}
	for _, b := range bad {
		if b.validate() == nil {
			t.Errorf("%+v: no error", b)
		}
	}
	if _, err := c.Balance(0, 800, 0.9); err == nil {
		t.Error("zero power: no error")
	}
}

// planckQuadrature integrates F(0→λT) = (15/π⁴)∫_ζ^∞ x³/(eˣ − 1) dx,
// ζ = c₂/(λT), by composite Simpson's rule on [ζ, ζ + 80] with 200 000
// panels.
func planckQuadrature(lambdaTMK float64) float64 {
	z := SecondRadiationConstantMK / lambdaTMK
	const n = 200000
	a, b := z, z+80
	h := (b - a) / n
	f := func(x float64) float64 { return x * x * x / math.Expm1(x) }
	s := f(a) + f(b)
	for i := 1; i < n; i++ {
		w := 2.0
		if i%2 == 1 {
			w = 4
		}
		s += w * f(a+float64(i)*h)
	}
	return 15 / math.Pow(math.Pi, 4) * s * h / 3
}
