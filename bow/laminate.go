package bow

import (
	"fmt"
	"math"
)

// Layer is one layer of a pan base, listed from the hob side up.
type Layer struct {
	ThicknessM      float64 // t, m
	ConductivityWMK float64 // k, W/(m·K)
	YoungPa         float64 // E, Pa
	Poisson         float64 // ν
	ExpansionPerK   float64 // linear thermal expansion coefficient α, 1/K
}

// MaxLayers bounds the number of layers of a base (as the job file does).
const MaxLayers = 20

// validate reports the first value of l out of its domain.
func (l Layer) validate(i int) error {
	bad := func(what string, v float64, want string) error {
		return fmt.Errorf("bow: layer %d (from the hob side): %s = %g, want %s", i+1, what, v, want)
	}
	switch {
	case !(l.ThicknessM > 0 && l.ThicknessM < 0.1):
		return bad("thickness_m", l.ThicknessM, "in (0, 0.1) m")
	case !(l.ConductivityWMK > 0) || math.IsInf(l.ConductivityWMK, 0):
		return bad("conductivity_w_mk", l.ConductivityWMK, "> 0 and finite")
	case !(l.YoungPa > 0) || math.IsInf(l.YoungPa, 0):
		return bad("young_pa", l.YoungPa, "> 0 and finite (the material has no Young's modulus?)")
	case !(l.Poisson >= 0 && l.Poisson < 0.5):
		return bad("poisson", l.Poisson, "in [0, 0.5)")
	case math.IsNaN(l.ExpansionPerK) || math.Abs(l.ExpansionPerK) > 1e-3:
		return bad("expansion_per_k", l.ExpansionPerK, "finite, |α| ≤ 1e-3 1/K")
	}
	return nil
}

// Laminate is a layered isotropic plate reduced to an isotropic Kirchhoff
// plate with zero membrane forces (see the package comment).
//
// Classical lamination theory for isotropic layers (Jones, Mechanics of
// Composite Materials, 2nd ed., 1999, §4.2; Whitney 1987, ch. 2): layer i
// has the plane-stress stiffnesses Q11 = E/(1−ν²), Q12 = ν Q11,
// Q66 = (Q11 − Q12)/2, so every sum A = Σ∫Q dz, B = Σ∫Q z dz,
// D = Σ∫Q z² dz is itself isotropic and splits into an equal-biaxial part
// (modulus Q11 + Q12 = E/(1−ν)) and a deviatoric part (Q11 − Q12 =
// E/(1+ν)) that do not couple. With N = 0 each part reduces to
// D* = D − B²/A. A thermal strain α ΔT(z) is equal-biaxial, so it loads the
// plate only through the equal-biaxial part:
//
//	M_T* = Σ ∫ E/(1−ν) α ΔT(z) (z − z_n) dz,   z_n = B_s/A_s,
//
// and a free plate under a uniform M_T* takes the spherical curvature
// κ = M_T*/D*_s in every direction (D*_s = D*11 + D*12).
type Laminate struct {
	Layers []Layer

	ThicknessM float64 // total thickness H, m
	// NeutralM is the height above the hob face of the plane about which
	// equal-biaxial bending and stretching uncouple (z_n = B_s/A_s), m.
	NeutralM float64
	// D11Nm and D12Nm are the reduced bending stiffnesses D*11 and D*12,
	// N·m (for one layer D11 = E t³/(12(1−ν²)), D12 = ν D11).
	D11Nm, D12Nm float64
	// ResistanceM2KW is the through-thickness resistance Σ t/k, m²·K/W.
	ResistanceM2KW float64

	// momentPerK and momentPerFlux give the reduced thermal moment per cell:
	// M_T* = momentPerK·(T − T_ref) + momentPerFlux·q, N·m/m.
	momentPerK, momentPerFlux float64
}

