package html

import (
	"bytes"
	"strings"
	"testing"
)

// TestWriteScan renders pages of each status and checks what a reader
// relies on: the headline, the reasons, names escaped, every picture
// inline, nothing fetched from elsewhere.
func TestWriteScan(t *testing.T) {
	svg := []byte(`<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"><rect width="10" height="10"/></svg>`)
	tests := []struct {
		name    string
		page    ScanPage
		want    []string
		notWant []string
	}{
		{"pass", ScanPage{Name: "line-a/pan.stl", Status: "pass", Headline: "PASS", PartNumber: "FP-1", Lot: "L2",
			Pictures: []Picture{{Title: "Gap", SVG: svg, Alt: "gap map"}},
			Sections: []Section{{Title: "Form", Figures: []Figure{{Label: "diameter", Value: "200.0", Unit: "mm"}}}},
			Quality:  Quality{Status: "ok", Checks: []Check{{Name: "diameter_mm", Status: "ok", Figure: "200 mm", Limits: "warn < 100 mm", Message: "plausible"}}}},
			[]string{`class="top status-pass"`, `<h1>line-a/pan.stl</h1>`, `part <b>FP-1</b> · lot <b>L2</b>`,
				`src="data:image/svg&#43;xml;base64,`, `<span class="v">200.0</span> <span class="u">mm</span>`, `<code>diameter_mm</code>`},
			[]string{`class="reasons"`, "http://", "https://", "<script src"}},
		{"fail with flagged figure", ScanPage{Name: "pan.stl", Status: "fail", Headline: "FAIL", Reasons: []string{"loss 13 % above 10 %"},
			Sections: []Section{{Title: "Heat", Figures: []Figure{{Label: "loss", Value: "13.0", Unit: "%", Flag: true}}}}},
			[]string{`class="top status-fail"`, `<li>loss 13 % above 10 %</li>`, `<div class="flag"><dt>loss</dt>`, "part not given"}, nil},
		{"rejected, hostile name", ScanPage{Name: `<script>alert(1)</script>.stl`, Status: "rejected", Headline: "REJECTED",
			Reasons: []string{"the base measures 7.874 mm across; try --units in"}},
			[]string{`&lt;script&gt;alert(1)&lt;/script&gt;.stl`, "The data-quality gate did not run", `class="top status-rejected"`},
			[]string{"<script>alert(1)"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var b bytes.Buffer
			if err := WriteScan(&b, &tc.page); err != nil {
				t.Fatal(err)
			}
			s := b.String()
			for _, w := range tc.want {
				if !strings.Contains(s, w) {
					t.Errorf("page lacks %q", w)
				}
			}
			for _, w := range tc.notWant {
				if strings.Contains(s, w) {
					t.Errorf("page holds %q", w)
				}
			}
		})
	}
}

// TestWriteIndex checks the table: one row per scan in the given order,
// sort keys on every cell, numeric columns typed, thumbnails inline, and
// a row whose cells do not match the columns is refused.
func TestWriteIndex(t *testing.T) {
	p := &IndexPage{Title: "night-01", Counts: []Count{{"failed", 1}, {"ok", 1}},
		Columns: []Column{{Key: "loss", Label: "loss %", Numeric: true}, {Key: "part", Label: "part"}},
		Rows: []IndexRow{
			{Name: "b/bad.stl", Status: "failed", Note: "byte 80: truncated", Cells: []Cell{{}, {Text: "P1", Sort: "P1"}}},
			{Name: "a/ok stl.stl", Status: "ok", Link: "a/ok%20stl.stl/report.html", Thumb: []byte{0x89, 'P', 'N', 'G'},
				Cells: []Cell{{Text: "3.3", Sort: "3.3"}, {Text: "P1", Sort: "P1"}}},
		}}
	var b bytes.Buffer
	if err := WriteIndex(&b, p); err != nil {
		t.Fatal(err)
	}
	s := b.String()
	for _, w := range []string{`<li class="status-failed"><b>1</b> failed</li>`, `data-type="num" data-key="loss" class="num">loss %</th>`,
		`<tr class="row status-failed" data-order="0">`, `<tr class="row status-ok" data-order="1">`,
		`href="a/ok%20stl.stl/report.html"`, `src="data:image/png;base64,iVBORw=="`, `<td data-sort="3.3" class="num">3.3</td>`, `<span class="dir">a/</span><a href="a/ok%20stl.stl/report.html">ok stl.stl</a>`,
		`<td data-sort="" class="num"></td>`, "byte 80: truncated", "<script>// Sort the index table"} {
		if !strings.Contains(s, w) {
			t.Errorf("index lacks %q", w)
		}
	}
	if strings.Index(s, "b/bad.stl") > strings.Index(s, "a/ok stl.stl") {
		t.Error("rows were reordered; the caller's order must stand")
	}
	p.Rows[0].Cells = p.Rows[0].Cells[:1]
	if err := WriteIndex(&b, p); err == nil || !strings.Contains(err.Error(), "b/bad.stl") {
		t.Errorf("a short row: err = %v, want an error naming it", err)
	}
}

// TestCellMapSVG: runs of interpolated cells become one rectangle each,
// the share of interpolated cells is counted over the base, and a map whose
// states do not fill its grid is an error.
func TestCellMapSVG(t *testing.T) {
	// 4×2 cells of 1 mm from (0, 0): row 0 = out, meas, filled, filled;
	// row 1 = filled, meas, meas, out.
	m := &CellMap{Nx: 4, Ny: 2, CellMM: 1, State: []uint8{0, 1, 2, 2, 2, 1, 1, 0}, SupportMM: [][2]float64{{1, 0}}}
	svg, err := m.SVG()
	if err != nil {
		t.Fatal(err)
	}
	s := string(svg)
	for _, w := range []string{
		`fill="url(#hatch)" shape-rendering="crispEdges" d="M1.5 -0.5h2v1h-2zM-0.5 0.5h1v1h-1z"`,
		`fill="#d9d9d9" shape-rendering="crispEdges" d="M0.5 -0.5h1v1h-1zM0.5 0.5h2v1h-2z"`,
		`<circle cx="1" cy="0"`, `transform="scale(1,-1)"`,
	} {
		if !strings.Contains(s, w) {
			t.Errorf("svg lacks %q:\n%s", w, s)
		}
	}
	if got, want := m.FilledPct(), 50.0; got != want { // 3 filled of 6 base cells
		t.Errorf("FilledPct = %v, want %v", got, want)
	}
	bad := &CellMap{Nx: 3, Ny: 2, CellMM: 1, State: make([]uint8, 5)}
	if _, err := bad.SVG(); err == nil {
		t.Error("5 states for 3×2 cells were accepted")
	}
	if (&CellMap{Nx: 1, Ny: 1, CellMM: 1, State: []uint8{0}}).FilledPct() != 0 {
		t.Error("FilledPct of a map without base cells is not 0")
	}
}
