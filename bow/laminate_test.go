package bow

import (
	"math"
	"strings"
	"testing"
)

// Material values used by the tests, from contact.Materials() (whose
// sources are cited there): stainless 304 (MatWeb AISI 304 data sheet),
// aluminium 1050A (1050A data sheet), copper (CDA / MatWeb C11600).
var (
	ss304 = Layer{ThicknessM: 1e-3, ConductivityWMK: 16.2, YoungPa: 193e9, Poisson: 0.29, ExpansionPerK: 17.3e-6}
	al    = Layer{ThicknessM: 1e-3, ConductivityWMK: 222, YoungPa: 71e9, Poisson: 0.33, ExpansionPerK: 24e-6}
	cu    = Layer{ThicknessM: 1e-3, ConductivityWMK: 394, YoungPa: 120e9, Poisson: 0.34, ExpansionPerK: 16.8e-6}
)

func thick(l Layer, tM float64) Layer { l.ThicknessM = tM; return l }

// timoshenkoCurvature is the curvature of a bimetal strip heated uniformly
// by dT (Timoshenko, "Analysis of bi-metal thermostats", J. Opt. Soc. Am.
// 11(3):233–255, 1925, eq. 4):
//
//	κ = 6 (α2 − α1) ΔT (1 + m)² / (h [3(1 + m)² + (1 + m n)(m² + 1/(m n))]),
//
// m = t1/t2, n = E1/E2, h = t1 + t2. For a plate in equal-biaxial bending
// each E becomes E/(1 − ν) (biaxial modulus). With layer 1 on the hob side
// and α1 > α2 the base bends convex towards the hob: ∂²w/∂x² = −κ > 0.
func timoshenkoCurvature(l1, l2 Layer, dT float64) float64 {
	e1 := l1.YoungPa / (1 - l1.Poisson)
	e2 := l2.YoungPa / (1 - l2.Poisson)
	m, n, h := l1.ThicknessM/l2.ThicknessM, e1/e2, l1.ThicknessM+l2.ThicknessM
	return 6 * (l2.ExpansionPerK - l1.ExpansionPerK) * dT * (1 + m) * (1 + m) /
		(h * (3*(1+m)*(1+m) + (1+m*n)*(m*m+1/(m*n))))
}

func TestLaminateSingleLayer(t *testing.T) {
	// Timoshenko & Woinowsky-Krieger 1959 §14: a free plate with a linear
	// through-thickness difference ΔT bows to κ = α ΔT / t; with ΔT = q t / k
	// that is α q / k, whatever the mean temperature.
	for _, c := range []struct {
		name string
		l    Layer
		q    float64
	}{
		{"ss304 3 mm, 50 kW/m²", thick(ss304, 3e-3), 50e3},
		{"alu 4 mm, 80 kW/m²", thick(al, 4e-3), 80e3},
		{"copper 2 mm, cooling 10 kW/m²", thick(cu, 2e-3), -10e3},
	} {
		t.Run(c.name, func(t *testing.T) {
			lam, err := NewLaminate([]Layer{c.l})
			if err != nil {
				t.Fatal(err)
			}
			for _, dT := range []float64{0, 150} {
				got := lam.FreeCurvaturePerM(c.q, dT)
				want := c.l.ExpansionPerK * c.q / c.l.ConductivityWMK
				if math.Abs(got-want) > 1e-12*math.Abs(want) {
					t.Errorf("dT %g: curvature %.12g 1/m, want α q / k = %.12g", dT, got, want)
				}
			}
			// D = E t³/(12(1−ν²)) and ν (Timoshenko & Woinowsky-Krieger 1959 eq. 3).
			d := c.l.YoungPa * math.Pow(c.l.ThicknessM, 3) / (12 * (1 - c.l.Poisson*c.l.Poisson))
			if math.Abs(lam.D11Nm-d) > 1e-12*d || math.Abs(lam.D12Nm-c.l.Poisson*d) > 1e-12*d {
				t.Errorf("D11, D12 = %g, %g N·m, want %g, %g", lam.D11Nm, lam.D12Nm, d, c.l.Poisson*d)
			}
			if math.Abs(lam.NeutralM-c.l.ThicknessM/2) > 1e-15 {
				t.Errorf("neutral plane at %g m, want mid-thickness %g", lam.NeutralM, c.l.ThicknessM/2)
			}
		})
	}
}