// NewLaminate computes the reduced stiffnesses and thermal-moment
// coefficients of layers (from the hob side up).
func NewLaminate(layers []Layer) (*Laminate, error) {
	if len(layers) == 0 || len(layers) > MaxLayers {
		return nil, fmt.Errorf("bow: %d base layers, want 1 to %d", len(layers), MaxLayers)
	}
	l := &Laminate{Layers: append([]Layer(nil), layers...)}
	for i, ly := range layers {
		if err := ly.validate(i); err != nil {
			return nil, err
		}
		l.ThicknessM += ly.ThicknessM
		l.ResistanceM2KW += ly.ThicknessM / ly.ConductivityWMK
	}
	// Heights are measured from the mid-plane to keep the sums well
	// conditioned; NeutralM is reported from the hob face.
	var as, bs, ds, ad, bd, dd float64
	z0 := -l.ThicknessM / 2
	for _, ly := range layers {
		z1 := z0 + ly.ThicknessM
		qs := ly.YoungPa / (1 - ly.Poisson)
		qd := ly.YoungPa / (1 + ly.Poisson)
		m1, m2, m3 := z1-z0, (z1*z1-z0*z0)/2, (z1*z1*z1-z0*z0*z0)/3
		as, bs, ds = as+qs*m1, bs+qs*m2, ds+qs*m3
		ad, bd, dd = ad+qd*m1, bd+qd*m2, dd+qd*m3
		z0 = z1
	}
	zn := bs / as
	dS := ds - bs*bs/as // equal-biaxial: D11 + D12
	dD := dd - bd*bd/ad // deviatoric:    D11 − D12
	l.D11Nm, l.D12Nm = (dS+dD)/2, (dS-dD)/2
	l.NeutralM = zn + l.ThicknessM/2

	// Temperature through the thickness: the plate solve's base node sits at
	// half the through-thickness resistance (thermal.Problem), so with the
	// flux q flowing up from the hob face,
	//   T(z) = T_node + q·(R/2 − R(z)),  R(z) = ∫₀^z dz'/k.
	z0 = -l.ThicknessM / 2
	r0 := 0.0 // resistance from the hob face to the bottom of the layer
	for _, ly := range layers {
		t := ly.ThicknessM
		e := ly.YoungPa / (1 - ly.Poisson) * ly.ExpansionPerK
		d := z0 - zn
		// ∫₀^t (u + d) du and ∫₀^t (c − u/k)(u + d) du with c = R/2 − r0.
		first := t*t/2 + d*t
		c := l.ResistanceM2KW/2 - r0
		second := c*first - (t*t*t/3+d*t*t/2)/ly.ConductivityWMK
		l.momentPerK += e * first
		l.momentPerFlux += e * second
		z0 += t
		r0 += t / ly.ConductivityWMK
	}
	return l, nil
}

// BiaxialStiffnessNm returns D*_s = D*11 + D*12, N·m: the stiffness of
// equal-biaxial (spherical) bending, D(1+ν) for a single layer.
func (l *Laminate) BiaxialStiffnessNm() float64 { return l.D11Nm + l.D12Nm }

// ThermalMomentNm returns the reduced thermal moment M_T*, N·m/m, of a cell
// with the flux fluxWM2 (W/m², positive from the hob into the pan) and the
// base node temperature rise dTK (K) above the reference temperature. A
// negative moment bends the base convex towards the hob (its centre down).
func (l *Laminate) ThermalMomentNm(fluxWM2, dTK float64) float64 {
	return l.momentPerK*dTK + l.momentPerFlux*fluxWM2
}

// FreeCurvaturePerM returns the curvature ∂²w/∂x² = ∂²w/∂y², 1/m, that a
// free plate takes under a uniform flux and temperature rise: −M_T*/D*_s.
// For one layer it is α q / k (Timoshenko & Woinowsky-Krieger, Theory of
// Plates and Shells, 2nd ed., 1959, §14: κ = α ΔT / t with ΔT = q t / k).
func (l *Laminate) FreeCurvaturePerM(fluxWM2, dTK float64) float64 {
	return -l.ThermalMomentNm(fluxWM2, dTK) / l.BiaxialStiffnessNm()
}

