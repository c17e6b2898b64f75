package fluid

import (
	"fmt"
	"math"
)

// Air holds the properties of dry air at 1 atm at one temperature, SI.
type Air struct {
	DensityKgM3     float64 // ρ, kg/m³
	CpJKgK          float64 // c_p, J/(kg·K)
	ViscosityPaS    float64 // dynamic viscosity μ, Pa·s
	KinViscosityM2S float64 // kinematic viscosity ν, m²/s
	ConductivityWMK float64 // thermal conductivity k, W/(m·K)
	DiffusivityM2S  float64 // thermal diffusivity α, m²/s
	Prandtl         float64 // Pr
}

// airRow is one row of Incropera Table A.4 in the table's own units:
// T K, ρ kg/m³, c_p kJ/(kg·K), μ·10⁷ N·s/m², ν·10⁶ m²/s, k·10³ W/(m·K),
// α·10⁶ m²/s, Pr.
type airRow struct{ t, rho, cp, mu, nu, k, alpha, pr float64 }

const (
	airT0K   = 250.0 // first row of airTable, K
	airStepK = 50.0  // row spacing of airTable, K
)

// airTable is Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
// Table A.4 (air at 1 atm), rows 250 to 1000 K.
// Rows 300, 350, 400, 450, 500, 600, 700 and 800 K are PHYSICS-REFERENCES.md
// item 6.1 [C] (three public copies agree); the other rows are from memory
// [M] (c_p at 550 K is 1.040 in two copies seen and 1.039 in one, item 6.1).
var airTable = [...]airRow{
	{250, 1.3947, 1.006, 159.6, 11.44, 22.3, 15.9, 0.720}, // [M]
	{300, 1.1614, 1.007, 184.6, 15.89, 26.3, 22.5, 0.707}, // [C]
	{350, 0.9950, 1.009, 208.2, 20.92, 30.0, 29.9, 0.700}, // [C]
	{400, 0.8711, 1.014, 230.1, 26.41, 33.8, 38.3, 0.690}, // [C]
	{450, 0.7740, 1.021, 250.7, 32.39, 37.3, 47.2, 0.686}, // [C]
	{500, 0.6964, 1.030, 270.1, 38.79, 40.7, 56.7, 0.684}, // [C]
	{550, 0.6329, 1.040, 289.6, 45.57, 43.9, 66.7, 0.683}, // [M]
	{600, 0.5804, 1.051, 305.8, 52.69, 46.9, 76.9, 0.685}, // [C]
	{650, 0.5356, 1.063, 322.5, 60.21, 49.7, 87.3, 0.690}, // [M]
	{700, 0.4975, 1.075, 338.8, 68.10, 52.4, 98.0, 0.695}, // [C]
	{750, 0.4643, 1.087, 354.6, 76.37, 54.9, 109, 0.702},  // [M]
	{800, 0.4354, 1.099, 369.8, 84.93, 57.3, 120, 0.709},  // [C]
	{850, 0.4097, 1.110, 384.3, 93.80, 59.6, 131, 0.716},  // [M]
	{900, 0.3868, 1.121, 398.1, 102.9, 62.0, 143, 0.720},  // [M]
	{950, 0.3666, 1.131, 411.3, 112.2, 64.3, 155, 0.723},  // [M]
	{1000, 0.3482, 1.141, 424.4, 121.9, 66.7, 168, 0.726}, // [M]
}

// AirMinK and AirMaxK bound the air table, K.
const (
	AirMinK = 250.0
	AirMaxK = 1000.0
)

// AirAt returns the properties of dry air at 1 atm and temperature tK (K),
// interpolated linearly between the rows of Incropera Table A.4
// (250–1000 K). It returns an error outside that range.
//
// Only ρ and ν depend on pressure (as 1/p); μ, c_p, k and Pr are taken as
// pressure-independent, as usual for air near 1 atm.
func AirAt(tK float64) (Air, error) {
	if !(tK >= AirMinK && tK <= AirMaxK) {
		return Air{}, fmt.Errorf("fluid: air at %.6g K is outside the table (%g to %g K)", tK, AirMinK, AirMaxK)
	}
	return airAt(tK), nil
}

// airAt interpolates airTable at tK, which must lie within it.
func airAt(tK float64) Air {
	a, b, f := airRows(tK)
	g := gapAir(a, b, f)
	return Air{
		DensityKgM3:     a.rho + f*(b.rho-a.rho),
		CpJKgK:          (a.cp + f*(b.cp-a.cp)) * 1e3,
		ViscosityPaS:    g.ViscosityPaS,
		KinViscosityM2S: g.KinViscosityM2S,
		ConductivityWMK: g.ConductivityWMK,
		DiffusivityM2S:  g.DiffusivityM2S,
		Prandtl:         g.Prandtl,
	}
}

