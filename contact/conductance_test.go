package contact

import (
	"math"
	"strings"
	"sync"
	"testing"

	"gapflux/fluid"
)

func TestDefaultInterfaceParams(t *testing.T) {
	// DESIGN.md 5.3a (our scenario); slope by Antonetti at 1.5 µm
	// (0.125·1.5^0.402, PHYSICS-REFERENCES.md 2 [M]); k_s = 2·222·1.6/223.6.
	p := DefaultInterfaceParams()
	if err := p.Validate(); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"σ", p.SigmaM, 1.5e-6}, {"m", p.Slope, 0.147129}, {"k_s", p.KSolidWMK, 3.177102},
		{"H_c", p.HardnessPa, 600e6}, {"E′", p.EPrimePa, 1 / ((1-0.33*0.33)/71e9 + (1-0.25*0.25)/92e9)},
		{"p", p.GasPressurePa, 101325}, {"ε hob", p.Emissivity1, 0.9}, {"ε pan", p.Emissivity2, 0.3},
		{"a", p.Accommodation1 * p.Accommodation2, 0.64},
	} {
		if rel(c.got, c.want) > 1e-6 {
			t.Errorf("%s = %.7g, want %.7g", c.name, c.got, c.want)
		}
	}
	if p.Model != ModelPlastic || p.Gamma != 1.4 {
		t.Errorf("model %q γ %g", p.Model, p.Gamma)
	}
}

func TestValidate(t *testing.T) {
	tests := []struct {
		name string
		mod  func(*InterfaceParams)
		want string // substring of the error; "" = valid
	}{
		{"default", func(*InterfaceParams) {}, ""},
		{"empty model = plastic", func(p *InterfaceParams) { p.Model = "" }, ""},
		{"elastic needs no hardness", func(p *InterfaceParams) { p.Model = ModelElastic; p.HardnessPa = 0 }, ""},
		{"σ 0", func(p *InterfaceParams) { p.SigmaM = 0 }, "SigmaM"},
		{"σ NaN", func(p *InterfaceParams) { p.SigmaM = math.NaN() }, "SigmaM"},
		{"slope -1", func(p *InterfaceParams) { p.Slope = -1 }, "Slope"},
		{"k_s Inf", func(p *InterfaceParams) { p.KSolidWMK = math.Inf(1) }, "KSolidWMK"},
		{"pressure 0", func(p *InterfaceParams) { p.GasPressurePa = 0 }, "GasPressurePa"},
		{"hardness 0", func(p *InterfaceParams) { p.HardnessPa = 0 }, "HardnessPa"},
		{"elastic E′ 0", func(p *InterfaceParams) { p.Model = ModelElastic; p.EPrimePa = 0 }, "EPrimePa"},
		{"model", func(p *InterfaceParams) { p.Model = "cmy" }, "unknown interface model"},
		{"accommodation 0", func(p *InterfaceParams) { p.Accommodation1 = 0 }, "Accommodation1"},
		{"accommodation 1.1", func(p *InterfaceParams) { p.Accommodation2 = 1.1 }, "Accommodation2"},
		{"emissivity 0", func(p *InterfaceParams) { p.Emissivity1 = 0 }, "Emissivity1"},
		{"emissivity 2", func(p *InterfaceParams) { p.Emissivity2 = 2 }, "Emissivity2"},
		{"γ 1", func(p *InterfaceParams) { p.Gamma = 1 }, "Gamma"},
	}
	for _, tt := range tests {
		p := DefaultInterfaceParams()
		tt.mod(&p)
		err := p.Validate()
		switch {
		case tt.want == "" && err != nil:
			t.Errorf("%s: %v", tt.name, err)
		case tt.want != "" && (err == nil || !strings.Contains(err.Error(), tt.want)):
			t.Errorf("%s: error %v, want one naming %q", tt.name, err, tt.want)
		}
	}
}

