package contact

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"
)

// Material holds the room-temperature properties of a pan or hob material,
// SI. Zero means unknown for the mechanical fields.
type Material struct {
	Name            string  // library key, e.g. "alu-1050"
	ConductivityWMK float64 // thermal conductivity k, W/(m·K)
	DensityKgM3     float64 // ρ, kg/m³
	CpJKgK          float64 // specific heat c_p, J/(kg·K)
	YoungPa         float64 // Young's modulus E, Pa
	Poisson         float64 // Poisson's ratio ν
	ExpansionPerK   float64 // linear thermal expansion coefficient, 1/K
	// HardnessPa is the bulk Brinell, Vickers or Knoop hardness (as the
	// source gives it, kgf/mm²) times 9.80665 MPa. It is not the contact
	// microhardness H_c, which the interface takes as its own input.
	HardnessPa float64
	Emissivity float64 // total hemispherical emissivity of a typical surface
	Source     string  // where the values come from
}

// kgfmm2Pa converts a hardness number in kgf/mm² (HB, HV, HK) to Pa
// (1 kgf/mm² = 9.80665 MPa; PHYSICS-REFERENCES.md item 0).
const kgfmm2Pa = 9.80665e6

// Materials returns the built-in library, sorted by name, as a fresh slice
// the caller may modify. Values are from PHYSICS-REFERENCES.md section 11
// (emissivities from section 5.3); each value's tag there ([S] seen in a
// source, [C] cross-checked, [M] from memory) is noted beside it.
func Materials() []Material {
	lib := []Material{
		{
			Name:            "alu-1050",
			ConductivityWMK: 222,           // 1050A data sheet, 25 °C [S]
			DensityKgM3:     2710,          // [S]
			CpJKgK:          920,           // 10–100 °C [S]
			YoungPa:         71e9,          // [S]
			Poisson:         0.33,          // 1050-H22 database entry [S]
			ExpansionPerK:   24e-6,         // 20–100 °C [S]
			HardnessPa:      30 * kgfmm2Pa, // HB 30, within HB 20–35 by temper [M]
			Emissivity:      0.09,          // 5.3 "Aluminium, polished": commercial sheet 0.09 [S]
			Source:          "EN AW-1050A data sheet; PHYSICS-REFERENCES.md 11, 5.3",
		},
		{
			Name:            "alu-3003",
			ConductivityWMK: 193,           // 3003-O [S]
			DensityKgM3:     2730,          // [S]
			CpJKgK:          893,           // [S]
			YoungPa:         69e9,          // [S]
			Poisson:         0.33,          // [S]
			ExpansionPerK:   23.2e-6,       // 20 °C [S]
			HardnessPa:      28 * kgfmm2Pa, // HB 28, O temper [S]
			Emissivity:      0.09,          // 5.3 "Aluminium, polished": commercial sheet 0.09 [S]
			Source:          "3003-O, materials-science reference; PHYSICS-REFERENCES.md 11, 5.3",
		},
		{
			Name:            "carbon-steel",
			ConductivityWMK: 64,             // AISI 1010, 20 °C, Lienhard Table A.1 [C]
			DensityKgM3:     7830,           // [C]
			CpJKgK:          434,            // [M]
			YoungPa:         205e9,          // ≈200–210 GPa [M]
			Poisson:         0.29,           // [M]
			ExpansionPerK:   12e-6,          // ≈12 µm/(m·K) [M]
			HardnessPa:      105 * kgfmm2Pa, // HB ≈105 for hot-rolled 1010, our figure from memory [M]
			Emissivity:      0.64,           // no carbon-steel row in 5.3; proxy "Cast iron, oxidised" 0.64 at 100 °C [S]
			Source:          "AISI 1010, Lienhard A Heat Transfer Textbook Table A.1; PHYSICS-REFERENCES.md 11, 5.3",
		},
		{
			Name:            "cast-iron",
			ConductivityWMK: 46,             // grey, ISO 150 / ASTM class 20 [S]
			DensityKgM3:     7200,           // [S]
			CpJKgK:          450,            // [S]
			YoungPa:         81.5e9,         // midpoint of 66–97 GPa [S]
			Poisson:         0.26,           // [M]
			ExpansionPerK:   10.5e-6,        // [S]
			HardnessPa:      200 * kgfmm2Pa, // HB 183–234 is ASTM A48 class 40 [S]; HB 200 taken for a grey iron
			Emissivity:      0.64,           // 5.3 "Cast iron, oxidised" 0.64 at 100 °C [S]
			Source:          "grey cast iron, online materials database; PHYSICS-REFERENCES.md 11, 5.3",
		},
		{
			Name:            "copper",
			ConductivityWMK: 394,           // 20 °C [S]
			DensityKgM3:     8900,          // 8890–8920 [S]
			CpJKgK:          386,           // 20 °C [S]
			YoungPa:         120e9,         // C11600 [S]; 115–128 GPa [M]
			Poisson:         0.34,          // [S]
			ExpansionPerK:   16.8e-6,       // 25–100 °C [S]
			HardnessPa:      50 * kgfmm2Pa, // HV ≈50 annealed [M]
			Emissivity:      0.05,          // 5.3 "Copper": thermometry supplier's 0.05 [S]
			Source:          "copper industry association data, Table 5; PHYSICS-REFERENCES.md 11, 5.3",
		},
		{
			Name:            "glass-ceramic",
			ConductivityWMK: 1.6,            // ≈1.6 [M]; DESIGN.md 5.3a
			DensityKgM3:     2560,           // [M]
			CpJKgK:          800,            // [M]
			YoungPa:         92e9,           // [M]
			Poisson:         0.25,           // [M]
			ExpansionPerK:   0,              // ≈0 ± 0.15 µm/(m·K), 20–700 °C [M]
			HardnessPa:      600 * kgfmm2Pa, // Knoop ≈600 [M]
			Emissivity:      0.90,           // 5.3 "Black glass-ceramic": 0.90 ± 0.05 [M]
			Source:          "black LAS cooktop glass-ceramic, all values from memory; PHYSICS-REFERENCES.md 11, 5.3",
		},
		{
			Name:            "ss-304",
			ConductivityWMK: 16.2,           // 0–100 °C [S]
			DensityKgM3:     8000,           // [S]
			CpJKgK:          500,            // [S]
			YoungPa:         193e9,          // 193–200 GPa [S]
			Poisson:         0.29,           // [S]
			ExpansionPerK:   17.3e-6,        // 0–100 °C [S]
			HardnessPa:      129 * kgfmm2Pa, // HV 129 (HRB 70, converted) [S]
			Emissivity:      0.16,           // 5.3 "Stainless steel, polished": "stainless steel" / 18-8 at 25 °C 0.16 [S]
			Source:          "online materials-database copies, a steel maker's data sheet; PHYSICS-REFERENCES.md 11, 5.3",
		},
		{
			Name:            "ss-430",
			ConductivityWMK: 26.1,           // 100 °C [S]
			DensityKgM3:     7740,           // 7740–7750 [S]
			CpJKgK:          460,            // [S]
			YoungPa:         200e9,          // [S]
			Poisson:         0.28,           // [M]
			ExpansionPerK:   10.4e-6,        // 0–100 °C [S]
			HardnessPa:      165 * kgfmm2Pa, // HRB 85 typical [S] → HV ≈165 by the ASTM E140 steel table, from memory [M]
			Emissivity:      0.16,           // 5.3 "Stainless steel, polished" 0.16 [S] (no 430-specific row)
			Source:          "a steel maker's 430 data sheet; PHYSICS-REFERENCES.md 11, 5.3",
		},
	}
	slices.SortFunc(lib, func(a, b Material) int { return cmp.Compare(a.Name, b.Name) })
	return lib
}

