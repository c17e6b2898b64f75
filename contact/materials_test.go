package contact

import (
	"math"
	"slices"
	"strings"
	"testing"
)

func TestMaterials(t *testing.T) {
	lib := Materials()
	names := make([]string, len(lib))
	for i, m := range lib {
		names[i] = m.Name
		if err := m.Validate(); err != nil {
			t.Error(err)
		}
		if m.Source == "" {
			t.Errorf("%s: no source", m.Name)
		}
	}
	want := []string{"alu-1050", "alu-3003", "carbon-steel", "cast-iron", "copper", "glass-ceramic", "ss-304", "ss-430"}
	if !slices.Equal(names, want) {
		t.Errorf("names %v, want %v", names, want)
	}
	// A fresh copy each call: changing one does not change the next.
	lib[0].ConductivityWMK = -1
	if Materials()[0].ConductivityWMK != 222 {
		t.Error("Materials shares state between calls")
	}
}

// TestMaterialValues compares each built-in value with the table it cites
// (the same sources Materials() names value by value); hardness numbers
// are HB/HV/HK × 9.80665 MPa.
func TestMaterialValues(t *testing.T) {
	tests := []struct {
		name                 string
		k, rho, cp, e, nu, a float64
		hardMPa, eps         float64
	}{
		// 1050A data sheet "Non Heat Treatable Commercial-Purity Aluminium
		// 1050A": k 222 (25 °C), ρ 2.71 g/cm³, c_p 0.92 J/(g·K), E 71 GPa,
		// α 24e-6 (20–100 °C); ν 0.33 from Modulus Metal's 1050A-H19
		// 0.325–0.335; HB 30 our estimate; ε 0.09 Omega OS100 manual,
		// aluminum commercial sheet.
		{"alu-1050", 222, 2710, 920, 71e9, 0.33, 24e-6, 30 * 9.80665, 0.09},
		// SubsTech, alloy 3003: ρ 2.73e3, E 69 GPa, α 23.2e-6, c_p 893,
		// k 193, HB 28 annealed; ν 0.33 MatWeb 3003-H14; ε Omega as above.
		{"alu-3003", 193, 2730, 893, 69e9, 0.33, 23.2e-6, 28 * 9.80665, 0.09},
		// MatWeb AISI Type 304: ρ 8 g/cc, c_p 0.5 J/(g·°C), k 16.2 (0–100
		// °C), E 193–200 GPa, ν 0.29, α 17.3e-6 (0–100 °C), HV 129; ε 0.16
		// Trotec IC0120V table, stainless steel 18-8 at 25 °C.
		{"ss-304", 16.2, 8000, 500, 193e9, 0.29, 17.3e-6, 129 * 9.80665, 0.16},
		// AK Steel Type 430 data sheet: ρ 7.74 g/cm³, c_p 0.46 kJ/(kg·K),
		// k 26.1 (100 °C), α 10.4e-6 (0–100 °C), E 200e3 MPa; ν 0.28 and
		// HV 165 (from HRB 85 by ASTM E140) from memory, unverified.
		{"ss-430", 26.1, 7740, 460, 200e9, 0.28, 10.4e-6, 165 * 9.80665, 0.16},
		// Lienhard, A Heat Transfer Textbook 5th ed. Table A.1, AISI 1010:
		// k 64, ρ 7830; Incropera 6th ed. Table A.1, AISI 1010: c_p 434
		// (row 7832 / 434 / 63.9 also in Kothandaraman & Subramanyan's
		// Heat and Mass Transfer Data Book); E, ν, α from memory; HB 105
		// our estimate; ε FLIR table, cast iron oxidised 100 °C, 0.64.
		{"carbon-steel", 64, 7830, 434, 205e9, 0.29, 12e-6, 105 * 9.80665, 0.64},
		// MakeItFrom, ASTM Grade 20 grey iron: ρ 7.2 g/cm³, E 66–97 GPa,
		// c_p 450, k 46, α 10.5e-6; ν 0.26 from memory; HB 200 our
		// estimate; ε FLIR table, iron cast oxidized 100 °C 0.64.
		{"cast-iron", 46, 7200, 450, 81.5e9, 0.26, 10.5e-6, 200 * 9.80665, 0.64},
		// Copper Development Association (Calcutt 2001) Table 5: k 3.94
		// W/(cm·°C) at 20 °C, c_p 0.386 J/(g·°C) at 20 °C, α 16.8e-6
		// (25–100 °C), ρ 8.89–8.92 g/cm³; E 120 GPa and ν 0.34 MatWeb
		// C11600; HV 50 from memory; ε 0.05 Omega, copper polished.
		{"copper", 394, 8900, 386, 120e9, 0.34, 16.8e-6, 50 * 9.80665, 0.05},
		// All from memory, unverified; ε our estimate.
		{"glass-ceramic", 1.6, 2560, 800, 92e9, 0.25, 0, 600 * 9.80665, 0.90},
	}
	lib := Materials()
	if len(tests) != len(lib) {
		t.Errorf("%d materials tested, library has %d", len(tests), len(lib))
	}
	for _, tt := range tests {
		m, err := LookupMaterial(lib, tt.name)
		if err != nil {
			t.Fatal(err)
		}
		got := []float64{m.ConductivityWMK, m.DensityKgM3, m.CpJKgK, m.YoungPa, m.Poisson, m.ExpansionPerK, m.HardnessPa / 1e6, m.Emissivity}
		want := []float64{tt.k, tt.rho, tt.cp, tt.e, tt.nu, tt.a, tt.hardMPa, tt.eps}
		for i := range got {
			if math.Abs(got[i]-want[i]) > 1e-9*math.Abs(want[i]) {
				t.Errorf("%s field %d = %g, want %g", tt.name, i, got[i], want[i])
			}
		}
	}
	// Al (k 200) on glass-ceramic (k 1.6) gives k_s = 2·200·1.6/201.6 =
	// 3.175; with the library's alu-1050 (222) it is 3.177.
	al, _ := LookupMaterial(lib, "alu-1050")
	gc, _ := LookupMaterial(lib, "glass-ceramic")
	if got := HarmonicConductivityWMK(al.ConductivityWMK, gc.ConductivityWMK); math.Abs(got-3.177) > 5e-4 {
		t.Errorf("k_s = %g", got)
	}
}

