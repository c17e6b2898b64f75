package pipeline

import (
	"bytes"
	"context"
	"encoding/base64"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"time"

	"gapflux/pipeline/history"
	"gapflux/pipeline/html"
	"gapflux/pipeline/spc"
	"gapflux/pipeline/trend"
)

// lossAnalyzer is fakeAnalyzer with a heat section: loss_pct is the scan's
// first byte mod 7 ('a' 97 → 6 %, 'c' 99 → 1 %, 'd' 100 → 2 %).
func lossAnalyze(ctx context.Context, t ScanTask, sha, jobSHA string) (*Report, error) {
	rep, err := (&fakeAnalyzer{}).analyze(ctx, t, sha, jobSHA)
	if err != nil {
		return nil, err
	}
	b, err := os.ReadFile(t.Path)
	if err != nil {
		return nil, err
	}
	rep.Heat = &HeatReport{LossPct: float64(b[0] % 7)}
	rep.Verdict = verdict(t.Job, rep)
	return rep, WriteOutputs(&Result{Report: rep, Name: t.Rel}, t.OutDir)
}

var trendImg = regexp.MustCompile(`<figure class="chart" data-part="([^"]*)"><img src="data:image/svg&#43;xml;base64,([^"]+)"`)

// readIndex returns index.html of out and the decoded SVG chart of each
// part it shows.
func readIndex(t *testing.T, out string) (string, map[string]string) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(out, "index.html"))
	if err != nil {
		t.Fatal(err)
	}
	charts := map[string]string{}
	for _, m := range trendImg.FindAllStringSubmatch(string(b), -1) {
		svg, err := base64.StdEncoding.DecodeString(strings.ReplaceAll(m[2], "&#43;", "+")) // html/template escapes '+' in attributes
		if err != nil {
			t.Fatalf("chart of %s: %v", m[1], err)
		}
		charts[m[1]] = string(svg)
	}
	return string(b), charts
}

// Two nights over a folder whose scan of part P-1 changed in between: the
// first night's index has one point of P-1 (no chart yet); the second's
// charts both, the second named as that night's, with the limits of the
// two (centre (6 + 2)/2 = 4 %, σ̂ = |6 − 2|/1.128 = 3.546 %, limits
// 4 ∓ 3σ̂ = −6.638 and 14.64 %; Montgomery 2013 §6.4, the formulas of
// package spc).
func TestIndexTrendTwoNights(t *testing.T) {
	manifest := "path,part_number,lot\na.xyz,P-1,L1\nbroken.xyz,P-2,L1\n"
	dir := makeScanDir(t, map[string]string{"manifest.csv": manifest, "a.xyz": "a1", "b.xyz": "c1", "broken.xyz": "bad"})
	out := t.TempDir()
	run := func() {
		t.Helper()
		res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 2, Analyze: lossAnalyze})
		if err != nil || res.HistoryErr != nil {
			t.Fatalf("batch: %v; history: %v", err, res.HistoryErr)
		}
	}
	run()
	page, charts := readIndex(t, out)
	for _, want := range []string{`id="trend"`, "Trend of <code>loss_pct</code> by part number", "Western Electric rules 1–4",
		"first 20 points", "From the history database history.sqlite (in this folder), with", "Too few points for a chart:</p><ul class=\"few\"><li>part P-1: 1 point (this batch&#39;s: point 1); a chart needs at least 2.</li>"} {
		if !strings.Contains(page, want) {
			t.Errorf("night 1: index lacks %q", want)
		}
	}
	if len(charts) != 0 {
		t.Errorf("night 1: %d charts, want none (one point)", len(charts))
	}
	if err := os.WriteFile(filepath.Join(dir, "a.xyz"), []byte("d2"), 0o644); err != nil {
		t.Fatal(err)
	}
	run()
	page, charts = readIndex(t, out)
	// P-2's only scan failed: it is in the history, with no value to chart.
	if w := "part P-2: no point yet; none of its scans has a stored loss_pct"; !strings.Contains(page, w) {
		t.Errorf("night 2: index lacks %q", w)
	}
	want := "2 points of loss_pct (this batch&#39;s: point 2, ringed on the chart); limits from points 1–2, provisional until 20 points: centre 4 %, limits -6.638 to 14.64 %"
	if !strings.Contains(page, want) {
		t.Errorf("night 2: index lacks %q", want)
	}
	svg, ok := charts["P-1"]
	if !ok || len(charts) != 1 {
		t.Fatalf("night 2: charts of %v, want P-1 only", keys(charts))
	}
	// The chart's title, the labels of its two points' ticks and the
	// legend of the ring on this night's point (spc draws it only when a
	// point is ringed; TestWriteMarks there counts the rings).
	for _, w := range []string{"<svg", "part P-1: loss_pct: individuals", ">1</text>", ">2</text>", "CL 4", "rings: this batch&#39;s points"} {
		if !strings.Contains(svg, w) {
			t.Errorf("night 2: chart lacks %q", w)
		}
	}
	if strings.Contains(svg, ">3</text>") {
		t.Error("night 2: chart has a third point")
	}
	// This night's point 2 is ringed on the individuals panel and so is
	// moving range 2 (|x2 − x1|, which involves it) on the moving-range
	// panel: two rings in the ring ink (spc's inkMark, #104090), one
	// after the moving-range panel's title.
	const ring = "stroke:#104090;"
	cut := strings.Index(svg, ">moving range</text>")
	if cut < 0 {
		t.Fatal("night 2: no moving-range panel")
	}
	if top, bottom := strings.Count(svg[:cut], ring), strings.Count(svg[cut:], ring); top != 1 || bottom != 1 {
		t.Errorf("night 2: %d rings on the individuals and %d on the moving ranges, want 1 and 1", top, bottom)
	}
	if w := "rings: moving ranges ending at this batch&#39;s points"; !strings.Contains(svg, w) {
		t.Errorf("night 2: chart lacks %q", w)
	}
}

