package spc

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"gapflux/internal/ticks"
	"gapflux/pipeline/svgfit"
)

// Labels name what a chart shows.
type Labels struct {
	Title string // e.g. "part PN-100: loss_pct"
	Unit  string // the axis label of the individuals, e.g. "loss_pct (%)"
	// Mark, when not nil, has one entry per point: the individuals of the
	// points set true are ringed (an open circle around the dot), e.g. the
	// points one batch added. nil, or all false, rings none.
	Mark []bool
	// MarkName says what the rings are in the axis label, e.g. "this
	// batch's points"; "" is "marked points".
	MarkName string
}

// Picture size and resolution.
const (
	pictureW   = 7 * vg.Inch
	pictureH   = 6 * vg.Inch
	pictureDPI = 120
)

// Ink of the charts: dark grey data, black limits, signals as large open
// squares so they stay visible in greyscale.
var (
	inkData   = color.NRGBA{R: 0x30, G: 0x30, B: 0x40, A: 0xff}
	inkLimit  = color.NRGBA{R: 0x00, G: 0x00, B: 0x00, A: 0xff}
	inkSignal = color.NRGBA{R: 0xb0, G: 0x10, B: 0x10, A: 0xff}
	inkBase   = color.NRGBA{R: 0x80, G: 0x80, B: 0x80, A: 0xff}
	// inkMark rings marked points: a hollow circle between the dot and
	// a signal's square, so a point both marked and flagged shows both.
	inkMark = color.NRGBA{R: 0x10, G: 0x40, B: 0x90, A: 0xff}
)

// Sizes of the glyphs: dot < ring < square, so none hides another.
const (
	radiusDot    = 2.2 // points
	radiusMark   = 3.7 // points
	widthMark    = 1.1 // points
	radiusSignal = 6.0 // points
)

// Write draws the chart as PNG or SVG ("png", "svg"): the individuals on
// top, the moving ranges below, each with its centre line (solid) and
// limits (dashed), a dotted line after the last baseline point, points
// that break a rule marked with an open square, and the individuals l.Mark
// sets ringed with an open circle, as are the moving ranges ending at them.
func (c *Chart) Write(w io.Writer, format string, l Labels) error {
	var cw vg.CanvasWriterTo
	switch format {
	case "png":
		cw = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(pictureW, pictureH), vgimg.UseDPI(pictureDPI))}
	case "svg":
		cw = svgfit.New(pictureW, pictureH)
	default:
		return fmt.Errorf("picture format %q: want png or svg", format)
	}
	top, err := c.individualsPanel(l)
	if err != nil {
		return err
	}
	bottom, err := c.rangePanel(l)
	if err != nil {
		return err
	}
	plots := [][]*plot.Plot{{top}, {bottom}}
	dc := draw.New(cw)
	tiles := draw.Tiles{Rows: 2, Cols: 1, PadTop: vg.Points(4), PadBottom: vg.Points(4), PadX: vg.Points(6), PadY: vg.Points(10),
		PadLeft: vg.Points(4), PadRight: vg.Points(10)}
	canvases := plot.Align(plots, tiles, dc)
	top.Draw(canvases[0][0])
	bottom.Draw(canvases[1][0])
	_, err = cw.WriteTo(w)
	return err
}

func (c *Chart) individualsPanel(l Labels) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = l.Title + ": individuals"
	if c.Provisional {
		p.Title.Text += fmt.Sprintf(" (provisional limits: %d points)", c.Baseline)
	}
	p.Y.Label.Text = l.Unit
	parts := []string{fmt.Sprintf("point, in the order measured (dotted: end of the %d-point baseline", c.Baseline),
		"squares: out of control by Western Electric rules 1-4"}
	marked := markedOf(l.Mark, c.Values, 0)
	if len(marked) > 0 {
		parts = append(parts, "rings: "+l.markName())
	}
	parts[len(parts)-1] += ")"
	p.X.Label.TextStyle.Font.Size = vg.Points(8)
	p.X.Label.Text = wrapLabel(parts, p.X.Label.TextStyle)
	p.X.Tick.Marker, p.Y.Tick.Marker = intTicks{}, ticks.Distinct{}
	n := len(c.Values)
	lo, hi := c.LCL, c.UCL
	for _, v := range c.Values {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	pad := 0.08 * (hi - lo)
	if pad == 0 {
		pad = 1
	}
	p.Y.Min, p.Y.Max = lo-pad, hi+pad
	p.X.Min, p.X.Max = 0.5, float64(n)+0.5
	if err := c.addSeries(p, c.Values, 0); err != nil {
		return nil, err
	}
	for _, h := range []struct {
		y      float64
		dashed bool
		label  string
	}{{c.Centre, false, "CL " + gfmt(c.Centre)}, {c.UCL, true, "UCL " + gfmt(c.UCL)}, {c.LCL, true, c.lclText()}} {
		addHLine(p, h.y, h.dashed, n, h.label)
	}
	addBaselineMark(p, c.Baseline, p.Y.Min, p.Y.Max)
	if err := addMarks(p, marked); err != nil {
		return nil, err
	}
	var flagged plotter.XYs
	for i, s := range c.Signals {
		if len(s) > 0 {
			flagged = append(flagged, plotter.XY{X: float64(i + 1), Y: c.Values[i]})
		}
	}
	return p, addSignals(p, flagged)
}

