package pipeline

import (
	"bytes"
	"context"
	"fmt"
	"image"
	"image/png"
	"io"
	"net/url"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	xdraw "golang.org/x/image/draw"

	"gapflux/pipeline/html"
	"gapflux/pipeline/quality"
	"gapflux/scan"
)

// writeReportHTML writes dir/report.html from res and the SVG pictures
// pics (gap, flux, rings) this result drew, as WriteOutputs kept them
// (never one left in dir by an earlier run).
func writeReportHTML(dir string, res *Result, pics map[string][]byte) error {
	page := scanPageView(res, pics)
	return WriteFileAtomic(filepath.Join(dir, "report.html"), func(w io.Writer) error {
		return html.WriteScan(w, page)
	})
}

// num formats v with prec decimals, rounded as fmt's %.*f rounds (the
// decimal nearest to v's binary value, an exact half to the even digit,
// the rule of IS 2:1960), so that the summary, the verdict's reasons and
// the pages print a figure alike, and a negative v that rounds to zero as
// zero ("0.000", not "-0.000").
func num(v float64, prec int) string {
	s := strconv.FormatFloat(v, 'f', prec, 64)
	if strings.HasPrefix(s, "-") && zeroDigits(s[1:]) {
		return s[1:]
	}
	return s
}

// numRange prints the range lo to hi with prec decimals as num does, or
// one figure when both ends print the same ("121", not "121 to 121").
func numRange(lo, hi float64, prec int) string {
	a, b := num(lo, prec), num(hi, prec)
	if a == b {
		return a
	}
	return a + " to " + b
}

// zeroDigits reports whether the unsigned decimal s reads zero ("0",
// "0.000").
func zeroDigits(s string) bool { return strings.Trim(s, "0.") == "" }

// scanPageView fills the report page of one scan; pics holds the SVG
// pictures by name (gap, flux, rings).
func scanPageView(res *Result, pics map[string][]byte) *html.ScanPage {
	rep := res.Report
	p := &html.ScanPage{Name: res.Name, PartNumber: res.PartNumber, Lot: res.Lot, Warnings: rep.Warnings}
	switch v := rep.Verdict; {
	case rep.Rejected():
		p.Status, p.Headline = "rejected", "REJECTED"
		for _, c := range rep.Quality.Checks {
			if c.Status == quality.Reject {
				p.Reasons = append(p.Reasons, c.Message)
			}
		}
		p.Reasons = append(p.Reasons, "the data-quality gate stopped the analysis before the rest pose and the heat solve: no verdict on the part")
	case v == nil:
		p.Status, p.Headline = "none", "NO VERDICT"
	case v.Pass:
		p.Status, p.Headline = "pass", "PASS"
	case v.Result == ResultInconclusive:
		p.Status, p.Headline, p.Reasons = "inconclusive", "INCONCLUSIVE", v.Reasons
	default:
		p.Status, p.Headline, p.Reasons = "fail", "FAIL", v.Reasons
	}
	if q := rep.Quality; q != nil {
		p.Quality.Status = q.Status
		for _, c := range q.Checks {
			p.Quality.Checks = append(p.Quality.Checks, checkView(c))
		}
	}
	p.Sections = figureSections(rep, res.Job.Tolerances)
	withUncertainty(p.Sections, rep.Uncertainty)
	p.Pictures = pictureViews(res, pics)
	if r := res.Raw; r != nil {
		p.CellMap = cellMapView(res, r)
	}
	p.Rings = ringTable(rep.Rings)
	p.Scenario = scenarioView(res.Job)
	p.Inputs = inputsView(rep.Input)
	return p
}

