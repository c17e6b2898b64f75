// Package quality is the data-quality gate that runs between gridding and
// the physics (DESIGN 5.0, issue 8 part 3): it judges whether a scan can be
// trusted for the rest pose and the heat solve, and says what to do when it
// cannot.
//
// Evaluate takes the figures the chain measured (Input, SI units, NaN for a
// figure not measured) and the limits (Limits, DefaultLimits gives ours) and
// returns each check with its figure, its limits, its status (ok, warn,
// reject or not-measured) and a one-sentence message, and the gate's status:
// the worst of its checks. A figure beyond a limit (strictly) warns or
// rejects; a figure equal to a limit passes it.
package quality

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Statuses of a check and of the gate.
const (
	OK          = "ok"
	Warn        = "warn"
	Reject      = "reject"
	NotMeasured = "not-measured"
)

// Check names. Each numeric check's figure and limits are in the unit its
// name ends in.
const (
	Diameter      = "diameter_mm"
	Face          = "face"
	Coverage      = "coverage_pct"
	LargestHole   = "largest_hole_mm"
	RimGap        = "rim_largest_gap_deg"
	RimMissing    = "rim_missing_pct"
	PointsDropped = "points_dropped_pct"
	Footprint     = "base_over_footprint_pct"
	NoiseOverGap  = "noise_over_mean_gap_pct"
)

// Input holds the figures the gate judges, in SI units. A figure that was
// not measured is NaN (Unmeasured sets every figure so); its check then
// reports NotMeasured and never warns or rejects.
type Input struct {
	// DiameterM is the base diameter found by the circle fit, m.
	DiameterM float64
	// Unit is the length unit the scan's numbers were read in ("mm", "m",
	// "um" or "in"); the diameter check's units hint is relative to it.
	// "" means mm.
	Unit string
	// FaceSource says how the outer face was decided: "option",
	// "normals", "wall" or "assumed"; "" = not measured.
	FaceSource string
	// CoveragePct is the share of the base disc near a measured point, %.
	CoveragePct float64
	// LargestHoleM is the diameter of the largest empty circle inside the
	// base, m.
	LargestHoleM float64
	// RimLargestGapDeg is the widest arc of the rim with no measured point
	// near it, degrees; RimMissingPct the share of the rim's angle with
	// none, %.
	RimLargestGapDeg, RimMissingPct float64
	// PointsDroppedPct is the share of the scan's points near the base that
	// segmentation left out of the base, %; PointsDroppedWhere says where
	// (e.g. "beyond the rim circle, 0-12 mm above the base plane").
	PointsDroppedPct   float64
	PointsDroppedWhere string
	// FootprintDiameterM is the extent of the scan's points near the base
	// plane (its footprint), m.
	FootprintDiameterM float64
	// NoiseM is the RMS the form filter removed and MeanGapM the mean gap
	// under the resting pan, m.
	NoiseM, MeanGapM float64
}

// Unmeasured returns an Input with every figure NaN (not measured).
func Unmeasured() Input {
	n := math.NaN()
	return Input{DiameterM: n, CoveragePct: n, LargestHoleM: n, RimLargestGapDeg: n, RimMissingPct: n,
		PointsDroppedPct: n, FootprintDiameterM: n, NoiseM: n, MeanGapM: n}
}

// Limits are the gate's limits. Lengths in m, shares in %. The defaults
// (DefaultLimits) are our own choices, not a standard's.
type Limits struct {
	// The base diameter warns outside [DiameterWarnMinM, DiameterWarnMaxM]
	// and rejects outside [DiameterRejectMinM, DiameterRejectMaxM].
	DiameterWarnMinM, DiameterWarnMaxM     float64
	DiameterRejectMinM, DiameterRejectMaxM float64
	// Coverage warns below CoverageWarnMinPct, rejects below
	// CoverageRejectMinPct.
	CoverageWarnMinPct, CoverageRejectMinPct float64
	// The largest hole warns above HoleWarnMaxPct and rejects above
	// HoleRejectMaxPct of the base diameter.
	HoleWarnMaxPct, HoleRejectMaxPct float64
	// The rim warns when an arc wider than RimGapWarnMaxDeg has no measured
	// point near it, and rejects when more than RimMissingRejectMaxPct of
	// it has none.
	RimGapWarnMaxDeg, RimMissingRejectMaxPct float64
	// Points dropped by segmentation warn above DroppedWarnMaxPct and
	// reject above DroppedRejectMaxPct.
	DroppedWarnMaxPct, DroppedRejectMaxPct float64
	// The base diameter warns below FootprintWarnMinPct of the footprint.
	FootprintWarnMinPct float64
	// The noise warns above NoiseGapWarnMaxPct of the mean gap.
	NoiseGapWarnMaxPct float64
}

