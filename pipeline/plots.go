package pipeline

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"slices"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Colour scales of our own: control colours with strictly increasing CIE L*,
// interpolated by gonum's luminance map so that lightness is linear in the
// value (perceptually ordered, readable when printed in grey).
var (
	// gapScale runs from deep indigo (contact) through teal to pale sand
	// (wide gap).
	gapControls = []color.Color{
		color.NRGBA{R: 0x1b, G: 0x10, B: 0x3a, A: 0xff},
		color.NRGBA{R: 0x2e, G: 0x3f, B: 0x8f, A: 0xff},
		color.NRGBA{R: 0x1f, G: 0x7f, B: 0x94, A: 0xff},
		color.NRGBA{R: 0x5c, G: 0xb8, B: 0x8a, A: 0xff},
		color.NRGBA{R: 0xf4, G: 0xee, B: 0xc8, A: 0xff},
	}
	// fluxScale runs from near black through oxblood and amber to pale
	// yellow (high flux).
	fluxControls = []color.Color{
		color.NRGBA{R: 0x12, G: 0x0a, B: 0x12, A: 0xff},
		color.NRGBA{R: 0x6a, G: 0x12, B: 0x2a, A: 0xff},
		color.NRGBA{R: 0xc2, G: 0x44, B: 0x1c, A: 0xff},
		color.NRGBA{R: 0xf0, G: 0xa2, B: 0x2e, A: 0xff},
		color.NRGBA{R: 0xfc, G: 0xf4, B: 0xc4, A: 0xff},
	}
)

func newScale(controls []color.Color, lo, hi float64) palette.ColorMap {
	cm, err := moreland.NewLuminance(controls)
	if err != nil {
		panic(err) // the control colours are fixed above
	}
	if !(hi > lo) {
		hi = lo + 1
	}
	cm.SetMin(lo)
	cm.SetMax(hi)
	return cm
}

// fieldGrid adapts a cell field to plotter.GridXYZ, in mm.
type fieldGrid struct {
	nx, ny   int
	x0, y0   float64 // mm
	cell     float64 // mm
	v        []float64
	clampLo  float64
	clampHi  float64
	i0, j0   int // crop origin
	cnx, cny int // crop size
}

func (g *fieldGrid) Dims() (c, r int) { return g.cnx, g.cny }
func (g *fieldGrid) X(c int) float64  { return g.x0 + float64(c+g.i0)*g.cell }
func (g *fieldGrid) Y(r int) float64  { return g.y0 + float64(r+g.j0)*g.cell }
func (g *fieldGrid) Z(c, r int) float64 {
	v := g.v[(r+g.j0)*g.nx+c+g.i0]
	if math.IsNaN(v) {
		return v
	}
	return math.Min(math.Max(v, g.clampLo), g.clampHi)
}

// MapSpec describes one colour map picture of a cell field.
type MapSpec struct {
	Title     string
	Unit      string // colour bar label, e.g. "gap (µm)"
	Nx, Ny    int
	X0MM      float64 // centre of cell (0, 0)
	Y0MM      float64
	CellMM    float64
	Values    []float64 // NaN where there is nothing to show
	Controls  []color.Color
	Lo, Hi    float64      // colour range; equal means from the data
	MarksMM   [][2]float64 // points to mark (contact points)
	MarkLabel string
	// Interpolated marks the cells without scan data (filled by
	// interpolation); they are drawn under a translucent grey veil. nil:
	// none.
	Interpolated []bool
}

// veil is the colour laid over interpolated cells.
var veil = color.NRGBA{R: 0x80, G: 0x80, B: 0x80, A: 0x90}

// veilPalette is a one-colour palette.
type veilPalette []color.Color

func (p veilPalette) Colors() []color.Color { return p }

// addVeil lays the veil over the interpolated cells of m on p, within the
// crop of g, and says so in the title. It does nothing without any.
func addVeil(p *plot.Plot, m *MapSpec, g *fieldGrid) {
	if !slices.Contains(m.Interpolated, true) {
		return
	}
	v := make([]float64, len(m.Interpolated))
	for k, in := range m.Interpolated {
		v[k] = math.NaN()
		if in && !math.IsNaN(m.Values[k]) {
			v[k] = 1
		}
	}
	vgrid := *g
	vgrid.v, vgrid.clampLo, vgrid.clampHi = v, 0, 1
	hm := plotter.NewHeatMap(&vgrid, veilPalette{veil, veil})
	hm.Rasterized = true
	hm.NaN = color.Transparent
	hm.Min, hm.Max = 0, 1
	p.Add(hm)
	p.Title.Text += " (grey: interpolated, no scan data)"
}