// airRows returns the rows of airTable about tK, which must lie within it,
// and tK's fraction of the way from the first to the second.
func airRows(tK float64) (a, b *airRow, f float64) {
	i := int((tK - airT0K) * (1 / airStepK))
	if i >= len(airTable)-1 {
		i = len(airTable) - 2
	}
	a, b = &airTable[i], &airTable[i+1]
	return a, b, (tK - a.t) * (1 / airStepK)
}

// GapAir holds the properties of dry air at 1 atm that the conduction and
// onset of convection in a gas gap need, SI (the fields of Air of the same
// names).
type GapAir struct {
	ViscosityPaS    float64 // dynamic viscosity μ, Pa·s
	KinViscosityM2S float64 // kinematic viscosity ν, m²/s
	ConductivityWMK float64 // thermal conductivity k, W/(m·K)
	DiffusivityM2S  float64 // thermal diffusivity α, m²/s
	Prandtl         float64 // Pr
}

// GapAirAt returns the GapAir properties of dry air at tK (K), equal to
// AirAt's to the bit, for tK clamped to [AirMinK, AirMaxK]; a NaN tK gives
// NaN properties. It is AirAt for a caller that evaluates millions of cells
// and has already checked (or clamped) the temperature.
func GapAirAt(tK float64) GapAir {
	if math.IsNaN(tK) {
		nan := math.NaN()
		return GapAir{nan, nan, nan, nan, nan}
	}
	a, b, f := airRows(min(max(tK, AirMinK), AirMaxK))
	return gapAir(a, b, f)
}

// gapAir interpolates the GapAir properties a fraction f of the way from
// row a to row b.
func gapAir(a, b *airRow, f float64) GapAir {
	return GapAir{
		ViscosityPaS:    (a.mu + f*(b.mu-a.mu)) * 1e-7,
		KinViscosityM2S: (a.nu + f*(b.nu-a.nu)) * 1e-6,
		ConductivityWMK: (a.k + f*(b.k-a.k)) * 1e-3,
		DiffusivityM2S:  (a.alpha + f*(b.alpha-a.alpha)) * 1e-6,
		Prandtl:         a.pr + f*(b.pr-a.pr),
	}
}

// sutherlandK is Sutherland's constant for air, K (from memory [M]).
const sutherlandK = 110.4

// AirViscosityPaS returns the dynamic viscosity of air, Pa·s, at tK (K).
// Within the air table it is the table's interpolated μ. Outside, it follows
// Sutherland's law μ ∝ T^1.5/(T + 110.4 K), scaled to meet the table at its
// nearer end, so the result is continuous in tK. It returns NaN for tK ≤ 0.
func AirViscosityPaS(tK float64) float64 {
	switch {
	case !(tK > 0):
		return math.NaN()
	case tK < AirMinK:
		return sutherland(tK, AirMinK, airTable[0].mu*1e-7)
	case tK > AirMaxK:
		return sutherland(tK, AirMaxK, airTable[len(airTable)-1].mu*1e-7)
	}
	return airAt(tK).ViscosityPaS
}

func sutherland(tK, refK, refMu float64) float64 {
	return refMu * math.Pow(tK/refK, 1.5) * (refK + sutherlandK) / (tK + sutherlandK)
}

// AirMeanFreePathM returns the molecular mean free path of air, m, at
// temperature tK (K) and pressure pressurePa (Pa): KineticMeanFreePathM with
// μ from AirViscosityPaS and the molar mass of air (PHYSICS-REFERENCES.md
// item 4.2). This scales with temperature through μ(T)·√T rather than
// linearly from a reference value; the two scalings differ by 14 % at 500 K
// (item 4.2 [N]). It returns NaN for tK ≤ 0 or pressurePa ≤ 0.
func AirMeanFreePathM(tK, pressurePa float64) float64 {
	return KineticMeanFreePathM(AirViscosityPaS(tK), tK, pressurePa, AirMolarMassKgMol)
}

// KineticMeanFreePathM returns the mean free path of a gas, m, from its
// dynamic viscosity viscosityPaS (Pa·s) at temperature tK (K), pressure
// pressurePa (Pa) and molar mass molarMassKgMol (kg/mol), by the kinetic
// definition
//
//	Λ = (μ/p)·√(π·R·T / (2·M_gas))
//
// (PHYSICS-REFERENCES.md item 4.2). It returns NaN for tK ≤ 0 or
// pressurePa ≤ 0.
func KineticMeanFreePathM(viscosityPaS, tK, pressurePa, molarMassKgMol float64) float64 {
	if !(pressurePa > 0) || !(tK > 0) {
		return math.NaN()
	}
	return viscosityPaS / pressurePa * math.Sqrt(math.Pi*GasConstantJMolK*tK/(2*molarMassKgMol))
}