// DefaultLimits returns our default limits (each one's reason is in the
// job file's documentation, pipeline.JobDoc).
func DefaultLimits() Limits {
	return Limits{
		DiameterWarnMinM: 0.100, DiameterWarnMaxM: 0.350,
		DiameterRejectMinM: 0.020, DiameterRejectMaxM: 0.600,
		CoverageWarnMinPct: 95, CoverageRejectMinPct: 60,
		HoleWarnMaxPct: 10, HoleRejectMaxPct: 40,
		RimGapWarnMaxDeg: 30, RimMissingRejectMaxPct: 25,
		DroppedWarnMaxPct: 10, DroppedRejectMaxPct: 50,
		FootprintWarnMinPct: 80,
		NoiseGapWarnMaxPct:  20, // a fifth of the mean gap (DESIGN 5.0)
	}
}

// Validate checks that every limit is finite, in range and ordered (a
// reject limit no stricter than its warn limit).
func (l Limits) Validate() error {
	var errs []string
	bad := func(format string, a ...any) { errs = append(errs, fmt.Sprintf(format, a...)) }
	pos := func(name string, v float64) bool {
		if !(v > 0) || math.IsInf(v, 0) {
			bad("%s must be positive and finite (got %g)", name, v)
			return false
		}
		return true
	}
	pct := func(name string, v float64) bool {
		if !(v >= 0 && v <= 100) {
			bad("%s must be in [0, 100] %% (got %g)", name, v)
			return false
		}
		return true
	}
	if pos("diameter reject minimum", l.DiameterRejectMinM) && pos("diameter warn minimum", l.DiameterWarnMinM) &&
		pos("diameter warn maximum", l.DiameterWarnMaxM) && pos("diameter reject maximum", l.DiameterRejectMaxM) &&
		!(l.DiameterRejectMinM <= l.DiameterWarnMinM && l.DiameterWarnMinM < l.DiameterWarnMaxM && l.DiameterWarnMaxM <= l.DiameterRejectMaxM) {
		bad("diameter limits must be ordered reject minimum <= warn minimum < warn maximum <= reject maximum (got %g, %g, %g, %g mm)",
			l.DiameterRejectMinM*1e3, l.DiameterWarnMinM*1e3, l.DiameterWarnMaxM*1e3, l.DiameterRejectMaxM*1e3)
	}
	below := func(what string, warn, reject float64) { // a figure that must stay above its limits
		if pct(what+" warn limit", warn) && pct(what+" reject limit", reject) && reject > warn {
			bad("%s reject limit %g %% is above its warn limit %g %%", what, reject, warn)
		}
	}
	above := func(what string, warn, reject float64) { // a figure that must stay below its limits
		if pct(what+" warn limit", warn) && pct(what+" reject limit", reject) && reject < warn {
			bad("%s reject limit %g %% is below its warn limit %g %%", what, reject, warn)
		}
	}
	below("coverage", l.CoverageWarnMinPct, l.CoverageRejectMinPct)
	above("largest hole", l.HoleWarnMaxPct, l.HoleRejectMaxPct)
	above("points dropped", l.DroppedWarnMaxPct, l.DroppedRejectMaxPct)
	if !(l.RimGapWarnMaxDeg >= 0 && l.RimGapWarnMaxDeg <= 360) {
		bad("rim gap warn limit must be in [0, 360] degrees (got %g)", l.RimGapWarnMaxDeg)
	}
	pct("rim missing reject limit", l.RimMissingRejectMaxPct)
	pct("footprint warn limit", l.FootprintWarnMinPct)
	if !(l.NoiseGapWarnMaxPct >= 0) || math.IsInf(l.NoiseGapWarnMaxPct, 0) {
		bad("noise over mean gap warn limit must be >= 0 and finite (got %g)", l.NoiseGapWarnMaxPct)
	}
	if len(errs) > 0 {
		return errors.New(strings.Join(errs, "; "))
	}
	return nil
}

