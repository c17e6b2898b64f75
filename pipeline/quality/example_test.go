package quality_test

import (
	"fmt"

	"gapflux/pipeline/quality"
)

// A 200 mm base written in inches and read as millimetres: the gate rejects
// it and names the unit to try. Figures left NaN are not measured.
func ExampleEvaluate() {
	in := quality.Unmeasured()
	in.DiameterM = 0.200 / 25.4 // 7.874 mm as read
	in.Unit = "mm"
	in.FaceSource = "normals"
	in.CoveragePct = 99.5
	r := quality.Evaluate(in, quality.DefaultLimits())
	fmt.Println(r.Status)
	first, _ := r.First()
	fmt.Println(first.Name+":", first.Message)
	for _, c := range r.Checks[:3] {
		fmt.Printf("%-13s %-6s %.4g\n", c.Name, c.Status, c.Figure)
	}
	// Output:
	// reject
	// diameter_mm: the base measures 7.874 mm across; is the file in inches? try --units in
	// diameter_mm   reject 7.874
	// face          ok     NaN
	// coverage_pct  ok     99.5
}