func keys(m map[string]string) []string {
	var k []string
	for s := range m {
		k = append(k, s)
	}
	return k
}

// Without a usable history, or with nothing to chart, the section is one
// line that says why.
func TestTrendViewOneLine(t *testing.T) {
	s := NewSummary([]SummaryRow{{Path: "a.stl", Status: StatusOK, PartNumber: "P"}})
	noParts := NewSummary([]SummaryRow{{Path: "a.stl", Status: StatusOK}})
	missing := filepath.Join(t.TempDir(), "none.sqlite")
	tests := []struct {
		name string
		tr   IndexTrend
		s    *Summary
		want string
	}{
		{"history not written", IndexTrend{Note: "No trend chart: this batch's rows could not be added"}, s, "could not be added"},
		{"merge", IndexTrend{Note: mergeHistoryNote}, s, "merge adds nothing to a history database"},
		{"no note", IndexTrend{}, s, "no history database was written"},
		{"no part numbers", IndexTrend{History: missing}, noParts, "no scan of this batch has a part number"},
		{"unreadable history", IndexTrend{History: missing}, s, "the history database could not be read"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			v := trendView(context.Background(), t.TempDir(), tc.tr, tc.s)
			if len(v.Lines) != 1 || !strings.Contains(v.Lines[0], tc.want) || len(v.Charts) != 0 {
				t.Errorf("lines %q, %d charts; want one line with %q", v.Lines, len(v.Charts), tc.want)
			}
		})
	}
}

