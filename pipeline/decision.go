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
	// State is "cold" or "hot" when the hot state ran (hot.verdict), else "".
	State string `json:"state,omitempty"`
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
// intervals (ISO 14253-1, ILAC-G8): a limit passes when the interval lies on
// its good side, fails when it lies wholly beyond, and is inconclusive when
// it straddles the limit. The overall result is fail when any limit fails,
// else inconclusive when any is, else pass; Pass is true only for pass.
func decide(job Job, rep *Report) *VerdictReport {
	v := verdict(job, rep)
	v.Rule = decisionRule(job, rep.Uncertainty)
	guarded := v.Rule == ruleGuarded
	if guarded {
		v.Reasons = []string{}
	}
	v.Limits = []LimitVerdict{}
	t := job.Tolerances
	for _, st := range verdictStates(job, rep) {
		add := func(lv LimitVerdict, reason string) {
			lv.State = st.name
			v.Limits = append(v.Limits, lv)
			if reason != "" && st.name != "" {
				reason = st.name + ": " + reason
			}
			if reason != "" {
				v.Reasons = append(v.Reasons, reason)
			}
		}
		if g := st.rep.Geometry; g != nil {
			for _, c := range geometryChecks(t, g, st.u) {
				add(judgeLimit(c, guarded))
			}
		}
		if p := st.rep.Pose; p != nil && !t.RockingAllowed {
			add(judgeRocking(p, st.u, guarded))
		}
		if h := st.rep.Heat; h != nil {
			add(judgeLimit(lossCheck(t, h, st.u), guarded))
		}
	}
	v.Result = limitsResult(v.Limits)
	if guarded {
		v.Pass = v.Result == ResultPass
	} else if !v.Pass {
		v.Result = ResultFail
	} else {
		v.Result = ResultPass
	}
	return v
}

// verdictState is one state of the base the verdict judges: its name
// ("" without a hot state), its figures and their uncertainty (nil when
// not evaluated).
type verdictState struct {
	name string
	rep  *Report
	u    *UncertaintyReport
}

// verdictStates lists the states the verdict judges: the report as it is,
// or, when the hot state ran, the cold and/or hot state as hot.verdict
// says. The Monte Carlo trials do not run the hot state, so its limits
// carry no uncertainty and are judged on their values.
func verdictStates(job Job, rep *Report) []verdictState {
	if rep.Hot == nil {
		return []verdictState{{rep: rep, u: rep.Uncertainty}}
	}
	cold := *rep
	cold.Hot = nil
	c := verdictState{"cold", &cold, rep.Uncertainty}
	h := verdictState{"hot", hotOnlyReport(rep.Hot), nil}
	switch job.Hot.Verdict {
	case "cold":
		return []verdictState{c}
	case "hot":
		return []verdictState{h}
	default:
		return []verdictState{c, h}
	}
}

// decisionRule chooses the verdict's decision rule: simple acceptance when
// the uncertainty was not evaluated (u is nil) or the job asks for it, else
// guarded acceptance (ISO 14253-1, ILAC-G8).
func decisionRule(job Job, u *UncertaintyReport) string {
	switch {
	case u == nil:
		return ruleSimpleOff
	case job.Uncertainty.Decision == "guarded":
		return ruleGuarded
	default:
		return ruleSimple
	}
}

// limitCheck is one tolerance limit to judge: a figure's measured value in
// its report unit, its uncertainty (nil when not evaluated, else in SI with
// scale converting it to the report unit), and the limit with its side.
type limitCheck struct {
	fig, unit string  // figure name and its unit as the reasons print it (" %", " mm")
	value     float64 // measured value, report unit
	fu        *FigureUncertainty
	scale     float64 // report unit per unit of fu
	limit     float64 // report unit
	upper     bool    // true: a maximum; false: a minimum
}

// geometryChecks lists the shape limits: concavity (% of the diameter)
// against its minimum and maximum, each widened by the flat band
// ±shapeTolPct of verdict, and the minimum-zone flatness (mm) against its
// maximum. u may be nil.
func geometryChecks(t ToleranceJob, g *GeometryReport, u *UncertaintyReport) []limitCheck {
	var fc, ff *FigureUncertainty
	if u != nil {
		fc, ff = u.ConcavityMM, u.FlatnessMZMM
	}
	scale := 0.0
	if g.DiameterMM > 0 {
		scale = 100 / g.DiameterMM
	}
	// Within ±shapeTolPct a base is flat (verdict's band).
	return []limitCheck{
		{fig: "concavity_pct_of_diameter", unit: " %", value: g.ConcavityPctOfDiameter, fu: fc, scale: scale, limit: t.ConcavityMinPct - shapeTolPct, upper: false},
		{fig: "concavity_pct_of_diameter", unit: " %", value: g.ConcavityPctOfDiameter, fu: fc, scale: scale, limit: t.ConcavityMaxPct + shapeTolPct, upper: true},
		{fig: "flatness_mz_mm", unit: " mm", value: g.FlatnessMZMM, fu: ff, scale: 1, limit: t.FlatnessMZMaxMM, upper: true},
	}
}