// TestFlatBaseCookingLoad is the sanity check of DESIGN.md 5.2: a flat
// aluminium base, 200 mm across, on glass-ceramic under a 1 kg pan and
// 1.5 kg of water (5.3a): P = 24.52 N / 0.031416 m² = 780.4 Pa,
// P/H_c = 1.30e-6, h_s = 0.998, Y_c = 7.04 µm, and with the hob at 500 K and
// the pan at 400 K (film 450 K, M = 0.569 µm) h_g = 4900, h_r = 6.07
// W/(m²·K): the gas term is ~4900 times the solid term. (Values computed
// here from the formulas [N]; the point, per PHYSICS-REFERENCES.md 1.6, is
// the ratio ≫ 100.)
func TestFlatBaseCookingLoad(t *testing.T) {
	p := DefaultInterfaceParams()
	const n = 400 // cells on the base, each of equal area
	area := math.Pi * 0.1 * 0.1
	gap := make([]float64, n)
	inBase := make([]bool, n)
	for k := range inBase {
		inBase[k] = true
	}
	load := (1 + 1.5) * fluid.StandardGravityMS2
	contact, pPa, aM2 := ContactPressure(gap, inBase, area/n, load, p.SigmaM)
	if rel(aM2, area) > 1e-12 || rel(pPa, 780.388) > 1e-5 {
		t.Fatalf("P = %g Pa over %g m²", pPa, aM2)
	}
	f, err := NewField(p, gap, contact, pPa)
	if err != nil {
		t.Fatal(err)
	}
	b := f.Band()
	if rel(b.Ratio, 1.30065e-6) > 1e-5 || rel(b.SeparationM, 7.04295e-6) > 1e-5 || rel(b.SolidWM2K, 0.997700) > 1e-5 {
		t.Errorf("band = %+v", b)
	}
	if b.Flags != 0 {
		t.Errorf("flags %v: P/H_c = 1.3e-6 is inside the range", b.Flags)
	}
	parts, fl := f.Cell(n/2, 500, 400)
	if fl != 0 {
		t.Errorf("cell flags %v", fl)
	}
	if rel(parts.GasWM2K, 4900.43) > 1e-5 || rel(parts.RadWM2K, 6.07462) > 1e-5 {
		t.Errorf("parts = %+v", parts)
	}
	if r := parts.GasWM2K / parts.SolidWM2K; r < 100 {
		t.Errorf("gas/solid = %.1f, want > 100", r)
	}
	if rel(parts.Total(), 0.997700+4900.43+6.07462) > 1e-5 {
		t.Errorf("total %g", parts.Total())
	}
}

func TestCellGap(t *testing.T) {
	// A non-contact cell whose mean-plane separation g + Y_c is 100 µm, at a
	// film temperature of 500 K, gives PHYSICS-REFERENCES.md 4.4's 404.38
	// W/(m²·K) (air k 0.0407, M 0.648 µm, a = 0.8).
	p := DefaultInterfaceParams()
	const pPa = 780.388
	yc := p.Band(pPa).SeparationM
	in := CellInput{GapM: 100e-6 - yc, PressurePa: pPa, THobK: 525, TPanK: 475}
	parts, fl := p.Cell(in)
	if rel(parts.GasWM2K, 404.38) > 2e-4 || parts.SolidWM2K != 0 || fl != 0 {
		t.Errorf("parts %+v flags %v, want h_g 404.38", parts, fl)
	}
	if want := RadiationWM2K(525, 475, 0.9, 0.3); parts.RadWM2K != want {
		t.Errorf("h_r = %g, want %g", parts.RadWM2K, want)
	}
	// The same cell counted as contact takes Y = Y_c and h_s.
	in.Contact = true
	cp, _ := p.Cell(in)
	if cp.SolidWM2K != p.Band(pPa).SolidWM2K || !(cp.GasWM2K > 10*parts.GasWM2K) {
		t.Errorf("contact cell %+v", cp)
	}
}

func TestCellConvective(t *testing.T) {
	// 15 mm gap heated from below by 200 K at a 500 K film: Ra = 6028 > 1708,
	// Nu = 2.0432 by Hollands et al. (1975) (PHYSICS-REFERENCES.md 9.2 form),
	// h_g = 5.541 W/(m²·K) [N, computed here from Table A.4 at 500 K].
	p := DefaultInterfaceParams()
	in := CellInput{GapM: 15e-3, PressurePa: 780.388, THobK: 600, TPanK: 400}
	parts, fl := p.Cell(in)
	if fl&Convective == 0 || rel(parts.GasWM2K, 5.54094) > 1e-4 {
		t.Errorf("heated from below: h_g %.5g flags %v, want 5.541 convective", parts.GasWM2K, fl)
	}
	// Heated from above (pan hotter): stable, conduction only.
	in.THobK, in.TPanK = 400, 600
	parts, fl = p.Cell(in)
	if fl&Convective != 0 || rel(parts.GasWM2K*2.04316, 5.54094) > 1e-4 {
		t.Errorf("heated from above: h_g %.5g flags %v", parts.GasWM2K, fl)
	}
	// A 5 mm gap stays below onset (Ra ≈ 223).
	in = CellInput{GapM: 5e-3, PressurePa: 780.388, THobK: 600, TPanK: 400}
	if _, fl = p.Cell(in); fl&Convective != 0 {
		t.Errorf("5 mm gap flagged convective")
	}
}