// checkView formats one data-quality check.
func checkView(c QualityCheck) html.Check {
	unit := ""
	for _, u := range []string{"_mm", "_pct", "_deg"} {
		if strings.HasSuffix(c.Name, u) {
			unit = map[string]string{"_mm": " mm", "_pct": " %", "_deg": "°"}[u]
		}
	}
	g := func(v float64) string { return strconv.FormatFloat(roundSig(v, 4), 'f', -1, 64) + unit }
	v := html.Check{Name: c.Name, Status: c.Status, Message: c.Message, Figure: "—"}
	if c.Figure != nil {
		v.Figure = g(*c.Figure)
	} else if c.Detail != "" {
		v.Figure = c.Detail
	}
	// Limits read "warn < 100 mm or > 350 mm; reject < 20 mm or > 600 mm".
	var lim []string
	for _, l := range []struct {
		what   string
		lo, hi *float64
	}{{"warn", c.WarnBelow, c.WarnAbove}, {"reject", c.RejectBelow, c.RejectAbove}} {
		var parts []string
		if l.lo != nil {
			parts = append(parts, "< "+g(*l.lo))
		}
		if l.hi != nil {
			parts = append(parts, "> "+g(*l.hi))
		}
		if parts != nil {
			lim = append(lim, l.what+" "+strings.Join(parts, " or "))
		}
	}
	v.Limits = strings.Join(lim, "; ")
	return v
}

// withUncertainty adds to the note of each figure the Monte Carlo
// evaluated (u may be nil: nothing is added) its expanded uncertainty
// U = 2u and 95 % interval, to two significant digits of U as in the
// printed summary.
func withUncertainty(secs []html.Section, u *UncertaintyReport) {
	if u == nil {
		return
	}
	byLabel := map[string]*FigureUncertainty{
		"concavity (+ dished)": u.figure(figConcavity), "flatness, minimum zone": u.figure(figFlatness),
		"rim drop when pressed": u.figure(figRock), "rim press that tips it": u.figure(figTipForce),
		"base in contact": u.figure(figContact), "heating power lost": u.figure(figLoss), "extra time": u.figure(figExtraTime),
	}
	for i := range secs {
		for j := range secs[i].Figures {
			f := &secs[i].Figures[j]
			fu := byLabel[f.Label]
			if fu == nil || f.Unit == "" {
				continue
			}
			dec := expandedDecimals(2 * fu.U)
			w := fmt.Sprintf("± %.*f %s (U, k = 2); 95 %%: %.*f to %.*f", dec, 2*fu.U, f.Unit, dec, fu.Low, dec, fu.High)
			if f.Note != "" {
				w += "; " + f.Note
			}
			f.Note = w
		}
	}
}

