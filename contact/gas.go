package contact

import "math"

// SeparationM returns the mean-plane separation Y of two rough surfaces in
// contact, m, by the correlation of Yovanovich, DeVaal & Hegazy (1982) as
// restated by Yovanovich (2005):
//
//	Y = 1.184·σ·[−ln(3.132·P/H_c)]^0.547
//
// (PHYSICS-REFERENCES.md 4.1 [M]; within 0.66 % of the exact
// √2·erfc⁻¹(2P/H_c) over 1e-6 ≤ P/H_c ≤ 2e-2). It returns NaN for ratio ≤ 0
// or ratio ≥ 1/3.132, where the form has no meaning.
func SeparationM(sigmaM, ratio float64) float64 {
	l := -math.Log(3.132 * ratio)
	if !(ratio > 0) || !(l > 0) {
		return math.NaN()
	}
	return 1.184 * sigmaM * math.Pow(l, 0.547)
}

// AccommodationParameter returns α = (2 − a₁)/a₁ + (2 − a₂)/a₂ for thermal
// accommodation coefficients a₁ and a₂ of the gas on the two surfaces
// (PHYSICS-REFERENCES.md 4.2 [M]).
func AccommodationParameter(a1, a2 float64) float64 { return (2-a1)/a1 + (2-a2)/a2 }

// GasParameterM returns the rarefaction (temperature-jump) length of the gas
// gap, M = α·β·Λ, m, with α from AccommodationParameter(a1, a2),
// β = 2γ/((γ + 1)·Pr) and mean free path mfpM (m)
// (Yovanovich 2005; PHYSICS-REFERENCES.md 4.2 [M]).
func GasParameterM(a1, a2, gamma, prandtl, mfpM float64) float64 {
	return rarefactionM(AccommodationParameter(a1, a2)*2*gamma, gamma+1, prandtl, mfpM)
}

// rarefactionM is GasParameterM with its parameter-only factors given:
// alpha2Gamma = α·2·γ and gammaPlus1 = γ + 1, so that a field of cells
// computes them once (InterfaceParams.cell).
func rarefactionM(alpha2Gamma, gammaPlus1, prandtl, mfpM float64) float64 {
	return alpha2Gamma / (gammaPlus1 * prandtl) * mfpM
}

// GasGapWM2K returns the conductance of a gas layer between two surfaces
// whose mean planes are separationM apart, h_g = k_g/(Y + M), W/(m²·K),
// with k_g the gas conductivity (W/(m·K)) and M the rarefaction length (m)
// (Yovanovich 2005; Song, Yovanovich & Goodman 1993 for the macro-gap;
// PHYSICS-REFERENCES.md 4.1, 4.4 [M]).
func GasGapWM2K(kGasWMK, separationM, gasParamM float64) float64 {
	return kGasWMK / (separationM + gasParamM)
}
