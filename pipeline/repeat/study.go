package repeat

import (
	"fmt"
	"math"
	"sort"
	"strconv"
)

// Schema names the version of the repeat.json contract.
const Schema = "gapflux.repeat/1"

// Level is the confidence level of the interval on σ_r and the coverage
// probability of the results' own intervals.
const Level = 0.95

// Coverage outcomes of a figure.
const (
	Covered       = "covered"        // the reported uncertainty is at least the lower 95 % bound of σ_r
	Understated   = "understated"    // below it: the results scatter more than their uncertainty says
	NoUncertainty = "no-uncertainty" // no result carries an uncertainty (uncertainty.mode off)
	Partial       = "partial"        // some results carry one and some do not: not assessed
)

// Method says in words how a figure is assessed; it is written into
// repeat.json so that a reader needs no other document.
const Method = "s_r: sample standard deviation of the results of one base (divisor n-1), pooled over bases " +
	"by their degrees of freedom, dof = sum of (n_i - 1) (ISO 5725-2); r = 2.8 s_r (ISO 5725-6); " +
	"sigma_r_low/high: 95 % chi-square interval of the true repeatability standard deviation from s_r; " +
	"u_rms: root mean square of the standard uncertainties the results report; coverage: covered when " +
	"u_rms >= sigma_r_low, understated when it is below (the spread is larger than the stated uncertainty can " +
	"explain at 95 % confidence); within_interval: results whose own 95 % interval contains the mean of their base; " +
	"value_outside_interval: results whose own value lies outside their own 95 % interval (a biased interval)"

// Result is one result of one figure: its value and, when the report that
// gave it carries one, its standard uncertainty and 95 % coverage interval,
// all in the figure's unit.
type Result struct {
	Name  string   `json:"name"` // the scan (batch path) or report folder
	Value float64  `json:"value"`
	U     *float64 `json:"u"`
	Low   *float64 `json:"low"`
	High  *float64 `json:"high"`
	// Within tells whether [Low, High] holds the mean of the result's
	// base; nil without an interval or when the base has one result.
	Within *bool `json:"within_interval"`
}

// Group is the results of one base.
type Group struct {
	Base    string   `json:"base"` // the base's id; "" when the study has one unnamed base
	Results []Result `json:"results"`
	N       int      `json:"n"`
	Mean    float64  `json:"mean"`
	SD      *float64 `json:"s"` // sample standard deviation; nil for one result
}

// Stats is the repeatability of one figure over every base with two or
// more results, in the figure's unit.
type Stats struct {
	Bases     int      `json:"bases"`
	N         int      `json:"n"`
	Mean      *float64 `json:"mean"` // the mean of the one base; nil when several are pooled
	SR        float64  `json:"s_r"`
	DOF       int      `json:"dof"`
	R         float64  `json:"r"`
	SigmaLow  float64  `json:"sigma_r_low"`
	SigmaHigh float64  `json:"sigma_r_high"`
	URMS      *float64 `json:"u_rms"`
	Ratio     *float64 `json:"s_r_over_u"`
	Coverage  string   `json:"coverage"`
	// Within counts the results whose interval holds their base's mean,
	// out of WithInterval results that report an interval.
	Within       int `json:"within_interval"`
	WithInterval int `json:"with_interval"`
	// ValueOutside counts the results whose own value lies outside their
	// own 95 % interval: an interval not centred on the value it belongs
	// to (a biased Monte Carlo), which the u_rms test cannot see.
	ValueOutside int `json:"value_outside_interval"`
}

// Figure is one headline figure: its results by base and, when some base
// has two or more results, its repeatability.
type Figure struct {
	Name   string  `json:"figure"` // with its unit suffix: concavity_mm
	Unit   string  `json:"unit"`   // mm, %, N
	Groups []Group `json:"groups"`
	Stats  *Stats  `json:"repeatability"`
	Note   string  `json:"note,omitempty"`
}

// Study is a repeatability study: one entry per figure, in the order given.
type Study struct {
	Schema   string   `json:"schema"`
	Method   string   `json:"method"`
	Level    float64  `json:"confidence_level"`
	Figures  []Figure `json:"figures"`
	Warnings []string `json:"warnings"`
}

// Assess sorts each figure's groups by base and results by name, checks
// every number, and computes the groups' means and the repeatability. It
// returns an error naming the figure and result for a value, uncertainty
// or interval that is not finite, a negative uncertainty or an interval
// whose low end lies above its high end, and for a figure whose bases
// have no two results between them.
func Assess(figs []Figure, warnings []string) (*Study, error) {
	st := &Study{Schema: Schema, Method: Method, Level: Level, Figures: figs, Warnings: warnings}
	if st.Warnings == nil {
		st.Warnings = []string{}
	}
	for i := range figs {
		if err := assessFigure(&figs[i]); err != nil {
			return nil, fmt.Errorf("%s: %w", figs[i].Name, err)
		}
	}
	return st, nil
}

