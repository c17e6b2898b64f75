package pipeline

import (
	"io"
	"path/filepath"
	"strconv"

	"gapflux/pipeline/html"
)

// writeCompareHTML writes dir/compare.html: the comparison r with the
// change maps svgs (by file stem: height_change, gap_change) inline.
func writeCompareHTML(dir string, r *CompareResult, svgs map[string][]byte) error {
	page := comparePageView(r, svgs)
	return WriteFileAtomic(filepath.Join(dir, "compare.html"), func(w io.Writer) error {
		return html.WriteCompare(w, page)
	})
}

// sig formats v to 5 significant digits, shortest form.
func sig(v float64) string { return strconv.FormatFloat(roundSig(v, 5), 'f', -1, 64) }

// signed formats a change with its sign.
func signed(v float64) string {
	s := sig(v)
	if v > 0 && s != "0" {
		s = "+" + s
	}
	return s
}

// comparePageView fills compare.html from a comparison.
func comparePageView(r *CompareResult, svgs map[string][]byte) *html.ComparePage {
	c := r.Comparison
	a, b := r.Inputs[0], r.Inputs[1]
	if a == "" {
		a, b = r.Names[0], r.Names[1]
	}
	p := &html.ComparePage{A: a, B: b, Warnings: c.Warnings}
	p.Headline = compareHeadline(c)
	for _, m := range []struct {
		key string
		pic html.Picture
	}{
		{"height_change", html.Picture{Title: "Height change", Alt: "map of the height change B − A",
			Caption: "Filtered form of B minus A in A's frame, µm, B turned and shifted by the fit; the mean (a piston between the two levellings) is removed."}},
		{"gap_change", html.Picture{Title: "Gap change", Alt: "map of the gap change B − A",
			Caption: "Gap at rest on the hob of B minus A, mm; positive where B stands further off the hob."}},
	} {
		if svg := svgs[m.key]; svg != nil {
			m.pic.SVG = svg
			p.Pictures = append(p.Pictures, m.pic)
		}
	}
	opt := func(v *float64, f func(float64) string) string {
		if v == nil {
			return "—"
		}
		return f(*v)
	}
	p.Figures = html.Table{Columns: []string{"figure", "A", "B", "change B − A", "u(change)"}}
	for _, f := range c.Figures {
		p.Figures.Rows = append(p.Figures.Rows, []string{f.Figure, opt(f.A, sig), opt(f.B, sig), opt(f.Change, signed), opt(f.UChange, sig)})
	}
	p.Rings = html.Table{Columns: []string{"ring", "r mm", "mean gap A mm", "mean gap B mm", "gap change mm", "contact change %",
		"flux A kW/m²", "flux B kW/m²", "flux change kW/m²", "flux change %", "power change W"}}
	for i, rc := range c.Rings {
		p.Rings.Rows = append(p.Rings.Rows, []string{strconv.Itoa(i + 1), num(rc.RInMM, 0) + "–" + num(rc.ROutMM, 0),
			num(rc.MeanGapAMM, 3), num(rc.MeanGapBMM, 3), signed(roundTo(rc.MeanGapChangeMM, 4)), signed(roundTo(rc.ContactChangePct, 1)),
			num(rc.FluxAKWM2, 1), num(rc.FluxBKWM2, 1), signed(roundTo(rc.FluxChangeKWM2, 2)), signed(roundTo(rc.FluxChangeOfAPct, 1)),
			signed(roundTo(rc.PowerChangeW, 1))})
	}
	file := func(label string, f FileReport) []html.Figure {
		return []html.Figure{{Label: label, Value: f.Path + " (" + f.Format + ", " + strconv.Itoa(f.Points) + " points)"},
			{Label: label + " SHA-256", Value: f.SHA256}}
	}
	p.Inputs = append(file("A (reference)", c.A), file("B (later)", c.B)...)
	return p
}

// compareHeadline lists the turn found, the shift, the permanent set and
// the height change.
func compareHeadline(c *Comparison) []html.Figure {
	al := c.Alignment
	turn := html.Figure{Label: "turn of B about the base axis", Value: "undefined", Note: al.AngleNote}
	if al.AngleDeg != nil {
		turn = html.Figure{Label: "turn of B about the base axis", Value: num(*al.AngleDeg, 2), Unit: "°",
			Note: "fitted; the height RMS varies by " + num(al.SwingUM, 1) + " µm over a full turn"}
		if al.AnglePeriodDeg != nil && *al.AnglePeriodDeg < 360 {
			turn.Note += "; known modulo " + num(*al.AnglePeriodDeg, 0) + "°"
		}
	}
	set := html.Figure{Label: "permanent set (change of concavity)", Value: signed(roundTo(c.PermanentSetMM, 4)), Unit: "mm",
		Note: "B − A; positive: B more dished; no uncertainty in the reports"}
	if u := c.PermanentSetUMM; u != nil {
		set.Value += " ± " + sig(*u)
		set.Note = "B − A; positive: B more dished; ± standard uncertainty (k = 1)"
	}
	h := c.HeightDiff
	return []html.Figure{
		turn,
		{Label: "shift of B", Value: num(al.ShiftMM[0], 2) + ", " + num(al.ShiftMM[1], 2), Unit: "mm", Note: strconv.Itoa(al.CommonCells) + " cells in common"},
		set,
		{Label: "height change, RMS", Value: num(h.RMSUM, 1), Unit: "µm",
			Note: "from " + num(h.MinUM, 1) + " to " + num(h.MaxUM, 1) + " µm after removing the mean " + num(h.MeanUM, 1) + " µm"},
	}
}
