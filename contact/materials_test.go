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

func TestMaterialValues(t *testing.T) {
	// PHYSICS-REFERENCES.md 11 (k, ρ, c_p, E, ν, α) and 5.3 (ε), tags there;
	// hardness as HB/HV/HK × 9.80665 MPa (item 0).
	tests := []struct {
		name                 string
		k, rho, cp, e, nu, a float64
		hardMPa, eps         float64
	}{
		{"alu-1050", 222, 2710, 920, 71e9, 0.33, 24e-6, 294.1995, 0.09},
		{"alu-3003", 193, 2730, 893, 69e9, 0.33, 23.2e-6, 274.5862, 0.09},
		{"ss-304", 16.2, 8000, 500, 193e9, 0.29, 17.3e-6, 1265.05785, 0.16},
		{"ss-430", 26.1, 7740, 460, 200e9, 0.28, 10.4e-6, 1618.09725, 0.16},
		{"carbon-steel", 64, 7830, 434, 205e9, 0.29, 12e-6, 1029.69825, 0.64},
		{"cast-iron", 46, 7200, 450, 81.5e9, 0.26, 10.5e-6, 1961.33, 0.64},
		{"copper", 394, 8900, 386, 120e9, 0.34, 16.8e-6, 490.3325, 0.05},
		{"glass-ceramic", 1.6, 2560, 800, 92e9, 0.25, 0, 5883.99, 0.90},
	}
	lib := Materials()
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
	// PHYSICS-REFERENCES.md 1.5: Al (k 200) on glass-ceramic (k 1.6) gives
	// k_s = 3.175; with the library's alu-1050 (222) it is 3.177.
	al, _ := LookupMaterial(lib, "alu-1050")
	gc, _ := LookupMaterial(lib, "glass-ceramic")
	if got := HarmonicConductivityWMK(al.ConductivityWMK, gc.ConductivityWMK); math.Abs(got-3.177) > 5e-4 {
		t.Errorf("k_s = %g", got)
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
