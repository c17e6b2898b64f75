package pipeline

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"testing"

	"gapflux/scan/synth"
)

// TestHeatupStartOnCoarseGrid checks the heat-up of a fixed water side,
// whose start-temperature power comes from the grid coarsened to
// 2 mm (startPower), against the reference of seven water
// temperatures each solved on the analysis grid (Fritsch–Butland
// interpolation between them, as thermal.Heatup does with any sample
// count). Tolerances, our acceptance: 0.1 % of the heat-up time, and 1.5 %
// of the extra time over the flat twin (a difference of two times, so the
// line's own error weighs more: 1.1 % at 2 mm, where the start is solved on
// the analysis grid itself). The base is the demo's dished saucepan (the
// largest difference the demo showed, 0.06 % of its heat-up time at 1 mm)
// on 0.5, 1 and 2 mm analysis grids.
func TestHeatupStartOnCoarseGrid(t *testing.T) {
	if testing.Short() {
		t.Skip("solves a 0.5 mm grid nine times")
	}
	dir := t.TempDir()
	path := writeSynth(t, dir, "dish", synth.Spec{Shape: synth.Dish, DiameterM: 0.18, SagM: 0.36e-3, NoiseM: 8e-6,
		SpacingM: 0.5e-3, Seed: 12}, synth.Encoding{Format: "ply", Binary: true})
	for _, cellMM := range []float64{0.5, 1, 2} {
		t.Run(fmt.Sprintf("cell=%gmm", cellMM), func(t *testing.T) {
			job := DefaultJob()
			job.Grid.CellMM = cellMM
			job.Pan.MassKg, job.Water.MassKg = 0.9, 1.2
			run := func(samples int) *HeatupReport {
				res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: filepath.Base(path), Job: job, heatupSamples: samples})
				if err != nil {
					t.Fatal(err)
				}
				if res.Report.Heatup == nil {
					t.Fatal("no heat-up in the report")
				}
				return res.Report.Heatup
			}
			got, ref := run(0), run(7)
			if d := math.Abs(got.TimeS/ref.TimeS - 1); d > 1e-3 {
				t.Errorf("heat-up time %.2f s, seven solved samples %.2f s: off by %.3f %% (want ≤ 0.1 %%)", got.TimeS, ref.TimeS, 100*d)
			}
			if d := math.Abs(got.FlatTimeS/ref.FlatTimeS - 1); d > 1e-3 {
				t.Errorf("flat twin's heat-up time %.2f s, seven solved samples %.2f s: off by %.3f %%", got.FlatTimeS, ref.FlatTimeS, 100*d)
			}
			extra, extraRef := got.TimeS-got.FlatTimeS, ref.TimeS-ref.FlatTimeS
			if d := math.Abs(extra - extraRef); d > 0.015*math.Abs(extraRef)+0.02 {
				t.Errorf("extra heat-up time %.2f s, seven solved samples %.2f s", extra, extraRef)
			}
			t.Logf("cell %g mm: heat-up %.2f s (reference %.2f s), flat twin %.2f s (%.2f s)", cellMM, got.TimeS, ref.TimeS, got.FlatTimeS, ref.FlatTimeS)
		})
	}
}