func TestBandRange(t *testing.T) {
	p := DefaultInterfaceParams()
	tests := []struct {
		name     string
		pPa      float64
		flags    Flags
		sepRatio float64 // ratio at which Y is evaluated
	}{
		{"cooking load below range", 60, OutOfRangeLow, 1e-7},
		{"in range", 6000, 0, 1e-5},
		{"very light", 1e-4, OutOfRangeLow, SeparationFloorRatio},
		{"no load", 0, NoLoad, SeparationFloorRatio},
		{"negative load", -5, NoLoad, SeparationFloorRatio},
		{"above range", 0.05 * 600e6, OutOfRangeHigh, CorrelationMaxRatio},
	}
	for _, tt := range tests {
		b := p.Band(tt.pPa)
		if b.Flags != tt.flags {
			t.Errorf("%s: flags %v, want %v", tt.name, b.Flags, tt.flags)
		}
		if want := SeparationM(p.SigmaM, tt.sepRatio); rel(b.SeparationM, want) > 1e-12 {
			t.Errorf("%s: Y = %g, want %g", tt.name, b.SeparationM, want)
		}
		// Not clamped: the power law at the actual ratio.
		want := PlasticContactWM2K(p.KSolidWMK, p.Slope, p.SigmaM, tt.pPa/p.HardnessPa)
		if b.SolidWM2K != want {
			t.Errorf("%s: h_s = %g, want %g", tt.name, b.SolidWM2K, want)
		}
	}
	// At P/H_c = 1e-7 the solid term is a fraction of a W/(m²·K) (item 1.6).
	if b := p.Band(60); !(b.SolidWM2K > 0 && b.SolidWM2K < 0.2) {
		t.Errorf("h_s at 1e-7 = %g", b.SolidWM2K)
	}
}

func TestBandElastic(t *testing.T) {
	// The elastic model uses Mikic (1974) for h_s and the ratio
	// √2·P/(m·E′) for the range and the separation.
	p := DefaultInterfaceParams()
	p.Model = ModelElastic
	const pPa = 5e4
	b := p.Band(pPa)
	r := ElasticRatio(pPa, p.Slope, p.EPrimePa)
	if b.Ratio != r || b.SolidWM2K != ElasticContactWM2K(p.KSolidWMK, p.Slope, p.SigmaM, pPa, p.EPrimePa) ||
		b.SeparationM != SeparationM(p.SigmaM, r) || b.Flags != 0 {
		t.Errorf("elastic band %+v (ratio %g)", b, r)
	}
	if b := p.Band(780); b.Flags != OutOfRangeLow {
		t.Errorf("elastic at cooking load: flags %v", b.Flags)
	}
}

func TestCellSpecial(t *testing.T) {
	p := DefaultInterfaceParams()
	// NaN gap: no base here.
	if parts, fl := p.Cell(CellInput{GapM: math.NaN(), PressurePa: 780, THobK: 500, TPanK: 400}); parts != (Parts{}) || fl != 0 {
		t.Errorf("NaN gap: %+v %v", parts, fl)
	}
	// NaN temperature: NaN parts.
	parts, _ := p.Cell(CellInput{GapM: 0, Contact: true, PressurePa: 780, THobK: math.NaN(), TPanK: 400})
	if !math.IsNaN(parts.GasWM2K) || !math.IsNaN(parts.RadWM2K) {
		t.Errorf("NaN temperature: %+v", parts)
	}
	// Film beyond the air table: clamped and flagged; gas at 1000 K properties.
	parts, fl := p.Cell(CellInput{GapM: 1e-3, PressurePa: 780, THobK: 1300, TPanK: 1100})
	hot, _ := p.Cell(CellInput{GapM: 1e-3, PressurePa: 780, THobK: 1050, TPanK: 950})
	if fl&FilmClamped == 0 || rel(parts.GasWM2K, hot.GasWM2K) > 1e-12 {
		t.Errorf("film 1200 K: %+v %v vs %+v", parts, fl, hot)
	}
	if _, fl := p.Cell(CellInput{GapM: 1e-3, PressurePa: 780, THobK: 200, TPanK: 280}); fl&FilmClamped == 0 {
		t.Error("film 240 K not flagged")
	}
}

