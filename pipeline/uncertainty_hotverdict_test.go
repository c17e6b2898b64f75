package pipeline

import (
	"strings"
	"testing"
)

// TestDecisionHotLimits: with the hot state run, guarded acceptance judges
// the hot state's limits too (on their values: the trials do not run the
// hot state), as hot.verdict picks the states; a hot loss beyond the limit
// fails the base although the cold interval passes.
func TestDecisionHotLimits(t *testing.T) {
	const limit = 10.0
	for _, tc := range []struct {
		state   string
		hotLoss float64
		want    string
		states  int // states judged, each with one loss limit
		reason  string
	}{
		{"both", 12, ResultFail, 2, "hot: loss_pct 12 % lies beyond the max 10 %"},
		{"both", 8, ResultPass, 2, ""},
		{"hot", 12, ResultFail, 1, "hot: loss_pct"},
		{"cold", 12, ResultPass, 1, ""},
	} {
		t.Run(tc.state, func(t *testing.T) {
			job := DefaultJob()
			job.Tolerances.LossMaxPct = limit
			job.Tolerances.RockingAllowed = true
			job.Hot.Verdict = tc.state
			rep := &Report{Heat: &HeatReport{LossPct: 5}, Geometry: &GeometryReport{DiameterMM: 200, ConcavityMM: 0.2, ConcavityPctOfDiameter: 0.1, FlatnessMZMM: 0.2},
				Hot: &HotReport{LossPct: tc.hotLoss, ConcavityMM: 0.3, ConcavityPctOfDiameter: 0.15, FlatnessMZMM: 0.3}}
			rep.Uncertainty = &UncertaintyReport{LossPct: &FigureUncertainty{Value: 5, U: 0.5, Low: 4, High: 6}}
			v := decide(job, rep)
			if v.Result != tc.want || v.Pass != (tc.want == ResultPass) {
				t.Errorf("result %q pass %v, want %q (reasons %q)", v.Result, v.Pass, tc.want, v.Reasons)
			}
			n := 0
			for _, lv := range v.Limits {
				if lv.Figure == "loss_pct" {
					n++
				}
				if lv.State != "cold" && lv.State != "hot" {
					t.Errorf("limit %+v: state %q", lv, lv.State)
				}
			}
			if n != tc.states {
				t.Errorf("%d loss limits, want %d: %+v", n, tc.states, v.Limits)
			}
			if tc.reason != "" && !strings.Contains(strings.Join(v.Reasons, "\n"), tc.reason) {
				t.Errorf("reasons %q lack %q", v.Reasons, tc.reason)
			}
			if tc.reason == "" && len(v.Reasons) != 0 {
				t.Errorf("reasons %q, want none", v.Reasons)
			}
		})
	}
}