// crop returns the bounding box of the finite values.
func (m *MapSpec) crop() (i0, j0, nx, ny int) {
	imin, jmin, imax, jmax := m.Nx, m.Ny, -1, -1
	for j := 0; j < m.Ny; j++ {
		for i := 0; i < m.Nx; i++ {
			if !math.IsNaN(m.Values[j*m.Nx+i]) {
				imin, imax = min(imin, i), max(imax, i)
				jmin, jmax = min(jmin, j), max(jmax, j)
			}
		}
	}
	if imax < 0 {
		return 0, 0, m.Nx, m.Ny
	}
	return imin, jmin, imax - imin + 1, jmax - jmin + 1
}

// WriteMap renders the map as "png" or "svg".
func WriteMap(w io.Writer, m *MapSpec, format string) error {
	lo, hi := m.Lo, m.Hi
	unit := m.Unit
	if !(hi > lo) {
		var clipped bool
		lo, hi, clipped = robustRange(m.Values)
		if clipped {
			unit += ", top 0.5 % clipped"
		}
	}
	cm := newScale(m.Controls, lo, hi)
	i0, j0, cnx, cny := m.crop()
	g := &fieldGrid{nx: m.Nx, ny: m.Ny, x0: m.X0MM, y0: m.Y0MM, cell: m.CellMM, v: m.Values,
		clampLo: lo, clampHi: hi, i0: i0, j0: j0, cnx: cnx, cny: cny}

	p := plot.New()
	p.Title.Text = m.Title
	p.X.Label.Text = "x (mm)"
	p.Y.Label.Text = "y (mm)"
	hm := plotter.NewHeatMap(g, cm.Palette(256))
	hm.Rasterized = true
	hm.NaN = color.Transparent
	hm.Min, hm.Max = lo, hi
	p.Add(hm)
	addVeil(p, m, g)
	if len(m.MarksMM) > 0 {
		pts := make(plotter.XYs, len(m.MarksMM))
		for i, c := range m.MarksMM {
			pts[i].X, pts[i].Y = c[0], c[1]
		}
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return err
		}
		sc.GlyphStyle.Shape = draw.CrossGlyph{}
		sc.GlyphStyle.Radius = vg.Points(5)
		sc.GlyphStyle.Color = color.NRGBA{R: 0xe8, G: 0x1e, B: 0x63, A: 0xff}
		p.Add(sc)
		if m.MarkLabel != "" {
			p.Legend.Add(m.MarkLabel, sc)
			p.Legend.Top = true
		}
	}
	// Equal scales on both axes.
	xmin, xmax := g.X(0)-m.CellMM/2, g.X(cnx-1)+m.CellMM/2
	ymin, ymax := g.Y(0)-m.CellMM/2, g.Y(cny-1)+m.CellMM/2
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = xmin, xmax, ymin, ymax

	cb := plot.New()
	cb.HideX()
	cb.Y.Label.Text = unit
	cb.Y.Tick.Marker = shortTicks{}
	cb.Add(&plotter.ColorBar{ColorMap: cm, Vertical: true, Colors: 256})

	const plotW, barW = 14 * vg.Centimeter, 3.2 * vg.Centimeter
	// Size the canvas so the data area has the data's aspect ratio: measure
	// the data area on a trial canvas, then grow or shrink the height.
	aspect := (ymax - ymin) / (xmax - xmin)
	trialH := vg.Length(float64(plotW) * aspect)
	trial := draw.New(vgimg.New(plotW, trialH))
	da := p.DataCanvas(trial)
	dw, dh := da.Max.X-da.Min.X, da.Max.Y-da.Min.Y
	height := trialH + vg.Length(float64(dw)*aspect) - dh
	width := plotW + barW
	c, err := newCanvas(format, width, height)
	if err != nil {
		return err
	}
	dc := draw.New(c)
	left := draw.Crop(dc, 0, -barW, 0, 0)
	right := draw.Crop(dc, plotW+0.6*vg.Centimeter, 0, 1.3*vg.Centimeter, -1.3*vg.Centimeter)
	p.Draw(left)
	cb.Draw(right)
	_, err = c.WriteTo(w)
	return err
}

// RingChartSpec is the ring chart: flux per ring of the scan and its flat
// twin against the ring's mid radius.
type RingChartSpec struct {
	Title string
	Rings []RingReport
}

