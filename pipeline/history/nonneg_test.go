package history

import "testing"

// TestNonNegative checks which figures a control chart may clip at 0: those
// non-negative by definition (a width, a share, a power, a time), not the
// signed ones. loss_pct is 100·(1 − P/P_flat) (pipeline/sections.go), below
// 0 when a base draws more power than its flat twin, which the analysis
// tests allow down to −0.5 % (pipeline/analyze_test.go).
func TestNonNegative(t *testing.T) {
	for _, tc := range []struct {
		figure string
		want   bool
	}{
		{"flatness_mz_mm", true}, {"power_w", true}, {"time_s", true}, {"contact_area_pct", true}, {"tilt_deg", true},
		{"loss_pct", false}, {"concavity_mm", false}, {"extra_time_pct", false}, {"extra_energy_kj", false},
		{"glass_max_c", false}, {"no_such_figure", false},
	} {
		if got := NonNegative(tc.figure); got != tc.want {
			t.Errorf("NonNegative(%q) = %v, want %v", tc.figure, got, tc.want)
		}
	}
}
