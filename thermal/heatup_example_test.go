package thermal_test

import (
	"errors"
	"fmt"

	"gapflux/thermal"
)

// Heat 1.5 kg of water from 15 to 90 °C in a 1 kg aluminium pan taking a
// steady 1500 W, without and with losses to a 23 °C room.
func ExampleHeatup() {
	load := thermal.Load{
		WaterKg: 1.5, FromK: 288.15, ToK: 363.15,
		PanKg: 1, PanCpJKgK: 900,
		WaterSurfaceDiameterM: 0.2, WallHeightM: 0.1, WallDiameterM: 0.2,
		WallEmissivity: 0.3, RoomK: 296.15,
	}
	// The PowerFunc would normally solve the plate at each water temperature.
	power := func(tWaterK float64) (panW, sourceW float64, err error) { return 1500, 1800, nil }

	ideal, err := thermal.Heatup(load, power, thermal.HeatupOptions{NoLosses: true})
	if err != nil {
		fmt.Println(err)
		return
	}
	lossy, err := thermal.Heatup(load, power, thermal.HeatupOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("no losses: %.0f s, %.1f Wh into the pan\n", ideal.TimeS, ideal.PanEnergyJ/3600)
	fmt.Printf("losses:    %.0f s, %.1f Wh lost, %.1f Wh from the source\n",
		lossy.TimeS, lossy.LossEnergyJ/3600, lossy.SourceEnergyJ/3600)

	// 40 W cannot keep up with the losses.
	_, err = thermal.Heatup(load, func(float64) (float64, float64, error) { return 40, 40, nil }, thermal.HeatupOptions{})
	var stall *thermal.StallError
	if errors.As(err, &stall) {
		fmt.Printf("40 W stalls at %.1f K\n", stall.StallK)
	}
	// Output:
	// no losses: 359 s, 149.6 Wh into the pan
	// losses:    366 s, 3.0 Wh lost, 183.0 Wh from the source
	// 40 W stalls at 337.6 K
}