func TestContactPressure(t *testing.T) {
	nan := math.NaN()
	const sigma = 1e-6 // band 3 µm
	gap := []float64{0, 2.9e-6, 3e-6, 3.1e-6, nan, 0, 1e-3, 0}
	inBase := []bool{true, true, true, true, true, false, true, true}
	want := []bool{true, true, true, false, false, false, false, true}
	contact, pPa, aM2 := ContactPressure(gap, inBase, 2.5e-7, 10, sigma)
	for k := range want {
		if contact[k] != want[k] {
			t.Errorf("cell %d: contact %v, want %v", k, contact[k], want[k])
		}
	}
	// 4 contact cells of 0.25 mm²: 1 mm², 10 N → 1e7 Pa.
	if rel(aM2, 1e-6) > 1e-12 || rel(pPa, 1e7) > 1e-12 {
		t.Errorf("P = %g Pa over %g m²", pPa, aM2)
	}
	// No contact at all.
	c, pPa, aM2 := ContactPressure([]float64{1, nan}, []bool{true, true}, 1, 10, sigma)
	if c[0] || c[1] || pPa != 0 || aM2 != 0 {
		t.Errorf("no contact: %v %g %g", c, pPa, aM2)
	}
	defer func() {
		if recover() == nil {
			t.Error("no panic on length mismatch")
		}
	}()
	ContactPressure(gap, inBase[:3], 1, 1, sigma)
}

func TestNewField(t *testing.T) {
	p := DefaultInterfaceParams()
	gap := []float64{0, 1e-4, math.NaN()}
	contact := []bool{true, false, false}
	if _, err := NewField(p, gap, contact, 780); err != nil {
		t.Fatal(err)
	}
	bad := p
	bad.SigmaM = 0
	tests := []struct {
		name    string
		p       InterfaceParams
		gap     []float64
		contact []bool
		pPa     float64
	}{
		{"params", bad, gap, contact, 780},
		{"lengths", p, gap, contact[:2], 780},
		{"negative pressure", p, gap, contact, -1},
		{"NaN pressure", p, gap, contact, math.NaN()},
		{"negative gap", p, []float64{0, -1e-6, 0}, contact, 780},
		{"infinite gap", p, []float64{0, math.Inf(1), 0}, contact, 780},
	}
	for _, tt := range tests {
		if _, err := NewField(tt.p, tt.gap, tt.contact, tt.pPa); err == nil {
			t.Errorf("%s: no error", tt.name)
		}
	}
}

func TestFieldH(t *testing.T) {
	p := DefaultInterfaceParams()
	gap := []float64{0, 2e-6, 50e-6, 15e-3, math.NaN()}
	contact := []bool{true, true, false, false, false}
	const pPa = 1500.0
	// A Field built as a literal works without NewField.
	f := &Field{Params: p, GapM: gap, Contact: contact, PressurePa: pPa}
	for k := range gap {
		s, g, r := f.H(k, 600, 400)
		want, _ := p.Cell(CellInput{GapM: gap[k], Contact: contact[k], PressurePa: pPa, THobK: 600, TPanK: 400})
		if s != want.SolidWM2K || g != want.GasWM2K || r != want.RadWM2K {
			t.Errorf("cell %d: H = %g %g %g, Cell = %+v", k, s, g, r, want)
		}
	}
	// Contact cells 0 and 1 share h_s and Y_c whatever their gap.
	s0, g0, _ := f.H(0, 500, 400)
	s1, g1, _ := f.H(1, 500, 400)
	if s0 != s1 || g0 != g1 || !(s0 > 0) {
		t.Errorf("contact cells differ: %g %g vs %g %g", s0, g0, s1, g1)
	}
	// Flags: the convective 15 mm cell shows only when heated from below.
	n := len(gap)
	hob, pan := make([]float64, n), make([]float64, n)
	for k := range hob {
		hob[k], pan[k] = 600, 400
	}
	if fl := f.Flags(hob, pan); fl != Convective {
		t.Errorf("flags %v, want convective", fl)
	}
	hob[3] = math.NaN()
	if fl := f.Flags(hob, pan); fl != 0 {
		t.Errorf("flags %v, want none", fl)
	}
	// Concurrent use (run with -race).
	f2 := &Field{Params: p, GapM: gap, Contact: contact, PressurePa: pPa}
	var wg sync.WaitGroup
	res := make([]float64, 8)
	for w := range res {
		wg.Add(1)
		go func() {
			defer wg.Done()
			_, g, _ := f2.H(2, 600, 400)
			res[w] = g
		}()
	}
	wg.Wait()
	for _, g := range res {
		if g != res[0] {
			t.Errorf("concurrent results differ: %v", res)
		}
	}
}