// labelWidth is the widest an axis label's line may be: the picture less
// an inch for the value axis, its label and the margins, so that a label
// centred under the data area stays within the picture (a one-line label
// ran past its right edge).
const labelWidth = pictureW - vg.Inch

// wrapLabel joins parts with "; " into lines no wider than labelWidth in
// style sty, breaking only between parts (a part wider than that stands
// on a line of its own).
func wrapLabel(parts []string, sty text.Style) string {
	var lines []string
	for _, part := range parts {
		if n := len(lines); n > 0 && sty.Width(lines[n-1]+"; "+part) <= labelWidth {
			lines[n-1] += "; " + part
			continue
		}
		lines = append(lines, part)
	}
	return strings.Join(lines, "\n")
}

// markName is what the axis labels call the marked points.
func (l Labels) markName() string {
	if l.MarkName == "" {
		return "marked points"
	}
	return l.MarkName
}

func (c *Chart) rangePanel(l Labels) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = "moving range"
	p.Y.Label.Text = "moving range"
	parts := []string{"point (squares: moving range above D4 x mean moving range"}
	marked := markedOf(l.Mark, c.MR, 1)
	if len(marked) > 0 {
		parts = append(parts, "rings: moving ranges ending at "+l.markName())
	}
	parts = append(parts, "lower limit 0)")
	p.X.Label.TextStyle.Font.Size = vg.Points(8)
	p.X.Label.Text = wrapLabel(parts, p.X.Label.TextStyle)
	p.X.Tick.Marker, p.Y.Tick.Marker = intTicks{}, ticks.Distinct{}
	n := len(c.Values)
	hi := c.MRUCL
	for _, v := range c.MR[1:] {
		hi = math.Max(hi, v)
	}
	if hi == 0 {
		hi = 1
	}
	p.Y.Min, p.Y.Max = 0, hi*1.08
	p.X.Min, p.X.Max = 0.5, float64(n)+0.5
	if err := c.addSeries(p, c.MR, 1); err != nil {
		return nil, err
	}
	addHLine(p, c.MRCentre, false, n, "mean MR "+gfmt(c.MRCentre))
	addHLine(p, c.MRUCL, true, n, "UCL "+gfmt(c.MRUCL))
	addBaselineMark(p, c.Baseline, p.Y.Min, p.Y.Max)
	if err := addMarks(p, marked); err != nil {
		return nil, err
	}
	var flagged plotter.XYs
	for i, s := range c.MRSignals {
		if s {
			flagged = append(flagged, plotter.XY{X: float64(i + 1), Y: c.MR[i]})
		}
	}
	return p, addSignals(p, flagged)
}

// addSeries draws v[from:] as a line with dots at x = index+1.
func (c *Chart) addSeries(p *plot.Plot, v []float64, from int) error {
	xy := make(plotter.XYs, 0, len(v))
	for i := from; i < len(v); i++ {
		xy = append(xy, plotter.XY{X: float64(i + 1), Y: v[i]})
	}
	if len(xy) == 0 {
		return nil
	}
	line, points, err := plotter.NewLinePoints(xy)
	if err != nil {
		return err
	}
	line.Color = inkData
	line.Width = vg.Points(1)
	points.Shape = draw.CircleGlyph{}
	points.Color = inkData
	points.Radius = vg.Points(radiusDot)
	p.Add(line, points)
	return nil
}

