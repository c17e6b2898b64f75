package scan

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

func TestUnitsHint(t *testing.T) {
	tests := []struct {
		diameterM float64
		unit      string
		ok        bool
	}{
		{0.2 / 25.4, "in", true}, // a 200 mm base written in inches: 7.87 "mm"
		{0.0002, "m", true},      // 0.2 m written in metres: 0.2 "mm"
		{200, "um", true},        // 200 000 µm: 200 m
		{0.2, "", false},         // plausible already
		{0.08, "", false},        // on the limit (inclusive)
		{0.4, "", false},         // on the limit (inclusive)
		{0.04, "", false},        // a 40 mm part: 1016 mm in inches, 40 m in metres; none fits
		{0.5, "", false},         // 500 mm: 0.5 mm as µm, 12.7 m as inches
		{0.3 / 25.4 * 1.0001, "in", true},
		{0, "", false}, {-1, "", false},
	}
	for _, tt := range tests {
		u, ok := UnitsHint(tt.diameterM)
		if u != tt.unit || ok != tt.ok {
			t.Errorf("UnitsHint(%g) = %q, %v; want %q, %v", tt.diameterM, u, ok, tt.unit, tt.ok)
		}
	}
	// Read in inches, the numbers were millimetres: 200 mm reads as 5.08 m.
	if u, ok := UnitsHintRange(5.08, "in", MinBaseDiameterM, MaxBaseDiameterM); u != "mm" || !ok {
		t.Errorf("read in inches: %q, %v; want mm", u, ok)
	}
}

// TestLevelUnits: a 200 mm base written in inches, metres or µm and read
// as millimetres (issue 8, item 7) is refused with the measured size, the
// plausible range and the unit to try; read in the right unit it passes;
// with the unit given as an option it only warns.
func TestLevelUnits(t *testing.T) {
	const R = 0.1
	sb := synthBase{R: R, Shape: dish(0.3e-3, R), CornerM: 5e-3, WallM: 15e-3, NoiseM: 10e-6, N: 30000, Seed: 5}
	sc := newScanner(FaceUp, 3, 0, 10, r3.Vec{X: 0.02, Z: 0.3})
	// read returns the scan as Read would give it for a file written in
	// unit and read in mm: coordinates in metres scaled by mm per unit.
	read := func(unit, source string) *Cloud {
		c := sc.apply(sb.build())
		k, _ := UnitScale(unit)
		for i, p := range c.Points {
			c.Points[i] = r3.Scale(1e-3/k, p)
		}
		c.Unit, c.UnitSource = "mm", source
		return c
	}
	tests := []struct {
		unit, source string
		want         string  // error text, with # for the measured size; "" = none
		size         float64 // the measured size as read, mm, within 1 %
		warn         string
	}{
		{unit: "mm", source: "default"},
		{unit: "in", source: "default", size: 200 / 25.4, want: "the base measures # mm across, implausible for cookware (80–400 mm); is the file in inches? try --units in"},
		{unit: "m", source: "header", size: 0.2, want: "the base measures # mm across, implausible for cookware (80–400 mm); is the file in metres? try --units m"},
		{unit: "um", source: "default", size: 200000, want: "the base measures # m across, implausible for cookware (80–400 mm); is the file in micrometres (µm)? try --units um"},
		{unit: "in", source: "option", warn: "is the file in inches? try --units in (the file was read in millimetres as asked)"},
	}
	for _, tt := range tests {
		t.Run(tt.unit+" "+tt.source, func(t *testing.T) {
			l, err := Level(read(tt.unit, tt.source), LevelOptions{})
			if tt.want == "" {
				if err != nil {
					t.Fatal(err)
				}
				if w := strings.Join(l.Warnings, "; "); !strings.Contains(w, tt.warn) {
					t.Errorf("warnings %q lack %q", w, tt.warn)
				}
				return
			}
			var se *SizeError
			if !errors.As(err, &se) {
				t.Fatalf("error %v is not a *SizeError", err)
			}
			pre, post, _ := strings.Cut(tt.want, "#")
			msg := err.Error()
			if !strings.HasPrefix(msg, pre) || !strings.HasSuffix(msg, post) {
				t.Errorf("error\n%q, want\n%q", msg, tt.want)
			}
			if got := se.DiameterM * 1e3; math.Abs(got/tt.size-1) > 0.01 {
				t.Errorf("measured %g, want %g within 1 %%", got, tt.size)
			}
			if se.Hint != tt.unit {
				t.Errorf("hint %q, want %q", se.Hint, tt.unit)
			}
		})
	}
}