// figureSections lists the form, pose, gap, heat and heat-up figures with
// their units; a figure beyond its tolerance is flagged.
func figureSections(rep *Report, t ToleranceJob) []html.Section {
	type F = html.Figure
	var out []html.Section
	if g := rep.Geometry; g != nil {
		c := g.ConcavityPctOfDiameter
		out = append(out, html.Section{Title: "Form", Figures: []F{
			{Label: "shape", Value: g.Shape, Note: g.ShapeDetail},
			{Label: "diameter", Value: num(g.DiameterMM, 1), Unit: "mm"},
			{Label: "concavity (+ dished)", Value: num(g.ConcavityMM, 3), Unit: "mm", Note: num(c, 3) + " % of the diameter",
				Flag: c < t.ConcavityMinPct-shapeTolPct || c > t.ConcavityMaxPct+shapeTolPct},
			{Label: "flatness, minimum zone", Value: num(g.FlatnessMZMM, 3), Unit: "mm", Flag: g.FlatnessMZMM > t.FlatnessMZMaxMM},
			{Label: "flatness, least squares", Value: num(g.FlatnessLSMM, 3), Unit: "mm"},
			{Label: "coverage", Value: num(g.CoveragePct, 1), Unit: "%", Note: "of the base within 1.5 point spacings of a point; " + num(g.MeasuredCellsPct, 1) + " % of cells hold data"},
			{Label: "scanner noise", Value: num(g.NoiseUM, 1), Unit: "µm", Note: "filter cut-off " + num(g.CutoffMM, 1) + " mm, cell " + num(g.CellMM, 2) + " mm"},
		}})
	}
	if p := rep.Pose; p != nil {
		tip := F{Label: "rim press that tips it", Value: "none tips it", Note: "the support reaches the rim all round"}
		if p.TipForceN != nil {
			tip = F{Label: "rim press that tips it", Value: num(*p.TipForceN, 1), Unit: "N", Note: "light-touch limit " + num(p.TipForceLimitN, 1) + " N"}
		}
		rocks := "no"
		if p.Rocks {
			rocks = "yes"
		}
		out = append(out, html.Section{Title: "Rest on the hob", Figures: []F{
			{Label: "support", Value: p.Support, Note: strconv.Itoa(len(p.ContactPointsMM)) + " support points"},
			{Label: "support width", Value: num(p.SupportWidthMM, 1), Unit: "mm"},
			tip,
			{Label: "rocks", Value: rocks, Flag: p.Rocks && !t.RockingAllowed},
			{Label: "rim drop when pressed", Value: num(p.RockMM, 3), Unit: "mm", Note: "limit " + num(p.RockLimitMM, 3) + " mm"},
			{Label: "tilt", Value: num(p.TiltDeg, 3), Unit: "°"},
			{Label: "load (pan and water)", Value: num(p.WeightN, 1), Unit: "N"},
		}})
	}
	if g := rep.Gap; g != nil {
		out = append(out, html.Section{Title: "Gap", Figures: []F{
			{Label: "base in contact", Value: num(g.ContactAreaPct, 1), Unit: "%", Note: "contact band " + num(g.ContactBandUM, 1) + " µm"},
			{Label: "mean gap", Value: num(g.MeanGapMM, 3), Unit: "mm"},
			{Label: "largest gap", Value: num(g.MaxGapMM, 3), Unit: "mm"},
		}})
	}
	if h := rep.Heat; h != nil {
		fs := []F{
			{Label: "power into the pan", Value: num(h.PowerW, 0), Unit: "W", Note: "flat twin " + num(h.FlatPowerW, 0) + " W"},
			{Label: "heating power lost", Value: num(h.LossPct, 1), Unit: "%", Note: "limit " + num(t.LossMaxPct, 1) + " %", Flag: h.LossPct > t.LossMaxPct},
			{Label: "mean flux", Value: num(h.MeanFluxKWM2, 1), Unit: "kW/m²", Note: "flat twin " + num(h.FlatMeanFluxKWM2, 1) + " kW/m²"},
			{Label: "across the gap: gas / radiation", Value: num(h.GasPct, 1) + " / " + num(h.RadiationPct, 1), Unit: "%"},
			{Label: "base temperature", Value: numRange(h.BaseMinC, h.BaseMaxC, 0), Unit: "°C", Note: h.Mode + " mode, water at " + num(h.WaterC, 0) + " °C"},
		}
		if h.GlassMaxC != nil && h.FlatGlassMaxC != nil {
			fs = append(fs, F{Label: "glass top, hottest", Value: num(*h.GlassMaxC, 0), Unit: "°C", Note: "flat twin " + num(*h.FlatGlassMaxC, 0) + " °C"})
		}
		if h.HeaterDutyPct != nil && h.FlatHeaterDutyPct != nil {
			fs = append(fs, F{Label: "heater duty", Value: num(*h.HeaterDutyPct, 0), Unit: "%", Note: "flat twin " + num(*h.FlatHeaterDutyPct, 0) + " %"})
		}
		out = append(out, html.Section{Title: "Heat", Figures: fs})
	}
	if h := rep.Heatup; h != nil {
		out = append(out, html.Section{Title: "Heat-up", Figures: []F{
			{Label: "water", Value: num(h.WaterKg, 2) + " kg, " + num(h.FromC, 0) + " → " + num(h.ToC, 0), Unit: "°C"},
			{Label: "time", Value: num(h.TimeS, 0), Unit: "s", Note: "flat twin " + num(h.FlatTimeS, 0) + " s"},
			{Label: "extra time", Value: num(h.ExtraTimePct, 1), Unit: "%"},
			{Label: "extra energy", Value: num(h.ExtraEnergyKJ, 1), Unit: "kJ", Note: "quasi-steady estimate"},
		}})
	}
	return out
}

