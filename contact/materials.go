package contact

import (
	"cmp"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"text/tabwriter"
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
	// Source says in a few words what the entry stands for (grade,
	// temper), or "job file" for a material a job adds.
	Source string
	// Sources cites, value by value, where each number comes from: a
	// book with edition and table, a standard, a maker's data sheet, or
	// "our estimate" / "from memory, unverified". An empty entry means
	// Source covers it (a job file's own values).
	Sources MaterialSources
}

// MaterialSources holds one citation per value of a Material; the field
// names are those of the values they cite.
type MaterialSources struct {
	ConductivityWMK, DensityKgM3, CpJKgK, YoungPa, Poisson, ExpansionPerK, HardnessPa, Emissivity string
}

// kgfmm2Pa converts a hardness number in kgf/mm² (HB, HV, HK) to Pa
// (1 kgf/mm² = 9.80665 MPa, the standard acceleration of gravity of the
// CGPM 1901 times 10⁶).
const kgfmm2Pa = 9.80665e6

// The sources the built-in library cites. Each was read in a public copy
// (the copy is named where the publisher is not); values only remembered
// say so.
const (
	srcEstimate   = "our estimate"
	srcUnverified = "from memory, unverified"

	srcIncropera = "Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 6th ed., Wiley 2007, Table A.1"
	srcLienhard  = "Lienhard & Lienhard, A Heat Transfer Textbook, 5th ed., 2019, Table A.1"
	srcAl1050A   = "data sheet \"Non Heat Treatable Commercial-Purity Aluminium 1050A\", typical physical properties; publisher not shown on the copy read"
	srcAl1050Nu  = "Modulus Metal, aluminium 1050A-H19 property page"
	srcSubsTech  = "SubsTech, substech.com: Wrought aluminum-manganese alloy 3003"
	srcMatWeb303 = "MatWeb, Aluminum 3003-H14 data sheet"
	srcCDA       = "Copper Development Association, Innovations Aug. 2001, V. Calcutt: Introduction to Copper, Table 5 Physical Properties of Copper"
	srcMatWebCu  = "MatWeb, copper C11600 entry; read by our team, not re-checked"
	srcMIFGrey   = "MakeItFrom.com, ASTM Grade 20 / ISO Grade 150 / EN-JL 1020 grey cast iron"
	srcMatWeb304 = "MatWeb, AISI Type 304 Stainless Steel data sheet"
	srcAK430     = "AK Steel, Type 430 Stainless Steel product data sheet 430-S-8-01-07"
	srcOmega     = "Omega Engineering, OS100 series infrared thermometer manual, Section 6 emissivity table"
	srcFLIR      = "FLIR Systems, infrared camera user's manual T559880, emissivity table"
	srcTrotec    = "Trotec, IC0120V infrared camera operating manual, emissivity table"
)

