package pipeline

import (
	"math"
	"testing"

	"gapflux/scan"
)

// TestRimCover checks the rim figures from lists of empty sectors
// (72 sectors of 5°; exact by counting).
func TestRimCover(t *testing.T) {
	seq := func(from, to int) []int {
		var out []int
		for k := from; k < to; k++ {
			out = append(out, k%scan.RimSectors)
		}
		return out
	}
	tests := []struct {
		name    string
		missing []int
		gap, rm float64 // degrees, %
	}{
		{"whole rim", nil, 0, 0},
		{"one sector", []int{7}, 5, 100.0 / 72},
		{"90° missing", seq(0, 18), 90, 25},
		{"run across the seam", seq(66, 78), 60, 100 * 12.0 / 72},
		{"two runs", append(seq(0, 3), seq(10, 16)...), 30, 12.5},
		{"half missing", seq(18, 54), 180, 50},
		{"all missing", seq(0, 72), 360, 100},
		{"out of range index ignored", []int{-1, 72}, 0, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			gap, missing := rimCover(tc.missing)
			if math.Abs(gap-tc.gap) > 1e-9 || math.Abs(missing-tc.rm) > 1e-9 {
				t.Errorf("rim gap %.1f°, missing %.2f %%; want %.1f°, %.2f %%", gap, missing, tc.gap, tc.rm)
			}
		})
	}
}