func TestFlagsString(t *testing.T) {
	tests := []struct {
		f    Flags
		want string
	}{
		{0, "none"},
		{OutOfRangeLow, "out-of-range-low"},
		{OutOfRangeLow | Convective, "out-of-range-low|convective"},
		{NoLoad | FilmClamped | 1<<10, "no-load|film-clamped|0x400"},
	}
	for _, tt := range tests {
		if got := tt.f.String(); got != tt.want {
			t.Errorf("%d.String() = %q, want %q", uint32(tt.f), got, tt.want)
		}
	}
}

// benchField builds a 200 mm base on a 0.5 mm grid (about 126 k base cells
// out of 160 k) with a gentle dish: gap = 0.2 mm·(r/R)² … reversed so the
// rim touches (concave base).
func benchField(b *testing.B) *Field {
	const n, cell, r0 = 400, 0.5e-3, 0.1
	gap := make([]float64, n*n)
	inBase := make([]bool, n*n)
	for j := range n {
		for i := range n {
			x, y := (float64(i)+0.5)*cell-r0, (float64(j)+0.5)*cell-r0
			r := math.Hypot(x, y)
			k := j*n + i
			if r > r0 {
				gap[k] = math.NaN()
				continue
			}
			inBase[k] = true
			gap[k] = 0.2e-3 * (1 - (r/r0)*(r/r0))
		}
	}
	p := DefaultInterfaceParams()
	contact, pPa, _ := ContactPressure(gap, inBase, cell*cell, 2.5*fluid.StandardGravityMS2, p.SigmaM)
	f, err := NewField(p, gap, contact, pPa)
	if err != nil {
		b.Fatal(err)
	}
	return f
}

// BenchmarkFieldH evaluates every cell of a 126 k-cell base once per
// iteration, as one sweep of a plate solver would.
func BenchmarkFieldH(b *testing.B) {
	f := benchField(b)
	cells := 0
	for _, g := range f.GapM {
		if !math.IsNaN(g) {
			cells++
		}
	}
	b.ReportMetric(float64(cells), "cells")
	b.ResetTimer()
	var sum float64
	for range b.N {
		for k, g := range f.GapM {
			if math.IsNaN(g) {
				continue
			}
			s, gas, r := f.H(k, 520+float64(k%7), 400)
			sum += s + gas + r
		}
	}
	_ = sum
}

func BenchmarkContactPressure(b *testing.B) {
	f := benchField(b)
	inBase := make([]bool, len(f.GapM))
	for k, g := range f.GapM {
		inBase[k] = !math.IsNaN(g)
	}
	b.ResetTimer()
	for range b.N {
		ContactPressure(f.GapM, inBase, 0.25e-6, 24.5, 1.5e-6)
	}
}

// TestModelAlias checks that the old name of the CMY plastic model gives
// the same band as the new one, and that the names map (issue 9 part 4).
func TestModelAlias(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"", ModelPlastic}, {ModelPlasticOld, ModelPlastic}, {ModelPlastic, ModelPlastic}, {ModelElastic, ModelElastic},
	} {
		if got := CanonicalModel(tc.in); got != tc.want {
			t.Errorf("CanonicalModel(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
	p := DefaultInterfaceParams()
	q := p
	q.Model = ModelPlasticOld
	if err := q.Validate(); err != nil {
		t.Fatal(err)
	}
	if a, b := p.Band(500), q.Band(500); a != b {
		t.Errorf("band with %q = %+v, with %q = %+v", ModelPlastic, a, ModelPlasticOld, b)
	}
}
