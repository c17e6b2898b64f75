package contact

import "math"

// The range of relative pressure P/H_c over which the solid-spot and
// separation correlations were fitted: roughly 1e-6 to 2e-2
// (PHYSICS-REFERENCES.md 1.2, from memory [M]).
const (
	CorrelationMinRatio = 1e-6
	CorrelationMaxRatio = 2e-2
)

// PlasticContactWM2K returns the solid-spot conductance of a plastic
// contact, W/(m²·K), by the Cooper–Mikic–Yovanovich model with
// Yovanovich's (1982) constants:
//
//	h_s = 1.25·k_s·(m/σ)·(P/H_c)^0.95
//
// kSWMK is the harmonic-mean conductivity (W/(m·K)), slope the combined mean
// absolute slope, sigmaM the combined RMS roughness (m) and ratio the
// relative pressure P/H_c (PHYSICS-REFERENCES.md 1.2). It is
// ModelPlastic ("cmy-plastic"; the old name "mikic-plastic" is an alias):
// Mikic's own 1974 plastic fit is 1.13·(P/H_e)^0.94, a different model.
// The fit holds for 1e-6 ≤ P/H_c ≤ 2e-2; outside, this evaluates the power
// law as is. It returns 0 for ratio ≤ 0.
func PlasticContactWM2K(kSWMK, slope, sigmaM, ratio float64) float64 {
	if !(ratio > 0) {
		return 0
	}
	return 1.25 * kSWMK * slope / sigmaM * math.Pow(ratio, 0.95)
}

// ElasticRatio returns the elastic relative pressure √2·P/(m·E′), the
// elastic counterpart of P/H_c (the elastic microhardness being m·E′/√2),
// as in Mikic's (1974) elastic model (PHYSICS-REFERENCES.md 1.3 [M/C]).
func ElasticRatio(pressurePa, slope, ePrimePa float64) float64 {
	return math.Sqrt2 * pressurePa / (slope * ePrimePa)
}

// ElasticContactWM2K returns the solid-spot conductance of an elastic
// contact by Mikic (1974) with the coefficient of Yovanovich's reviews,
// W/(m²·K):
//
//	h_s = 1.54·k_s·(m/σ)·(√2·P/(m·E′))^0.94
//
// (PHYSICS-REFERENCES.md 1.3; DESIGN.md 5.2 writes it without the √2, but
// only the √2 form reproduces the check values of item 1.5). It returns 0
// for pressurePa ≤ 0.
func ElasticContactWM2K(kSWMK, slope, sigmaM, pressurePa, ePrimePa float64) float64 {
	if !(pressurePa > 0) {
		return 0
	}
	return 1.54 * kSWMK * slope / sigmaM * math.Pow(ElasticRatio(pressurePa, slope, ePrimePa), 0.94)
}

// PlasticContactExact returns the dimensionless solid-spot conductance
// h_s·σ/(m·k_s) of the exact CMY plastic relation that the 1.25/0.95 fit
// approximates (PHYSICS-REFERENCES.md 1.4 [M, checked numerically]):
//
//	h_s·σ/(m·k_s) = exp(−λ²/2) / [2·√(2π)·(1 − √(P/H_c))^1.5],  λ = √2·erfc⁻¹(2P/H_c)
//
// It is meant as a test oracle; ratio must lie in (0, 0.5).
func PlasticContactExact(ratio float64) float64 {
	l := SeparationExact(ratio)
	return math.Exp(-l*l/2) / (2 * math.Sqrt(2*math.Pi) * math.Pow(1-math.Sqrt(ratio), 1.5))
}

// SeparationExact returns the exact CMY mean-plane separation of a plastic
// contact relative to the roughness, Y/σ = √2·erfc⁻¹(2P/H_c), from
// A_r/A_a = P/H_c = ½·erfc(λ/√2) (PHYSICS-REFERENCES.md 1.4).
func SeparationExact(ratio float64) float64 {
	return math.Sqrt2 * math.Erfcinv(2*ratio)
}
