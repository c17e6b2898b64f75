// Package spc computes Shewhart individuals and moving-range (I-MR) control
// charts and flags out-of-control points by the Western Electric run rules.
//
// Limits (ISO 7870-2:2013, individuals chart; Montgomery, Introduction to
// Statistical Quality Control, 7th ed., 2013, §6.4): from the first
// Baseline points, the centre line is their mean X̄, the moving ranges are
// MRᵢ = |xᵢ − xᵢ₋₁|, their mean is MR̄, the process sigma is estimated as
// σ̂ = MR̄/d₂ with d₂ = 1.128 (n = 2), the individuals limits are
// X̄ ± 3σ̂ (= X̄ ± 2.660·MR̄) and the moving-range chart has centre MR̄, upper
// limit D₄·MR̄ with D₄ = 3.267 and lower limit 0 (D₃ = 0 for n = 2).
//
// Non-negative quantities (Spec.NonNegative; Montgomery 2013, §6.4 and
// §7: a lower limit computed below zero for a quantity that cannot be
// negative is set to zero): the individuals chart's LCL is max(0, X̄ − 3σ̂);
// Chart.LCLRaw keeps X̄ − 3σ̂. Only the drawn limit and rule 1 use the
// clipped LCL; the zones of rules 2–4 stay at X̄ ± 1σ̂, 2σ̂ (and the centre
// line), so clipping never moves a zone. The moving-range chart's lower
// limit is 0 for every series (a range is non-negative by definition).
//
// Run rules: Western Electric rules 1–4 (Western Electric, Statistical
// Quality Control Handbook, 1956), applied to the individuals chart only.
// They are not applied to the moving-range chart, whose successive points
// are correlated (Montgomery 2013, §6.4); there only points above D₄·MR̄
// are flagged.
package spc

import (
	"errors"
	"fmt"
	"math"
)

// Control-chart constants for subgroups of n = 2 (the moving range of two
// successive individuals). Source: Montgomery 2013, Appendix Table VI, and
// ISO 7870-2:2013's table of factors (both from memory); checked against
// the tables of PQ Systems' "Quality Advisor" formula pages (E₂ = 2.660 =
// 3/d₂, D₄ = 3.268 there, rounded the other way) and JMP's documentation of
// individuals-chart limits (σ̂ = MR̄/d₂(2)).
const (
	D2 = 1.128 // expected range of two standard normal values
	D4 = 3.267 // upper moving-range limit factor
)

// Rule is one Western Electric run rule.
type Rule int

// The Western Electric rules 1–4, in zones of σ̂ about the centre line.
const (
	// WE1: one point beyond 3σ̂.
	WE1 Rule = 1 + iota
	// WE2: two of three successive points beyond 2σ̂ on the same side.
	WE2
	// WE3: four of five successive points beyond 1σ̂ on the same side.
	WE3
	// WE4: eight successive points on the same side of the centre line.
	WE4
)

// String names the rule as in the CSV and the charts ("WE1" ... "WE4").
func (r Rule) String() string { return fmt.Sprintf("WE%d", int(r)) }

// Describe says what the rule tests, for reports.
func (r Rule) Describe() string {
	switch r {
	case WE1:
		return "one point beyond 3 sigma"
	case WE2:
		return "2 of 3 successive points beyond 2 sigma on one side"
	case WE3:
		return "4 of 5 successive points beyond 1 sigma on one side"
	case WE4:
		return "8 successive points on one side of the centre line"
	}
	return "unknown rule"
}

// Rules lists the rules in the order they are checked.
var Rules = []Rule{WE1, WE2, WE3, WE4}

// Errors of Individuals.
var (
	ErrTooFew  = errors.New("a control chart needs at least 2 points")
	ErrBadData = errors.New("value is NaN or infinite")
)

// Chart is an individuals and moving-range chart of one series, in the
// series' own unit.
type Chart struct {
	Values []float64 // the individuals, in order
	MR     []float64 // moving ranges; MR[0] is NaN (no predecessor)
	// Baseline is the number of leading points the limits come from.
	Baseline int
	// Provisional is true when fewer points than asked for were available
	// for the baseline (the limits will move as points arrive).
	Provisional bool
	Centre      float64 // X̄ of the baseline
	Sigma       float64 // σ̂ = MR̄/d₂; 0 when the baseline has no spread
	LCL, UCL    float64 // X̄ ∓ 3σ̂; LCL at least 0 for a NonNegative chart
	MRCentre    float64 // MR̄ of the baseline
	MRUCL       float64 // D₄·MR̄
	// LCLRaw is X̄ − 3σ̂ before clipping (equal to LCL unless Clipped).
	LCLRaw float64
	// NonNegative is Spec.NonNegative; Clipped is true when LCLRaw was
	// below 0 and LCL was set to 0.
	NonNegative, Clipped bool
	// Signals lists, per point, the rules it breaks (nil when none). With
	// Sigma 0 no rule is checked.
	Signals [][]Rule
	// MRSignals marks moving ranges above MRUCL.
	MRSignals []bool
}

// Spec says how to build a chart.
type Spec struct {
	// Baseline is the number of leading points the limits come from; at
	// least 2.
	Baseline int
	// NonNegative declares the charted quantity non-negative by definition
	// (a width, a power, a time): a value below 0 is an error and an LCL
	// computed below 0 is clipped to 0 (see the package comment). Leave it
	// false for a figure that can be negative, even if rarely.
	NonNegative bool
}