// pictureViews lists the SVG maps and chart that exist.
func pictureViews(res *Result, pics map[string][]byte) []html.Picture {
	var out []html.Picture
	for _, p := range []struct {
		key string
		pic html.Picture
	}{
		{"gap", html.Picture{Title: "Gap", Alt: "map of the gap under " + res.Name,
			Caption: "Gap between base and hob at rest, mm; circle: heating zone; rings: support points."}},
		{"flux", html.Picture{Title: "Heat flux", Alt: "map of the heat flux into " + res.Name,
			Caption: "Heat flux into the pan, kW/m²; hatched cells pass heat back into the glass."}},
		{"rings", html.Picture{Title: "Rings", Alt: "heat flux and gap by ring for " + res.Name,
			Caption: "Flux and gap by ring against the flat twin."}},
	} {
		if b := pics[p.key]; b != nil {
			p.pic.SVG = b
			out = append(out, p.pic)
		}
	}
	return out
}

// cellMapView maps the raw grid's cell states, the base, the zone and the
// support points.
func cellMapView(res *Result, r *scan.Surface) *html.CellMap {
	m := &html.CellMap{Nx: r.Nx, Ny: r.Ny, X0MM: r.X0M * 1e3, Y0MM: r.Y0M * 1e3, CellMM: r.CellM * 1e3,
		State: make([]uint8, len(r.State)), BaseRadiusMM: res.RadiusM * 1e3,
		ZoneDiameterMM: res.ZoneDiameterM * 1e3, ZoneCentreMM: [2]float64{res.ZoneCentreM[0] * 1e3, res.ZoneCentreM[1] * 1e3}}
	for k, s := range r.State {
		switch s {
		case scan.Measured:
			m.State[k] = html.CellMeasured
		case scan.Filled:
			m.State[k] = html.CellFilled
		}
	}
	if res.Pose != nil {
		for _, c := range res.Pose.ContactPointsM {
			m.SupportMM = append(m.SupportMM, [2]float64{c[0] * 1e3, c[1] * 1e3})
		}
	}
	return m
}

// ringTable formats the ring table.
func ringTable(rings []RingReport) html.Table {
	t := html.Table{Columns: []string{"ring", "r mm", "contact %", "mean gap mm", "max gap mm", "h W/(m²·K)",
		"flux kW/m²", "flat flux kW/m²", "power W", "lost W"}}
	for i, r := range rings {
		t.Rows = append(t.Rows, []string{strconv.Itoa(i + 1), num(r.RInMM, 0) + "–" + num(r.ROutMM, 0), num(r.ContactPct, 1),
			num(r.MeanGapMM, 3), num(r.MaxGapMM, 3), num(r.HWM2K, 0), num(r.FluxKWM2, 1), num(r.FlatFluxKWM2, 1),
			num(r.PowerW, 1), num(r.PowerLostW, 1)})
	}
	return t
}

