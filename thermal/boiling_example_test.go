package thermal_test

import (
	"fmt"

	"gapflux/thermal"
)

// Nucleate boiling on a polished copper base 18 K above saturation
// (Incropera, Example 10.1, with standard gravity), and the peak flux.
func ExampleRohsenowFluxWM2() {
	water, sat := thermal.WaterAt1Atm()
	q := thermal.RohsenowFluxWM2(18, thermal.CsfCopperPolished, thermal.RohsenowNWater, water, sat)
	qmax := thermal.CriticalFluxWM2(thermal.LienhardDhirC, water, sat)
	fmt.Printf("q″ = %.3g W/m², q″max = %.3g W/m²\n", q, qmax)
	// Output:
	// q″ = 8.36e+05 W/m², q″max = 1.26e+06 W/m²
}

// The water side of a 200 mm stainless base: natural convection into water
// at 60 °C, and boiling once the water is at 100 °C.
func ExampleBoilingWater() {
	w := thermal.BoilingWater{Csf: thermal.CsfStainlessMechPolished, DiameterM: 0.2}
	fmt.Printf("base 70 °C, water 60 °C: h = %.0f W/(m²·K)\n", w.H(343.15, 333.15))
	fmt.Printf("base 108 °C, water 100 °C: h = %.0f W/(m²·K)\n", w.H(381.15, 373.15))
	// Output:
	// base 70 °C, water 60 °C: h = 905 W/(m²·K)
	// base 108 °C, water 100 °C: h = 8369 W/(m²·K)
}
