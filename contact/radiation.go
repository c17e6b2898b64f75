package contact

import "gapflux/fluid"

// RadiationWM2K returns the linearised radiation conductance between two
// parallel grey diffuse opaque surfaces at t1K and t2K (K) with
// emissivities eps1 and eps2, W/(m²·K):
//
//	h_r = σ_SB·(T₁² + T₂²)·(T₁ + T₂) / (1/ε₁ + 1/ε₂ − 1)
//
// so that h_r·(T₁ − T₂) is the net flux (Incropera §13.3, infinite parallel
// plates; PHYSICS-REFERENCES.md 5.1). Glass-ceramic partly transmits the
// near infrared; treating it as opaque and grey is an approximation.
func RadiationWM2K(t1K, t2K, eps1, eps2 float64) float64 {
	return radiationWM2K(t1K, t2K, exchangeDenominator(eps1, eps2))
}

// exchangeDenominator returns 1/ε₁ + 1/ε₂ − 1, the emissivities' factor of
// RadiationWM2K.
func exchangeDenominator(eps1, eps2 float64) float64 { return 1/eps1 + 1/eps2 - 1 }

// radiationWM2K is RadiationWM2K with the emissivities' factor den =
// exchangeDenominator(ε₁, ε₂) given, so that a field of cells computes it
// once (InterfaceParams.cell).
func radiationWM2K(t1K, t2K, den float64) float64 {
	return fluid.StefanBoltzmann * (t1K*t1K + t2K*t2K) * (t1K + t2K) / den
}
