package quality

import (
	"math"
	"strings"
	"testing"
)

// checkOf returns the named check of r.
func checkOf(t *testing.T, r Result, name string) Check {
	t.Helper()
	for _, c := range r.Checks {
		if c.Name == name {
			return c
		}
	}
	t.Fatalf("no check %q in %+v", name, r.Checks)
	return Check{}
}

// TestChecksAtLimits puts each figure just below, at and just above each of
// its limits (the default ones) and checks the status and the message.
func TestChecksAtLimits(t *testing.T) {
	const eps = 1e-9
	mm := func(v float64) float64 { return v / 1e3 }
	tests := []struct {
		name    string
		set     func(*Input)
		check   string
		status  string
		message string // substring of the message; "" = not checked
	}{
		// Diameter: warn outside 100–350 mm, reject outside 20–600 mm.
		{"diameter mid", func(in *Input) { in.DiameterM = mm(200) }, Diameter, OK, "200.0 mm across"},
		{"diameter at warn min", func(in *Input) { in.DiameterM = mm(100) }, Diameter, OK, ""},
		{"diameter below warn min", func(in *Input) { in.DiameterM = mm(100 - eps) }, Diameter, Warn, "implausibly small"},
		{"diameter at warn max", func(in *Input) { in.DiameterM = mm(350) }, Diameter, OK, ""},
		{"diameter above warn max", func(in *Input) { in.DiameterM = mm(350 + eps) }, Diameter, Warn, "implausibly large"},
		{"diameter at reject min", func(in *Input) { in.DiameterM = mm(20) }, Diameter, Warn, ""},
		{"diameter below reject min", func(in *Input) { in.DiameterM = mm(20 - eps) }, Diameter, Reject, ""},
		{"diameter at reject max", func(in *Input) { in.DiameterM = mm(600) }, Diameter, Warn, ""},
		{"diameter above reject max", func(in *Input) { in.DiameterM = mm(600 + eps) }, Diameter, Reject, ""},
		{"diameter in inches", func(in *Input) { in.DiameterM = mm(200 / 25.4) }, Diameter, Reject,
			"the base measures 7.874 mm across; is the file in inches? try --units in"},
		{"diameter in metres", func(in *Input) { in.DiameterM = mm(0.2) }, Diameter, Reject, "is the file in metres? try --units m"},
		{"diameter in micrometres", func(in *Input) { in.DiameterM = mm(200000) }, Diameter, Reject, "is the file in micrometres? try --units um"},
		{"diameter read as inches, file in mm", func(in *Input) { in.DiameterM, in.Unit = mm(200*25.4), "in" }, Diameter, Reject,
			"is the file in millimetres? try --units mm"},
		{"diameter with no plausible unit", func(in *Input) { in.DiameterM = mm(15) }, Diameter, Reject, "check the file's unit"},
		{"small test part warns", func(in *Input) { in.DiameterM = mm(40) }, Diameter, Warn, "40.00 mm across, implausibly small for cookware (100–350 mm); check"},
		{"diameter not measured", func(in *Input) {}, Diameter, NotMeasured, "not measured"},
		{"diameter zero is not measured", func(in *Input) { in.DiameterM = 0 }, Diameter, NotMeasured, ""},

		// Face: assumed warns.
		{"face from normals", func(in *Input) { in.FaceSource = "normals" }, Face, OK, "normals"},
		{"face from wall", func(in *Input) { in.FaceSource = "wall" }, Face, OK, "wall"},
		{"face from option", func(in *Input) { in.FaceSource = "option" }, Face, OK, "--face"},
		{"face assumed", func(in *Input) { in.FaceSource = "assumed" }, Face, Warn, "give --face up or --face down"},
		{"face unknown source", func(in *Input) { in.FaceSource = "guess" }, Face, Warn, `"guess"`},
		{"face not measured", func(in *Input) {}, Face, NotMeasured, ""},

		// Coverage: warn below 95 %, reject below 60 %.
		{"coverage full", func(in *Input) { in.CoveragePct = 100 }, Coverage, OK, "100.0 %"},
		{"coverage at warn", func(in *Input) { in.CoveragePct = 95 }, Coverage, OK, ""},
		{"coverage below warn", func(in *Input) { in.CoveragePct = 95 - eps }, Coverage, Warn, "interpolated"},
		{"coverage at reject", func(in *Input) { in.CoveragePct = 60 }, Coverage, Warn, ""},
		{"coverage below reject", func(in *Input) { in.CoveragePct = 60 - eps }, Coverage, Reject, "rescan the base"},
		{"coverage not measured", func(in *Input) {}, Coverage, NotMeasured, ""},

		// Largest hole: warn above 10 %, reject above 40 % of the diameter
		// (200 mm: 20 mm and 80 mm).
		{"hole small", func(in *Input) { in.DiameterM, in.LargestHoleM = mm(200), mm(5) }, LargestHole, OK, "5.0 mm"},
		{"hole at warn", func(in *Input) { in.DiameterM, in.LargestHoleM = mm(200), mm(20) }, LargestHole, OK, ""},
		{"hole above warn", func(in *Input) { in.DiameterM, in.LargestHoleM = mm(200), mm(20+1e-6) }, LargestHole, Warn, "warn above 10 %"},
		{"hole at reject", func(in *Input) { in.DiameterM, in.LargestHoleM = mm(200), mm(80) }, LargestHole, Warn, ""},
		{"hole above reject", func(in *Input) { in.DiameterM, in.LargestHoleM = mm(200), mm(80+1e-6) }, LargestHole, Reject, "reject above 40 %"},
		{"hole without diameter has no limit", func(in *Input) { in.LargestHoleM = mm(150) }, LargestHole, OK, ""},
		{"hole not measured", func(in *Input) { in.DiameterM = mm(200) }, LargestHole, NotMeasured, ""},

		// Rim: warn when an arc wider than 30° is missing; reject above 25 %.
		{"rim gap small", func(in *Input) { in.RimLargestGapDeg = 4 }, RimGap, OK, ""},
		{"rim gap at warn", func(in *Input) { in.RimLargestGapDeg = 30 }, RimGap, OK, ""},
		{"rim gap above warn", func(in *Input) { in.RimLargestGapDeg = 30 + eps }, RimGap, Warn, "rescan the rim"},
		{"rim gap not measured", func(in *Input) {}, RimGap, NotMeasured, ""},
		{"rim missing below reject", func(in *Input) { in.RimMissingPct = 25 - eps }, RimMissing, OK, ""},
		{"rim missing at reject", func(in *Input) { in.RimMissingPct = 25 }, RimMissing, OK, ""},
		{"rim missing above reject", func(in *Input) { in.RimMissingPct = 25 + eps }, RimMissing, Reject, "reject above 25 %"},

		// Points dropped by segmentation: warn above 10 %, reject above 50 %.
		{"dropped few", func(in *Input) { in.PointsDroppedPct = 1 }, PointsDropped, OK, ""},
		{"dropped at warn", func(in *Input) { in.PointsDroppedPct = 10 }, PointsDropped, OK, ""},
		{"dropped above warn", func(in *Input) {
			in.PointsDroppedPct, in.PointsDroppedWhere = 10+eps, "beyond the rim circle"
		}, PointsDropped, Warn, "(beyond the rim circle)"},
		{"dropped at reject", func(in *Input) { in.PointsDroppedPct = 50 }, PointsDropped, Warn, ""},
		{"dropped above reject", func(in *Input) { in.PointsDroppedPct = 50 + eps }, PointsDropped, Reject, "--diameter-mm"},
		{"dropped not counted", func(in *Input) {}, PointsDropped, NotMeasured, "not counted"},

		// Footprint: warn when the base is below 80 % of the footprint.
		{"footprint close", func(in *Input) { in.DiameterM, in.FootprintDiameterM = mm(200), mm(210) }, Footprint, OK, ""},
		{"footprint at warn", func(in *Input) { in.DiameterM, in.FootprintDiameterM = mm(160), mm(200) }, Footprint, OK, ""},
		{"footprint below warn", func(in *Input) { in.DiameterM, in.FootprintDiameterM = mm(140), mm(200) }, Footprint, Warn,
			"spans only 70 % of the scan's footprint (200.0 mm"},
		{"footprint without diameter", func(in *Input) { in.FootprintDiameterM = mm(200) }, Footprint, NotMeasured, ""},

		// Noise against the mean gap: warn above a fifth (DESIGN 5.0).
		{"noise low", func(in *Input) { in.NoiseM, in.MeanGapM = 5e-6, 200e-6 }, NoiseOverGap, OK, "2 % of the mean gap"},
		{"noise at warn", func(in *Input) { in.NoiseM, in.MeanGapM = 20e-6, 100e-6 }, NoiseOverGap, OK, ""},
		{"noise above warn", func(in *Input) { in.NoiseM, in.MeanGapM = 5.3e-6, 7.5e-6 }, NoiseOverGap, Warn, "71 % of the mean gap"},
		{"noise before the gap is known", func(in *Input) { in.NoiseM = 5e-6 }, NoiseOverGap, NotMeasured, ""},
		{"noise with no gap", func(in *Input) { in.NoiseM, in.MeanGapM = 5e-6, 0 }, NoiseOverGap, NotMeasured, ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			in := Unmeasured()
			tc.set(&in)
			r := Evaluate(in, DefaultLimits())
			c := checkOf(t, r, tc.check)
			if c.Status != tc.status {
				t.Errorf("status %q, want %q (figure %g, message %q)", c.Status, tc.status, c.Figure, c.Message)
			}
			if !strings.Contains(c.Message, tc.message) {
				t.Errorf("message %q does not contain %q", c.Message, tc.message)
			}
			if c.Message == "" {
				t.Error("empty message")
			}
			// The gate's status is the worst of its checks; every other
			// check is not measured here, except the hole and footprint
			// checks, which read the diameter too.
			want := tc.status
			for _, o := range r.Checks {
				if o.Status == Reject || (o.Status == Warn && want != Reject) {
					want = o.Status
				}
			}
			if want == NotMeasured {
				want = OK
			}
			if r.Status != want {
				t.Errorf("gate status %q, want %q", r.Status, want)
			}
		})
	}
}