// Check is one check's outcome.
type Check struct {
	Name   string
	Status string
	// Figure is the measured figure in the unit Name ends in; NaN when not
	// measured or, for Face, not numeric.
	Figure float64
	// Detail says more about the figure: how the face was decided, the
	// figures a ratio was formed from, where points were dropped.
	Detail string
	// The limits, in the unit of Figure; NaN where the check has none.
	WarnBelow, WarnAbove, RejectBelow, RejectAbove float64
	// Message is one sentence: what was found and what to do.
	Message string
}

// Result is the gate's outcome.
type Result struct {
	// Status is the worst status of the checks: Reject, Warn or OK
	// (NotMeasured counts as OK).
	Status string
	Checks []Check
}

// First returns the first check whose status is the gate's status (the
// first rejecting check of a rejected scan, else the first warning), and
// false when the gate is OK.
func (r Result) First() (Check, bool) {
	if r.Status == OK {
		return Check{}, false
	}
	for _, c := range r.Checks {
		if c.Status == r.Status {
			return c, true
		}
	}
	return Check{}, false
}

// Count returns how many checks have the given status.
func (r Result) Count(status string) int {
	n := 0
	for _, c := range r.Checks {
		if c.Status == status {
			n++
		}
	}
	return n
}

// Evaluate runs every check on in against l, in a fixed order.
func Evaluate(in Input, l Limits) Result {
	checks := []Check{
		diameterCheck(in, l),
		faceCheck(in),
		coverageCheck(in, l),
		holeCheck(in, l),
		rimGapCheck(in, l),
		rimMissingCheck(in, l),
		droppedCheck(in, l),
		footprintCheck(in, l),
		noiseCheck(in, l),
	}
	res := Result{Status: OK, Checks: checks}
	for _, c := range checks {
		switch {
		case c.Status == Reject:
			res.Status = Reject
		case c.Status == Warn && res.Status == OK:
			res.Status = Warn
		}
	}
	return res
}

// sig4 formats a positive length with 4 significant digits and no
// exponent: 7.874, 0.2001, 200066.
func sig4(v float64) string {
	d := 3 - int(math.Floor(math.Log10(v)))
	return strconv.FormatFloat(v, 'f', max(d, 0), 64)
}

