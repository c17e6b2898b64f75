package synth

import (
	"math"
	"testing"
)

// TestHobFlatIsFlat (issue 15, item 6): a flat hob top is flat, its truth
// says so; a flat top given a sag is the dome of that sag and says "dome".
func TestHobFlatIsFlat(t *testing.T) {
	tests := []struct {
		sagM      float64
		wantShape Shape
		wantCrown float64 // mm
	}{
		{0, Flat, 0},
		{0.3e-3, Dome, 0.3},
	}
	for _, tc := range tests {
		sc, err := GenerateHob(HobSpec{Shape: Flat, SagM: tc.sagM, SpacingM: 10e-3})
		if err != nil {
			t.Fatal(err)
		}
		tr := sc.Truth
		if tr.Shape != tc.wantShape || tr.CrownMM != tc.wantCrown || tr.FlatnessMM != 2*tc.wantCrown {
			t.Errorf("sag %g m: shape %q crown %g mm flatness %g mm, want %q, %g mm, %g mm",
				tc.sagM, tr.Shape, tr.CrownMM, tr.FlatnessMM, tc.wantShape, tc.wantCrown, 2*tc.wantCrown)
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, p := range sc.Cloud.Points {
			lo, hi = math.Min(lo, p.Z), math.Max(hi, p.Z)
		}
		// No noise: the heights span exactly the form (centre to corners,
		// 2·crown), to rounding.
		if got := (hi - lo) * 1e3; math.Abs(got-2*tc.wantCrown) > 1e-9 {
			t.Errorf("sag %g m: heights span %g mm, want %g mm", tc.sagM, got, 2*tc.wantCrown)
		}
	}
}