func assessFigure(f *Figure) error {
	sort.Slice(f.Groups, func(i, j int) bool { return f.Groups[i].Base < f.Groups[j].Base })
	var vals [][]float64
	for gi := range f.Groups {
		g := &f.Groups[gi]
		sort.Slice(g.Results, func(i, j int) bool { return g.Results[i].Name < g.Results[j].Name })
		for _, r := range g.Results {
			if err := checkResult(r); err != nil {
				return err
			}
		}
		g.N = len(g.Results)
		v := values(g.Results)
		if g.N == 0 {
			continue
		}
		g.Mean = round(mean(v))
		if g.N >= 2 {
			m, s, _ := MeanSD(v)
			g.Mean, g.SD = round(m), ptr(round(s))
			vals = append(vals, v)
		}
	}
	if len(vals) == 0 {
		f.Note = "no base has two results of this figure: no repeatability"
		return nil
	}
	sr, dof, err := Pooled(vals)
	if err != nil {
		return err
	}
	lo, hi := SigmaInterval(sr, dof, Level)
	s := &Stats{Bases: len(vals), SR: round(sr), DOF: dof, R: round(LimitFactor * sr), SigmaLow: round(lo), SigmaHigh: round(hi)}
	for _, v := range vals {
		s.N += len(v)
	}
	if len(vals) == 1 {
		s.Mean = ptr(round(mean(vals[0])))
	}
	coverage(f.Groups, s, sr, lo)
	f.Stats = s
	return nil
}

// coverage fills the uncertainty side of s from the groups with two or
// more results: u_rms, the ratio s_r/u_rms, the coverage outcome (lo is
// the unrounded lower bound of σ_r), and the count of results whose own
// interval holds their base's mean (setting each Result.Within).
func coverage(groups []Group, s *Stats, sr, lo float64) {
	var sumU2 float64
	withU := 0
	for gi := range groups {
		g := &groups[gi]
		if g.N < 2 {
			continue
		}
		m := mean(values(g.Results))
		for ri := range g.Results {
			r := &g.Results[ri]
			if r.U != nil {
				withU++
				sumU2 += *r.U * *r.U
			}
			if r.Low != nil && r.High != nil {
				in := *r.Low <= m && m <= *r.High
				r.Within = &in
				s.WithInterval++
				if in {
					s.Within++
				}
				if r.Value < *r.Low || r.Value > *r.High {
					s.ValueOutside++
				}
			}
		}
	}
	switch {
	case withU == 0:
		s.Coverage = NoUncertainty
	case withU < s.N:
		s.Coverage = Partial
	default:
		u := math.Sqrt(sumU2 / float64(withU))
		s.URMS = ptr(round(u))
		if u > 0 {
			s.Ratio = ptr(round(sr / u))
		}
		s.Coverage = Covered
		if u < lo {
			s.Coverage = Understated
		}
	}
}

// checkResult rejects numbers a report should never carry.
func checkResult(r Result) error {
	bad := func(what string, v float64) error {
		return fmt.Errorf("%s: %s is %v: want a finite number; the report is damaged, analyse the scan again", r.Name, what, v)
	}
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	if !finite(r.Value) {
		return bad("the value", r.Value)
	}
	if r.U != nil && (!finite(*r.U) || *r.U < 0) {
		return bad("the standard uncertainty", *r.U)
	}
	if (r.Low == nil) != (r.High == nil) {
		return fmt.Errorf("%s: the 95 %% interval has one end only; the report is damaged, analyse the scan again", r.Name)
	}
	if r.Low != nil {
		if !finite(*r.Low) || !finite(*r.High) || *r.Low > *r.High {
			return fmt.Errorf("%s: the 95 %% interval [%v, %v] is not an interval of finite numbers; the report is damaged, analyse the scan again", r.Name, *r.Low, *r.High)
		}
	}
	return nil
}

func values(rs []Result) []float64 {
	v := make([]float64, len(rs))
	for i, r := range rs {
		v[i] = r.Value
	}
	return v
}

func mean(v []float64) float64 {
	var s float64
	for _, x := range v {
		s += x
	}
	return s / float64(len(v))
}

func ptr[T any](v T) *T { return &v }

// round keeps 6 significant digits, so that the study's bytes do not hang
// on the last bits of a sum.
func round(v float64) float64 {
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 6, 64), 64)
	return r
}
