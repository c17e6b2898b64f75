package pipeline

import (
	"bytes"
	"context"
	"fmt"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"gapflux/pipeline/history"
	"gapflux/pipeline/html"
	"gapflux/pipeline/spc"
	"gapflux/pipeline/trend"
)

// IndexTrend says what the trend section of a batch's index.html is drawn
// from.
type IndexTrend struct {
	// History is the history database to chart; "" when there is none,
	// and Note then says why in one line.
	History string
	// RunID is the batch's run in History: its points are named as this
	// batch's. 0 when unknown.
	RunID int64
	Note  string
}

// trendView builds the index's trend section: the individuals and
// moving-range chart of trend.DefaultFigure (loss_pct) for each part number
// the batch's rows carry, from the whole history of that part in
// tr.History (trend.Load: ISO 7870-2 individuals chart, limits from the
// first trend.DefaultBaseline points, Western Electric rules 1-4).
func trendView(ctx context.Context, out string, tr IndexTrend, s *Summary) html.Trend {
	fig := trend.DefaultFigure
	v := html.Trend{Figure: fig}
	// The page names a database in its own folder relatively, so that it
	// still reads right when the folder is moved.
	shown := tr.History
	if rel, err := filepath.Rel(out, tr.History); err == nil && out != "" && filepath.IsLocal(rel) {
		shown = filepath.ToSlash(rel) + " (in this folder)"
	}
	if tr.History == "" {
		note := tr.Note
		if note == "" {
			note = "No trend chart: no history database was written for this output."
		}
		v.Lines = []string{note}
		return v
	}
	var parts []string
	for _, r := range s.Rows {
		if r.PartNumber != "" {
			parts = append(parts, r.PartNumber)
		}
	}
	slices.Sort(parts)
	parts = slices.Compact(parts)
	if len(parts) == 0 {
		v.Lines = []string{"No trend chart: no scan of this batch has a part number (give them in the batch's manifest.csv, column part_number); the history is in " + shown + "."}
		return v
	}
	charts, err := loadCharts(context.WithoutCancel(ctx), tr.History, fig, parts)
	if err != nil {
		v.Lines = []string{fmt.Sprintf("No trend chart: the history database could not be read (%v); gapflux trend --history %s draws the charts.", err, tr.History)}
		return v
	}
	byPart := map[string]*trend.PartChart{}
	for i := range charts {
		byPart[charts[i].Part] = &charts[i]
	}
	rules := make([]string, len(spc.Rules))
	for i, r := range spc.Rules {
		rules[i] = r.String() + " " + r.Describe()
	}
	v.Lines = []string{
		"From the history database " + shown + ", with this batch's rows: one individuals and moving-range (I-MR) control chart per part number of this batch (ISO 7870-2 Shewhart chart), one point per scan that passed or was out of tolerance, in the order measured.",
		fmt.Sprintf("Baseline window: the centre line and limits of each part come from its first %d points (X̄ ± 3σ̂ with σ̂ = mean moving range / %.3f; moving-range limit %.3f × mean moving range, lower limit 0); a part with fewer points has provisional limits from all it has. The lower limit of %s is not clipped at 0: a base can come out slightly ahead of its flat twin, so %s can be a little below 0.", trend.DefaultBaseline, spc.D2, spc.D4, fig, fig),
		"Run rules: Western Electric rules 1–4 on the individuals (" + strings.Join(rules, "; ") + "), and moving ranges above their limit (MR). Points out of control are marked with a square and listed under the chart; this batch's points, and the moving ranges ending at them, are ringed.",
	}
	for _, p := range parts {
		pc := byPart[p]
		switch {
		case pc == nil || len(pc.Points) == 0:
			v.Few = append(v.Few, "part "+p+": no point yet; none of its scans has a stored "+fig+" (only scans that passed or were out of tolerance are charted).")
		case pc.Chart == nil:
			v.Few = append(v.Few, fmt.Sprintf("part %s: %d point (%s); a chart needs at least 2.", p, len(pc.Points), pointsOf(pc, tr.RunID)))
		default:
			v.Charts = append(v.Charts, partChartView(pc, tr.RunID))
		}
	}
	return v
}

// pointsOf names the points of pc that the run runID added.
func pointsOf(pc *trend.PartChart, runID int64) string {
	var mine []string
	for i, m := range batchPoints(pc, runID) {
		if m {
			mine = append(mine, strconv.Itoa(i+1))
		}
	}
	if len(mine) == 0 {
		return "none from this batch: its scans were recorded before, or have no " + pc.Figure
	}
	return "this batch's: point " + strings.Join(mine, ", ")
}