// TestFigures checks each numeric figure and its limits in the unit of the
// check's name.
func TestFigures(t *testing.T) {
	in := Unmeasured()
	in.DiameterM, in.LargestHoleM, in.FootprintDiameterM = 0.2, 0.03, 0.25
	in.NoiseM, in.MeanGapM = 10e-6, 100e-6
	r := Evaluate(in, DefaultLimits())
	tests := []struct {
		name                                 string
		figure, warnLo, warnHi, rejLo, rejHi float64 // NaN = none
	}{
		{Diameter, 200, 100, 350, 20, 600},
		{LargestHole, 30, math.NaN(), 20, math.NaN(), 80},
		{Footprint, 80, 80, math.NaN(), math.NaN(), math.NaN()},
		{NoiseOverGap, 10, math.NaN(), 20, math.NaN(), math.NaN()},
		{Coverage, math.NaN(), 95, math.NaN(), 60, math.NaN()},
	}
	same := func(a, b float64) bool { return math.IsNaN(a) && math.IsNaN(b) || math.Abs(a-b) <= 1e-9*math.Abs(b) }
	for _, tc := range tests {
		c := checkOf(t, r, tc.name)
		if !same(c.Figure, tc.figure) || !same(c.WarnBelow, tc.warnLo) || !same(c.WarnAbove, tc.warnHi) ||
			!same(c.RejectBelow, tc.rejLo) || !same(c.RejectAbove, tc.rejHi) {
			t.Errorf("%s: figure %g, limits warn <%g >%g reject <%g >%g; want %g, %g %g %g %g", tc.name,
				c.Figure, c.WarnBelow, c.WarnAbove, c.RejectBelow, c.RejectAbove, tc.figure, tc.warnLo, tc.warnHi, tc.rejLo, tc.rejHi)
		}
	}
	if got := r.Status; got != Warn {
		t.Errorf("gate %q, want warn (a 30 mm hole in a 200 mm base)", got)
	}
	if first, ok := r.First(); !ok || first.Name != LargestHole {
		t.Errorf("first failing check %q, want %q", first.Name, LargestHole)
	}
	if n := r.Count(Warn); n != 1 {
		t.Errorf("%d warnings, want 1", n)
	}
}