// TestStainlessAgainstEN10088 cross-checks the two stainless grades with
// the guideline physical data of EN 10088-1 (as tabulated in a public copy
// of BS EN 10088-1: 304 / 1.4301: 7900 kg/m³, E 200 GPa, α 16.0e-6
// (20–100 °C), k 15 W/(m·K) at 20 °C, c_p 500; 430 / 1.4016: 7700, 220,
// 10.0e-6, 25, 460). The library takes makers' values (k at 100 °C), so
// they agree within 10 %, not exactly.
func TestStainlessAgainstEN10088(t *testing.T) {
	tests := []struct {
		name             string
		rho, e, a, k, cp float64
	}{
		{"ss-304", 7900, 200e9, 16.0e-6, 15, 500},
		{"ss-430", 7700, 220e9, 10.0e-6, 25, 460},
	}
	lib := Materials()
	for _, tt := range tests {
		m, _ := LookupMaterial(lib, tt.name)
		for _, c := range []struct {
			field     string
			got, want float64
		}{{"density", m.DensityKgM3, tt.rho}, {"E", m.YoungPa, tt.e}, {"α", m.ExpansionPerK, tt.a},
			{"k", m.ConductivityWMK, tt.k}, {"c_p", m.CpJKgK, tt.cp}} {
			if math.Abs(c.got-c.want) > 0.1*c.want {
				t.Errorf("%s %s = %g, EN 10088-1 gives %g (more than 10 %% apart)", tt.name, c.field, c.got, c.want)
			}
		}
	}
}

// TestMaterialSources checks that every built-in value cites a source a
// user can look up, or says it is an estimate or from memory, and that no
// citation points at our own notes.
func TestMaterialSources(t *testing.T) {
	for _, m := range Materials() {
		s := m.Sources
		for i, c := range []string{s.ConductivityWMK, s.DensityKgM3, s.CpJKgK, s.YoungPa, s.Poisson, s.ExpansionPerK, s.HardnessPa, s.Emissivity} {
			switch {
			case c == "":
				t.Errorf("%s value %d has no source", m.Name, i)
			case strings.Contains(c, ".md") || strings.Contains(strings.ToUpper(c), "DESIGN") || strings.Contains(c, "REFERENCES"):
				t.Errorf("%s value %d cites our notes: %q", m.Name, i, c)
			case strings.HasPrefix(c, srcEstimate), strings.HasPrefix(c, srcUnverified):
			case !strings.Contains(c, ","):
				t.Errorf("%s value %d: %q names no publisher and document", m.Name, i, c)
			}
		}
	}
}