// scenarioView lists the job's key values: hob, pan, load, interface,
// tolerances and grid.
func scenarioView(j Job) []html.Figure {
	type F = html.Figure
	var layers []string
	for _, l := range j.Pan.Layers {
		layers = append(layers, l.Material+" "+num(l.ThicknessMM, 1)+" mm")
	}
	hob := F{Label: "hob", Value: num(j.Hob.TemperatureC, 0) + " °C top (temperature mode)"}
	if j.Hob.Mode == "heater" {
		hob = F{Label: "hob", Value: num(j.Hob.HeaterPowerW, 0) + " W zone of " + num(j.Hob.ZoneDiameterMM, 0) + " mm"}
	}
	rock := "not allowed"
	if j.Tolerances.RockingAllowed {
		rock = "allowed"
	}
	return []F{
		hob,
		{Label: "hob top", Value: j.Hob.Material + " " + num(j.Hob.ThicknessMM, 1) + " mm"},
		{Label: "base layers (hob side first)", Value: strings.Join(layers, ", ")},
		{Label: "pan mass", Value: num(j.Pan.MassKg, 2), Unit: "kg"},
		{Label: "water", Value: num(j.Water.MassKg, 2) + " kg, " + num(j.Water.FromC, 0) + " → " + num(j.Water.ToC, 0) + " °C (steady " + num(j.Water.SteadyC, 0) + " °C, " + j.Water.Side + ")"},
		{Label: "interface model", Value: j.Interface.Model + ", Sq " + num(j.Interface.PanSqUM, 2) + " / " + num(j.Interface.HobSqUM, 2) + " µm"},
		{Label: "pan offset from zone centre", Value: num(j.Pan.OffsetMM[0], 1) + ", " + num(j.Pan.OffsetMM[1], 1), Unit: "mm"},
		{Label: "concavity limits", Value: num(j.Tolerances.ConcavityMinPct, 2) + " to " + num(j.Tolerances.ConcavityMaxPct, 2), Unit: "% of diameter"},
		{Label: "flatness limit (minimum zone)", Value: num(j.Tolerances.FlatnessMZMaxMM, 2), Unit: "mm"},
		{Label: "loss limit", Value: num(j.Tolerances.LossMaxPct, 1), Unit: "%"},
		{Label: "rocking", Value: rock},
		{Label: "grid cell, filter cut-off", Value: num(j.Grid.CellMM, 2) + ", " + num(j.Grid.CutoffMM, 1), Unit: "mm"},
	}
}

// inputsView lists the input files and hashes.
func inputsView(in ReportInput) []html.Figure {
	file := func(label string, f FileReport) html.Figure {
		pts := strconv.Itoa(f.Points) + " points"
		if f.Triangles > 0 {
			pts += ", " + strconv.Itoa(f.Triangles) + " triangles"
		}
		return html.Figure{Label: label, Value: f.Path + " (" + f.Format + ", " + pts + ", unit " + f.Unit + " from " + f.UnitSource + ")"}
	}
	out := []html.Figure{file("pan scan", in.Pan), {Label: "pan SHA-256", Value: in.Pan.SHA256}}
	if in.Hob != nil {
		out = append(out, file("hob scan", *in.Hob))
	}
	return append(out, html.Figure{Label: "job SHA-256", Value: in.JobSHA256})
}

// indexOrder ranks statuses for the index: failures and rejects first.
var indexOrder = map[string]int{StatusFailed: 0, StatusRejected: 1, StatusOut: 2, StatusInconclusive: 3, StatusNotRun: 4, StatusOK: 5}

// WriteIndexHTML writes out/index.html for a batch summary: one row per
// scan (failures and rejects first, then by path), with a thumbnail of its
// gap map and a link to its report.html (or error.json), both found under
// ScanOutDir(out, path); under the table, the control charts of the batch's
// part numbers drawn from the history database tr names (trendView).
func WriteIndexHTML(ctx context.Context, out string, s *Summary, tr IndexTrend) error {
	page := indexView(out, s)
	page.Trend = trendView(ctx, out, tr, s)
	return WriteFileAtomic(filepath.Join(out, "index.html"), func(w io.Writer) error {
		return html.WriteIndex(w, page)
	})
}

// indexColumns are the index table's columns after the scan and status.
var indexColumns = []html.Column{
	{Key: "part", Label: "part"}, {Key: "lot", Label: "lot"}, {Key: "quality", Label: "quality"},
	{Key: "shape", Label: "shape"}, {Key: "diameter", Label: "diameter mm", Numeric: true},
	{Key: "concavity", Label: "concavity mm", Numeric: true}, {Key: "flatness", Label: "flatness mm", Numeric: true},
	{Key: "rocks", Label: "rocks"}, {Key: "contact", Label: "contact %", Numeric: true},
	{Key: "gap", Label: "mean gap mm", Numeric: true}, {Key: "loss", Label: "loss %", Numeric: true},
	{Key: "extra", Label: "extra time %", Numeric: true},
}

