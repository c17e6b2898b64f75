package ticks

import (
	"testing"
)

// TestDistinct checks the labels of narrow ranges far from zero, where
// gonum's default labels repeat (seen on a repeatability plot: 3.5, 3.5,
// 3.6 for ticks at 3.50, 3.55, 3.60), and that wide ranges keep short
// labels.
func TestDistinct(t *testing.T) {
	for _, tc := range []struct {
		lo, hi float64
		want   []string
	}{
		{3.49, 3.61, []string{"3.5", "3.55", "3.6"}},
		{0.29948, 0.29982, []string{"0.2995", "0.2996", "0.2997", "0.2998"}},
		{0, 200, []string{"0", "100", "200"}}, // gonum/plot v0.17.0 default positions
		{0.147, 0.568, []string{"0.15", "0.35", "0.55"}},
	} {
		var got []string
		for _, tk := range (Distinct{}).Ticks(tc.lo, tc.hi) {
			if tk.Label != "" {
				got = append(got, tk.Label)
			}
		}
		seen := map[string]bool{}
		for _, l := range got {
			if seen[l] {
				t.Errorf("[%g, %g]: label %q twice in %q", tc.lo, tc.hi, l, got)
			}
			seen[l] = true
		}
		if len(got) != len(tc.want) {
			t.Errorf("[%g, %g]: labels %q, want %q", tc.lo, tc.hi, got, tc.want)
			continue
		}
		for i := range got {
			if got[i] != tc.want[i] {
				t.Errorf("[%g, %g]: labels %q, want %q", tc.lo, tc.hi, got, tc.want)
				break
			}
		}
	}
}

// TestLabels checks the formatting rules directly.
func TestLabels(t *testing.T) {
	for _, tc := range []struct {
		in   []float64
		want []string
	}{
		{[]float64{3.5, 3.55, 3.6}, []string{"3.5", "3.55", "3.6"}},
		{[]float64{-0.5, 0, 0.5}, []string{"-0.5", "0", "0.5"}},
		{[]float64{2e6, 2.5e6, 3e6}, []string{"2e+06", "2.5e+06", "3e+06"}},
		{[]float64{1e-5, 2e-5}, []string{"1e-05", "2e-05"}},
		{[]float64{1, 1}, []string{"1", "1"}},
		// gonum's tick values carry round-off (0.15000000000000002): the
		// label must read 0.15, not a distinct but wrong 0.2.
		{[]float64{0.15000000000000002, 0.35000000000000003, 0.55}, []string{"0.15", "0.35", "0.55"}},
	} {
		got := Labels(tc.in)
		for i := range got {
			if got[i] != tc.want[i] {
				t.Errorf("Labels(%v) = %q, want %q", tc.in, got, tc.want)
				break
			}
		}
	}
}