// TestWriteMaterialTable checks the printed library: the value table,
// each material's values grouped by numbered source, the numbered list,
// and a job override cited as the job file.
func TestWriteMaterialTable(t *testing.T) {
	lib := Materials()
	for i := range lib {
		if lib[i].Name == "ss-430" {
			lib[i].ConductivityWMK, lib[i].Sources.ConductivityWMK = 24, "job file"
		}
	}
	lib = append(lib, Material{Name: "enamel-steel", ConductivityWMK: 50, DensityKgM3: 7800, CpJKgK: 460, Emissivity: 0.9, Source: "job file"})
	var b strings.Builder
	if err := WriteMaterialTable(&b, lib); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, want := range []string{
		"name           k_w_mk  density_kg_m3",
		"alu-1050: k (25 °C), density, c_p (10–100 °C), E, α (20–100 °C): [1]; ν (0.325–0.335): [2]; hardness: our estimate",
		"alu-3003: k, density, c_p, E, α (20 °C), hardness (HB 28 annealed): [4]; ν: [5]; ε (aluminum – commercial sheet): [3]",
		"glass-ceramic: k, density, c_p, E, ν: from memory, unverified;",
		"ss-430: k: [14]; density, c_p (0–100 °C), E, α (0–100 °C): [15];",
		"enamel-steel: k, density, c_p, E, ν, α, hardness, ε: [14]",
		"  [1] data sheet \"Non Heat Treatable Commercial-Purity Aluminium 1050A\"",
		"  [7] Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 6th ed., Wiley 2007, Table A.1",
		"  [14] job file\n",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, ".md") {
		t.Errorf("table cites a notes file:\n%s", out)
	}
}

func TestLookupMaterial(t *testing.T) {
	lib := Materials()
	if m, err := LookupMaterial(lib, "SS-304"); err != nil || m.Name != "ss-304" {
		t.Errorf("case-insensitive lookup: %v, %v", m.Name, err)
	}
	_, err := LookupMaterial(lib, "titanium")
	if err == nil || !strings.Contains(err.Error(), `"titanium"`) || !strings.Contains(err.Error(), "alu-1050, alu-3003, carbon-steel") {
		t.Errorf("error %v", err)
	}
	if _, err := LookupMaterial(nil, "copper"); err == nil {
		t.Error("lookup in an empty library succeeded")
	}
	// A job-file override placed in a copy of the library.
	lib = append(lib, Material{Name: "enamel-steel", ConductivityWMK: 50, DensityKgM3: 7800, CpJKgK: 460, Emissivity: 0.9})
	if m, err := LookupMaterial(lib, "enamel-steel"); err != nil || m.Emissivity != 0.9 {
		t.Errorf("added material: %+v %v", m, err)
	}
}

func TestMaterialValidate(t *testing.T) {
	ok := Material{Name: "x", ConductivityWMK: 1, DensityKgM3: 1, CpJKgK: 1}
	if err := ok.Validate(); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name string
		mod  func(*Material)
		want string
	}{
		{"no name", func(m *Material) { m.Name = "" }, "no name"},
		{"k 0", func(m *Material) { m.ConductivityWMK = 0 }, "conductivity"},
		{"ρ NaN", func(m *Material) { m.DensityKgM3 = math.NaN() }, "density"},
		{"c_p -1", func(m *Material) { m.CpJKgK = -1 }, "specific heat"},
		{"E -1", func(m *Material) { m.YoungPa = -1 }, "Young"},
		{"H Inf", func(m *Material) { m.HardnessPa = math.Inf(1) }, "hardness"},
		{"ν 0.5", func(m *Material) { m.Poisson = 0.5 }, "Poisson"},
		{"ε 1.2", func(m *Material) { m.Emissivity = 1.2 }, "emissivity"},
		{"α NaN", func(m *Material) { m.ExpansionPerK = math.NaN() }, "expansion"},
	}
	for _, tt := range tests {
		m := ok
		tt.mod(&m)
		if err := m.Validate(); err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%s: %v", tt.name, err)
		}
	}
}
