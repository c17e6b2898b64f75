package thermal

import (
	"math"
	"strings"
	"testing"
)

// ringDisc builds a disc base of radius rM on a square grid of cell cellM
// centred on cx, cy, with a radial flux q(r) = q0·(1 + (r/R)²), interface
// parts solid = 1, gas = 2 + r/R, rad = 0.5 W/(m²·K), a gap c·r² and contact
// inside rContactM. The flat twin has a uniform flux 2·q0.
func ringDisc(rM, cellM, cx, cy, q0, c, rContactM float64) RingInput {
	n := int(math.Ceil(2*rM/cellM)) + 4
	g := Grid{Nx: n, Ny: n, CellM: cellM, X0M: cx - float64(n-1)/2*cellM, Y0M: cy - float64(n-1)/2*cellM}
	in := RingInput{
		Grid: g, InBase: make([]bool, g.Len()), CentreM: [2]float64{cx, cy}, WidthM: 5e-3,
		GapM: make([]float64, g.Len()), Contact: make([]bool, g.Len()),
	}
	scan := &Solution{
		FluxWM2: make([]float64, g.Len()), SolidWM2K: make([]float64, g.Len()),
		GasWM2K: make([]float64, g.Len()), RadWM2K: make([]float64, g.Len()),
	}
	flat := &Solution{FluxWM2: make([]float64, g.Len())}
	a := cellM * cellM
	for k := range g.Len() {
		x, y := g.CentreM(k)
		r := math.Hypot(x-cx, y-cy)
		if r > rM {
			scan.SolidWM2K[k], scan.GasWM2K[k], scan.RadWM2K[k] = math.NaN(), math.NaN(), math.NaN()
			continue
		}
		in.InBase[k] = true
		in.GapM[k] = c * r * r
		in.Contact[k] = r < rContactM
		scan.FluxWM2[k] = q0 * (1 + r*r/(rM*rM))
		scan.SolidWM2K[k], scan.GasWM2K[k], scan.RadWM2K[k] = 1, 2+r/rM, 0.5
		scan.PowerW += scan.FluxWM2[k] * a // cell order, as a solver sums it
		flat.FluxWM2[k] = 2 * q0
		flat.PowerW += flat.FluxWM2[k] * a
	}
	in.Scan, in.Flat = scan, flat
	return in
}

func TestRings(t *testing.T) {
	const (
		rM   = 0.05
		cell = 0.25e-3
		q0   = 2e4
		c    = 0.1 // gap c·r², 1/m: 0.25 mm at the rim
		rc   = 10e-3
	)
	in := ringDisc(rM, cell, 0.0123, -0.004, q0, c, rc)
	rings, err := Rings(in)
	if err != nil {
		t.Fatal(err)
	}
	if len(rings) != 10 {
		t.Fatalf("%d rings, want 10 (50 mm in 5 mm rings)", len(rings))
	}
	var power, flatPower, area float64
	cells := 0
	for _, b := range in.InBase {
		if b {
			cells++
		}
	}
	for i, rg := range rings {
		power += rg.PowerW
		flatPower += rg.FlatPowerW
		area += rg.AreaM2
		r1, r2 := float64(i)*5e-3, float64(i+1)*5e-3
		if rg.RInM != r1 || math.Abs(rg.ROutM-r2) > 1e-15 {
			t.Errorf("ring %d: [%g, %g), want [%g, %g)", i, rg.RInM, rg.ROutM, r1, r2)
		}
		// Area against the annulus π(r2² − r1²): cells are whole, so
		// within 1.5 % on 0.25 mm cells (ring 0 holds 1250 cells).
		if ann := math.Pi * (r2*r2 - r1*r1); fracDiff(rg.AreaM2, ann) > 0.015 {
			t.Errorf("ring %d: area %g, annulus %g", i, rg.AreaM2, ann)
		}
		// Mean flux of q0(1 + r²/R²) over the annulus is
		// q0(1 + (r1² + r2²)/(2R²)) (∫q·2πr dr / π(r2² − r1²)); the cell
		// sampling is good to 0.1 %.
		wantQ := q0 * (1 + (r1*r1+r2*r2)/(2*rM*rM))
		if fracDiff(rg.FluxWM2, wantQ) > 1e-3 {
			t.Errorf("ring %d: flux %g, want %g", i, rg.FluxWM2, wantQ)
		}
		// Mean of gas = 2 + r/R over the annulus: 2 + (2/3)(r2³ − r1³)/((r2² − r1²)R).
		wantGas := 2 + 2.0/3*(r2*r2*r2-r1*r1*r1)/((r2*r2-r1*r1)*rM)
		if fracDiff(rg.GasWM2K, wantGas) > 1e-3 {
			t.Errorf("ring %d: gas %g, want %g", i, rg.GasWM2K, wantGas)
		}
		if rg.SolidWM2K != 1 || rg.RadWM2K != 0.5 || math.Abs(rg.HWM2K-(rg.SolidWM2K+rg.GasWM2K+rg.RadWM2K)) > 1e-12 {
			t.Errorf("ring %d: h %g = solid %g + gas %g + rad %g?", i, rg.HWM2K, rg.SolidWM2K, rg.GasWM2K, rg.RadWM2K)
		}
		// Gap c·r²: mean c(r1² + r2²)/2 to 1 % (ring 0 is the worst, 0.6 %,
		// from its cells' staircase edge), max just under c·r2².
		if fracDiff(rg.MeanGapM, c*(r1*r1+r2*r2)/2) > 0.01 {
			t.Errorf("ring %d: mean gap %g, want %g", i, rg.MeanGapM, c*(r1*r1+r2*r2)/2)
		}
		if rg.MaxGapM > c*r2*r2 || rg.MaxGapM < c*(r2-cell)*(r2-cell) {
			t.Errorf("ring %d: max gap %g, want just under %g", i, rg.MaxGapM, c*r2*r2)
		}
		// Contact inside 10 mm: rings 0 and 1 all, the rest none.
		if want := map[bool]float64{true: 1, false: 0}[i < 2]; rg.ContactFrac != want {
			t.Errorf("ring %d: contact fraction %g, want %g", i, rg.ContactFrac, want)
		}
		if fracDiff(rg.FlatFluxWM2, 2*q0) > 1e-12 {
			t.Errorf("ring %d: flat flux %g, want %g", i, rg.FlatFluxWM2, 2*q0)
		}
	}
	// Σ ring power is the solution's power, Σ area the base area.
	if fracDiff(power, in.Scan.PowerW) > 1e-12 {
		t.Errorf("Σ ring power %.17g, solution %.17g", power, in.Scan.PowerW)
	}
	if fracDiff(flatPower, in.Flat.PowerW) > 1e-12 {
		t.Errorf("Σ flat ring power %.17g, solution %.17g", flatPower, in.Flat.PowerW)
	}
	if a := float64(cells) * cell * cell; fracDiff(area, a) > 1e-12 {
		t.Errorf("Σ ring area %g, base %g", area, a)
	}
	// And the disc: Σ flux·A = q0·πR²·1.5 to 0.1 %.
	if want := q0 * math.Pi * rM * rM * 1.5; fracDiff(power, want) > 1e-3 {
		t.Errorf("power %g, analytic %g", power, want)
	}
}

