package pipeline

import (
	"strings"
	"testing"

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