func TestLaminateBimetal(t *testing.T) {
	for _, c := range []struct {
		name   string
		l1, l2 Layer
		dT     float64
	}{
		{"ss/al 1:1", ss304, al, 100},
		{"ss 0.6 / al 4", thick(ss304, 0.6e-3), thick(al, 4e-3), 200},
		{"al 4 / ss 0.6", thick(al, 4e-3), thick(ss304, 0.6e-3), 200},
		{"ss 0.5 / cu 2.5", thick(ss304, 0.5e-3), thick(cu, 2.5e-3), 180},
		{"cu 1 / al 3", cu, thick(al, 3e-3), -40},
		{"stiff thin on soft thick", Layer{ThicknessM: 0.2e-3, ConductivityWMK: 20, YoungPa: 400e9, Poisson: 0.3, ExpansionPerK: 5e-6},
			Layer{ThicknessM: 5e-3, ConductivityWMK: 200, YoungPa: 20e9, Poisson: 0.3, ExpansionPerK: 25e-6}, 100},
	} {
		t.Run(c.name, func(t *testing.T) {
			lam, err := NewLaminate([]Layer{c.l1, c.l2})
			if err != nil {
				t.Fatal(err)
			}
			got := lam.FreeCurvaturePerM(0, c.dT)
			want := -timoshenkoCurvature(c.l1, c.l2, c.dT)
			// Same theory, so they agree to rounding; the issue asks for 1 %.
			if math.Abs(got-want) > 1e-9*math.Abs(want) {
				t.Errorf("curvature %.10g 1/m, want Timoshenko (1925) %.10g", got, want)
			}
		})
	}
	// Check value: 1 mm SS304 (E 193 GPa, α 17.3e-6) on 1 mm Al (E 69 GPa,
	// α 23e-6), ΔT = 100 K, equal ν: κ = 0.3987 1/m (PHYSICS-REFERENCES
	// §10.1, computed from the Timoshenko formula). The aluminium on top
	// grows more, so the base dishes: ∂²w/∂x² = −0.3987 1/m.
	l1 := Layer{ThicknessM: 1e-3, ConductivityWMK: 16, YoungPa: 193e9, Poisson: 0.3, ExpansionPerK: 17.3e-6}
	l2 := Layer{ThicknessM: 1e-3, ConductivityWMK: 200, YoungPa: 69e9, Poisson: 0.3, ExpansionPerK: 23e-6}
	lam, _ := NewLaminate([]Layer{l1, l2})
	if got := lam.FreeCurvaturePerM(0, 100); math.Abs(got+0.3987) > 0.00005 {
		t.Errorf("SS/Al check: ∂²w/∂x² = %.5f 1/m, want −0.3987", got)
	}
}

func TestLaminateSymmetricSandwich(t *testing.T) {
	// A sandwich symmetric about its mid-plane has B = 0 and M_T = 0 under
	// a uniform temperature change: it expands without bending.
	for _, layers := range [][]Layer{
		{thick(ss304, 0.6e-3), thick(al, 4e-3), thick(ss304, 0.6e-3)},
		{thick(ss304, 0.4e-3), thick(al, 1e-3), thick(cu, 2e-3), thick(al, 1e-3), thick(ss304, 0.4e-3)},
	} {
		lam, err := NewLaminate(layers)
		if err != nil {
			t.Fatal(err)
		}
		ref := thick(ss304, 0.6e-3).ExpansionPerK * 150 / lam.ThicknessM // scale of a bimetal's curvature
		if got := lam.FreeCurvaturePerM(0, 150); math.Abs(got) > 1e-12*ref {
			t.Errorf("%d layers: curvature %g 1/m under a uniform 150 K, want 0", len(layers), got)
		}
		if math.Abs(lam.NeutralM-lam.ThicknessM/2) > 1e-12 {
			t.Errorf("%d layers: neutral plane %g m, want mid-thickness %g", len(layers), lam.NeutralM, lam.ThicknessM/2)
		}
	}
}

