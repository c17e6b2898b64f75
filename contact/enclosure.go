package contact

import (
	"math"

	"gapflux/fluid"
)

// RayleighCritical is the onset of convection in a horizontal fluid layer
// between rigid plates heated from below (Pellew & Southwell 1940; 1707.76,
// PHYSICS-REFERENCES.md 9.1 [M]).
const RayleighCritical = 1708.0

// LayerRayleigh returns the Rayleigh number of an air layer gapM thick (m)
// between a lower surface at tLowerK and an upper one at tUpperK (K),
//
//	Ra = g·β·(T_lower − T_upper)·δ³/(ν·α),  β = 1/T_f,
//
// with air properties at the film temperature T_f = (T_lower + T_upper)/2
// from fluid.AirAt (PHYSICS-REFERENCES.md 4.4, 7). Ra is negative when the
// layer is heated from above (stable). It returns the error of fluid.AirAt
// when T_f is outside the air table.
func LayerRayleigh(gapM, tLowerK, tUpperK float64) (float64, error) {
	tf := (tLowerK + tUpperK) / 2
	air, err := fluid.AirAt(tf)
	if err != nil {
		return 0, err
	}
	return rayleigh(air.KinViscosityM2S, air.DiffusivityM2S, tf, tLowerK-tUpperK, gapM), nil
}

// rayleigh is LayerRayleigh's Ra for air of kinematic viscosity nuM2S and
// diffusivity alphaM2S (m²/s) at the film temperature filmK (K).
func rayleigh(nuM2S, alphaM2S, filmK, deltaK, gapM float64) float64 {
	return fluid.StandardGravityMS2 / filmK * deltaK * gapM * gapM * gapM / (nuM2S * alphaM2S)
}

// HollandsNusselt returns the Nusselt number of a horizontal air layer
// heated from below by Hollands, Raithby & Konicek (1975):
//
//	Nu = 1 + 1.44·[1 − 1708/Ra]• + [(Ra/5830)^(1/3) − 1]•,  [x]• = max(x, 0)
//
// which is 1 (conduction) for Ra ≤ 1708 (PHYSICS-REFERENCES.md 9.2; form
// from memory [M], the constant 5830 [C]).
func HollandsNusselt(ra float64) float64 {
	if !(ra > RayleighCritical) {
		return 1
	}
	return 1 + 1.44*(1-RayleighCritical/ra) + math.Max(math.Cbrt(ra/5830)-1, 0)
}
