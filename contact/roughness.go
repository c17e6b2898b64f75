package contact

import (
	"fmt"
	"math"
)

// CombinedRoughnessM returns the RMS roughness of the sum surface of two
// contacting surfaces, σ = √(σ₁² + σ₂²), m (PHYSICS-REFERENCES.md 1.1).
func CombinedRoughnessM(sigma1M, sigma2M float64) float64 { return math.Hypot(sigma1M, sigma2M) }

// CombinedSlope returns the mean absolute asperity slope of the sum surface,
// m = √(m₁² + m₂²) (PHYSICS-REFERENCES.md 1.1).
func CombinedSlope(m1, m2 float64) float64 { return math.Hypot(m1, m2) }

// HarmonicConductivityWMK returns the effective conductivity of a contact
// between two solids, k_s = 2k₁k₂/(k₁ + k₂), W/(m·K)
// (PHYSICS-REFERENCES.md 1.1).
func HarmonicConductivityWMK(k1WMK, k2WMK float64) float64 {
	return 2 * k1WMK * k2WMK / (k1WMK + k2WMK)
}

// EffectiveModulusPa returns E′ with 1/E′ = (1−ν₁²)/E₁ + (1−ν₂²)/E₂, Pa
// (PHYSICS-REFERENCES.md 1.1).
func EffectiveModulusPa(young1Pa, poisson1, young2Pa, poisson2 float64) float64 {
	return 1 / ((1-poisson1*poisson1)/young1Pa + (1-poisson2*poisson2)/young2Pa)
}

// DeformationIndex returns γ = H_c/(E′·m), which says how asperities deform:
// γ ≥ 3 mostly plastic, γ ≤ 0.33 mostly elastic (Sridhar & Yovanovich 1994;
// thresholds from memory, PHYSICS-REFERENCES.md 1.3 [M]).
func DeformationIndex(hardnessPa, ePrimePa, slope float64) float64 {
	return hardnessPa / (ePrimePa * slope)
}

// SlopeCorrelation names a published correlation that estimates the mean
// absolute asperity slope m of a sum surface from its RMS roughness σ, for
// when the slope was not measured (PHYSICS-REFERENCES.md 2; constants from
// memory [M], as summarised by Bahrami et al. 2006).
type SlopeCorrelation int

const (
	// Antonetti is Antonetti, Whittle & Simons (1991):
	// m = 0.125 (σ/µm)^0.402, stated for 0.216 ≤ σ ≤ 9.6 µm. The default.
	Antonetti SlopeCorrelation = iota
	// LambertFletcher is Lambert & Fletcher (1997): m = 0.076 (σ/µm)^0.52.
	LambertFletcher
	// TannerFahoum is Tanner & Fahoum (1976): m = 0.152 (σ/µm)^0.4.
	TannerFahoum
)

// Antonetti's stated range of σ, m.
const (
	AntonettiMinSigmaM = 0.216e-6
	AntonettiMaxSigmaM = 9.6e-6
)

var slopeNames = [...]string{Antonetti: "antonetti", LambertFletcher: "lambert-fletcher", TannerFahoum: "tanner-fahoum"}

// String returns the correlation's key: "antonetti", "lambert-fletcher" or
// "tanner-fahoum".
func (c SlopeCorrelation) String() string {
	if c >= 0 && int(c) < len(slopeNames) {
		return slopeNames[c]
	}
	return fmt.Sprintf("SlopeCorrelation(%d)", int(c))
}

// ParseSlopeCorrelation returns the correlation named s (a String key);
// the empty string means Antonetti.
func ParseSlopeCorrelation(s string) (SlopeCorrelation, error) {
	if s == "" {
		return Antonetti, nil
	}
	for i, n := range slopeNames {
		if s == n {
			return SlopeCorrelation(i), nil
		}
	}
	return 0, fmt.Errorf("contact: unknown slope correlation %q (known: %q, %q, %q)", s,
		slopeNames[0], slopeNames[1], slopeNames[2])
}

// Slope returns the mean absolute asperity slope of a sum surface of RMS
// roughness sigmaM (m) by correlation c, and whether sigmaM lies within the
// correlation's stated range (always true for the correlations that state
// none). It returns NaN, false for sigmaM ≤ 0 or an unknown c.
func (c SlopeCorrelation) Slope(sigmaM float64) (slope float64, inRange bool) {
	if !(sigmaM > 0) {
		return math.NaN(), false
	}
	s := sigmaM * 1e6
	switch c {
	case Antonetti:
		return 0.125 * math.Pow(s, 0.402), sigmaM >= AntonettiMinSigmaM && sigmaM <= AntonettiMaxSigmaM
	case LambertFletcher:
		return 0.076 * math.Pow(s, 0.52), true
	case TannerFahoum:
		return 0.152 * math.Pow(s, 0.4), true
	}
	return math.NaN(), false
}
