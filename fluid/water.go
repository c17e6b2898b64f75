package fluid

import (
	"fmt"
	"sort"
)

// Water holds the properties of saturated liquid water at one temperature,
// SI.
type Water struct {
	DensityKgM3     float64 // ρ_f = 1/v_f, kg/m³
	CpJKgK          float64 // c_p,f, J/(kg·K)
	ViscosityPaS    float64 // μ_f, Pa·s
	KinViscosityM2S float64 // ν_f = μ_f/ρ_f, m²/s
	ConductivityWMK float64 // k_f, W/(m·K)
	DiffusivityM2S  float64 // α_f = k_f/(ρ_f·c_p,f), m²/s
	Prandtl         float64 // Pr_f as tabulated (not recomputed from c_p·μ/k)
	ExpansionPerK   float64 // volumetric expansion coefficient β_f, 1/K

	SurfaceTensionNM     float64 // liquid–vapour surface tension σ_f, N/m
	SaturationPressurePa float64 // vapour pressure at this temperature, Pa
}

// waterRow is one row of Incropera Table A.6 in the table's own units:
// T K, p bar, v_f·10³ m³/kg, c_p,f kJ/(kg·K), μ_f·10⁶ N·s/m², k_f·10³
// W/(m·K), Pr_f, σ_f·10³ N/m, β_f·10⁶ 1/K.
type waterRow struct{ t, p, vf, cp, mu, k, pr, sigma, beta float64 }

// waterTable is Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
// Table A.6 (saturated water), liquid columns, 273.15 to 373.15 K.
// The v_f, c_p, μ, k, Pr and β values of rows 290, 295, 310, 315, 330, 335,
// 350, 355 and 373.15 K are PHYSICS-REFERENCES.md item 6.2 [C] (they agree
// with a full public copy), as is σ_f at 373.15 K; everything else, and
// the whole p column, is from memory [M].
// β_f is negative below 277 K (the density maximum) as tabulated; the 360 K
// row's 697.9 then 707.1 at 365 K is the table's own irregular step.
var waterTable = [...]waterRow{
	{273.15, 0.00611, 1.000, 4.217, 1750, 569, 12.99, 75.5, -68.05}, // [M]
	{275, 0.00697, 1.000, 4.211, 1652, 574, 12.22, 75.3, -32.74},    // [M]
	{280, 0.00990, 1.000, 4.198, 1422, 582, 10.26, 74.8, 46.04},     // [M]
	{285, 0.01387, 1.000, 4.189, 1225, 590, 8.81, 74.3, 114.1},      // [M]
	{290, 0.01917, 1.001, 4.184, 1080, 598, 7.56, 73.7, 174.0},      // [C]
	{295, 0.02617, 1.002, 4.181, 959, 606, 6.62, 72.7, 227.5},       // [C]
	{300, 0.03531, 1.003, 4.179, 855, 613, 5.83, 71.7, 276.1},       // [M]
	{305, 0.04712, 1.005, 4.178, 769, 620, 5.20, 70.9, 320.6},       // [M]
	{310, 0.06221, 1.007, 4.178, 695, 628, 4.62, 70.0, 361.9},       // [C]
	{315, 0.08132, 1.009, 4.179, 631, 634, 4.16, 69.2, 400.4},       // [C]
	{320, 0.1053, 1.011, 4.180, 577, 640, 3.77, 68.3, 436.7},        // [M]
	{325, 0.1351, 1.013, 4.182, 528, 645, 3.42, 67.5, 471.2},        // [M]
	{330, 0.1719, 1.016, 4.184, 489, 650, 3.15, 66.6, 504.0},        // [C]
	{335, 0.2167, 1.018, 4.186, 453, 656, 2.88, 65.8, 535.5},        // [C]
	{340, 0.2713, 1.021, 4.188, 420, 660, 2.66, 64.9, 566.0},        // [M]
	{345, 0.3372, 1.024, 4.191, 389, 664, 2.45, 64.1, 595.4},        // [M]
	{350, 0.4163, 1.027, 4.195, 365, 668, 2.29, 63.2, 624.2},        // [C]
	{355, 0.5100, 1.030, 4.199, 343, 671, 2.14, 62.3, 652.3},        // [C]
	{360, 0.6209, 1.034, 4.203, 324, 674, 2.02, 61.4, 697.9},        // [M]
	{365, 0.7514, 1.038, 4.209, 306, 677, 1.91, 60.5, 707.1},        // [M]
	{370, 0.9040, 1.041, 4.214, 289, 679, 1.80, 59.5, 728.7},        // [M]
	{373.15, 1.0133, 1.044, 4.217, 279, 680, 1.76, 58.9, 750.1},     // [C]
}