func TestWallStiffness(t *testing.T) {
	// 1 mm stainless wall, R = 100 mm: D_w = 193e9·1e-9/(12(1−0.29²)) =
	// 17.561 N·m, β = (3(1−0.29²)/(0.1²·0.001²))^¼ = 128.75 1/m, k_θ = 2βD_w
	// (hand calculation of the formula in WallStiffnessN's doc).
	got, err := WallStiffnessN(1e-3, 0.1, 193e9, 0.29)
	if err != nil {
		t.Fatal(err)
	}
	if want := 2 * 128.75 * 17.561; math.Abs(got-want) > 2e-4*want {
		t.Errorf("k_θ = %.1f N, want %.1f", got, want)
	}
	// One layer through the layered form: the same value.
	if k, err := WallLayersStiffnessN([]Layer{ss304}, 0.1); err != nil || math.Abs(k-got) > 1e-12*got {
		t.Errorf("WallLayersStiffnessN(1 mm ss304) = %g, %v; want %g", k, err, got)
	}
	// A wall split into two equal layers of one material is the same wall.
	half := thick(ss304, 0.5e-3)
	if k, err := WallLayersStiffnessN([]Layer{half, half}, 0.1); err != nil || math.Abs(k-got) > 1e-9*got {
		t.Errorf("two half layers: %g, %v; want %g", k, err, got)
	}
	// Tri-ply 0.4 ss / 1.6 al / 0.4 ss lies between 2.4 mm of aluminium and
	// 2.4 mm of steel.
	k3, _ := WallLayersStiffnessN([]Layer{thick(ss304, 0.4e-3), thick(al, 1.6e-3), thick(ss304, 0.4e-3)}, 0.1)
	kAl, _ := WallStiffnessN(2.4e-3, 0.1, al.YoungPa, al.Poisson)
	kSS, _ := WallStiffnessN(2.4e-3, 0.1, ss304.YoungPa, ss304.Poisson)
	if !(k3 > kAl && k3 < kSS) {
		t.Errorf("tri-ply wall k_θ = %g N, want between %g (Al) and %g (SS)", k3, kAl, kSS)
	}
	if _, err := WallLayersStiffnessN(nil, 0.1); err == nil {
		t.Error("no wall layers: no error")
	}
	// Scaling: k_θ ∝ t^(5/2) R^(−1/2).
	k2, _ := WallStiffnessN(2e-3, 0.4, 193e9, 0.29)
	if r := k2 / got; math.Abs(r-math.Pow(2, 2.5)/2) > 1e-12 {
		t.Errorf("k_θ(2t, 4R)/k_θ(t, R) = %g, want 2^2.5/2", r)
	}
	for _, c := range []struct {
		t, r, e, nu float64
		want        string
	}{
		{0, 0.1, 193e9, 0.29, "thickness"}, {1e-3, 0, 193e9, 0.29, "radius"}, {1e-3, 0.1, math.NaN(), 0.29, "Young"},
		{1e-3, 0.1, 193e9, 0.5, "Poisson"}, {math.Inf(1), 0.1, 193e9, 0.3, "thickness"},
	} {
		if _, err := WallStiffnessN(c.t, c.r, c.e, c.nu); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("WallStiffnessN(%g, %g, %g, %g): error %v, want one naming %q", c.t, c.r, c.e, c.nu, err, c.want)
		}
	}
}

func TestLaminateBadLayers(t *testing.T) {
	for _, c := range []struct {
		name   string
		layers []Layer
		want   string
	}{
		{"none", nil, "layers"},
		{"too many", make([]Layer, MaxLayers+1), "layers"},
		{"zero thickness", []Layer{thick(al, 0)}, "thickness"},
		{"NaN conductivity", []Layer{{ThicknessM: 1e-3, ConductivityWMK: math.NaN(), YoungPa: 1e9, ExpansionPerK: 1e-5}}, "conductivity"},
		{"no modulus", []Layer{{ThicknessM: 1e-3, ConductivityWMK: 10, ExpansionPerK: 1e-5}}, "young"},
		{"Poisson 0.5", []Layer{{ThicknessM: 1e-3, ConductivityWMK: 10, YoungPa: 1e9, Poisson: 0.5}}, "poisson"},
		{"infinite expansion", []Layer{{ThicknessM: 1e-3, ConductivityWMK: 10, YoungPa: 1e9, ExpansionPerK: math.Inf(1)}}, "expansion"},
	} {
		if _, err := NewLaminate(c.layers); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one naming %q", c.name, err, c.want)
		}
	}
}