// measured reports whether a figure was measured (finite).
func measured(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// newCheck returns a check with no limits and the figure not measured.
func newCheck(name string) Check {
	n := math.NaN()
	return Check{Name: name, Status: NotMeasured, Figure: n, WarnBelow: n, WarnAbove: n, RejectBelow: n, RejectAbove: n}
}

// grade sets c.Status from c.Figure and the limits: beyond a reject limit
// rejects, beyond a warn limit warns, else OK. It returns the status.
func (c *Check) grade() string {
	f := c.Figure
	switch {
	case !measured(f):
		c.Status = NotMeasured
	case f < c.RejectBelow || f > c.RejectAbove: // false for NaN limits
		c.Status = Reject
	case f < c.WarnBelow || f > c.WarnAbove:
		c.Status = Warn
	default:
		c.Status = OK
	}
	return c.Status
}

func diameterCheck(in Input, l Limits) Check {
	c := newCheck(Diameter)
	c.WarnBelow, c.WarnAbove = l.DiameterWarnMinM*1e3, l.DiameterWarnMaxM*1e3
	c.RejectBelow, c.RejectAbove = l.DiameterRejectMinM*1e3, l.DiameterRejectMaxM*1e3
	if measured(in.DiameterM) && in.DiameterM > 0 {
		c.Figure = in.DiameterM * 1e3
	}
	switch c.grade() {
	case NotMeasured:
		c.Message = "the base diameter was not measured"
	case OK:
		c.Message = fmt.Sprintf("the base measures %.1f mm across, plausible for cookware (%g–%g mm)", c.Figure, c.WarnBelow, c.WarnAbove)
	default:
		unit := in.Unit
		if unit == "" {
			unit = "mm"
		}
		hint, ok := UnitsHint(in.DiameterM, unit, l)
		side := "small"
		if c.Figure > c.WarnAbove {
			side = "large"
		}
		c.Message = fmt.Sprintf("the base measures %s mm across, implausibly %s for cookware (%g–%g mm)", sig4(c.Figure), side, c.WarnBelow, c.WarnAbove)
		if ok {
			c.Detail = "units hint: " + hint
			c.Message = fmt.Sprintf("the base measures %s mm across; is the file in %s? try --units %s", sig4(c.Figure), unitWords[hint], hint)
		} else {
			c.Message += "; check the file's unit (--units) and that the scan holds the pan's base"
		}
	}
	return c
}

func faceCheck(in Input) Check {
	c := newCheck(Face)
	c.Detail = in.FaceSource
	switch in.FaceSource {
	case "":
		c.Message = "how the outer face was decided is not known"
	case "assumed":
		c.Status = Warn
		c.Message = "the outer face was assumed to look toward the scanner's +z (no normals, no wall); check it and give --face up or --face down"
	case "option":
		c.Status = OK
		c.Message = "the outer face was given by the job (--face)"
	case "normals":
		c.Status = OK
		c.Message = "the outer face was told from the scan's normals"
	case "wall":
		c.Status = OK
		c.Message = "the outer face was told from the wall rising at the rim"
	default:
		c.Status = Warn
		c.Message = fmt.Sprintf("the outer face was decided by %q, which the gate does not know; check it and give --face up or --face down", in.FaceSource)
	}
	return c
}

func coverageCheck(in Input, l Limits) Check {
	c := newCheck(Coverage)
	c.Figure, c.WarnBelow, c.RejectBelow = in.CoveragePct, l.CoverageWarnMinPct, l.CoverageRejectMinPct
	switch c.grade() {
	case NotMeasured:
		c.Message = "the coverage of the base was not measured"
	case OK:
		c.Message = fmt.Sprintf("%.1f %% of the base is near a measured point", c.Figure)
	case Warn:
		c.Message = fmt.Sprintf("only %.1f %% of the base is near a measured point (warn below %g %%); the rest is interpolated, so rescan the gaps if the figures matter", c.Figure, c.WarnBelow)
	case Reject:
		c.Message = fmt.Sprintf("only %.1f %% of the base is near a measured point (reject below %g %%); rescan the base", c.Figure, c.RejectBelow)
	}
	return c
}

func holeCheck(in Input, l Limits) Check {
	c := newCheck(LargestHole)
	c.Figure = in.LargestHoleM * 1e3
	if measured(in.DiameterM) && in.DiameterM > 0 {
		c.WarnAbove = l.HoleWarnMaxPct / 100 * in.DiameterM * 1e3
		c.RejectAbove = l.HoleRejectMaxPct / 100 * in.DiameterM * 1e3
	}
	switch c.grade() {
	case NotMeasured:
		c.Message = "the largest hole in the measured base was not measured"
	case OK:
		c.Message = fmt.Sprintf("the largest unmeasured hole is %.1f mm across", c.Figure)
	case Warn:
		c.Message = fmt.Sprintf("an unmeasured hole %.1f mm across lies in the base (warn above %g %% of the diameter); rescan that area if the figures matter", c.Figure, l.HoleWarnMaxPct)
	case Reject:
		c.Message = fmt.Sprintf("an unmeasured hole %.1f mm across lies in the base (reject above %g %% of the diameter); rescan the base", c.Figure, l.HoleRejectMaxPct)
	}
	return c
}

func rimGapCheck(in Input, l Limits) Check {
	c := newCheck(RimGap)
	c.Figure, c.WarnAbove = in.RimLargestGapDeg, l.RimGapWarnMaxDeg
	switch c.grade() {
	case NotMeasured:
		c.Message = "the rim's completeness was not measured"
	case OK:
		c.Message = fmt.Sprintf("no arc of the rim wider than %g° lacks measured points (widest %.0f°)", c.WarnAbove, c.Figure)
	default:
		c.Message = fmt.Sprintf("an arc of %.0f° of the rim has no measured points near it (warn above %g°); the footprint and the rest pose there are guessed, so rescan the rim", c.Figure, c.WarnAbove)
	}
	return c
}

func rimMissingCheck(in Input, l Limits) Check {
	c := newCheck(RimMissing)
	c.Figure, c.RejectAbove = in.RimMissingPct, l.RimMissingRejectMaxPct
	switch c.grade() {
	case NotMeasured:
		c.Message = "the share of the rim without measured points was not measured"
	case OK:
		c.Message = fmt.Sprintf("%.1f %% of the rim lacks measured points", c.Figure)
	default:
		c.Message = fmt.Sprintf("%.1f %% of the rim has no measured points near it (reject above %g %%); rescan the whole base", c.Figure, c.RejectAbove)
	}
	return c
}

func droppedCheck(in Input, l Limits) Check {
	c := newCheck(PointsDropped)
	c.Figure, c.WarnAbove, c.RejectAbove = in.PointsDroppedPct, l.DroppedWarnMaxPct, l.DroppedRejectMaxPct
	c.Detail = in.PointsDroppedWhere
	where := ""
	if in.PointsDroppedWhere != "" {
		where = " (" + in.PointsDroppedWhere + ")"
	}
	switch c.grade() {
	case NotMeasured:
		c.Message = "the points dropped by base segmentation were not counted"
	case OK:
		c.Message = fmt.Sprintf("segmentation left %.1f %% of the points near the base out of it%s", c.Figure, where)
	case Warn:
		c.Message = fmt.Sprintf("segmentation left %.1f %% of the points near the base out of it%s (warn above %g %%); check that the base was not cut short, or give --diameter-mm", c.Figure, where, c.WarnAbove)
	case Reject:
		c.Message = fmt.Sprintf("segmentation left %.1f %% of the points near the base out of it%s (reject above %g %%); give --diameter-mm or check the scan", c.Figure, where, c.RejectAbove)
	}
	return c
}

func footprintCheck(in Input, l Limits) Check {
	c := newCheck(Footprint)
	c.WarnBelow = l.FootprintWarnMinPct
	if measured(in.DiameterM) && measured(in.FootprintDiameterM) && in.FootprintDiameterM > 0 {
		c.Figure = 100 * in.DiameterM / in.FootprintDiameterM
		c.Detail = fmt.Sprintf("base %.1f mm, footprint %.1f mm", in.DiameterM*1e3, in.FootprintDiameterM*1e3)
	}
	switch c.grade() {
	case NotMeasured:
		c.Message = "the scan's footprint was not measured"
	case OK:
		c.Message = fmt.Sprintf("the base circle spans %.0f %% of the scan's footprint", c.Figure)
	default:
		c.Message = fmt.Sprintf("the base circle (%.1f mm) spans only %.0f %% of the scan's footprint (%.1f mm; warn below %g %%): the base may have been cut short, so check it or give --diameter-mm",
			in.DiameterM*1e3, c.Figure, in.FootprintDiameterM*1e3, c.WarnBelow)
	}
	return c
}

func noiseCheck(in Input, l Limits) Check {
	c := newCheck(NoiseOverGap)
	c.WarnAbove = l.NoiseGapWarnMaxPct
	if measured(in.NoiseM) && measured(in.MeanGapM) && in.MeanGapM > 0 {
		c.Figure = 100 * in.NoiseM / in.MeanGapM
		c.Detail = fmt.Sprintf("noise %.1f µm RMS, mean gap %.1f µm", in.NoiseM*1e6, in.MeanGapM*1e6)
	}
	switch c.grade() {
	case NotMeasured:
		c.Message = "the scanner noise against the mean gap was not measured"
	case OK:
		c.Message = fmt.Sprintf("the scanner noise is %.0f %% of the mean gap", c.Figure)
	default:
		c.Message = fmt.Sprintf("the scanner noise removed by the form filter (%.1f µm RMS) is %.0f %% of the mean gap (%.1f µm; warn above %g %%): the gap map is near the noise floor, so a less noisy scan would tell more",
			in.NoiseM*1e6, c.Figure, in.MeanGapM*1e6, c.WarnAbove)
	}
	return c
}
