package thermal

import (
	"math"

	"gapflux/fluid"
)

// Rohsenow surface–fluid coefficients C_s,f for water, after Vachon, Nix &
// Tanger (1968) as in Incropera, 6th ed., Table 10.1. The values are from
// memory (PHYSICS-REFERENCES.md item 8.2 [M]); use them with n = 1.
const (
	CsfCopperScored            = 0.0068
	CsfCopperPolished          = 0.0128
	CsfStainlessEtched         = 0.0133 // chemically etched; one copy of the table has 0.0130
	CsfStainlessMechPolished   = 0.0132
	CsfStainlessGroundPolished = 0.0080
	CsfBrass                   = 0.0060
	CsfNickel                  = 0.006
	CsfPlatinum                = 0.0130
	RohsenowNWater             = 1.0 // Prandtl exponent n for water (Incropera eq. 10.5)
	// CsfAluminiumOxidised and RohsenowNAluminiumOxidised are a fit for
	// water at 1 atm on oxidised aluminium quoted by a heat-transfer
	// library's example from Cao (2009), Heat Transfer in Process
	// Engineering [C]. n = 1.26 departs from the textbook n = 1.0 for
	// water, and the pair is not in Incropera's table: offered as a named
	// surface only, never the default.
	CsfAluminiumOxidised       = 0.011
	RohsenowNAluminiumOxidised = 1.26
)

// DefaultRohsenowSurface is the default water-side surface of the Rohsenow
// correlation: polished copper, C_s,f = 0.0128 with n = 1.0 (Incropera,
// 6th ed., Table 10.1 and eq. 10.5; the pairing of its Example 10.1, a pan
// boiling water). Incropera's table has no aluminium row, so the choice of
// the row for an aluminium pan is ours.
const DefaultRohsenowSurface = "copper-polished"

// Peak heat flux constants C of q″_max = C·h_fg·ρ_v·[σ·g·(ρ_l−ρ_v)/ρ_v²]^(1/4).
const (
	// LienhardDhirC is for large horizontal plates (Lienhard & Dhir 1973,
	// NASA CR-2270).
	LienhardDhirC = 0.149
	// ZuberC is Zuber's (1958) original constant π/24 ≈ 0.131.
	ZuberC = math.Pi / 24
)

// SatProps are the vapour-side properties of a saturated pool and the
// gravity it boils under; the liquid's properties are passed separately as a
// fluid.Water at the saturation temperature.
type SatProps struct {
	TempK             float64 // saturation temperature, K
	LatentHeatJKg     float64 // h_fg, J/kg
	SurfaceTensionNM  float64 // liquid–vapour surface tension σ, N/m
	VapourDensityKgM3 float64 // ρ_v, kg/m³
	GravityMS2        float64 // g, m/s²; 0 means fluid.StandardGravityMS2
}

// WaterAt1Atm returns the saturated liquid and the SatProps of water boiling
// at 1 atm: T_sat = 373.15 K and the Incropera Table A.6 values of
// fluid.SaturatedWater373 (h_fg 2257 kJ/kg, σ 58.9e-3 N/m, ρ_v 0.5955 kg/m³,
// liquid Pr 1.76 as printed), standard gravity.
func WaterAt1Atm() (fluid.Water, SatProps) {
	s := fluid.SaturatedWater373()
	return s.Liquid, SatProps{
		TempK:             s.TempK,
		LatentHeatJKg:     s.LatentHeatJKg,
		SurfaceTensionNM:  s.SurfaceTensionNM,
		VapourDensityKgM3: s.VapourDensityKgM3,
	}
}

func (s SatProps) gravity() float64 {
	if s.GravityMS2 == 0 {
		return fluid.StandardGravityMS2
	}
	return s.GravityMS2
}

