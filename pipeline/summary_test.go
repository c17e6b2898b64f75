package pipeline

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"strings"
	"testing"
)

// TestSummaryCSVOrderAndReason (issue 15, item 10): identity, status and
// reason, verdict and quality lead the columns; every non-ok row has a
// short reason, an ok row none.
func TestSummaryCSVOrderAndReason(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	long := "b.stl: levelling: " + strings.Repeat("the base could not be found ", 5)
	rows := []SummaryRow{
		{Path: "a.stl", Status: StatusOK, PartNumber: "P1", Lot: "L1", LossPct: f(3.25)},
		{Path: "b.stl", Status: StatusFailed, Error: long},
		{Path: "c.stl", Status: StatusOut, Reasons: "loss 12.5 % above 10 %; rocks"},
		{Path: "d.stl", Status: StatusRejected, Reasons: "diameter 8 mm: is the file in inches? try --units in"},
		{Path: "e.stl", Status: StatusNotRun},
	}
	var buf bytes.Buffer
	if err := NewSummary(rows).WriteCSV(&buf); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(recs[0][:8], ","); got != "path,part_number,lot,status,reason,pass,quality,warnings" {
		t.Errorf("leading columns %s", got)
	}
	for _, h := range recs[0][8:30] {
		if h != "shape" && h != "rocks" && !strings.Contains(h, "_") {
			t.Errorf("figure column %q has no unit", h)
		}
	}
	want := map[string]string{
		"a.stl": "",
		"b.stl": string([]rune(strings.TrimPrefix(long, "b.stl: "))[:79]) + "…",
		"c.stl": "loss 12.5 % above 10 % (+1 more)",
		"d.stl": "diameter 8 mm: is the file in inches? try --units in",
		"e.stl": "interrupted: run the same batch again",
	}
	for _, r := range recs[1:] {
		if w := want[r[0]]; strings.TrimSpace(r[4]) != strings.TrimSpace(w) {
			t.Errorf("%s: reason %q, want %q", r[0], r[4], w)
		}
		if len([]rune(r[4])) > 80 {
			t.Errorf("%s: reason of %d characters", r[0], len([]rune(r[4])))
		}
	}
	if recs[1][1] != "P1" || recs[1][2] != "L1" || recs[1][3] != StatusOK {
		t.Errorf("identity of the ok row: %v", recs[1][:4])
	}
}

// TestGeometrySummaryOutlierCount checks the geometry line's count of
// removed outliers reads as English for 0, 1 and many (a summary a lab
// engineer signs must not say "1 outliers").
func TestGeometrySummaryOutlierCount(t *testing.T) {
	tests := []struct {
		n    int
		want string
	}{
		{0, ", 0 outliers removed,"},
		{1, ", 1 outlier removed,"},
		{2, ", 2 outliers removed,"},
		{1375, ", 1375 outliers removed,"},
	}
	for _, tt := range tests {
		var b strings.Builder
		writeGeometrySummary(&b, &GeometryReport{DiameterMM: 200, Shape: "dished", CoveragePct: 100, OutliersRemoved: tt.n, NoiseUM: 2.4, CutoffMM: 8})
		if !strings.Contains(b.String(), tt.want) {
			t.Errorf("%d outliers: summary\n%s\nwant it to contain %q", tt.n, b.String(), tt.want)
		}
	}
}

// TestNumRoundsLikeFmt checks num against fmt's %.*f (the reference: Go's
// strconv rounds the exact binary value to the nearest decimal) on values
// stored with four decimals and printed with three, where a halfway digit
// is common (-1.7685 is -1.76849999… in binary), and that a negative value
// rounding to zero prints unsigned. signedFixed adds "+" to positive
// figures only.
func TestNumRoundsLikeFmt(t *testing.T) {
	tests := []struct {
		v          float64
		prec       int
		num, signd string
	}{
		{-1.7685, 3, "-1.768", "-1.768"},
		{1.7685, 3, "1.768", "+1.768"},
		{0.4005, 3, "0.401", "+0.401"}, // 0.40050000000000002 in binary
		{2.5, 0, "2", "+2"},            // halfway in binary too: to even
		{-0.0004, 3, "0.000", "0.000"},
		{-0.0005, 3, "-0.001", "-0.001"}, // -0.00050000000000000001
		{0, 3, "0.000", "0.000"},
		{13.778, 1, "13.8", "+13.8"},
	}
	for _, tt := range tests {
		if got := num(tt.v, tt.prec); got != tt.num {
			t.Errorf("num(%v, %d) = %q, want %q", tt.v, tt.prec, got, tt.num)
		}
		if want := fmt.Sprintf("%.*f", tt.prec, tt.v); tt.v < 0 && want != "-"+tt.num && want != tt.num || tt.v >= 0 && want != tt.num {
			t.Errorf("fmt %%.%df of %v = %q, num %q", tt.prec, tt.v, want, tt.num)
		}
		if got := signedFixed(tt.v, tt.prec); got != tt.signd {
			t.Errorf("signedFixed(%v, %d) = %q, want %q", tt.v, tt.prec, got, tt.signd)
		}
	}
}

