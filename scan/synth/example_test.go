package synth_test

import (
	"fmt"
	"os"

	"gapflux/scan/synth"
)

func ExampleGenerate() {
	// A 200 mm base bent one way by 0.4 mm at the rim, hand-held scanner
	// noise, pan upside down under the scanner.
	sc, err := synth.Generate(synth.Spec{
		Shape:     synth.Bend,
		DiameterM: 0.200,
		SagM:      0.4e-3,
		NoiseM:    60e-6,
		SpacingM:  1e-3,
		Seed:      1,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	t := sc.Truth
	fmt.Printf("%s, face %s: %d points\n", t.Shape, t.Face, t.Points)
	fmt.Printf("concavity %.2f mm, flatness %.2f mm, noise %.0f µm\n", t.ConcavityMM, t.FlatnessMM, t.NoiseUM)
	// Output:
	// bend, face up: 31417 points
	// concavity -0.20 mm, flatness 0.40 mm, noise 60 µm
}

func ExampleEncode() {
	// A 4 mm dish at 1 mm spacing: 13 points, written as CSV in mm.
	sc, err := synth.Generate(synth.Spec{Shape: synth.Dish, DiameterM: 4e-3, SagM: 0.1e-3, SpacingM: 1e-3, Face: "down"})
	if err != nil {
		fmt.Println(err)
		return
	}
	err = synth.Encode(os.Stdout, sc, synth.Encoding{Format: "csv", Precision: 3})
	if err != nil {
		fmt.Println(err)
	}
	// Output:
	// x_mm,y_mm,z_mm
	// 0.000,-2.000,0.000
	// -1.000,-1.000,0.050
	// 0.000,-1.000,0.075
	// 1.000,-1.000,0.050
	// -2.000,0.000,0.000
	// -1.000,0.000,0.075
	// 0.000,0.000,0.100
	// 1.000,0.000,0.075
	// 2.000,0.000,0.000
	// -1.000,1.000,0.050
	// 0.000,1.000,0.075
	// 1.000,1.000,0.050
	// 0.000,2.000,0.000
}
