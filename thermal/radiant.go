package thermal

import (
	"errors"
	"fmt"
	"math"

	"gapflux/fluid"
)

// SecondRadiationConstantMK is Planck's second radiation constant
// c₂ = hc/k_B = 1.438776877e-2 m·K (CODATA 2018, exact from the defined SI
// constants).
const SecondRadiationConstantMK = 1.438776877e-2

// BlackbodyFraction returns F(0→λT), the share of a blackbody's total
// emissive power σT⁴ emitted at wavelengths below λ, for the product
// lambdaTMK = λ·T in m·K (1 µm·K = 1e-6 m·K). With ζ = c₂/(λT) it sums,
// for ζ ≥ 0.5, the exponential series
//
//	F = (15/π⁴) Σₙ e^(−nζ)/n · (ζ³ + 3ζ²/n + 6ζ/n² + 6/n³)
//
// until a term is below 1e-16 (Chang & Rhee 1984, Int. Commun. Heat Mass
// Transfer 11:451; Siegel & Howell, Thermal Radiation Heat Transfer,
// Appendix), and for ζ < 2 the small-ζ expansion
//
//	F = 1 − (15/π⁴) ζ³ (1/3 − ζ/8 + ζ²/60 − ζ⁴/5040 + ζ⁶/272160 − ζ⁸/13305600)
//
// (same sources; its first omitted term is below 1e-12 for ζ < 0.5). Both
// agree with a quadrature of Planck's law to 1e-12, and with the published
// table (Incropera, 6th ed., Table 12.1; 12.2 in the 7th) to 5e-5: the
// table's last digits depart from the integral by up to 4e-5. It returns 0 for
// lambdaTMK ≤ 0 and 1 for +Inf.
func BlackbodyFraction(lambdaTMK float64) float64 {
	switch {
	case !(lambdaTMK > 0):
		return 0
	case math.IsInf(lambdaTMK, 1):
		return 1
	}
	z := SecondRadiationConstantMK / lambdaTMK
	c := 15 / math.Pow(math.Pi, 4)
	if z < 0.5 {
		z2 := z * z
		s := 1.0/3 - z/8 + z2/60 - z2*z2/5040 + z2*z2*z2/272160 - z2*z2*z2*z2/13305600
		return 1 - c*z2*z*s
	}
	var sum float64
	for n := 1.0; n < 200; n++ {
		term := math.Exp(-n*z) / n * (z*z*z + 3*z*z/n + 6*z/(n*n) + 6/(n*n*n))
		sum += term
		if term < 1e-16*sum {
			break
		}
	}
	return c * sum
}

// BandFraction returns F(λ₁T→λ₂T) = F(0→λ₂T) − F(0→λ₁T), the share of a
// blackbody's emissive power at temperature tK between the wavelengths
// loM < hiM (m).
func BandFraction(loM, hiM, tK float64) float64 {
	return BlackbodyFraction(hiM*tK) - BlackbodyFraction(loM*tK)
}

// Coil describes the radiant heating element of a zone (a glowing coil or
// a lamp) and the glass-ceramic above it as a two-band medium: the glass
// transmits the share Tau of the radiation between BandLoM and BandHiM
// (its near-infrared window) and is opaque beyond.
type Coil struct {
	Emissivity float64 // total hemispherical emissivity of the element
	BandLoM    float64 // lower edge of the glass's window, m
	BandHiM    float64 // upper edge, m
	Tau        float64 // transmittance in the window, [0, 1)
}

func (c *Coil) validate() error {
	switch {
	case !(c.Emissivity > 0 && c.Emissivity <= 1):
		return fmt.Errorf("coil emissivity %g outside (0, 1]", c.Emissivity)
	case !(c.BandLoM > 0 && c.BandHiM > c.BandLoM) || math.IsInf(c.BandHiM, 0):
		return fmt.Errorf("glass window %g to %g m is not a positive, finite band", c.BandLoM, c.BandHiM)
	case !(c.Tau >= 0 && c.Tau < 1):
		return fmt.Errorf("glass window transmittance %g outside [0, 1)", c.Tau)
	}
	return nil
}

// CoilState is the element's steady state while it is on.
type CoilState struct {
	TempK float64 // element temperature, K
	// Share of the element's power that passes the glass (first pass), in
	// [0, Tau].
	Share float64
}

// Balance returns the element's state while it delivers powerWM2 (W per
// m² of zone) to a glass underside at glassK (K) with emissivity epsGlass.
// The element temperature T_c follows from the grey exchange between two
// large parallel surfaces (Incropera, 6th ed., eq. 13.24; cavity
// convection and the element's own conduction neglected):
//
//	q = σ (T_c⁴ − T_g⁴) / (1/ε_c + 1/ε_g − 1).
//
// Of its emission ε_c σ T_c⁴ the window's share F(λ₁T_c→λ₂T_c) is
// transmitted with Tau on the first pass; the rest of q is absorbed by the
// glass underside. Multiple reflections in the window are neglected, so
// Share = Tau·F·ε_c σ T_c⁴ / q, capped at Tau.
func (c *Coil) Balance(powerWM2, glassK, epsGlass float64) (CoilState, error) {
	if !(powerWM2 > 0) || math.IsInf(powerWM2, 0) || !(glassK > 0) || math.IsInf(glassK, 0) || !(epsGlass > 0 && epsGlass <= 1) {
		return CoilState{}, errors.New("thermal: coil balance needs a positive power, glass temperature and emissivity")
	}
	sb := fluid.StefanBoltzmann
	r := 1/c.Emissivity + 1/epsGlass - 1
	g2 := glassK * glassK
	t := math.Pow(powerWM2*r/sb+g2*g2, 0.25)
	t2 := t * t
	share := c.Tau * BandFraction(c.BandLoM, c.BandHiM, t) * c.Emissivity * sb * t2 * t2 / powerWM2
	return CoilState{TempK: t, Share: math.Min(share, c.Tau)}, nil
}
