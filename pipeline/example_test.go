package pipeline_test

import (
	"context"
	"fmt"
	"strings"

	"gapflux/pipeline"
)

// Analyse one of the committed sample scans (a 40 mm base dished by 0.1 mm,
// made by our generator) with a temperature-mode hob and read the form and
// pose from the report.
func ExampleAnalyze() {
	job := pipeline.DefaultJob()
	job.Hob.Mode = "temperature"
	job.Grid.CutoffMM = 4
	res, err := pipeline.Analyze(context.Background(), pipeline.ScanInput{
		PanPath: "../testdata/dish.stl", Name: "dish.stl", Job: job})
	if err != nil {
		fmt.Println(err)
		return
	}
	g, p := res.Report.Geometry, res.Report.Pose
	fmt.Printf("%s base, concavity %.2f mm, stands on its %s\n", g.Shape, g.ConcavityMM,
		map[bool]string{true: "centre", false: "rim"}[p.Rocks])
	// Output:
	// dished base, concavity 0.10 mm, stands on its rim
}

// A job file overrides only the keys it names; every key carries its unit.
func ExampleReadJob() {
	job, err := pipeline.ReadJob(strings.NewReader(`
[water]
mass_kg = 2.0
[[pan.layers]]
material = "ss-430"
thickness_mm = 0.6
[[pan.layers]]
material = "alu-1050"
thickness_mm = 3.0
`), "clad.toml")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(job.Water.MassKg, len(job.Pan.Layers), job.Hob.Mode)
	_, err = pipeline.ReadJob(strings.NewReader("[water]\nmass = 2\n"), "typo.toml")
	fmt.Println(err)
	// Output:
	// 2 2 heater
	// typo.toml:2:1: unknown key "water.mass": did you mean "water.mass_kg"? ("gapflux job" prints every key)
}

// Shard 2 of 3 takes every third scan of the sorted list, starting with the
// second.
func ExampleShard() {
	s, _ := pipeline.ParseShard("2/3")
	for i := 0; i < 7; i++ {
		if s.Has(i) {
			fmt.Print(i, " ")
		}
	}
	fmt.Println()
	// Output:
	// 1 4
}