// Materials returns the built-in library, sorted by name, as a fresh slice
// the caller may modify. Sources cites each value; TestMaterialValues
// checks the values against the cited tables.
func Materials() []Material {
	lib := []Material{
		{
			Name: "alu-1050", ConductivityWMK: 222, DensityKgM3: 2710, CpJKgK: 920, YoungPa: 71e9, Poisson: 0.33,
			ExpansionPerK: 24e-6, HardnessPa: 30 * kgfmm2Pa, Emissivity: 0.09,
			Source: "EN AW-1050A (Al 99.5) sheet",
			Sources: MaterialSources{
				ConductivityWMK: srcAl1050A + " (25 °C)", DensityKgM3: srcAl1050A, CpJKgK: srcAl1050A + " (10–100 °C)",
				YoungPa: srcAl1050A, Poisson: srcAl1050Nu + " (0.325–0.335)", ExpansionPerK: srcAl1050A + " (20–100 °C)",
				HardnessPa: srcEstimate + " (HB 30, between annealed and half-hard)",
				Emissivity: srcOmega + " (aluminum – commercial sheet)",
			},
		},
		{
			Name: "alu-3003", ConductivityWMK: 193, DensityKgM3: 2730, CpJKgK: 893, YoungPa: 69e9, Poisson: 0.33,
			ExpansionPerK: 23.2e-6, HardnessPa: 28 * kgfmm2Pa, Emissivity: 0.09,
			Source: "EN AW-3003 (AlMn1Cu), annealed (O)",
			Sources: MaterialSources{
				ConductivityWMK: srcSubsTech, DensityKgM3: srcSubsTech, CpJKgK: srcSubsTech, YoungPa: srcSubsTech,
				Poisson: srcMatWeb303, ExpansionPerK: srcSubsTech + " (20 °C)", HardnessPa: srcSubsTech + " (HB 28 annealed)",
				Emissivity: srcOmega + " (aluminum – commercial sheet)",
			},
		},
		{
			Name: "carbon-steel", ConductivityWMK: 64, DensityKgM3: 7830, CpJKgK: 434, YoungPa: 205e9, Poisson: 0.29,
			ExpansionPerK: 12e-6, HardnessPa: 105 * kgfmm2Pa, Emissivity: 0.64,
			Source: "plain carbon steel, AISI 1010",
			Sources: MaterialSources{
				ConductivityWMK: srcLienhard + " (AISI 1010, 20 °C; Incropera 6th ed. Table A.1: 63.9 at 300 K)",
				DensityKgM3:     srcLienhard + " (AISI 1010; Incropera 6th ed. Table A.1: 7832)",
				CpJKgK:          srcIncropera + " (AISI 1010, 300 K)",
				YoungPa:         srcUnverified, Poisson: srcUnverified, ExpansionPerK: srcUnverified,
				HardnessPa: srcEstimate + " (HB 105, hot-rolled)",
				Emissivity: srcEstimate + ": oxidised cast iron as a proxy, " + srcFLIR + " (iron, cast, oxidized, 100 °C)",
			},
		},
		{
			Name: "cast-iron", ConductivityWMK: 46, DensityKgM3: 7200, CpJKgK: 450, YoungPa: 81.5e9, Poisson: 0.26,
			ExpansionPerK: 10.5e-6, HardnessPa: 200 * kgfmm2Pa, Emissivity: 0.64,
			Source: "grey cast iron, EN-GJL-150 / ASTM A48 class 20",
			Sources: MaterialSources{
				ConductivityWMK: srcMIFGrey, DensityKgM3: srcMIFGrey, CpJKgK: srcMIFGrey,
				YoungPa: srcMIFGrey + " (midpoint of 66–97 GPa)", Poisson: srcUnverified, ExpansionPerK: srcMIFGrey,
				HardnessPa: srcEstimate + " (HB 200)",
				Emissivity: srcFLIR + " (iron, cast, oxidized, 100 °C)",
			},
		},
		{
			Name: "copper", ConductivityWMK: 394, DensityKgM3: 8900, CpJKgK: 386, YoungPa: 120e9, Poisson: 0.34,
			ExpansionPerK: 16.8e-6, HardnessPa: 50 * kgfmm2Pa, Emissivity: 0.05,
			Source: "high-conductivity copper, annealed",
			Sources: MaterialSources{
				ConductivityWMK: srcCDA + " (20 °C)", DensityKgM3: srcCDA + " (8.89–8.92 g/cm³)", CpJKgK: srcCDA + " (20 °C)",
				YoungPa: srcMatWebCu, Poisson: srcMatWebCu, ExpansionPerK: srcCDA + " (25–100 °C)",
				HardnessPa: srcUnverified + " (HV 50 annealed)",
				Emissivity: srcOmega + " (copper – polished)",
			},
		},
		{
			Name: "glass-ceramic", ConductivityWMK: 1.6, DensityKgM3: 2560, CpJKgK: 800, YoungPa: 92e9, Poisson: 0.25,
			ExpansionPerK: 0, HardnessPa: 600 * kgfmm2Pa, Emissivity: 0.90,
			Source: "black LAS cooktop glass-ceramic",
			Sources: MaterialSources{
				ConductivityWMK: srcUnverified, DensityKgM3: srcUnverified, CpJKgK: srcUnverified, YoungPa: srcUnverified,
				Poisson: srcUnverified, ExpansionPerK: srcUnverified + " (0 ± 0.15 µm/(m·K), 20–700 °C)",
				HardnessPa: srcUnverified + " (Knoop 600)",
				Emissivity: srcEstimate + " (0.90 ± 0.05; glass, polished plate: 0.94 in the IDEAL HeatSeeker 160 manual's emissivity table)",
			},
		},
		{
			Name: "ss-304", ConductivityWMK: 16.2, DensityKgM3: 8000, CpJKgK: 500, YoungPa: 193e9, Poisson: 0.29,
			ExpansionPerK: 17.3e-6, HardnessPa: 129 * kgfmm2Pa, Emissivity: 0.16,
			Source: "austenitic stainless steel 1.4301 / AISI 304",
			Sources: MaterialSources{
				ConductivityWMK: srcMatWeb304 + " (0–100 °C)", DensityKgM3: srcMatWeb304, CpJKgK: srcMatWeb304 + " (0–100 °C)",
				YoungPa: srcMatWeb304 + " (193–200 GPa)", Poisson: srcMatWeb304, ExpansionPerK: srcMatWeb304 + " (0–100 °C)",
				HardnessPa: srcMatWeb304 + " (HV 129, converted from HRB 70)",
				Emissivity: srcTrotec + " (stainless steel 18-8, 25 °C)",
			},
		},
		{
			Name: "ss-430", ConductivityWMK: 26.1, DensityKgM3: 7740, CpJKgK: 460, YoungPa: 200e9, Poisson: 0.28,
			ExpansionPerK: 10.4e-6, HardnessPa: 165 * kgfmm2Pa, Emissivity: 0.16,
			Source: "ferritic stainless steel 1.4016 / AISI 430",
			Sources: MaterialSources{
				ConductivityWMK: srcAK430 + " (100 °C)", DensityKgM3: srcAK430, CpJKgK: srcAK430 + " (0–100 °C)",
				YoungPa: srcAK430, Poisson: srcUnverified, ExpansionPerK: srcAK430 + " (0–100 °C)",
				HardnessPa: srcUnverified + " (HV 165 from the HRB 85 of " + srcAK430 + ", by the ASTM E140 steel table)",
				Emissivity: srcTrotec + " (stainless steel 18-8, 25 °C; no 430 row)",
			},
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

// WriteMaterialTable writes lib as a text table, values in the units of
// the column heads, then where each value comes from: per material the
// values grouped by the source they cite (numbered), and the numbered
// sources. Estimates and values from memory are said in place.
func WriteMaterialTable(w io.Writer, lib []Material) error {
	var b strings.Builder
	tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "name\tk_w_mk\tdensity_kg_m3\tcp_j_kgk\tyoung_gpa\tpoisson\texpansion_um_mk\thardness_mpa\temissivity\tmaterial")
	for _, m := range lib {
		fmt.Fprintf(tw, "%s\t%.4g\t%.4g\t%.4g\t%.4g\t%.3g\t%.3g\t%.4g\t%.3g\t%s\n", m.Name, m.ConductivityWMK,
			m.DensityKgM3, m.CpJKgK, m.YoungPa/1e9, m.Poisson, m.ExpansionPerK*1e6, m.HardnessPa/1e6, m.Emissivity, m.Source)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintf(&b, "\nwhere the values come from:\n")
	var refs []string // numbered sources, in order of first use
	number := func(base string) int {
		if i := slices.Index(refs, base); i >= 0 {
			return i + 1
		}
		refs = append(refs, base)
		return len(refs)
	}
	for _, m := range lib {
		fmt.Fprintf(&b, "  %s: %s\n", m.Name, strings.Join(m.citations(number), "; "))
	}
	for i, r := range refs {
		fmt.Fprintf(&b, "  [%d] %s\n", i+1, r)
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// citations lists m's values grouped by the source they cite, numbering
// sources with number; estimates and values from memory stay in words.
func (m Material) citations(number func(string) int) []string {
	src := m.Sources
	values := []struct{ name, cite string }{
		{"k", src.ConductivityWMK}, {"density", src.DensityKgM3}, {"c_p", src.CpJKgK}, {"E", src.YoungPa},
		{"ν", src.Poisson}, {"α", src.ExpansionPerK}, {"hardness", src.HardnessPa}, {"ε", src.Emissivity},
	}
	var order []string
	groups := map[string][]string{}
	for _, v := range values {
		cite, detail := v.cite, ""
		if cite == "" {
			cite = m.Source
		}
		if !strings.HasPrefix(cite, srcEstimate) && !strings.HasPrefix(cite, srcUnverified) {
			if i := strings.Index(cite, " ("); i > 0 {
				cite, detail = cite[:i], cite[i:]
			}
			cite = fmt.Sprintf("[%d]", number(cite))
		}
		if _, ok := groups[cite]; !ok {
			order = append(order, cite)
		}
		groups[cite] = append(groups[cite], v.name+detail)
	}
	out := make([]string, len(order))
	for i, c := range order {
		out[i] = strings.Join(groups[c], ", ") + ": " + c
	}
	return out
}