// lossCheck is the limit on the heating power lost against the flat twin,
// in % of the power. u may be nil.
func lossCheck(t ToleranceJob, h *HeatReport, u *UncertaintyReport) limitCheck {
	var fl *FigureUncertainty
	if u != nil {
		fl = u.LossPct
	}
	return limitCheck{fig: "loss_pct", unit: " %", value: h.LossPct, fu: fl, scale: 1, limit: t.LossMaxPct, upper: true}
}

// judgeLimit judges one limit. Under simple acceptance the measured value
// decides and the 95 % interval, when evaluated, is only reported; under
// guarded acceptance (ISO 14253-1, ILAC-G8) the interval decides: pass when
// it lies wholly on the good side, fail when wholly beyond, inconclusive when
// it straddles the limit (a figure without an interval, as the hot state's,
// is judged on its value). The reason is "" unless a guarded limit fails or
// is inconclusive.
func judgeLimit(c limitCheck, guarded bool) (LimitVerdict, string) {
	lv := LimitVerdict{Figure: c.fig, Value: c.value, Bound: "min", Limit: c.limit}
	if c.upper {
		lv.Bound = "max"
	}
	bad := func(x float64) bool { return c.upper && x > c.limit || !c.upper && x < c.limit }
	lv.Result = ResultPass
	if bad(c.value) {
		lv.Result = ResultFail
	}
	if c.fu == nil {
		if guarded && lv.Result == ResultFail {
			return lv, fmt.Sprintf("%s %s%s lies beyond the %s %s%s (no uncertainty evaluated: judged on the value)", c.fig, fmtNum(c.value), c.unit, lv.Bound, fmtNum(c.limit), c.unit)
		}
		return lv, ""
	}
	lo, hi := roundSig(c.fu.Low*c.scale, 6), roundSig(c.fu.High*c.scale, 6)
	lv.Low, lv.High = &lo, &hi
	if !guarded {
		return lv, ""
	}
	// The reason prints the value and its interval as the summary does: to
	// the decimal place of two significant digits of U = 2u.
	dec := expandedDecimals(2 * c.fu.U * c.scale)
	switch {
	case bad(lo) && bad(hi):
		lv.Result = ResultFail
		return lv, fmt.Sprintf("%s %.*f%s: its 95 %% interval [%.*f, %.*f] lies beyond the %s %s%s", c.fig, dec, c.value, c.unit, dec, lo, dec, hi, lv.Bound, fmtNum(c.limit), c.unit)
	case bad(lo) || bad(hi):
		lv.Result = ResultInconclusive
		return lv, fmt.Sprintf("%s %.*f%s: its 95 %% interval [%.*f, %.*f] straddles the %s %s%s (inconclusive)", c.fig, dec, c.value, c.unit, dec, lo, dec, hi, lv.Bound, fmtNum(c.limit), c.unit)
	default:
		lv.Result = ResultPass
		return lv, ""
	}
}

// judgeRocking judges the no-rocking limit (value 1 when the pan rocks, else
// 0; maximum 0). Under guarded acceptance the share of the Monte Carlo
// trials that rock decides, all or none: none passes, all fails, any other
// share is inconclusive. The reason is "" unless a guarded limit fails or is
// inconclusive. u may be nil.
func judgeRocking(p *PoseReport, u *UncertaintyReport, guarded bool) (LimitVerdict, string) {
	lv := LimitVerdict{Figure: "rocks", Bound: "max", Limit: 0, Value: 0, Result: ResultPass}
	if p.Rocks {
		lv.Value, lv.Result = 1, ResultFail
	}
	if u == nil && guarded && p.Rocks {
		return lv, "the pan rocks (no uncertainty evaluated: judged on the value): " + rockWords(p)
	}
	if u == nil || !guarded {
		return lv, ""
	}
	share := u.RocksPct / 100
	lo, hi := share, share
	lv.Low, lv.High = &lo, &hi
	switch {
	case share == 0:
		lv.Result = ResultPass
		return lv, ""
	case share == 1:
		lv.Result = ResultFail
		return lv, "the pan rocks in every trial: " + rockWords(p)
	default:
		lv.Result = ResultInconclusive
		return lv, fmt.Sprintf("the pan rocks in %.0f %% of the trials (inconclusive)", u.RocksPct)
	}
}

// limitsResult is the result over the limits: fail when any limit fails,
// else inconclusive when any is, else pass.
func limitsResult(limits []LimitVerdict) string {
	result := ResultPass
	for _, lv := range limits {
		if lv.Result == ResultFail {
			return ResultFail
		}
		if lv.Result == ResultInconclusive {
			result = ResultInconclusive
		}
	}
	return result
}
