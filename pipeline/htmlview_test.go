package pipeline

import (
	"bytes"
	"image"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gapflux/scan"
)

// TestIndexViewOrderLinksThumbs: failures and rejects come first (then out
// of tolerance, not run, ok; by path within a status), links are relative
// to OUT with each path segment escaped and lead to report.html, else to
// error.json, else nowhere, and a scan with a gap.png gets a thumbnail of
// the asked width.
func TestIndexViewOrderLinksThumbs(t *testing.T) {
	out := t.TempDir()
	rows := []SummaryRow{
		{Path: "a/ok.stl", Status: StatusOK},
		{Path: "a/out #1.stl", Status: StatusOut},
		{Path: "b/rejected.stl", Status: StatusRejected},
		{Path: "b/broken.stl", Status: StatusFailed, Error: "byte 80: truncated"},
		{Path: "a/later.stl", Status: StatusNotRun},
		{Path: "a/aa.stl", Status: StatusFailed, Error: "x"},
		{Path: "a/maybe.stl", Status: StatusInconclusive},
	}
	put := func(rel, name string, b []byte) {
		d := ScanOutDir(out, rel)
		if err := os.MkdirAll(d, 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(d, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	var pic bytes.Buffer
	if err := png.Encode(&pic, image.NewGray(image.Rect(0, 0, 400, 300))); err != nil {
		t.Fatal(err)
	}
	put("a/ok.stl", "report.html", nil)
	put("a/ok.stl", "gap.png", pic.Bytes())
	put("a/out #1.stl", "report.html", nil)
	put("b/broken.stl", "error.json", nil)
	put("b/rejected.stl", "gap.png", []byte("not a png"))
	p := indexView(out, NewSummary(rows))
	var names, links []string
	for _, r := range p.Rows {
		names = append(names, r.Name)
		links = append(links, r.Link)
		if len(r.Cells) != len(p.Columns) {
			t.Errorf("%s: %d cells for %d columns", r.Name, len(r.Cells), len(p.Columns))
		}
	}
	wantNames := []string{"a/aa.stl", "b/broken.stl", "b/rejected.stl", "a/out #1.stl", "a/maybe.stl", "a/later.stl", "a/ok.stl"}
	wantLinks := []string{"", ScansDir + "/b/broken.stl/error.json", "", ScansDir + "/a/out%20%231.stl/report.html", "", "", ScansDir + "/a/ok.stl/report.html"} // under OUT/scans (ScanOutDir)
	if strings.Join(names, "|") != strings.Join(wantNames, "|") {
		t.Errorf("order %q, want %q", names, wantNames)
	}
	if strings.Join(links, "|") != strings.Join(wantLinks, "|") {
		t.Errorf("links %q, want %q", links, wantLinks)
	}
	if p.Rows[1].Note != "byte 80: truncated" {
		t.Errorf("failed row note %q, want its error", p.Rows[1].Note)
	}
	for _, r := range p.Rows {
		switch {
		case r.Name == "a/ok.stl":
			cfg, err := png.DecodeConfig(bytes.NewReader(r.Thumb))
			if err != nil || cfg.Width != 192 || cfg.Height != 144 {
				t.Errorf("thumbnail: %v, %d×%d px, want 192×144", err, cfg.Width, cfg.Height)
			}
		case r.Thumb != nil:
			t.Errorf("%s: a thumbnail without a readable gap.png", r.Name)
		}
	}
	if p.Counts[0].Status != StatusFailed || p.Counts[0].N != 2 {
		t.Errorf("first count %+v, want 2 failed", p.Counts[0])
	}
	if c := p.Counts[3]; c.Status != StatusInconclusive || c.N != 1 {
		t.Errorf("fourth count %+v, want 1 inconclusive", c)
	}
}

// TestScanPageInconclusive: an inconclusive verdict heads the page as
// INCONCLUSIVE (it was shown as FAIL), with its reasons, and each figure
// with an evaluated uncertainty carries ± U and its 95 % interval.
func TestScanPageInconclusive(t *testing.T) {
	rep := &Report{
		Heat:        &HeatReport{LossPct: 8.649, Mode: "heater"},
		Verdict:     &VerdictReport{Result: ResultInconclusive, Reasons: []string{"loss_pct 8.6 %: straddles"}},
		Uncertainty: &UncertaintyReport{LossPct: &FigureUncertainty{Value: 8.649, U: 1.1, Low: 6.43389, High: 10.3427}},
	}
	p := scanPageView(&Result{Name: "pan.stl", Report: rep, Job: DefaultJob()}, nil)
	if p.Status != "inconclusive" || p.Headline != "INCONCLUSIVE" || len(p.Reasons) != 1 {
		t.Errorf("status %q headline %q reasons %q", p.Status, p.Headline, p.Reasons)
	}
	var note string
	for _, sec := range p.Sections {
		for _, f := range sec.Figures {
			if f.Label == "heating power lost" {
				note = f.Note
			}
		}
	}
	if want := "± 2.2 % (U, k = 2); 95 %: 6.4 to 10.3; limit 10.0 %"; note != want {
		t.Errorf("loss note %q, want %q", note, want)
	}
}

// TestCheckViewLimits formats a check's figure and limits in its unit.
func TestCheckViewLimits(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	tests := []struct {
		c              QualityCheck
		figure, limits string
	}{
		{QualityCheck{Name: "diameter_mm", Figure: f(7.87402), WarnBelow: f(100), WarnAbove: f(350), RejectBelow: f(20), RejectAbove: f(600)},
			"7.874 mm", "warn < 100 mm or > 350 mm; reject < 20 mm or > 600 mm"},
		{QualityCheck{Name: "rim_largest_gap_deg", Figure: f(3.158), WarnAbove: f(30)}, "3.158°", "warn > 30°"},
		{QualityCheck{Name: "face", Detail: "normals"}, "normals", ""},
		{QualityCheck{Name: "points_dropped_pct", RejectAbove: f(50)}, "—", "reject > 50 %"},
	}
	for _, tc := range tests {
		v := checkView(tc.c)
		if v.Figure != tc.figure || v.Limits != tc.limits {
			t.Errorf("%s: figure %q limits %q, want %q, %q", tc.c.Name, v.Figure, v.Limits, tc.figure, tc.limits)
		}
	}
}

// TestWriteFieldsOption: outputs.fields writes the compressed or the plain
// layout, or no file (removing one left by an earlier run).
func TestWriteFieldsOption(t *testing.T) {
	s := &scan.Surface{Nx: 2, Ny: 2, CellM: 1e-3, ZM: []float64{1e-6, 2e-6, 3e-6, 4e-6},
		State: []scan.CellState{scan.Measured, scan.Measured, scan.Filled, scan.Outside}}
	tests := []struct {
		mode string
		want string // in the file; "" = no file
	}{
		{FieldsCompressed, `compressor="vtkZLibDataCompressor"`},
		{FieldsPlain, `format="binary"`},
		{FieldsOff, ""},
	}
	dir := t.TempDir()
	for _, tc := range tests {
		res := &Result{Report: &Report{}, Form: s, Job: DefaultJob()}
		res.Job.Outputs.Fields = tc.mode
		if err := writeFields(dir, res); err != nil {
			t.Fatalf("%s: %v", tc.mode, err)
		}
		b, err := os.ReadFile(filepath.Join(dir, "fields.vti"))
		switch {
		case tc.want == "" && err == nil:
			t.Errorf("%s: fields.vti is still there", tc.mode)
		case tc.want != "" && (err != nil || !bytes.Contains(b, []byte(tc.want))):
			t.Errorf("%s: fields.vti lacks %q (%v)", tc.mode, tc.want, err)
		}
	}
	job := DefaultJob()
	job.Outputs.Fields = "zip"
	if err := job.Validate(); err == nil || !strings.Contains(err.Error(), "outputs.fields") {
		t.Errorf("outputs.fields = zip: err = %v, want an error naming the key", err)
	}
}

// TestReportHTMLIgnoresStalePictures: a rejected scan's page embeds no map
// left in its folder by an earlier run.
func TestReportHTMLIgnoresStalePictures(t *testing.T) {
	dir := t.TempDir()
	stale := []byte(`<svg xmlns="http://www.w3.org/2000/svg"><text>stale map</text></svg>`)
	for _, n := range []string{"gap.svg", "flux.svg", "rings.svg"} {
		if err := os.WriteFile(filepath.Join(dir, n), stale, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	res := &Result{Name: "pan.stl", Report: &Report{Quality: &QualityReport{Status: "reject",
		Checks: []QualityCheck{{Name: "diameter_mm", Status: "reject", Message: "try --units in"}}}}}
	if err := WriteOutputs(res, dir); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(b, []byte("data:image/svg")) {
		t.Error("the page embeds a picture this result did not draw")
	}
	if !bytes.Contains(b, []byte("REJECTED")) || !bytes.Contains(b, []byte("try --units in")) {
		t.Error("the page lacks the rejection and its reason")
	}
}
