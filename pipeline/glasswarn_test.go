package pipeline

import (
	"strings"
	"testing"
)

// TestGlassWarnings checks the warning for a glass top hotter than the
// 700 °C to which the glass-ceramic data of PHYSICS-REFERENCES reach
// (glass-ceramic row, 20–700 °C, from memory there): given in heater mode
// for the scan and for its flat twin each, with the temperature and the
// limiter setting in it; not given at or below 700 °C, nor in the other
// hob modes, whose plates are not glass-ceramic tops.
func TestGlassWarnings(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	for _, tc := range []struct {
		name      string
		mode      string
		scan, flt *float64
		want      []string // a substring of each warning, in order
	}{
		{"lifted ring in heater mode", "heater", f(929.4), f(226), []string{"929 °C with this base"}},
		{"flat twin hot too", "heater", f(810), f(701), []string{"810 °C with this base", "701 °C with the flat twin"}},
		{"at the data's top", "heater", f(700), f(650), nil},
		{"no glass figures", "heater", nil, nil, nil},
		{"solid-plate mode", "solid-plate", f(929), f(800), nil},
		{"temperature mode", "temperature", f(929), f(800), nil},
	} {
		job := DefaultJob()
		job.Hob.Mode = tc.mode
		got := glassWarnings(job, &HeatReport{GlassMaxC: tc.scan, FlatGlassMaxC: tc.flt})
		if len(got) != len(tc.want) {
			t.Errorf("%s: %d warnings %q, want %d", tc.name, len(got), got, len(tc.want))
			continue
		}
		for i, w := range tc.want {
			if !strings.Contains(got[i], w) || !strings.Contains(got[i], "set to 560 °C") {
				t.Errorf("%s: warning %q lacks %q or the limiter setting", tc.name, got[i], w)
			}
		}
	}
	if ws := glassWarnings(DefaultJob(), nil); ws != nil {
		t.Errorf("no heat report: %q, want none", ws)
	}
}
