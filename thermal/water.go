package thermal

import (
	"fmt"
	"math"

	"gapflux/fluid"
)

// WaterSaturationK is the saturation temperature of water used by the water
// sides, K: 373.15 K at 1 atm (Incropera Table A.6).
const WaterSaturationK = fluid.WaterMaxK

// naturalWaterMinDeltaK is the smallest base–water temperature difference
// at which NaturalWater evaluates its correlation, K. Below it the
// coefficient is held at its value for this difference, so that it stays
// positive as ΔT → 0 (a numerical choice of ours, not from a source).
const naturalWaterMinDeltaK = 0.1

// water1Atm and sat1Atm are the properties of water boiling at 1 atm, fixed
// at package initialisation and never modified.
var water1Atm, sat1Atm = WaterAt1Atm()

// FixedWater is a water side with a fixed heat transfer coefficient.
type FixedWater struct {
	HWM2K float64 // W/(m²·K)
}

// H returns w.HWM2K whatever the temperatures.
func (w FixedWater) H(tBaseK, tWaterK float64) float64 { return w.HWM2K }

// Validate reports whether the coefficient is positive and finite.
func (w FixedWater) Validate() error {
	if !(w.HWM2K > 0) || math.IsInf(w.HWM2K, 0) {
		return fmt.Errorf("thermal: fixed water-side coefficient %g W/(m²·K) is not positive and finite", w.HWM2K)
	}
	return nil
}

// NaturalWater is natural convection from a pan's inner base face to the
// water above it: the base is a hot horizontal plate facing up (McAdams
// 1954; Incropera, 6th ed., §9.6.2; HotPlateUpNuContinuous, which has no
// step at Ra = 10⁷), or, when cooler than the
// water, a cold plate facing up (HotPlateDownNu), with L = A/P = D/4 for a
// disk of diameter DiameterM.
//
// Water properties are those of Incropera Table A.6 (fluid.WaterAt) at the
// film temperature (T_base + T_water)/2, clamped to the table's
// 273.15–373.15 K, with the tabulated expansion coefficient β; where β ≤ 0
// (below 277 K, the density maximum) the coefficient is 0. Differences
// below 0.1 K are evaluated at 0.1 K.
type NaturalWater struct {
	DiameterM float64 // diameter of the wetted base, m
}

// H returns the natural-convection coefficient, W/(m²·K), with the base face
// at tBaseK and the bulk water at tWaterK. It returns NaN when DiameterM is
// not positive or a temperature is NaN.
func (w NaturalWater) H(tBaseK, tWaterK float64) float64 {
	return naturalWaterH(tBaseK, tWaterK, w.DiameterM)
}

// Validate reports whether the diameter is positive and finite.
func (w NaturalWater) Validate() error { return validDiameter(w.DiameterM) }

func validDiameter(dM float64) error {
	if !(dM > 0) || math.IsInf(dM, 0) {
		return fmt.Errorf("thermal: water-side diameter %g m is not positive and finite", dM)
	}
	return nil
}

func naturalWaterH(tBaseK, tWaterK, dM float64) float64 {
	if !(dM > 0) {
		return math.NaN()
	}
	tf := min(max(0.5*(tBaseK+tWaterK), fluid.WaterMinK), fluid.WaterMaxK)
	p, err := fluid.WaterAt(tf)
	if err != nil {
		return math.NaN() // only for NaN temperatures
	}
	if !(p.ExpansionPerK > 0) {
		return 0
	}
	l := dM / 4
	dt := tBaseK - tWaterK
	ra := Rayleigh(fluid.StandardGravityMS2, p.ExpansionPerK, max(math.Abs(dt), naturalWaterMinDeltaK), l,
		p.KinViscosityM2S, p.DiffusivityM2S)
	nu := HotPlateUpNuContinuous(ra)
	if dt < 0 {
		nu = HotPlateDownNu(ra)
	}
	return nu * p.ConductivityWMK / l
}

// BoilingWater is the water side of a base that may boil its load at 1 atm
// (T_sat = WaterSaturationK = 373.15 K). Where the base face is above
// saturation, the flux is Rohsenow's (RohsenowFluxWM2, excess temperature
// ΔT_e = T_base − T_sat, liquid properties at T_sat from Incropera Table A.6),
// held at the Lienhard–Dhir peak flux (CriticalFluxWM2 with LienhardDhirC):
// transition and film boiling are not modelled. Everywhere the flux is at
// least that of NaturalWater, so the switch is continuous (the larger of the
// two is taken).
//
// The coefficient is referred to the bulk water temperature, so that
// H·(T_base − T_water) is the flux; for saturated water that is q″/ΔT_e.
// With the bulk still below saturation the saturated-pool correlation is
// used as it stands (subcooling is ignored).
type BoilingWater struct {
	Csf float64 // Rohsenow surface–fluid coefficient (CsfStainlessMechPolished, ...)
	N   float64 // Rohsenow Prandtl exponent; 0 means 1 (water, Incropera eq. 10.5)

	DiameterM float64 // diameter of the wetted base, m, for natural convection
}

// H returns the water-side coefficient, W/(m²·K), with the base face at
// tBaseK and the bulk water at tWaterK. It returns NaN when Csf or
// DiameterM is not positive or a temperature is NaN.
func (w BoilingWater) H(tBaseK, tWaterK float64) float64 {
	hn := naturalWaterH(tBaseK, tWaterK, w.DiameterM)
	if !(w.Csf > 0) {
		return math.NaN()
	}
	dte := tBaseK - WaterSaturationK
	if !(dte > 0) || !(tBaseK > tWaterK) {
		return hn
	}
	n := w.N
	if n == 0 {
		n = RohsenowNWater
	}
	q := min(RohsenowFluxWM2(dte, w.Csf, n, water1Atm, sat1Atm), CriticalFluxWM2(LienhardDhirC, water1Atm, sat1Atm))
	return max(hn, q/(tBaseK-tWaterK))
}

// Validate reports whether Csf, N and DiameterM are usable.
func (w BoilingWater) Validate() error {
	if !(w.Csf > 0) || math.IsInf(w.Csf, 0) {
		return fmt.Errorf("thermal: Rohsenow C_sf %g is not positive and finite", w.Csf)
	}
	if !(w.N >= 0) || math.IsInf(w.N, 0) {
		return fmt.Errorf("thermal: Rohsenow exponent n %g is negative or not finite", w.N)
	}
	return validDiameter(w.DiameterM)
}