// WallStiffnessN returns the rotational stiffness k_θ, N·m/(m·rad) (= N),
// with which a pan's cylindrical wall restrains the rim of the base.
//
// The wall is a long thin cylindrical shell of radius radiusM and thickness
// thicknessM loaded at its edge by a moment M0 and a radial force Q0. From
// Timoshenko & Woinowsky-Krieger, Theory of Plates and Shells, 2nd ed.,
// 1959, §114 (symmetrical deformation of a circular cylindrical shell,
// edge loads), with D_w = E t³/(12(1−ν²)) and β⁴ = 3(1−ν²)/(R² t²), the
// edge deflection and rotation are
//
//	w0 = −(β M0 + Q0)/(2β³ D_w),   θ0 = (2β M0 + Q0)/(2β² D_w).
//
// The base is far stiffer in its plane than the wall is radially, so it
// holds the wall's edge radially (w0 = 0 ⇒ Q0 = −β M0), and then
// θ0 = M0/(2β D_w): k_θ = M0/θ0 = 2β D_w. (A wall free to move radially at
// the joint would give β D_w, half as much.)
func WallStiffnessN(thicknessM, radiusM, youngPa, poisson float64) (float64, error) {
	switch {
	case !(thicknessM > 0 && thicknessM < 0.05):
		return 0, fmt.Errorf("bow: wall thickness %g m, want in (0, 0.05) m", thicknessM)
	case !(radiusM > thicknessM && radiusM < 10):
		return 0, fmt.Errorf("bow: wall radius %g m, want above the wall thickness and below 10 m", radiusM)
	case !(youngPa > 0) || math.IsInf(youngPa, 0):
		return 0, fmt.Errorf("bow: wall Young's modulus %g Pa, want > 0 and finite", youngPa)
	case !(poisson >= 0 && poisson < 0.5):
		return 0, fmt.Errorf("bow: wall Poisson's ratio %g, want in [0, 0.5)", poisson)
	}
	nu2 := 1 - poisson*poisson
	dw := youngPa * thicknessM * thicknessM * thicknessM / (12 * nu2)
	beta := math.Sqrt(math.Sqrt(3 * nu2 / (radiusM * radiusM * thicknessM * thicknessM)))
	return 2 * beta * dw, nil
}

// WallLayersStiffnessN is WallStiffnessN for a layered (clad) wall of
// radius radiusM: the same semi-infinite shell with β⁴ = C/(4 R² D_w),
// where C = A11 − A12²/A11 is the wall's hoop membrane stiffness with no
// axial force and D_w = D*11 its reduced bending stiffness (for one layer
// C = E t and D_w = E t³/(12(1−ν²)), which gives WallStiffnessN's β). The
// layers are listed from the outside in; their order only matters through
// D_w.
func WallLayersStiffnessN(layers []Layer, radiusM float64) (float64, error) {
	lam, err := NewLaminate(layers)
	if err != nil {
		return 0, fmt.Errorf("wall: %w", err)
	}
	if !(radiusM > lam.ThicknessM && radiusM < 10) {
		return 0, fmt.Errorf("bow: wall radius %g m, want above the wall thickness and below 10 m", radiusM)
	}
	var a11, a12 float64
	for _, ly := range layers {
		q11 := ly.YoungPa / (1 - ly.Poisson*ly.Poisson)
		a11 += q11 * ly.ThicknessM
		a12 += ly.Poisson * q11 * ly.ThicknessM
	}
	c := a11 - a12*a12/a11
	beta := math.Sqrt(math.Sqrt(c / (4 * radiusM * radiusM * lam.D11Nm)))
	return 2 * beta * lam.D11Nm, nil
}
