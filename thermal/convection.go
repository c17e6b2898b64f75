package thermal

import (
	"fmt"
	"math"

	"gapflux/fluid"
)

// Rayleigh returns the Rayleigh number Ra_L = g·β·ΔT·L³/(ν·α) for gravity
// gMS2 (m/s²), expansion coefficient betaPerK (1/K), temperature difference
// dTK (K), length lM (m), kinematic viscosity nuM2S and thermal diffusivity
// alphaM2S (m²/s).
func Rayleigh(gMS2, betaPerK, dTK, lM, nuM2S, alphaM2S float64) float64 {
	return gMS2 * betaPerK * dTK * lM * lM * lM / (nuM2S * alphaM2S)
}

// ChurchillChuNu returns the mean Nusselt number Nu_L = h·L/k of an
// isothermal vertical plate of height L in natural convection, valid for all
// Rayleigh numbers (Churchill & Chu 1975, Int. J. Heat Mass Transfer
// 18:1323–1329; Incropera, Fundamentals of Heat and Mass Transfer, 6th ed.,
// eq. 9.26):
//
//	Nu_L = {0.825 + 0.387·Ra^(1/6) / [1 + (0.492/Pr)^(9/16)]^(8/27)}²
//
// It returns NaN for negative ra or non-positive pr.
func ChurchillChuNu(ra, pr float64) float64 {
	if !(ra >= 0) || !(pr > 0) {
		return math.NaN()
	}
	f := math.Pow(1+math.Pow(0.492/pr, 9.0/16), 8.0/27)
	s := 0.825 + 0.387*math.Pow(ra, 1.0/6)/f
	return s * s
}

// HotPlateUpNu returns the mean Nusselt number Nu_L = h·L/k of the upper
// face of a hot horizontal plate (or the lower face of a cold one), with
// L = A/P (D/4 for a disk): McAdams (1954), as in Incropera, 6th ed., §9.6.2,
// eqs. 9.30 and 9.31:
//
//	Nu_L = 0.54·Ra^(1/4)   Ra ≤ 10⁷
//	Nu_L = 0.15·Ra^(1/3)   Ra > 10⁷
//
// The stated ranges are 10⁴ ≤ Ra ≤ 10¹¹ (Pr ≥ 0.7 for the first); outside
// them the same forms are used as they stand. As in the source, the switch
// at 10⁷ is not continuous (the turbulent form is 6 % higher there). It
// returns NaN for negative ra.
func HotPlateUpNu(ra float64) float64 {
	switch {
	case !(ra >= 0):
		return math.NaN()
	case ra <= 1e7:
		return 0.54 * math.Pow(ra, 0.25)
	}
	return 0.15 * math.Cbrt(ra)
}

// HotPlateUpNuContinuous returns the larger of the two McAdams forms of
// HotPlateUpNu, max(0.54·Ra^(1/4), 0.15·Ra^(1/3)). The forms meet at
// Ra = 3.6¹² ≈ 4.74e6, so this is HotPlateUpNu except for 4.74e6 < Ra ≤ 10⁷,
// where it is up to 6 % higher, and it is continuous in Ra. The water side
// and the air-side coefficients use it, so that the nonlinear solves and
// the heat-up quadrature see no step. It returns NaN for negative ra.
func HotPlateUpNuContinuous(ra float64) float64 {
	if !(ra >= 0) {
		return math.NaN()
	}
	return max(0.54*math.Pow(ra, 0.25), 0.15*math.Cbrt(ra))
}

// HotPlateDownNu returns the mean Nusselt number Nu_L = h·L/k of the lower
// face of a hot horizontal plate (or the upper face of a cold one), L = A/P:
// Nu_L = 0.27·Ra^(1/4) (McAdams 1954, as in Incropera, 6th ed., eq. 9.32,
// stated for 10⁵ ≤ Ra ≤ 10¹⁰ and used as is outside it). It returns NaN for
// negative ra.
func HotPlateDownNu(ra float64) float64 {
	if !(ra >= 0) {
		return math.NaN()
	}
	return 0.27 * math.Pow(ra, 0.25)
}

// airFilm returns the properties of air at the film temperature of a surface
// at tSurfK in air at tAirK, with β = 1/T_f (ideal gas).
func airFilm(tSurfK, tAirK float64) (a fluid.Air, betaPerK float64, err error) {
	tf := 0.5 * (tSurfK + tAirK)
	a, err = fluid.AirAt(tf)
	if err != nil {
		return a, 0, fmt.Errorf("thermal: natural convection, surface %.6g K in air %.6g K: %w", tSurfK, tAirK, err)
	}
	return a, 1 / tf, nil
}

// AirPlateUpHWM2K returns the natural-convection coefficient, W/(m²·K), of a
// horizontal isothermal surface at tSurfK facing up into still air at tAirK
// (K), with characteristic length lM = A/P (m; D/4 for a disk). A surface
// hotter than the air uses HotPlateUpNuContinuous, a cooler one
// HotPlateDownNu. Air
// properties are those of Incropera Table A.4 (fluid.AirAt) at the film
// temperature (T_s + T_∞)/2, with β = 1/T_f and standard gravity. It returns
// 0 for equal temperatures, and an error when the film temperature is outside
// the air table or lM is not positive.
func AirPlateUpHWM2K(tSurfK, tAirK, lM float64) (float64, error) {
	if !(lM > 0) {
		return 0, fmt.Errorf("thermal: plate length %g m is not positive", lM)
	}
	a, beta, err := airFilm(tSurfK, tAirK)
	if err != nil {
		return 0, err
	}
	dt := tSurfK - tAirK
	ra := Rayleigh(fluid.StandardGravityMS2, beta, math.Abs(dt), lM, a.KinViscosityM2S, a.DiffusivityM2S)
	nu := HotPlateUpNuContinuous(ra)
	if dt < 0 {
		nu = HotPlateDownNu(ra)
	}
	return nu * a.ConductivityWMK / lM, nil
}

// AirVerticalHWM2K returns the natural-convection coefficient, W/(m²·K), of
// a vertical isothermal surface of height heightM (m) at tSurfK in still air
// at tAirK (K), from ChurchillChuNu with Incropera Table A.4 air properties
// at the film temperature, β = 1/T_f and standard gravity. It returns an
// error when the film temperature is outside the air table or heightM is not
// positive.
func AirVerticalHWM2K(tSurfK, tAirK, heightM float64) (float64, error) {
	if !(heightM > 0) {
		return 0, fmt.Errorf("thermal: wall height %g m is not positive", heightM)
	}
	a, beta, err := airFilm(tSurfK, tAirK)
	if err != nil {
		return 0, err
	}
	ra := Rayleigh(fluid.StandardGravityMS2, beta, math.Abs(tSurfK-tAirK), heightM, a.KinViscosityM2S, a.DiffusivityM2S)
	return ChurchillChuNu(ra, a.Prandtl) * a.ConductivityWMK / heightM, nil
}