func TestRingsOptionalFields(t *testing.T) {
	in := ringDisc(0.02, 1e-3, 0, 0, 1e4, 0.1, 0)
	in.GapM, in.Contact, in.Scan, in.Flat = nil, nil, nil, nil
	in.WidthM = 0.3e-3 // narrower than a cell: some rings hold no cell
	rings, err := Rings(in)
	if err != nil {
		t.Fatal(err)
	}
	empty, cells := 0, 0
	for _, rg := range rings {
		if rg.PowerW != 0 || rg.HWM2K != 0 || rg.MeanGapM != 0 || rg.FlatPowerW != 0 {
			t.Fatalf("ring %+v: fields without input are not zero", rg)
		}
		if rg.Cells == 0 {
			empty++
			if rg.AreaM2 != 0 || rg.FluxWM2 != 0 {
				t.Errorf("empty ring %+v has area or flux", rg)
			}
		}
		cells += rg.Cells
	}
	if empty == 0 {
		t.Error("no empty ring with width < cell")
	}
	base := 0
	for _, b := range in.InBase {
		if b {
			base++
		}
	}
	if cells != base {
		t.Errorf("rings hold %d cells, base %d", cells, base)
	}
}

func TestRingsErrors(t *testing.T) {
	good := func() RingInput { return ringDisc(0.01, 1e-3, 0, 0, 1e4, 0.1, 2e-3) }
	tests := []struct {
		name string
		mod  func(*RingInput)
		want string
	}{
		{"zero width", func(in *RingInput) { in.WidthM = 0 }, "width"},
		{"NaN width", func(in *RingInput) { in.WidthM = math.NaN() }, "width"},
		{"empty grid", func(in *RingInput) { in.Grid.Nx = 0 }, "empty"},
		{"bad cell", func(in *RingInput) { in.Grid.CellM = -1 }, "cell size"},
		{"mask length", func(in *RingInput) { in.InBase = in.InBase[1:] }, "base mask"},
		{"gap length", func(in *RingInput) { in.GapM = in.GapM[1:] }, "gap field"},
		{"contact length", func(in *RingInput) { in.Contact = in.Contact[1:] }, "contact mask"},
		{"scan flux length", func(in *RingInput) { in.Scan.FluxWM2 = nil }, "scan solution"},
		{"scan parts length", func(in *RingInput) { in.Scan.GasWM2K = in.Scan.GasWM2K[1:] }, "conductance"},
		{"flat flux length", func(in *RingInput) { in.Flat.FluxWM2 = in.Flat.FluxWM2[2:] }, "flat solution"},
		{"no base", func(in *RingInput) { clear(in.InBase) }, "no cells"},
		{"too many rings", func(in *RingInput) { in.WidthM = 1e-300 }, "rings"},
	}
	for _, tc := range tests {
		in := good()
		tc.mod(&in)
		_, err := Rings(in)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want one mentioning %q", tc.name, err, tc.want)
		}
	}
}

// BenchmarkRings reduces a 200 mm base on 0.5 mm cells (about 126 k base
// cells, DESIGN.md 8) to 5 mm rings.
func BenchmarkRings(b *testing.B) {
	in := ringDisc(0.1, 0.5e-3, 0, 0, 2e4, 0.1, 0.01)
	for b.Loop() {
		if _, err := Rings(in); err != nil {
			b.Fatal(err)
		}
	}
}