// loadCharts loads the charts of figure for those of parts the history db
// holds (a shared database may hold many more parts than one batch).
func loadCharts(ctx context.Context, db, figure string, parts []string) ([]trend.PartChart, error) {
	st, err := history.OpenExisting(ctx, db)
	if err != nil {
		return nil, err
	}
	known, err := st.Parts(ctx)
	st.Close()
	if err != nil {
		return nil, err
	}
	var chosen []string
	for _, p := range parts {
		if slices.Contains(known, p) {
			chosen = append(chosen, p)
		}
	}
	if len(chosen) == 0 {
		return nil, nil
	}
	return trend.Load(ctx, trend.Options{History: db, Parts: chosen, Figure: figure})
}

// partChartView captions the chart of one part with at least 2 points and
// lists its flagged points.
func partChartView(pc *trend.PartChart, runID int64) html.TrendChart {
	unit := figureUnit(pc.Figure)
	tonight := pointsOf(pc, runID)
	if slices.Contains(batchPoints(pc, runID), true) {
		tonight += ", ringed on the chart"
	}
	v := html.TrendChart{Part: pc.Part, Alt: "control chart of " + pc.Figure + " for part " + pc.Part}
	c := pc.Chart
	g := func(x float64) string { return strconv.FormatFloat(roundSig(x, 4), 'f', -1, 64) }
	prov := ""
	if c.Provisional {
		prov = fmt.Sprintf(", provisional until %d points", trend.DefaultBaseline)
	}
	lcl := g(c.LCL)
	if c.Clipped {
		lcl = fmt.Sprintf("0 (clipped, %s cannot be negative; X̄ − 3σ̂ = %s%s)", pc.Figure, g(c.LCLRaw), unit)
	}
	v.Caption = fmt.Sprintf("%d points of %s (%s); limits from points 1–%d%s: centre %s%s, limits %s to %s%s, moving-range limit %s%s.",
		len(pc.Points), pc.Figure, tonight, c.Baseline, prov, g(c.Centre), unit, lcl, g(c.UCL), unit, g(c.MRUCL), unit)
	if pc.Signals() == 0 {
		v.Caption += " No point out of control."
	}
	for i, pt := range pc.Points {
		var why []string
		for _, r := range c.Signals[i] {
			why = append(why, r.String())
		}
		if c.MRSignals[i] {
			why = append(why, "MR")
		}
		if why == nil {
			continue
		}
		lot := ""
		if pt.Lot != "" {
			lot = ", lot " + pt.Lot
		}
		v.Flagged = append(v.Flagged, fmt.Sprintf("point %d: %s%s = %s%s, batch of %s: %s", i+1, pt.Path, lot, g(pt.Value), unit,
			pt.Started.UTC().Format("2006-01-02 15:04 UTC"), strings.Join(why, ", ")))
	}
	svg, err := chartSVG(pc, runID)
	if err != nil {
		// Not expected (the chart is drawn in memory); the page then
		// shows a placeholder that says so.
		v.Caption += " The chart could not be drawn: " + err.Error() + "."
		svg = []byte(`<svg xmlns="http://www.w3.org/2000/svg" width="300" height="40"><text x="4" y="24">chart not drawn</text></svg>`)
	}
	v.SVG = svg
	return v
}

// chartSVG draws pc's chart as SVG with the points the run runID added
// ringed (spc.Labels.Mark); gapflux trend's own charts ring none.
func chartSVG(pc *trend.PartChart, runID int64) ([]byte, error) {
	l := pc.Labels()
	l.Mark = batchPoints(pc, runID)
	l.MarkName = "this batch's points"
	var b bytes.Buffer
	err := pc.Chart.Write(&b, "svg", l)
	return b.Bytes(), err
}

// batchPoints marks, per point of pc, whether the run runID added it (none
// when runID is 0).
func batchPoints(pc *trend.PartChart, runID int64) []bool {
	mark := make([]bool, len(pc.Points))
	for i, pt := range pc.Points {
		mark[i] = runID != 0 && pt.RunID == runID
	}
	return mark
}

// figureUnit is the unit a history figure's name ends in, with a leading
// space ("" when it has none).
func figureUnit(name string) string {
	for _, u := range []struct{ suffix, unit string }{{"_pct", " %"}, {"_mm", " mm"}, {"_um", " µm"}, {"_deg", "°"},
		{"_w", " W"}, {"_c", " °C"}, {"_s", " s"}, {"_kj", " kJ"}} {
		if strings.HasSuffix(name, u.suffix) {
			return u.unit
		}
	}
	return ""
}