// WaterMinK and WaterMaxK bound the water table, K.
const (
	WaterMinK = 273.15
	WaterMaxK = 373.15
)

// WaterAt returns the properties of saturated liquid water at tK (K),
// interpolated linearly between the rows of Incropera Table A.6
// (273.15–373.15 K). Density is 1/v_f with v_f interpolated, as tabulated.
// It returns an error outside the table.
func WaterAt(tK float64) (Water, error) {
	if !(tK >= WaterMinK && tK <= WaterMaxK) {
		return Water{}, fmt.Errorf("fluid: water at %.6g K is outside the table (%g to %g K)", tK, WaterMinK, WaterMaxK)
	}
	i := sort.Search(len(waterTable), func(i int) bool { return waterTable[i].t > tK }) - 1
	if i >= len(waterTable)-1 {
		i = len(waterTable) - 2
	}
	a, b := &waterTable[i], &waterTable[i+1]
	f := (tK - a.t) / (b.t - a.t)
	lerp := func(x, y float64) float64 { return x + f*(y-x) }
	w := Water{
		DensityKgM3:          1e3 / lerp(a.vf, b.vf),
		CpJKgK:               lerp(a.cp, b.cp) * 1e3,
		ViscosityPaS:         lerp(a.mu, b.mu) * 1e-6,
		ConductivityWMK:      lerp(a.k, b.k) * 1e-3,
		Prandtl:              lerp(a.pr, b.pr),
		ExpansionPerK:        lerp(a.beta, b.beta) * 1e-6,
		SurfaceTensionNM:     lerp(a.sigma, b.sigma) * 1e-3,
		SaturationPressurePa: lerp(a.p, b.p) * 1e5,
	}
	w.KinViscosityM2S = w.ViscosityPaS / w.DensityKgM3
	w.DiffusivityM2S = w.ConductivityWMK / (w.DensityKgM3 * w.CpJKgK)
	return w, nil
}

// Saturation gathers the properties of water boiling at 1 atm that the
// Rohsenow and peak-heat-flux correlations need.
type Saturation struct {
	TempK             float64 // saturation temperature, K
	PressurePa        float64 // saturation pressure, Pa
	LatentHeatJKg     float64 // h_fg, J/kg
	SurfaceTensionNM  float64 // σ, N/m
	VapourDensityKgM3 float64 // ρ_v = 1/v_g, kg/m³
	Liquid            Water   // saturated liquid at TempK
}

// SaturatedWater373 returns saturated water at 1 atm (373.15 K) from
// Incropera Table A.6: h_fg = 2257 kJ/kg, σ = 58.9e-3 N/m,
// ρ_v = 0.5955 kg/m³ (v_g = 1.679 m³/kg) — PHYSICS-REFERENCES.md item 6.2
// [C] — and the liquid row at 373.15 K. The liquid's Pr is the printed
// 1.76, not c_p·μ/k (1.73).
func SaturatedWater373() Saturation {
	l, err := WaterAt(WaterMaxK)
	if err != nil {
		panic(err) // the table covers its own last row
	}
	return Saturation{
		TempK:             WaterMaxK,
		PressurePa:        StandardPressurePa,
		LatentHeatJKg:     2257e3,
		SurfaceTensionNM:  58.9e-3,
		VapourDensityKgM3: 0.5955,
		Liquid:            l,
	}
}