func TestGateStatusAndFirst(t *testing.T) {
	in := Unmeasured()
	if r := Evaluate(in, DefaultLimits()); r.Status != OK || r.Count(NotMeasured) != len(r.Checks) {
		t.Errorf("nothing measured: status %q, %d of %d not measured; want ok and all", r.Status, r.Count(NotMeasured), len(r.Checks))
	} else if _, ok := r.First(); ok {
		t.Error("First on an ok gate returned a check")
	}
	// A warning earlier in the order and a rejection later: the gate
	// rejects and First names the rejecting check.
	in.FaceSource, in.CoveragePct = "assumed", 10
	r := Evaluate(in, DefaultLimits())
	if r.Status != Reject {
		t.Fatalf("status %q, want reject", r.Status)
	}
	if c, ok := r.First(); !ok || c.Name != Coverage {
		t.Errorf("first %q, want %q", c.Name, Coverage)
	}
	if r.Count(Warn) != 1 || r.Count(Reject) != 1 {
		t.Errorf("counts warn %d reject %d, want 1 and 1", r.Count(Warn), r.Count(Reject))
	}
}

func TestUnitsHint(t *testing.T) {
	l := DefaultLimits()
	tests := []struct {
		diameterM float64
		unit      string
		want      string // "" = no hint
	}{
		{0.200 / 25.4, "mm", "in"}, // 200 mm written in inches, read as mm
		{0.101 / 25.4, "mm", "in"},
		{0.349 / 25.4, "mm", "in"},
		{0.200e-3, "mm", "m"}, // written in metres
		{0.200e3, "mm", "um"}, // written in µm
		{0.200 * 25.4, "in", "mm"},
		{0.200 * 0.0254, "in", "m"}, // 0.2 written in metres, read as inches: 5.08 mm
		{0.200, "mm", ""},           // plausible as read
		{0.020, "mm", ""},           // 20 mm: nothing fits (×25.4 = 508 mm, too large)
		{math.NaN(), "mm", ""},
		{-1, "mm", ""},
		{0.2e-3, "furlong", ""},
	}
	for _, tc := range tests {
		got, ok := UnitsHint(tc.diameterM, tc.unit, l)
		if got != tc.want || ok != (tc.want != "") {
			t.Errorf("UnitsHint(%g m, %q) = %q, %v; want %q", tc.diameterM, tc.unit, got, ok, tc.want)
		}
	}
}

