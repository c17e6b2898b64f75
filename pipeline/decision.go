package pipeline

import (
	"fmt"
)

// Verdict results.
const (
	ResultPass         = "pass"
	ResultFail         = "fail"
	ResultInconclusive = "inconclusive"
)

// LimitVerdict is one tolerance limit's outcome: the figure, the limit,
// the measured value, its 95 % coverage interval when the uncertainty was
// evaluated, and the result under the verdict's rule.
type LimitVerdict struct {
	Figure string   `json:"figure"`
	Bound  string   `json:"bound"` // "max" or "min"
	Limit  float64  `json:"limit"`
	Value  float64  `json:"value"`
	Low    *float64 `json:"low,omitempty"`
	High   *float64 `json:"high,omitempty"`
	Result string   `json:"result"`
}

// Decision rules as the verdict names them.
const (
	ruleSimpleOff = "simple acceptance: the measured value against the limits (no uncertainty evaluated: uncertainty.mode = \"off\")"
	ruleSimple    = "simple acceptance: the measured value against the limits (uncertainty.decision = \"simple\"; the intervals are reported, not used)"
	ruleGuarded   = "guarded acceptance (ISO 14253-1, ILAC-G8): pass only when the 95 % coverage interval lies inside the limit, fail only when it lies outside, else inconclusive"
)

// decide judges the report against the job's tolerances under the job's
// decision rule (DESIGN 5.6). Without an uncertainty section, or with
// uncertainty.decision = "simple", it is simple acceptance on the measured
// values with verdict's reasons; otherwise guarded acceptance on the 95 %
// intervals: a limit passes when the interval lies on its good side, fails
// when it lies wholly beyond, and is inconclusive when it straddles the
// limit. The overall result is fail when any limit fails, else
// inconclusive when any is, else pass; Pass is true only for pass.
func decide(job Job, rep *Report) *VerdictReport {
	v := verdict(job, rep)
	u := rep.Uncertainty
	v.Rule = ruleSimpleOff
	if u != nil {
		v.Rule = ruleSimple
		if job.Uncertainty.Decision == "guarded" {
			v.Rule = ruleGuarded
		}
	}
	guarded := v.Rule == ruleGuarded
	if guarded {
		v.Reasons = []string{}
	}
	v.Limits = []LimitVerdict{}
	t := job.Tolerances
	check := func(fig, unit string, value float64, fu *FigureUncertainty, scale, limit float64, upper bool) {
		lv := LimitVerdict{Figure: fig, Value: value, Bound: "min", Limit: limit}
		if upper {
			lv.Bound = "max"
		}
		bad := func(x float64) bool { return upper && x > limit || !upper && x < limit }
		lv.Result = ResultPass
		if bad(value) {
			lv.Result = ResultFail
		}
		if fu != nil {
			lo, hi := roundSig(fu.Low*scale, 6), roundSig(fu.High*scale, 6)
			lv.Low, lv.High = &lo, &hi
			if guarded {
				switch {
				case bad(lo) && bad(hi):
					lv.Result = ResultFail
					v.Reasons = append(v.Reasons, fmt.Sprintf("%s %s%s: its 95 %% interval [%s, %s] lies beyond the %s %s%s", fig, fmtNum(value), unit, fmtNum(lo), fmtNum(hi), lv.Bound, fmtNum(limit), unit))
				case bad(lo) || bad(hi):
					lv.Result = ResultInconclusive
					v.Reasons = append(v.Reasons, fmt.Sprintf("%s %s%s: its 95 %% interval [%s, %s] straddles the %s %s%s (inconclusive)", fig, fmtNum(value), unit, fmtNum(lo), fmtNum(hi), lv.Bound, fmtNum(limit), unit))
				default:
					lv.Result = ResultPass
				}
			}
		}
		v.Limits = append(v.Limits, lv)
	}
	if g := rep.Geometry; g != nil {
		var fc, ff *FigureUncertainty
		if u != nil {
			fc, ff = u.ConcavityMM, u.FlatnessMZMM
		}
		scale := 0.0
		if g.DiameterMM > 0 {
			scale = 100 / g.DiameterMM
		}
		// Within ±shapeTolPct a base is flat (verdict's band).
		check("concavity_pct_of_diameter", " %", g.ConcavityPctOfDiameter, fc, scale, t.ConcavityMinPct-shapeTolPct, false)
		check("concavity_pct_of_diameter", " %", g.ConcavityPctOfDiameter, fc, scale, t.ConcavityMaxPct+shapeTolPct, true)
		check("flatness_mz_mm", " mm", g.FlatnessMZMM, ff, 1, t.FlatnessMZMaxMM, true)
	}
	if p := rep.Pose; p != nil && !t.RockingAllowed {
		lv := LimitVerdict{Figure: "rocks", Bound: "max", Limit: 0, Value: 0, Result: ResultPass}
		if p.Rocks {
			lv.Value, lv.Result = 1, ResultFail
		}
		if u != nil && guarded {
			// The share of the trials that rock decides: all or none.
			share := u.RocksPct / 100
			lo, hi := share, share
			lv.Low, lv.High = &lo, &hi
			switch {
			case share == 0:
				lv.Result = ResultPass
			case share == 1:
				lv.Result = ResultFail
				v.Reasons = append(v.Reasons, "the pan rocks in every trial: "+rockWords(p))
			default:
				lv.Result = ResultInconclusive
				v.Reasons = append(v.Reasons, fmt.Sprintf("the pan rocks in %.0f %% of the trials (inconclusive)", u.RocksPct))
			}
		}
		v.Limits = append(v.Limits, lv)
	}
	if h := rep.Heat; h != nil {
		var fl *FigureUncertainty
		if u != nil {
			fl = u.LossPct
		}
		check("loss_pct", " %", h.LossPct, fl, 1, t.LossMaxPct, true)
	}
	v.Result = ResultPass
	for _, lv := range v.Limits {
		if lv.Result == ResultFail {
			v.Result = ResultFail
			break
		}
		if lv.Result == ResultInconclusive {
			v.Result = ResultInconclusive
		}
	}
	if guarded {
		v.Pass = v.Result == ResultPass
	} else if !v.Pass {
		v.Result = ResultFail
	} else {
		v.Result = ResultPass
	}
	return v
}
