package contact_test

import (
	"fmt"
	"math"

	"gapflux/contact"
	"gapflux/fluid"
)

// A flat 200 mm aluminium base under 2.5 kg on glass-ceramic (DESIGN.md
// 5.3a): the solid spots carry almost nothing; the gas carries the heat.
func ExampleInterfaceParams_Cell() {
	p := contact.DefaultInterfaceParams()
	pPa := 2.5 * fluid.StandardGravityMS2 / (math.Pi * 0.1 * 0.1)
	for _, gapM := range []float64{0, 50e-6, 0.5e-3} {
		parts, flags := p.Cell(contact.CellInput{
			GapM: gapM, Contact: gapM <= contact.ContactBandSigmas*p.SigmaM,
			PressurePa: pPa, THobK: 500, TPanK: 400,
		})
		fmt.Printf("gap %5.0f µm: solid %5.3f  gas %7.1f  rad %4.2f  total %7.1f W/(m²·K) flags %v\n",
			gapM*1e6, parts.SolidWM2K, parts.GasWM2K, parts.RadWM2K, parts.Total(), flags)
	}
	// Output:
	// gap     0 µm: solid 0.998  gas  4900.4  rad 6.07  total  4907.5 W/(m²·K) flags none
	// gap    50 µm: solid 0.000  gas   647.4  rad 6.07  total   653.5 W/(m²·K) flags none
	// gap   500 µm: solid 0.000  gas    73.5  rad 6.07  total    79.6 W/(m²·K) flags none
}

func ExampleInterfaceParams_Band() {
	p := contact.DefaultInterfaceParams()
	// A dished base resting on its rim: 2.5 kg on 6 cm² of contact band.
	b := p.Band(2.5 * fluid.StandardGravityMS2 / 6e-4)
	fmt.Printf("P/H_c = %.2g, Y_c = %.2f µm, h_s = %.1f W/(m²·K), flags %v\n",
		b.Ratio, b.SeparationM*1e6, b.SolidWM2K, b.Flags)
	// A lighter contact is below the correlations' range: flagged, not clamped.
	b = p.Band(50)
	fmt.Printf("P/H_c = %.2g, h_s = %.3f W/(m²·K), flags %v\n", b.Ratio, b.SolidWM2K, b.Flags)
	// Output:
	// P/H_c = 6.8e-05, Y_c = 5.71 µm, h_s = 42.9 W/(m²·K), flags none
	// P/H_c = 8.3e-08, h_s = 0.073 W/(m²·K), flags out-of-range-low
}

func ExampleContactPressure() {
	const sigmaM = 1.5e-6 // contact band: gap ≤ 4.5 µm
	gap := []float64{0, 3e-6, 20e-6, 0, math.NaN()}
	inBase := []bool{true, true, true, true, false}
	contactCells, pPa, aM2 := contact.ContactPressure(gap, inBase, 1e-4, 24.5, sigmaM)
	fmt.Printf("%v %.1f Pa on %.1f cm²\n", contactCells, pPa, aM2*1e4)
	// Output:
	// [true true false true false] 81666.7 Pa on 3.0 cm²
}

func ExampleField_H() {
	gap := []float64{0, 40e-6, 0.2e-3}
	f, err := contact.NewField(contact.DefaultInterfaceParams(), gap, []bool{true, false, false}, 5000)
	if err != nil {
		fmt.Println(err)
		return
	}
	for k := range gap {
		s, g, r := f.H(k, 520, 380)
		fmt.Printf("cell %d: %.2f %.1f %.2f\n", k, s, g, r)
	}
	// Output:
	// cell 0: 5.83 5318.0 6.15
	// cell 1: 0.00 793.4 6.15
	// cell 2: 0.00 180.2 6.15
}

func ExampleSlopeCorrelation_Slope() {
	for _, c := range []contact.SlopeCorrelation{contact.Antonetti, contact.LambertFletcher, contact.TannerFahoum} {
		m, ok := c.Slope(1.5e-6)
		fmt.Printf("%-16s m = %.4f in range %v\n", c, m, ok)
	}
	m, ok := contact.Antonetti.Slope(12e-6)
	fmt.Printf("antonetti at 12 µm: m = %.3f in range %v\n", m, ok)
	// Output:
	// antonetti        m = 0.1471 in range true
	// lambert-fletcher m = 0.0938 in range true
	// tanner-fahoum    m = 0.1788 in range true
	// antonetti at 12 µm: m = 0.339 in range false
}

func ExampleLookupMaterial() {
	lib := contact.Materials()
	m, err := contact.LookupMaterial(lib, "ss-430")
	fmt.Println(m.Name, m.ConductivityWMK, "W/(m·K)", err)
	_, err = contact.LookupMaterial(lib, "brass")
	fmt.Println(err)
	// Output:
	// ss-430 26.1 W/(m·K) <nil>
	// contact: unknown material "brass" (known: alu-1050, alu-3003, carbon-steel, cast-iron, copper, glass-ceramic, ss-304, ss-430)
}

func ExampleRadiationWM2K() {
	// Glass at 250 °C under a stainless base at 150 °C.
	fmt.Printf("%.3f W/(m²·K)\n", contact.RadiationWM2K(523.15, 423.15, 0.9, 0.16))
	// Output:
	// 3.819 W/(m²·K)
}