// LookupMaterial returns the material called name in lib (case-insensitive).
// The error lists the known names.
func LookupMaterial(lib []Material, name string) (Material, error) {
	for _, m := range lib {
		if strings.EqualFold(m.Name, name) {
			return m, nil
		}
	}
	names := make([]string, len(lib))
	for i, m := range lib {
		names[i] = m.Name
	}
	slices.Sort(names)
	return Material{}, fmt.Errorf("contact: unknown material %q (known: %s)", name, strings.Join(names, ", "))
}

// Validate reports the first property out of its domain: conductivity,
// density and specific heat must be positive, Young's modulus and hardness
// non-negative (0 = unknown), Poisson's ratio in [0, 0.5), emissivity in
// [0, 1].
func (m Material) Validate() error {
	bad := func(field string, v float64, want string) error {
		return fmt.Errorf("contact: material %q: %s = %g, want %s", m.Name, field, v, want)
	}
	if m.Name == "" {
		return fmt.Errorf("contact: material with no name")
	}
	for _, c := range []struct {
		f string
		v float64
	}{{"conductivity", m.ConductivityWMK}, {"density", m.DensityKgM3}, {"specific heat", m.CpJKgK}} {
		if !(c.v > 0) || math.IsInf(c.v, 1) {
			return bad(c.f, c.v, "> 0")
		}
	}
	for _, c := range []struct {
		f string
		v float64
	}{{"Young's modulus", m.YoungPa}, {"hardness", m.HardnessPa}} {
		if !(c.v >= 0) || math.IsInf(c.v, 1) {
			return bad(c.f, c.v, "≥ 0")
		}
	}
	if !(m.Poisson >= 0 && m.Poisson < 0.5) {
		return bad("Poisson's ratio", m.Poisson, "in [0, 0.5)")
	}
	if !(m.Emissivity >= 0 && m.Emissivity <= 1) {
		return bad("emissivity", m.Emissivity, "in [0, 1]")
	}
	if math.IsNaN(m.ExpansionPerK) || math.IsInf(m.ExpansionPerK, 0) {
		return bad("expansion", m.ExpansionPerK, "finite")
	}
	return nil
}
