package thermal_test

import (
	"fmt"
	"math"

	"gapflux/thermal"
)

// Cut a 20 mm disc carrying a flux that rises with the radius into 5 mm
// rings.
func ExampleRings() {
	g := thermal.Grid{Nx: 81, Ny: 81, CellM: 0.5e-3, X0M: -20e-3, Y0M: -20e-3}
	inBase := make([]bool, g.Len())
	sol := &thermal.Solution{
		FluxWM2:   make([]float64, g.Len()),
		SolidWM2K: make([]float64, g.Len()),
		GasWM2K:   make([]float64, g.Len()),
		RadWM2K:   make([]float64, g.Len()),
	}
	for k := range g.Len() {
		x, y := g.CentreM(k)
		r := math.Hypot(x, y)
		if r >= 20e-3 {
			continue
		}
		inBase[k] = true
		sol.FluxWM2[k] = 1e4 * (1 + r/20e-3)
		sol.GasWM2K[k] = 500
		sol.PowerW += sol.FluxWM2[k] * g.CellM * g.CellM
	}
	rings, err := thermal.Rings(thermal.RingInput{Grid: g, InBase: inBase, WidthM: 5e-3, Scan: sol})
	if err != nil {
		fmt.Println(err)
		return
	}
	sum := 0.0
	for _, rg := range rings {
		fmt.Printf("%g–%g mm: %4d cells, %5.2f kW/m², %5.2f W\n",
			rg.RInM*1e3, rg.ROutM*1e3, rg.Cells, rg.FluxWM2/1e3, rg.PowerW)
		sum += rg.PowerW
	}
	fmt.Printf("total %.2f W (solution %.2f W)\n", sum, sol.PowerW)
	// Output:
	// 0–5 mm:  313 cells, 11.66 kW/m²,  0.91 W
	// 5–10 mm:  934 cells, 13.88 kW/m²,  3.24 W
	// 10–15 mm: 1562 cells, 16.31 kW/m²,  6.37 W
	// 15–20 mm: 2204 cells, 18.79 kW/m², 10.35 W
	// total 20.88 W (solution 20.88 W)
}