func TestLimitsValidate(t *testing.T) {
	if err := DefaultLimits().Validate(); err != nil {
		t.Fatalf("defaults: %v", err)
	}
	tests := []struct {
		name string
		set  func(*Limits)
		want string
	}{
		{"diameter unordered", func(l *Limits) { l.DiameterWarnMinM = 0.01 }, "diameter limits must be ordered"},
		{"diameter NaN", func(l *Limits) { l.DiameterRejectMaxM = math.NaN() }, "diameter reject maximum must be positive"},
		{"coverage reversed", func(l *Limits) { l.CoverageRejectMinPct = 97 }, "coverage reject limit 97 % is above its warn limit 95 %"},
		{"hole reversed", func(l *Limits) { l.HoleRejectMaxPct = 5 }, "largest hole reject limit 5 % is below"},
		{"dropped out of range", func(l *Limits) { l.DroppedWarnMaxPct = 120 }, "points dropped warn limit must be in [0, 100]"},
		{"rim gap out of range", func(l *Limits) { l.RimGapWarnMaxDeg = -1 }, "rim gap warn limit"},
		{"noise infinite", func(l *Limits) { l.NoiseGapWarnMaxPct = math.Inf(1) }, "noise over mean gap"},
	}
	for _, tc := range tests {
		l := DefaultLimits()
		tc.set(&l)
		err := l.Validate()
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want it to contain %q", tc.name, err, tc.want)
		}
	}
}
