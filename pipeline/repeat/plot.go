package repeat

import (
	"bytes"
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"gapflux/internal/ticks"
	"gapflux/pipeline/svgfit"
)

// Ink: results dark grey, their intervals lighter, the mean black and the
// band mean ± 2 s_r dashed, so the picture reads in greyscale.
var (
	inkResult   = color.NRGBA{R: 0x30, G: 0x30, B: 0x40, A: 0xff}
	inkInterval = color.NRGBA{R: 0x70, G: 0x70, B: 0x80, A: 0xff}
	inkMean     = color.NRGBA{A: 0xff}
)

// panelH is the height of one figure's panel; the picture is 7 in wide.
const (
	pictureW = 7 * vg.Inch
	panelH   = 1.9 * vg.Inch
	// pictureDPI is the PNG's resolution.
	pictureDPI = 110
)

// SVG is repeat.svg; see Picture.
func (st *Study) SVG() ([]byte, error) { return st.Picture("svg") }

// PNG is repeat.png; see Picture.
func (st *Study) PNG() ([]byte, error) { return st.Picture("png") }

// Picture draws the study as "svg" or "png": one panel per figure that has results, top to
// bottom in the study's order. Each result is a dot at its place in the
// list (bases one after another, results by name) with its 95 % interval
// as a bar when it has one; each base with two or more results gets its
// mean (solid) and mean ± 2 s_r (dashed), with the pooled s_r.
func (st *Study) Picture(format string) ([]byte, error) {
	var plots [][]*plot.Plot
	for i := range st.Figures {
		f := &st.Figures[i]
		p, ok, err := f.panel()
		if err != nil {
			return nil, fmt.Errorf("%s: %w", f.Name, err)
		}
		if ok {
			plots = append(plots, []*plot.Plot{p})
		}
	}
	if len(plots) == 0 {
		return nil, fmt.Errorf("no figure has a result to draw")
	}
	h := panelH * vg.Length(len(plots))
	var c vg.CanvasWriterTo
	switch format {
	case "svg":
		c = svgfit.New(pictureW, h)
	case "png":
		c = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(pictureW, h), vgimg.UseDPI(pictureDPI))}
	default:
		return nil, fmt.Errorf("picture format %q: want svg or png", format)
	}
	dc := draw.New(c)
	tiles := draw.Tiles{Rows: len(plots), Cols: 1, PadTop: vg.Points(4), PadBottom: vg.Points(4), PadX: vg.Points(6),
		PadY: vg.Points(8), PadLeft: vg.Points(4), PadRight: vg.Points(10)}
	canvases := plot.Align(plots, tiles, dc)
	for i := range plots {
		plots[i][0].Draw(canvases[i][0])
	}
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

// panel is one figure's panel; ok is false when the figure has no result.
func (f *Figure) panel() (p *plot.Plot, ok bool, err error) {
	p = plot.New()
	p.Title.Text = f.title()
	p.Title.TextStyle.Font.Size = vg.Points(9)
	p.Y.Label.Text = f.Name
	p.Y.Label.TextStyle.Font.Size = vg.Points(8)
	p.X.Tick.Label.Font.Size = vg.Points(7)
	p.Y.Tick.Label.Font.Size = vg.Points(7)
	p.Y.Tick.Marker = ticks.Distinct{}
	var pts plotter.XYs
	var bars intervals
	lo, hi := math.Inf(1), math.Inf(-1)
	widen := func(v float64) { lo, hi = math.Min(lo, v), math.Max(hi, v) }
	x := 0.0
	for _, g := range f.Groups {
		first := x + 1
		for _, r := range g.Results {
			x++
			pts = append(pts, plotter.XY{X: x, Y: r.Value})
			widen(r.Value)
			if r.Low != nil && r.High != nil {
				bars = append(bars, interval{x: x, lo: *r.Low, hi: *r.High})
				widen(*r.Low)
				widen(*r.High)
			}
		}
		if g.N >= 2 && f.Stats != nil {
			band := 2 * f.Stats.SR
			for _, y := range []float64{g.Mean, g.Mean - band, g.Mean + band} {
				addLine(p, first-0.4, x+0.4, y, y != g.Mean)
				widen(y)
			}
		}
	}
	if len(pts) == 0 {
		return nil, false, nil
	}
	pad := 0.08 * (hi - lo)
	if pad == 0 {
		pad = math.Max(1e-6, 0.01*math.Abs(hi))
	}
	p.Y.Min, p.Y.Max = lo-pad, hi+pad
	p.X.Min, p.X.Max = 0.5, x+0.5
	p.X.Label.Text = "result (by base, then name); bar: its 95 % interval; solid: mean of its base; dashed: ± 2 s_r"
	p.X.Label.TextStyle.Font.Size = vg.Points(7)
	if len(bars) > 0 {
		eb, err := plotter.NewYErrorBars(bars)
		if err != nil {
			return nil, false, err
		}
		eb.Color = inkInterval
		eb.LineStyle.Width = vg.Points(0.8)
		p.Add(eb)
	}
	sc, err := plotter.NewScatter(pts)
	if err != nil {
		return nil, false, err
	}
	sc.Shape = draw.CircleGlyph{}
	sc.Color = inkResult
	sc.Radius = vg.Points(2.2)
	p.Add(sc)
	return p, true, nil
}

// title is the panel's heading: the figure and its repeatability in words.
func (f *Figure) title() string {
	s := f.Stats
	if s == nil {
		return f.Name + ": " + f.Note
	}
	t := fmt.Sprintf("%s: s_r = %.3g, r = %.3g %s (%d results, %d dof)", f.Name, s.SR, s.R, f.Unit, s.N, s.DOF)
	switch s.Coverage {
	case Covered, Understated:
		t += fmt.Sprintf("; u_rms = %.3g, uncertainty %s", *s.URMS, s.Coverage)
	case NoUncertainty:
		t += "; no uncertainty reported"
	}
	return t
}

func addLine(p *plot.Plot, x0, x1, y float64, dashed bool) {
	l, err := plotter.NewLine(plotter.XYs{{X: x0, Y: y}, {X: x1, Y: y}})
	if err != nil {
		return // y is finite (checked by Assess); nothing to draw otherwise
	}
	l.Color = inkMean
	l.Width = vg.Points(0.8)
	if dashed {
		l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	}
	p.Add(l)
}

// interval is one result's 95 % interval as an error bar. The bar is
// anchored at the interval's midpoint, not at the value: gonum's error bars
// take the absolute value of each offset, so a value outside its own
// interval (a biased interval) would be drawn with a wrong bar.
type interval struct{ x, lo, hi float64 }

type intervals []interval

func (v intervals) Len() int                    { return len(v) }
func (v intervals) XY(i int) (float64, float64) { return v[i].x, (v[i].lo + v[i].hi) / 2 }
func (v intervals) YError(i int) (float64, float64) {
	h := (v[i].hi - v[i].lo) / 2
	return h, h
}