// lclText labels the individuals chart's lower limit: "LCL -0.41", or for
// a clipped limit "LCL 0 (clipped; mean - 3 sigma = -0.41)", so the reader
// sees both the drawn limit and the one the run-rule zones come from.
func (c *Chart) lclText() string {
	if c.Clipped {
		return "LCL 0 (clipped; mean - 3 sigma = " + gfmt(c.LCLRaw) + ")"
	}
	return "LCL " + gfmt(c.LCL)
}

// gfmt prints a limit to 4 significant digits.
func gfmt(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }

// addHLine draws a horizontal line at y across the n points, labelled
// label at its right end.
func addHLine(p *plot.Plot, y float64, dashed bool, n int, label string) {
	l, _ := plotter.NewLine(plotter.XYs{{X: 0.5, Y: y}, {X: float64(n) + 0.5, Y: y}})
	l.Color = inkLimit
	l.Width = vg.Points(0.8)
	if dashed {
		l.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
	}
	p.Add(l)
	lab, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: float64(n) + 0.5, Y: y}},
		Labels: []string{label}})
	if err == nil {
		lab.TextStyle[0].XAlign = draw.XRight
		lab.TextStyle[0].YAlign = draw.YBottom
		lab.TextStyle[0].Font.Size = vg.Points(7)
		lab.Offset = vg.Point{X: -vg.Points(2), Y: vg.Points(2)}
		p.Add(lab)
	}
}

func addBaselineMark(p *plot.Plot, baseline int, lo, hi float64) {
	x := float64(baseline) + 0.5
	l, _ := plotter.NewLine(plotter.XYs{{X: x, Y: lo}, {X: x, Y: hi}})
	l.Color = inkBase
	l.Dashes = []vg.Length{vg.Points(1), vg.Points(2)}
	p.Add(l)
}

func addSignals(p *plot.Plot, flagged plotter.XYs) error {
	if len(flagged) == 0 {
		return nil
	}
	ring, err := plotter.NewScatter(flagged)
	if err != nil {
		return err
	}
	ring.Shape = draw.SquareGlyph{}
	ring.Color = inkSignal
	ring.Radius = vg.Points(radiusSignal)
	p.Add(ring)
	return nil
}

// markedOf returns the points of series v (the individuals, or the
// moving ranges, whose MR[i] ends at point i) at the places i ≥ from that
// mark sets; entries past the series are ignored. The moving ranges take
// from = 1: the first point has no range.
func markedOf(mark []bool, v []float64, from int) plotter.XYs {
	var xy plotter.XYs
	for i, m := range mark {
		if m && i >= from && i < len(v) {
			xy = append(xy, plotter.XY{X: float64(i + 1), Y: v[i]})
		}
	}
	return xy
}

// addMarks rings the points xy with open circles in inkMark.
func addMarks(p *plot.Plot, xy plotter.XYs) error {
	if len(xy) == 0 {
		return nil
	}
	ring, err := plotter.NewScatter(xy)
	if err != nil {
		return err
	}
	ring.Shape = thickRing{width: vg.Points(widthMark)}
	ring.Color = inkMark
	ring.Radius = vg.Points(radiusMark)
	p.Add(ring)
	return nil
}

// thickRing is draw.RingGlyph with a chosen line width (RingGlyph's is
// fixed at 0.5 pt, too faint to read at a glance).
type thickRing struct{ width vg.Length }

// DrawGlyph implements draw.GlyphDrawer.
func (r thickRing) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: r.width})
	var p vg.Path
	p.Move(vg.Point{X: pt.X + sty.Radius, Y: pt.Y})
	p.Arc(pt, sty.Radius, 0, 2*math.Pi)
	p.Close()
	c.Stroke(p)
}

// intTicks labels whole point numbers: every 1, 2, 5, 10, 20, 50, ...
// points, the smallest step giving at most 12 labels.
type intTicks struct{}

func (intTicks) Ticks(lo, hi float64) []plot.Tick {
	first, last := int(math.Ceil(lo)), int(math.Floor(hi))
	if last < first {
		return nil
	}
	step := 1
	for k := 0; (last-first)/step >= 12; k++ {
		step = []int{2, 5, 10}[k%3] * int(math.Pow(10, float64(k/3)))
	}
	var ticks []plot.Tick
	for v := (first + step - 1) / step * step; v <= last; v += step {
		ticks = append(ticks, plot.Tick{Value: float64(v), Label: strconv.Itoa(v)})
	}
	if first == 1 && (len(ticks) == 0 || ticks[0].Value != 1) {
		ticks = append([]plot.Tick{{Value: 1, Label: "1"}}, ticks...)
	}
	return ticks
}