// compare.html from a made-up comparison: the turn, the permanent set with
// its uncertainty, every figure and ring, both maps inline, and a figure
// without a value shown as a dash.
func TestComparePageView(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	c := &Comparison{Schema: SchemaCompare, A: FileReport{Path: "a.ply", Format: "ply", SHA256: "aa"}, B: FileReport{Path: "b.ply", SHA256: "bb"},
		Alignment:      AlignmentFacts{AngleDeg: f(37.004), AngleDefined: true, AnglePeriodDeg: f(180), SwingUM: 40, CommonCells: 900},
		PermanentSetMM: 0.1004, PermanentSetUMM: f(0.0071), HeightDiff: DiffFacts{RMSUM: 28.91},
		Figures: []FigureChange{{Figure: "concavity_mm", A: f(0.3), B: f(0.4004), Change: f(0.1004), UChange: f(0.0071)},
			{Figure: "tip_force_n", A: f(3)}},
		Rings:    []RingChange{{RInMM: 0, ROutMM: 10, MeanGapChangeMM: -0.02}, {RInMM: 10, ROutMM: 20, FluxChangeKWM2: 1.5}},
		Warnings: []string{"w1"}}
	svg := []byte(`<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"/>`)
	r := &CompareResult{Comparison: c, Inputs: [2]string{"x/a.ply", "x/b.ply"}}
	p := comparePageView(r, map[string][]byte{"height_change": svg, "gap_change": svg})
	var b strings.Builder
	if err := html.WriteCompare(&b, p); err != nil {
		t.Fatal(err)
	}
	got := b.String()
	for _, w := range []string{`<span id="name-b">x/b.ply</span>`, `<b id="name-a">x/a.ply</b>`, "turn of B about the base axis</dt><dd><span class=\"v\">37.00</span> <span class=\"u\">°</span>",
		"known modulo 180°", "&#43;0.1004 ± 0.0071", "<td><code>concavity_mm</code></td><td class=\"num\">0.3</td><td class=\"num\">0.4004</td><td class=\"num chg\">&#43;0.1004</td><td class=\"num\">0.0071</td>",
		"<td><code>tip_force_n</code></td><td class=\"num\">3</td><td class=\"num\">—</td>", "<li>w1</li>", "28.9"} {
		if !strings.Contains(got, w) {
			t.Errorf("compare.html lacks %q", w)
		}
	}
	if n := strings.Count(got, `src="data:image/svg&#43;xml;base64,`); n != 2 {
		t.Errorf("%d inline maps, want 2", n)
	}
	if n := strings.Count(got, "<tr><td class=\"num\">"); n != len(c.Rings) {
		t.Errorf("%d ring rows, want %d", n, len(c.Rings))
	}
	if strings.Contains(got, "http://") || strings.Contains(got, "https://") {
		t.Error("compare.html refers to the network")
	}
}

// A point far out is listed under its chart with the rules it breaks and
// named as this batch's: values 1, 1.1, 0.9, 1, 1.05, 1, 0.95, 1.02, 10 give
// (all 9 in the provisional baseline) centre 18.02/9 = 2.002, mean moving
// range 9.6/8 = 1.2, UCL 2.002 + 3·1.2/1.128 = 5.194 and moving-range limit
// 3.267·1.2 = 3.920 (Montgomery 2013 §6.4): point 9 breaks WE1 and its
// moving range 8.98 the MR limit, and point 8 completes eight points below
// the centre line (WE4); no other point is flagged.
func TestPartChartViewFlags(t *testing.T) {
	vals := []float64{1, 1.1, 0.9, 1, 1.05, 1, 0.95, 1.02, 10}
	pc := trend.PartChart{Part: "P", Figure: "loss_pct"}
	started := time.Date(2026, 11, 30, 22, 0, 0, 0, time.UTC)
	for i, v := range vals {
		run := int64(1 + i/3)
		pc.Points = append(pc.Points, history.Point{RunID: run, Started: started.Add(time.Duration(run) * 24 * time.Hour),
			Path: fmt.Sprintf("l/s%d.stl", i+1), Lot: "L", Status: StatusOK, Value: v})
	}
	var err error
	if pc.Chart, err = spc.Individuals(vals, trend.DefaultBaseline); err != nil {
		t.Fatal(err)
	}
	v := partChartView(&pc, 3)
	want := []string{"point 8: l/s8.stl, lot L = 1.02 %, batch of 2026-12-03 22:00 UTC: WE4", "point 9: l/s9.stl, lot L = 10 %, batch of 2026-12-03 22:00 UTC: WE1, MR"}
	if !slices.Equal(v.Flagged, want) {
		t.Errorf("flagged %q, want %q", v.Flagged, want)
	}
	for _, w := range []string{"9 points of loss_pct (this batch's: point 7, 8, 9, ringed on the chart)", "limits from points 1–9, provisional until 20 points",
		"centre 2.002 %", "limits -1.189 to 5.194 %", "moving-range limit 3.92 %"} {
		if !strings.Contains(v.Caption, w) {
			t.Errorf("caption %q lacks %q", v.Caption, w)
		}
	}
	if !bytes.HasPrefix(v.SVG, []byte("<?xml")) || !bytes.Contains(v.SVG, []byte("<svg")) {
		t.Errorf("no SVG chart (%d bytes)", len(v.SVG))
	}
}