// RohsenowFluxWM2 returns the nucleate pool boiling heat flux q″_s, W/m², at
// excess temperature dTeK = T_s − T_sat (K), by Rohsenow (1952), Trans. ASME
// 74:969, in the SI form of Incropera, 6th ed., eq. 10.5:
//
//	q″_s = μ_l·h_fg·[g(ρ_l−ρ_v)/σ]^(1/2)·[c_p,l·ΔT_e / (C_s,f·h_fg·Pr_l^n)]³
//
// with liquid properties w at T_sat (its tabulated Prandtl number is used),
// surface–fluid coefficient csf and exponent n (1 for water). Expect scatter
// of about ±100 % in q″ for a given ΔT_e. It returns 0 for dTeK ≤ 0. It does
// not cap the flux at the peak (see CriticalFluxWM2).
func RohsenowFluxWM2(dTeK, csf, n float64, w fluid.Water, sat SatProps) float64 {
	if !(dTeK > 0) {
		return 0
	}
	return rohsenowCoeff(csf, n, w, sat) * dTeK * dTeK * dTeK
}

// rohsenowCoeff returns q″/ΔT_e³ of RohsenowFluxWM2, W/(m²·K³).
func rohsenowCoeff(csf, n float64, w fluid.Water, sat SatProps) float64 {
	g := sat.gravity()
	a := w.ViscosityPaS * sat.LatentHeatJKg * math.Sqrt(g*(w.DensityKgM3-sat.VapourDensityKgM3)/sat.SurfaceTensionNM)
	b := w.CpJKgK / (csf * sat.LatentHeatJKg * math.Pow(w.Prandtl, n))
	return a * b * b * b
}

// CriticalFluxWM2 returns the peak (critical) nucleate boiling heat flux,
// W/m²:
//
//	q″_max = C·h_fg·ρ_v·[σ·g·(ρ_l−ρ_v)/ρ_v²]^(1/4)
//
// with C = LienhardDhirC (0.149, large horizontal plates; Lienhard & Dhir
// 1973, NASA CR-2270) or ZuberC (π/24; Zuber 1958, Trans. ASME 80:711), the
// liquid w and the vapour side sat. A plate is "large" when its size exceeds
// about 27 capillary lengths √(σ/(g(ρ_l−ρ_v))), 2.5 mm for water at 1 atm, so
// every pan base is.
func CriticalFluxWM2(c float64, w fluid.Water, sat SatProps) float64 {
	g := sat.gravity()
	rv := sat.VapourDensityKgM3
	return c * sat.LatentHeatJKg * rv * math.Pow(sat.SurfaceTensionNM*g*(w.DensityKgM3-rv)/(rv*rv), 0.25)
}

// CapillaryLengthM returns √(σ/(g(ρ_l−ρ_v))), m, the length scale against
// which a heater is judged large for the peak heat flux.
func CapillaryLengthM(w fluid.Water, sat SatProps) float64 {
	return math.Sqrt(sat.SurfaceTensionNM / (sat.gravity() * (w.DensityKgM3 - sat.VapourDensityKgM3)))
}

// RohsenowSurface is a named water–surface pairing for the Rohsenow
// correlation: its C_sf and Prandtl exponent n.
type RohsenowSurface struct {
	Name string
	Csf  float64
	N    float64
}

// RohsenowSurfaces lists the pairings above by name, in a fixed order:
// Incropera Table 10.1 (after Vachon, Nix & Tanger 1968) with n = 1.0 for
// water, and last oxidised aluminium after Cao (2009) with its own n = 1.26
// (not from Incropera's table).
func RohsenowSurfaces() []RohsenowSurface {
	return []RohsenowSurface{
		{"copper-scored", CsfCopperScored, RohsenowNWater},
		{"copper-polished", CsfCopperPolished, RohsenowNWater},
		{"stainless-etched", CsfStainlessEtched, RohsenowNWater},
		{"stainless-mech-polished", CsfStainlessMechPolished, RohsenowNWater},
		{"stainless-ground-polished", CsfStainlessGroundPolished, RohsenowNWater},
		{"brass", CsfBrass, RohsenowNWater},
		{"nickel", CsfNickel, RohsenowNWater},
		{"platinum", CsfPlatinum, RohsenowNWater},
		{"aluminium-oxidised", CsfAluminiumOxidised, RohsenowNAluminiumOxidised},
	}
}