func indexView(out string, s *Summary) *html.IndexPage {
	rows := append([]SummaryRow(nil), s.Rows...)
	sort.SliceStable(rows, func(i, j int) bool {
		a, b := indexOrder[rows[i].Status], indexOrder[rows[j].Status]
		if a != b {
			return a < b
		}
		return rows[i].Path < rows[j].Path
	})
	p := &html.IndexPage{Title: filepath.Base(out), Columns: indexColumns, Notes: []string{
		"failed: the analysis stopped with an error (the note says why); rejected: the data-quality gate found the scan unfit for a verdict; out-of-tolerance: analysed, outside the job's limits; inconclusive: a limit lies within the 95 % interval of its figure (guarded acceptance); not-run: the batch was interrupted first.",
		"Click a column heading to sort by it, again to reverse. Each scan's page holds its figures, maps and data-quality checks.",
	}}
	for _, st := range []string{StatusFailed, StatusRejected, StatusOut, StatusInconclusive, StatusNotRun, StatusOK} {
		p.Counts = append(p.Counts, html.Count{Status: st, N: s.Counts[st]})
	}
	cell := func(v *float64, prec int) html.Cell {
		t := fnum(v, prec)
		return html.Cell{Text: t, Sort: t}
	}
	text := func(t string) html.Cell { return html.Cell{Text: t, Sort: t} }
	for _, r := range rows {
		dir := ScanOutDir(out, r.Path)
		// The note is the row's reason in a few words (the summary's reason
		// column); the page behind the link has the full text.
		ir := html.IndexRow{Name: r.Path, Status: r.Status, Note: r.ShortReason(), Thumb: thumbnail(filepath.Join(dir, "gap.png"), 192)}
		for _, target := range []string{"report.html", "error.json"} {
			if _, err := os.Stat(filepath.Join(dir, target)); err == nil {
				ir.Link = relLink(out, filepath.Join(dir, target))
				break
			}
		}
		ir.Cells = []html.Cell{text(r.PartNumber), text(r.Lot), text(r.Quality), text(r.Shape),
			cell(r.DiameterMM, 1), cell(r.ConcavityMM, 3), cell(r.FlatnessMZMM, 3), text(fbool(r.Rocks)),
			cell(r.ContactAreaPct, 1), cell(r.MeanGapMM, 3), cell(r.LossPct, 1), cell(r.ExtraTimePct, 1)}
		p.Rows = append(p.Rows, ir)
	}
	return p
}

// relLink returns target relative to the folder base as a URL path with
// every segment escaped ("" when target is not under base).
func relLink(base, target string) string {
	rel, err := filepath.Rel(base, target)
	if err != nil || rel == ".." || strings.HasPrefix(rel, ".."+string(filepath.Separator)) {
		return ""
	}
	segs := strings.Split(filepath.ToSlash(rel), "/")
	for i, s := range segs {
		segs[i] = url.PathEscape(s)
	}
	return strings.Join(segs, "/")
}

// thumbnail returns the PNG at path scaled to width px (bilinear), or nil
// when it is missing or unreadable (the index then shows no picture).
func thumbnail(path string, width int) []byte {
	f, err := os.Open(path)
	if err != nil {
		return nil
	}
	defer f.Close()
	src, err := png.Decode(f)
	if err != nil {
		return nil
	}
	b := src.Bounds()
	if b.Dx() <= 0 || b.Dy() <= 0 {
		return nil
	}
	h := max(1, width*b.Dy()/b.Dx())
	dst := image.NewNRGBA(image.Rect(0, 0, width, h))
	xdraw.CatmullRom.Scale(dst, dst.Bounds(), src, b, xdraw.Src, nil)
	var buf bytes.Buffer
	if err := (&png.Encoder{CompressionLevel: png.BestCompression}).Encode(&buf, dst); err != nil {
		return nil
	}
	return buf.Bytes()
}