// WriteRingChart renders the ring chart as "png" or "svg": above, the heat
// flux into the pan per ring for the scan and its flat twin; below, the
// ring's mean and largest gap, on the same radius axis.
func WriteRingChart(w io.Writer, s *RingChartSpec, format string) error {
	top := plot.New()
	top.Title.Text = s.Title
	top.Y.Label.Text = "heat flux into the pan (kW/m²)"
	top.Add(plotter.NewGrid())
	scanXY := make(plotter.XYs, len(s.Rings))
	flatXY := make(plotter.XYs, len(s.Rings))
	meanXY := make(plotter.XYs, len(s.Rings))
	maxXY := make(plotter.XYs, len(s.Rings))
	for i, r := range s.Rings {
		mid := (r.RInMM + r.ROutMM) / 2
		scanXY[i] = plotter.XY{X: mid, Y: r.FluxKWM2}
		flatXY[i] = plotter.XY{X: mid, Y: r.FlatFluxKWM2}
		meanXY[i] = plotter.XY{X: mid, Y: r.MeanGapMM * 1e3}
		maxXY[i] = plotter.XY{X: mid, Y: r.MaxGapMM * 1e3}
	}
	grey := color.NRGBA{R: 0x80, G: 0x80, B: 0x80, A: 0xff}
	red := color.NRGBA{R: 0xb0, G: 0x30, B: 0x1c, A: 0xff}
	blue := color.NRGBA{R: 0x2e, G: 0x3f, B: 0x8f, A: 0xff}
	addLine := func(p *plot.Plot, xy plotter.XYs, c color.Color, dashed bool, glyph draw.GlyphDrawer, label string) error {
		l, pts, err := plotter.NewLinePoints(xy)
		if err != nil {
			return err
		}
		l.Color, pts.Color, pts.Shape = c, c, glyph
		l.Width = vg.Points(1.5)
		if dashed {
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
			l.Width = vg.Points(1)
		}
		p.Add(l, pts)
		p.Legend.Add(label, l, pts)
		return nil
	}
	if err := addLine(top, flatXY, grey, true, draw.CircleGlyph{}, "flat twin"); err != nil {
		return err
	}
	if err := addLine(top, scanXY, red, false, draw.BoxGlyph{}, "scan"); err != nil {
		return err
	}
	top.Legend.Top = true
	top.Y.Min = 0

	bottom := plot.New()
	bottom.X.Label.Text = "ring mid radius (mm)"
	bottom.Y.Label.Text = "gap (µm)"
	bottom.Add(plotter.NewGrid())
	if err := addLine(bottom, maxXY, grey, true, draw.TriangleGlyph{}, "largest"); err != nil {
		return err
	}
	if err := addLine(bottom, meanXY, blue, false, draw.BoxGlyph{}, "mean"); err != nil {
		return err
	}
	bottom.Legend.Top = true
	bottom.Y.Min = 0
	top.X.Min, top.X.Max = bottom.X.Min, bottom.X.Max

	const width, height = 16 * vg.Centimeter, 15 * vg.Centimeter
	c, err := newCanvas(format, width, height)
	if err != nil {
		return err
	}
	tiles := draw.Tiles{Rows: 2, Cols: 1, PadTop: vg.Points(4), PadBottom: vg.Points(4), PadLeft: vg.Points(4), PadRight: vg.Points(8), PadY: vg.Points(10)}
	plots := [][]*plot.Plot{{top}, {bottom}}
	canvases := plot.Align(plots, tiles, draw.New(c))
	top.Draw(canvases[0][0])
	bottom.Draw(canvases[1][0])
	_, err = c.WriteTo(w)
	return err
}

// robustRange returns the colour range of a field: from its minimum to its
// maximum, or to its 99.5th percentile when a few extreme cells (a contact
// line, say) would otherwise wash out the rest of the map.
func robustRange(values []float64) (lo, hi float64, clipped bool) {
	v := make([]float64, 0, len(values))
	for _, x := range values {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			v = append(v, x)
		}
	}
	if len(v) == 0 {
		return 0, 1, false
	}
	sort.Float64s(v)
	lo, hi = v[0], v[len(v)-1]
	if p := v[int(0.995*float64(len(v)-1))]; p-lo < 0.5*(hi-lo) {
		hi, clipped = p, true
	}
	if hi-lo < 1e-12*math.Max(1, math.Abs(hi)) {
		hi = lo + math.Max(1e-9, math.Abs(lo)*1e-3)
	}
	return lo, hi, clipped
}

// shortTicks are gonum's default ticks labelled with at most four
// significant digits and no trailing zeros ("250", not "250.00").
type shortTicks struct{}

func (shortTicks) Ticks(lo, hi float64) []plot.Tick {
	ticks := plot.DefaultTicks{}.Ticks(lo, hi)
	for i := range ticks {
		if ticks[i].Label != "" {
			ticks[i].Label = strconv.FormatFloat(ticks[i].Value, 'g', 4, 64)
		}
	}
	return ticks
}

// newCanvas returns a PNG (110 dpi) or SVG canvas of the given size.
func newCanvas(format string, width, height vg.Length) (vg.CanvasWriterTo, error) {
	switch format {
	case "png":
		return vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(110))}, nil
	case "svg":
		return vgsvg.NewWith(vgsvg.UseWH(width, height)), nil
	}
	return nil, fmt.Errorf("picture format %q: want png or svg", format)
}