// TestNumRange: a range whose ends print alike is one figure (a report's
// base temperature read "121 to 121 °C"); otherwise both ends, each
// rounded as num rounds (so 120.5 and 121.5 print 120 and 122). The
// expected ends are fmt's %.*f of each value, the reference of
// TestNumRoundsLikeFmt (with "-0.000" read as "0.000").
func TestNumRange(t *testing.T) {
	tests := []struct {
		lo, hi float64
		prec   int
		want   string
	}{
		{120.6, 121.4, 0, "121"},
		{117.2, 118.4, 0, "117 to 118"},
		{120.5, 121.5, 0, "120 to 122"}, // halves to even, as num
		{-0.0004, 0.0004, 3, "0.000"},   // no "-0.000 to 0.000"
		{-0.25, 0.25, 2, "-0.25 to 0.25"},
	}
	for _, tt := range tests {
		if got := numRange(tt.lo, tt.hi, tt.prec); got != tt.want {
			t.Errorf("numRange(%v, %v, %d) = %q, want %q", tt.lo, tt.hi, tt.prec, got, tt.want)
		}
	}
}

// TestSummaryAndVerdictAgree checks that the summary's concavity and the
// verdict's reason print the same digits for a stored value ending in a
// halfway digit (found on a steep cone: "-1.769" above "-1.768").
func TestSummaryAndVerdictAgree(t *testing.T) {
	g := &GeometryReport{DiameterMM: 200.5, Shape: "domed", ConcavityMM: -1.7685, ConcavityPctOfDiameter: -0.882, FlatnessMZMM: 1.5063, CoveragePct: 100, CutoffMM: 8}
	var b strings.Builder
	writeGeometrySummary(&b, g)
	v := verdict(DefaultJob(), &Report{Geometry: g})
	if !strings.Contains(b.String(), "concavity -1.768 mm") {
		t.Errorf("summary:\n%s\nwant concavity -1.768 mm", b.String())
	}
	if len(v.Reasons) == 0 || !strings.Contains(v.Reasons[0], "concavity -1.768 mm") {
		t.Errorf("verdict reasons %q, want concavity -1.768 mm", v.Reasons)
	}
}

// TestTableAndRingsRoundLikeReasons checks that the batch's terminal table
// and rings.csv round a stored halfway value as the verdict's reasons do
// (fmt's %.*f): the demo's domed frypan has concavity -0.3015 mm, which
// its reason prints as -0.301 mm and the table printed as -0.302.
func TestTableAndRingsRoundLikeReasons(t *testing.T) {
	c := -0.3015
	s := &Summary{Rows: []SummaryRow{{Path: "a.stl", Status: "ok", ConcavityMM: &c}}}
	if tab := s.Table(); !strings.Contains(tab, " -0.301 ") {
		t.Errorf("table\n%s\nwant concav_mm -0.301", tab)
	}
	var b bytes.Buffer
	if err := WriteRingsCSV(&b, []RingReport{{ContactPct: 73.315, MeanGapMM: 0.30155}}); err != nil {
		t.Fatal(err)
	}
	rec, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	// 73.315 is 73.31499… and 0.30155 is 0.30154999… in binary.
	if got := rec[1][4] + " " + rec[1][5]; got != "73.31 0.3015" {
		t.Errorf("contact_pct, mean_gap_mm = %s, want 73.31 0.3015", got)
	}
}
