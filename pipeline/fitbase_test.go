package pipeline

import (
	"context"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"gapflux/scan/synth"
)

// fixedScenario sets the zone, its power and the water load that were the
// defaults before issue 15 fitted them to the base (1800 W on 180 mm, 1.5
// kg), for the tests whose expected values were worked out with them.
func fixedScenario(j *Job) {
	if j.Hob.ZoneDiameterMM == 0 {
		j.Hob.ZoneDiameterMM = 180
	}
	if j.Hob.HeaterPowerW == 0 {
		j.Hob.HeaterPowerW = 1800
	}
	if j.Water.MassKg == 0 {
		j.Water.MassKg = 1.5
	}
}

// TestFitRules: the rules' values, worked by hand.
func TestFitRules(t *testing.T) {
	tests := []struct {
		baseMM, innerMM      float64
		zoneMM, powerW, kgWt float64
	}{
		// ρπ/4·d²·D/3 with ρ = 998.2 kg/m³: 180 mm → 1.524 kg; 60 mm →
		// 0.0564 kg; 280 mm → 5.735 kg. Power 1800·(zone/180)².
		{180, 0, 180, 1800, 1.52},
		{60, 0, 120, 800, 0.06},
		{160, 0, 160, 1420, 1.07},
		{280, 0, 280, 4360, 5.74},
		{400, 0, 300, 5000, 16.73},
		{10, 0, 120, 800, 0.01},
		// A 200 mm base under a 240 mm mouth: ρπ/4·0.24²·0.2/3 = 3.011 kg.
		{200, 240, 200, 2220, 3.01},
		{182.4, 0, 180, 1800, 1.59},
	}
	for _, tc := range tests {
		if z, p, w := FitZoneMM(tc.baseMM), FitHeaterPowerW(FitZoneMM(tc.baseMM)), FitWaterKg(tc.baseMM, tc.innerMM); z != tc.zoneMM || p != tc.powerW || w != tc.kgWt {
			t.Errorf("base %g mm (inner %g): zone %g mm, %g W, %g kg; want %g mm, %g W, %g kg",
				tc.baseMM, tc.innerMM, z, p, w, tc.zoneMM, tc.powerW, tc.kgWt)
		}
	}
}

// TestFitToBaseKeepsSetKeys: only 0 keys are fitted, and a fitted zone too
// small for the job's rod is an error naming the keys.
func TestFitToBaseKeepsSetKeys(t *testing.T) {
	j := DefaultJob()
	j.Water.MassKg, j.Hob.HeaterPowerW = 2, 1500
	f, err := j.fitToBase(220)
	if err != nil {
		t.Fatal(err)
	}
	if f == nil || f.WaterKg != 0 || f.HeaterPowerW != 0 || f.ZoneDiameterMM != 220 || j.Water.MassKg != 2 || j.Hob.HeaterPowerW != 1500 {
		t.Errorf("fitted %+v, job water %g kg, power %g W", f, j.Water.MassKg, j.Hob.HeaterPowerW)
	}
	j = DefaultJob()
	j.Hob.RodOffsetMM = 80
	if err := j.Validate(); err != nil {
		t.Fatal(err)
	}
	if _, err := j.fitToBase(100); err == nil || !strings.Contains(err.Error(), "hob.zone_diameter_mm") || !strings.Contains(err.Error(), "120 mm across") {
		t.Errorf("rod outside the fitted zone: %v", err)
	}
	j = DefaultJob()
	fixedScenario(&j)
	if f, _ := j.fitToBase(100); f != nil {
		t.Errorf("nothing to fit, got %+v", f)
	}
}

// TestFittedDefaultsOnSmallAndLargeBases (issue 15, item 8): a 60, a 160
// and a 280 mm base each get the water load and zone of the rule, and none
// warns about its wall (the wetted wall is a third of the diameter high).
func TestFittedDefaultsOnSmallAndLargeBases(t *testing.T) {
	if testing.Short() {
		t.Skip("three whole analyses")
	}
	for _, d := range []float64{60, 160, 280} {
		sc, err := synth.Generate(synth.Spec{Shape: synth.Dish, DiameterM: d / 1e3, SagM: 0.05e-3, NoiseM: 5e-6, SpacingM: 2e-3, Seed: 3})
		if err != nil {
			t.Fatal(err)
		}
		dir := t.TempDir()
		path, _, err := synth.WriteFiles(dir, "base", sc, synth.Encoding{Format: "xyz", Unit: "mm"})
		if err != nil {
			t.Fatal(err)
		}
		job := DefaultJob()
		job.Grid.CellMM, job.Grid.CutoffMM = 2, 8
		res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: filepath.Base(path), Job: job})
		if err != nil {
			t.Fatalf("%g mm: %v", d, err)
		}
		rep := res.Report
		f := rep.Input.FittedToBase
		if f == nil || rep.Heatup == nil {
			t.Fatalf("%g mm: fitted %+v, heat-up %+v", d, f, rep.Heatup)
		}
		// The fitted values follow the measured diameter (within a cell of
		// the true one): compare with the rule at the measured diameter.
		dm := rep.Geometry.DiameterMM
		if math.Abs(dm-d) > 2 {
			t.Errorf("%g mm base measured %g mm", d, dm)
		}
		if f.ZoneDiameterMM != FitZoneMM(dm) || f.WaterKg != FitWaterKg(dm, 0) || rep.Heatup.WaterKg != f.WaterKg ||
			f.HeaterPowerW != FitHeaterPowerW(f.ZoneDiameterMM) {
			t.Errorf("%g mm: fitted %+v, heat-up water %g kg", d, f, rep.Heatup.WaterKg)
		}
		for _, w := range rep.Warnings {
			if strings.Contains(w, "wall") && strings.Contains(w, "high") {
				t.Errorf("%g mm: %s", d, w)
			}
		}
	}
}
