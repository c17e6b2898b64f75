package fluid_test

import (
	"fmt"

	"gapflux/fluid"
)

func ExampleAirAt() {
	a, err := fluid.AirAt(425) // film temperature, K
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("k = %.5f W/(m·K), ν = %.3e m²/s, Pr = %.3f\n", a.ConductivityWMK, a.KinViscosityM2S, a.Prandtl)
	_, err = fluid.AirAt(1200)
	fmt.Println(err)
	// Output:
	// k = 0.03555 W/(m·K), ν = 2.940e-05 m²/s, Pr = 0.688
	// fluid: air at 1200 K is outside the table (250 to 1000 K)
}

func ExampleWaterAt() {
	w, err := fluid.WaterAt(60 + fluid.CelsiusZeroK)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("ρ = %.1f kg/m³, μ = %.3g Pa·s, k = %.3f W/(m·K), Pr = %.2f\n",
		w.DensityKgM3, w.ViscosityPaS, w.ConductivityWMK, w.Prandtl)
	// Output:
	// ρ = 983.0 kg/m³, μ = 0.000466 Pa·s, k = 0.654 W/(m·K), Pr = 2.98
}

func ExampleAirMeanFreePathM() {
	for _, tK := range []float64{300, 500} {
		fmt.Printf("%.0f K: %.4f µm\n", tK, fluid.AirMeanFreePathM(tK, fluid.StandardPressurePa)*1e6)
	}
	// Output:
	// 300 K: 0.0670 µm
	// 500 K: 0.1266 µm
}
