package thermal_test

import (
	"fmt"
	"math"

	"gapflux/thermal"
)

// dishedGap is an interface model for the example: still air (k = 0.04
// W/(m·K)) across the gap of a base dished by sagM at its centre, with a
// contact gap g0M at the rim, and a little radiation.
type dishedGap struct {
	grid      thermal.Grid
	sagM, g0M float64
	radiusM   float64
	kAirWMK   float64
	radWM2K   float64
}

func (d dishedGap) H(k int, tHobK, tPanK float64) (solid, gas, rad float64) {
	x, y := d.grid.CentreM(k)
	r2 := (x*x + y*y) / (d.radiusM * d.radiusM)
	gap := d.sagM*(1-r2) + d.g0M
	return 0, d.kAirWMK / gap, d.radWM2K
}

// fixedWater is a water side with a constant coefficient.
type fixedWater float64

func (w fixedWater) H(tBaseK, tWaterK float64) float64 { return float64(w) }

// A 200 mm aluminium base dished by 0.3 mm on a hob held at 250 °C, water at
// 60 °C: most of the heat enters near the rim, where the gap is smallest.
func ExampleSolve() {
	const cell = 1e-3
	n := 201
	g := thermal.Grid{Nx: n, Ny: n, CellM: cell, X0M: -0.1, Y0M: -0.1}
	inBase := make([]bool, g.Len())
	top := make([]float64, g.Len())
	for k := range inBase {
		x, y := g.CentreM(k)
		inBase[k] = math.Hypot(x, y) <= 0.1
		top[k] = 523.15
	}
	p := &thermal.Problem{
		Grid:        g,
		InBase:      inBase,
		BaseLayers:  []thermal.Layer{{ThicknessM: 0.004, ConductivityWMK: 222}},
		Interface:   dishedGap{grid: g, sagM: 0.3e-3, g0M: 10e-6, radiusM: 0.1, kAirWMK: 0.04, radWM2K: 5},
		Water:       fixedWater(1000),
		TWaterK:     333.15,
		Temperature: &thermal.TemperatureHob{TopK: top},
	}
	s, err := thermal.Solve(p)
	if err != nil {
		fmt.Println(err)
		return
	}
	centre := (n/2)*n + n/2
	fmt.Printf("power %.0f W (gas %.0f W, radiation %.0f W)\n", s.PowerW, s.GasW, s.RadW)
	fmt.Printf("flux at the centre %.1f kW/m², base %.1f °C\n", s.FluxWM2[centre]/1e3, s.TPanK[centre]-273.15)
	fmt.Printf("to the water %.0f W\n", s.WaterW)
	// Output:
	// power 1761 W (gas 1740 W, radiation 21 W)
	// flux at the centre 20.9 kW/m², base 94.1 °C
	// to the water 1761 W
}

// The default radiant zone of DESIGN.md §5.3a (1800 W, 180 mm) under a pan
// lifted off the glass: the glass would overheat, so the limiter cuts the
// heater's duty.
func ExampleSolve_heater() {
	const cell = 2e-3
	n := 131
	g := thermal.Grid{Nx: n, Ny: n, CellM: cell, X0M: -0.13, Y0M: -0.13}
	inBase := make([]bool, g.Len())
	for k := range inBase {
		x, y := g.CentreM(k)
		inBase[k] = math.Hypot(x, y) <= 0.1
	}
	lifted := dishedGap{grid: g, sagM: 0, g0M: 2e-3, radiusM: 0.1, kAirWMK: 0.05, radWM2K: 15}
	p := &thermal.Problem{
		Grid:       g,
		InBase:     inBase,
		BaseLayers: []thermal.Layer{{ThicknessM: 0.004, ConductivityWMK: 222}},
		Interface:  lifted,
		Water:      fixedWater(1000),
		TWaterK:    333.15,
		Heater: &thermal.HeaterHob{
			PowerW: 1800, ZoneDiameterM: 0.18,
			Glass: thermal.Layer{ThicknessM: 0.004, ConductivityWMK: 1.6}, GlassEmissivity: 0.9,
			GlassRadiusM: 0.13, DownHWM2K: 10, RoomK: 296.15, LimiterK: 833.15,
		},
	}
	s, err := thermal.Solve(p)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("duty %.0f %%, heater %.0f W, into the pan %.0f W\n", s.DutyPct, s.HeaterW, s.PowerW)
	fmt.Printf("glass max %.0f °C; losses: down %.0f W, uncovered glass %.0f W\n", s.GlassMaxK-273.15, s.DownLossW, s.UncoveredLossW)
	fmt.Println(s.Warnings[0])
	// Output:
	// duty 34 %, heater 611 W, into the pan 440 W
	// glass max 560 °C; losses: down 151 W, uncovered glass 20 W
	// heater cycled: the limiter held the hottest glass at 560.0 °C, duty 34.0 %
}
