package pipeline

import (
	"math"
	"strings"
	"testing"

	"gapflux/contact"
	"gapflux/scan"
)

// TestShapeDetail checks the plain-words detail beside the shape word:
// rim sags in mm with the sign of concavity, equal sags said once, the bend
// axis folded into [0°, 180°).
func TestShapeDetail(t *testing.T) {
	const t20 = 0.02e-3
	tests := []struct {
		name string
		sh   scan.Shape
		want []string
	}{
		{"flat", scan.Shape{Word: scan.ShapeFlat, RimSagM: [2]float64{-0.004e-3, 0.001e-3}, ThresholdM: t20},
			[]string{"no rim sag above the threshold (largest -0.004 mm)", "below 0.020 mm counts as none"}},
		{"dish", scan.Shape{Word: scan.ShapeDished, RimSagM: [2]float64{0.361e-3, 0.3605e-3}, AxisDeg: [2]float64{105, 15}, ThresholdM: t20},
			[]string{"rim sag +0.361 mm all round"}},
		{"bend", scan.Shape{Word: scan.ShapeBent, RimSagM: [2]float64{-0.5e-3, 0}, AxisDeg: [2]float64{179.97, 89.97}, BendAxisDeg: 89.97, ThresholdM: t20},
			[]string{"bent about an axis at 90° from x", "-0.500 mm across 0°", "+0.000 mm across 90°"}},
		{"saddle", scan.Shape{Word: scan.ShapeSaddle, RimSagM: [2]float64{-0.251e-3, 0.25e-3}, AxisDeg: [2]float64{0, 90}, ThresholdM: t20},
			[]string{"rim sags -0.251 mm across 0° and +0.250 mm across 90°"}},
	}
	for _, tc := range tests {
		got := shapeDetail(&tc.sh)
		for _, w := range tc.want {
			if !strings.Contains(got, w) {
				t.Errorf("%s: %q lacks %q", tc.name, got, w)
			}
		}
	}
}

// TestRockForceKey: grid.rock_force_n defaults to 5 N and is bounded to
// (0, 1000] N.
func TestRockForceKey(t *testing.T) {
	if got := DefaultJob().Grid.RockForceN; got != 5 {
		t.Errorf("default grid.rock_force_n %g N, want 5", got)
	}
	for _, v := range []float64{0, -1, 1001, math.NaN(), math.Inf(1)} {
		j := DefaultJob()
		j.Grid.RockForceN = v
		if err := j.Validate(); err == nil || !strings.Contains(err.Error(), "grid.rock_force_n") {
			t.Errorf("rock_force_n = %g: err = %v, want one naming the key", v, err)
		}
	}
	if _, err := ReadJob(strings.NewReader("[grid]\nrock_force_n = 20.0\n"), "job.toml"); err != nil {
		t.Errorf("rock_force_n = 20: %v", err)
	}
}

// TestPoseReportTipForce: a finite tip force is reported in N, an
// infinite one (no rim beyond the support) as null; the verdict says why a
// pan rocks.
func TestPoseReportTipForce(t *testing.T) {
	job := DefaultJob()
	p := &contact.Pose{Support: contact.SupportPolygon, TipForceN: 1.23456, TipForceLimitN: 5, WeightN: 24.5166, RockM: 0.3e-3, Rocks: true}
	pr := poseReport(p, [2]float64{}, job)
	if pr.TipForceN == nil || *pr.TipForceN != 1.235 || pr.TipForceLimitN != 5 || pr.WeightN != 24.517 {
		t.Errorf("tip force %v N, limit %g N, weight %g N; want 1.235, 5, 24.517", pr.TipForceN, pr.TipForceLimitN, pr.WeightN)
	}
	v := verdict(job, &Report{Pose: pr})
	if v.Pass || len(v.Reasons) != 1 || !strings.Contains(v.Reasons[0], "a rim press of 1.2 N tips it") {
		t.Errorf("verdict %+v, want a fail naming the 1.2 N press", v)
	}
	p.TipForceN, p.Rocks = math.Inf(1), false
	if pr := poseReport(p, [2]float64{}, job); pr.TipForceN != nil {
		t.Errorf("infinite tip force reported as %g, want null", *pr.TipForceN)
	}
}