// ErrNegative is returned for a value below 0 in a NonNegative chart.
var ErrNegative = errors.New("value below 0 for a quantity declared non-negative")

// Individuals builds the I-MR chart of values with limits from the first
// baseline points (all of them when there are fewer; the chart is then
// Provisional) and no lower bound on the quantity. baseline must be at
// least 2.
func Individuals(values []float64, baseline int) (*Chart, error) {
	return Build(values, Spec{Baseline: baseline})
}

// Build builds the I-MR chart of values as spec says: centre X̄ and
// σ̂ = MR̄/d₂ from the baseline points, limits X̄ ± 3σ̂ (the LCL clipped
// to 0 for a NonNegative spec), moving-range limit D₄·MR̄, and the run
// rules' signals.
func Build(values []float64, spec Spec) (*Chart, error) {
	if len(values) < 2 {
		return nil, fmt.Errorf("%w, have %d", ErrTooFew, len(values))
	}
	if spec.Baseline < 2 {
		return nil, fmt.Errorf("baseline of %d points: want at least 2", spec.Baseline)
	}
	for i, v := range values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("point %d: %w", i+1, ErrBadData)
		}
		if spec.NonNegative && v < 0 {
			return nil, fmt.Errorf("point %d is %g: %w", i+1, v, ErrNegative)
		}
	}
	c := &Chart{Values: append([]float64(nil), values...), Baseline: spec.Baseline, NonNegative: spec.NonNegative}
	if c.Baseline > len(values) {
		c.Baseline, c.Provisional = len(values), true
	}
	c.MR = make([]float64, len(values))
	c.MR[0] = math.NaN()
	for i := 1; i < len(values); i++ {
		c.MR[i] = math.Abs(values[i] - values[i-1])
	}
	var sum, mrSum float64
	for i := 0; i < c.Baseline; i++ {
		sum += values[i]
		if i > 0 {
			mrSum += c.MR[i]
		}
	}
	c.Centre = sum / float64(c.Baseline)
	c.MRCentre = mrSum / float64(c.Baseline-1)
	c.Sigma = c.MRCentre / D2
	c.LCLRaw, c.UCL = c.Centre-3*c.Sigma, c.Centre+3*c.Sigma
	c.LCL = c.LCLRaw
	if spec.NonNegative && c.LCLRaw < 0 {
		c.LCL, c.Clipped = 0, true
	}
	c.MRUCL = D4 * c.MRCentre
	c.MRSignals = make([]bool, len(values))
	for i := 1; i < len(values); i++ {
		c.MRSignals[i] = c.Sigma > 0 && c.MR[i] > c.MRUCL
	}
	c.Signals = c.signals()
	return c, nil
}

// signals applies the run rules to every point: rule 1 against the drawn
// limits LCL and UCL (the LCL clipped for a NonNegative chart), rules 2–4
// in the unclipped σ̂ zones (Check). With Sigma 0 no rule is checked.
func (c *Chart) signals() [][]Rule {
	out := make([][]Rule, len(c.Values))
	if c.Sigma <= 0 {
		return out
	}
	z := make([]float64, len(c.Values))
	for i, v := range c.Values {
		z[i] = (v - c.Centre) / c.Sigma
	}
	for i, v := range c.Values {
		var rules []Rule
		if v < c.LCL || v > c.UCL {
			rules = append(rules, WE1)
		}
		for _, r := range Check(z, i) {
			if r != WE1 {
				rules = append(rules, r)
			}
		}
		out[i] = rules
	}
	return out
}

// Check returns the rules that point i of the standardised series z
// (z = (x − X̄)/σ̂) breaks. A window rule fires at point i only when point i
// itself is one of the points beyond the zone, so a signal marks the point
// that completes the pattern; windows at the start of the series use the
// points there are.
func Check(z []float64, i int) []Rule {
	var out []Rule
	if math.Abs(z[i]) > 3 {
		out = append(out, WE1)
	}
	if kOfN(z, i, 2, 3, 2) {
		out = append(out, WE2)
	}
	if kOfN(z, i, 4, 5, 1) {
		out = append(out, WE3)
	}
	if sameSide(z, i, 8) {
		out = append(out, WE4)
	}
	return out
}

// kOfN reports whether z[i] lies beyond ±limit and at least k of the n
// points ending at i lie beyond the same limit on the same side.
func kOfN(z []float64, i, k, n int, limit float64) bool {
	side := 0.0
	switch {
	case z[i] > limit:
		side = 1
	case z[i] < -limit:
		side = -1
	default:
		return false
	}
	count := 0
	for j := max(0, i-n+1); j <= i; j++ {
		if side*z[j] > limit {
			count++
		}
	}
	return count >= k
}

// sameSide reports whether the n points ending at i all lie strictly on
// the same side of the centre line (a point on it breaks the run).
func sameSide(z []float64, i, n int) bool {
	if i+1 < n || z[i] == 0 {
		return false
	}
	for j := i - n + 1; j <= i; j++ {
		if z[j]*z[i] <= 0 {
			return false
		}
	}
	return true
}

// Signalled reports whether any point breaks a rule or any moving range is
// above its limit.
func (c *Chart) Signalled() bool {
	for i := range c.Signals {
		if len(c.Signals[i]) > 0 || c.MRSignals[i] {
			return true
		}
	}
	return false
}
