package scan

import (
	"fmt"
	"math"
)

// The diameters of cookware bases thought plausible, m: from a small milk
// pan to a large stock pot or paella pan. Our choice; no standard sets
// them. A scan whose base falls outside was probably written in another
// length unit than the one it was read in.
const (
	MinBaseDiameterM = 0.080
	MaxBaseDiameterM = 0.400
)

// hintUnits are the units UnitsHintRange tries, in this order.
var hintUnits = [...]string{"in", "m", "um", "mm"}

// UnitsHint returns the length unit, "m", "in" or "um", in which a file
// read as millimetres would give a base diameter in the plausible range
// [MinBaseDiameterM, MaxBaseDiameterM]; diameterM is the diameter measured
// from the file read as millimetres, m. ok is false when the diameter is
// plausible already, or no unit makes it so. Example: a 200 mm base
// written in inches reads as 7.9 mm, and UnitsHint(0.0079) is "in".
func UnitsHint(diameterM float64) (unit string, ok bool) {
	return UnitsHintRange(diameterM, "mm", MinBaseDiameterM, MaxBaseDiameterM)
}

// UnitsHintRange is UnitsHint for a file read in readUnit ("mm", "m",
// "um" or "in"; "" means mm) and a plausible range [minM, maxM] of base
// diameters, m. It returns the first of in, m, um, mm (other than readUnit)
// that puts the diameter in the range.
func UnitsHintRange(diameterM float64, readUnit string, minM, maxM float64) (unit string, ok bool) {
	if readUnit == "" {
		readUnit = "mm"
	}
	from, err := UnitScale(readUnit)
	if err != nil || !(diameterM > 0) || math.IsInf(diameterM, 0) || (diameterM >= minM && diameterM <= maxM) {
		return "", false
	}
	for _, u := range hintUnits {
		to, _ := UnitScale(u)
		if u == readUnit {
			continue
		}
		if d := diameterM * to / from; d >= minM && d <= maxM {
			return u, true
		}
	}
	return "", false
}

// unitWords names a unit in a sentence.
func unitWords(unit string) string {
	switch unit {
	case "in":
		return "inches"
	case "m":
		return "metres"
	case "um":
		return "micrometres (µm)"
	}
	return "millimetres"
}

// SizeError says that a base's diameter is implausible for cookware in the
// unit the file was read in, and which unit would make it plausible.
type SizeError struct {
	// Name names the scan, e.g. "pan.stl"; it may be empty.
	Name string
	// DiameterM is the base (or, when no base was found, the scan's)
	// diameter as read, m.
	DiameterM float64
	// Unit is the unit the file was read in; Hint the unit that would give
	// a plausible diameter ("" when none does).
	Unit, Hint string
	// Scan is true when DiameterM is the whole scan's width, not a base's.
	Scan bool
	// Err is the error that stopped Level, if any.
	Err error
}

// Error says what is implausible and what to try, e.g. "the base measures
// 7.9 mm across, implausible for cookware (80–400 mm); is the file in
// inches? try --units in".
func (e *SizeError) Error() string {
	what := "the base measures"
	if e.Scan {
		what = "the scan measures about"
	}
	s := fmt.Sprintf("%s %s across, implausible for cookware (%.0f–%.0f mm)", what, formatLength(e.DiameterM),
		MinBaseDiameterM*1e3, MaxBaseDiameterM*1e3)
	if e.Hint != "" {
		s += fmt.Sprintf("; is the file in %s? try --units %s", unitWords(e.Hint), e.Hint)
	}
	if e.Err != nil {
		s = e.Err.Error() + "; " + s
	}
	if e.Name != "" {
		s = e.Name + ": " + s
	}
	return s
}

// Unwrap returns the error that stopped Level, if any.
func (e *SizeError) Unwrap() error { return e.Err }

// formatLength writes a length given in m in mm with three significant
// digits, or in m above 10 m.
func formatLength(m float64) string {
	mm := m * 1e3
	switch {
	case m >= 10:
		return fmt.Sprintf("%.0f m", m)
	case mm >= 100:
		return fmt.Sprintf("%.0f mm", mm)
	case mm >= 1:
		return fmt.Sprintf("%.1f mm", mm)
	}
	return fmt.Sprintf("%.3g mm", mm)
}
