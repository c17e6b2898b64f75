package pipeline

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"io"
	"math"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/recorder"

	"gapflux/internal/order"
	"gapflux/scan"
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

// Overlay colours. Every overlay on a map is two-tone, one tone near
// black and one white, so that it keeps a contrast of at least 4.6:1
// (√21, the worst case of max(contrast to black, contrast to white)) with
// any colour beneath it; TestOverlayContrast checks it against the scales.
var (
	inkDark  = color.NRGBA{R: 0x10, G: 0x10, B: 0x10, A: 0xff}
	inkLight = color.NRGBA{R: 0xff, G: 0xff, B: 0xff, A: 0xff}
	// hatchLight is the pale stripe of the hatching over cells below
	// the scale (heat flowing back into the glass).
	hatchLight = color.NRGBA{R: 0xc8, G: 0xd8, B: 0xe8, A: 0xff}
)

// scaleColors returns n colours of the luminance scale through controls.
func scaleColors(controls []color.Color, n int) []color.NRGBA {
	cm, err := moreland.NewLuminance(controls)
	if err != nil {
		panic(err) // the control colours are fixed above
	}
	cm.SetMin(0)
	cm.SetMax(1)
	out := make([]color.NRGBA, n)
	for i, c := range cm.Palette(n).Colors() {
		out[i] = color.NRGBAModel.Convert(c).(color.NRGBA)
	}
	return out
}

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

// PictureLabels identify a part on its pictures; empty fields are left
// out.
type PictureLabels struct {
	PartNumber string // from the batch manifest
	Lot        string // from the batch manifest
	Verdict    string // "PASS", "FAIL" or "INCONCLUSIVE", from the report
}

// subtitle returns the second title line, "" when nothing is known.
func (l PictureLabels) subtitle() string {
	var parts []string
	if l.PartNumber != "" {
		parts = append(parts, "part "+l.PartNumber)
	}
	if l.Lot != "" {
		parts = append(parts, "lot "+l.Lot)
	}
	if l.Verdict != "" {
		parts = append(parts, "verdict "+l.Verdict)
	}
	return strings.Join(parts, " · ")
}

func titleText(title string, l PictureLabels) string {
	if s := l.subtitle(); s != "" {
		return title + "\n" + s
	}
	return title
}

// MapSpec describes one colour map picture of a cell field.
type MapSpec struct {
	Title     string
	Labels    PictureLabels
	Unit      string // colour bar label, e.g. "gap (mm)"
	Nx, Ny    int
	X0MM      float64 // centre of cell (0, 0)
	Y0MM      float64
	CellMM    float64
	Values    []float64 // NaN where there is nothing to show
	Controls  []color.Color
	Lo, Hi    float64      // colour range; equal means from the data
	MarksMM   [][2]float64 // points to mark (contact points)
	MarkLabel string
	// BaseRadiusMM, when positive, is the radius of the base disc about
	// the origin: the map is drawn inside that circle with a smooth edge
	// rather than with the staircase of the cells.
	BaseRadiusMM float64
	// ZoneDiameterMM, when positive, draws the heating zone's outline,
	// centred at ZoneCentreMM in the map's frame.
	ZoneDiameterMM float64
	ZoneCentreMM   [2]float64
	// BelowZeroLabel, when not empty, starts the colour scale at zero and
	// hatches the cells below zero, naming them in the legend with this
	// text (heat flowing back into the glass on a flux map).
	BelowZeroLabel string
	// Interpolated marks the cells without scan data nearby (filled by
	// interpolation); they are drawn under a translucent grey veil and the
	// title says so. nil: none.
	Interpolated []bool
}

// veil is the colour laid over interpolated cells: a mid grey at 56 %
// opacity, visible on both ends of the colour scales and in greyscale.
var veil = color.NRGBA{R: 0x80, G: 0x80, B: 0x80, A: 0x90}

// veiledCell reports whether cell (i, j) is marked interpolated.
func (m *MapSpec) veiledCell(i, j int) bool {
	return m.Interpolated != nil && i >= 0 && j >= 0 && i < m.Nx && j < m.Ny && m.Interpolated[j*m.Nx+i]
}

// blend lays c2 (with its alpha) over the opaque colour c1.
func blend(c1, c2 color.NRGBA) color.NRGBA {
	a := uint32(c2.A)
	mix := func(x, y uint8) uint8 { return uint8((uint32(x)*(255-a) + uint32(y)*a + 127) / 255) }
	return color.NRGBA{R: mix(c1.R, c2.R), G: mix(c1.G, c2.G), B: mix(c1.B, c2.B), A: c1.A}
}

// validate checks the grid and the overlays' geometry.
func (m *MapSpec) validate() error {
	finite := func(v ...float64) bool {
		for _, x := range v {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return false
			}
		}
		return true
	}
	switch {
	case m.Nx <= 0 || m.Ny <= 0 || len(m.Values) != m.Nx*m.Ny || !(m.CellMM > 0) || !finite(m.CellMM, m.X0MM, m.Y0MM):
		return fmt.Errorf("map %q: %d values for %d×%d cells of %g mm from (%g, %g) mm", m.Title, len(m.Values), m.Nx, m.Ny, m.CellMM, m.X0MM, m.Y0MM)
	case !finite(m.BaseRadiusMM, m.ZoneDiameterMM, m.ZoneCentreMM[0], m.ZoneCentreMM[1], m.Lo, m.Hi):
		return fmt.Errorf("map %q: base radius %g mm, zone %g mm at (%g, %g) mm, range %g..%g: want finite numbers",
			m.Title, m.BaseRadiusMM, m.ZoneDiameterMM, m.ZoneCentreMM[0], m.ZoneCentreMM[1], m.Lo, m.Hi)
	}
	for _, p := range m.MarksMM {
		if !finite(p[0], p[1]) {
			return fmt.Errorf("map %q: mark at (%g, %g) mm is not finite", m.Title, p[0], p[1])
		}
	}
	return nil
}

// cellBox is a rectangle of cells: columns i0 to i0+nx−1, rows j0 to
// j0+ny−1.
type cellBox struct{ i0, j0, nx, ny int }

// rows returns the box's part of each of its rows of values.
func (b cellBox) rows(m *MapSpec) [][]float64 {
	out := make([][]float64, b.ny)
	for k := range out {
		off := (b.j0+k)*m.Nx + b.i0
		out[k] = m.Values[off : off+b.nx]
	}
	return out
}

// crop returns the bounding box of the values that are not NaN (the
// whole grid when there are none).
func (m *MapSpec) crop() cellBox {
	imin, jmin, imax, jmax := m.Nx, m.Ny, -1, -1
	for j := 0; j < m.Ny; j++ {
		row := m.Values[j*m.Nx : (j+1)*m.Nx]
		// The row's first and last values that are not NaN; those
		// between do not move the box.
		first := 0
		for first < len(row) && math.IsNaN(row[first]) {
			first++
		}
		if first == len(row) {
			continue
		}
		last := len(row) - 1
		for math.IsNaN(row[last]) {
			last--
		}
		imin, imax = min(imin, first), max(imax, last)
		jmin, jmax = min(jmin, j), max(jmax, j)
	}
	if imax < 0 {
		return cellBox{0, 0, m.Nx, m.Ny}
	}
	return cellBox{imin, jmin, imax - imin + 1, jmax - jmin + 1}
}

// extentMM returns the map's data window, mm: the finite cells (within
// box, from crop), the marks and the zone outline, with a margin of 4 %
// of the larger side so that nothing touches the frame.
func (m *MapSpec) extentMM(box cellBox) (xmin, xmax, ymin, ymax float64) {
	i0, j0, nx, ny := box.i0, box.j0, box.nx, box.ny
	h := m.CellMM / 2
	xmin, xmax = m.X0MM+float64(i0)*m.CellMM-h, m.X0MM+float64(i0+nx-1)*m.CellMM+h
	ymin, ymax = m.Y0MM+float64(j0)*m.CellMM-h, m.Y0MM+float64(j0+ny-1)*m.CellMM+h
	grow := func(x0, x1, y0, y1 float64) {
		xmin, xmax, ymin, ymax = math.Min(xmin, x0), math.Max(xmax, x1), math.Min(ymin, y0), math.Max(ymax, y1)
	}
	if r := m.BaseRadiusMM; r > 0 {
		grow(-r, r, -r, r)
	}
	if r := m.ZoneDiameterMM / 2; r > 0 {
		c := m.ZoneCentreMM
		grow(c[0]-r, c[0]+r, c[1]-r, c[1]+r)
	}
	for _, p := range m.MarksMM {
		grow(p[0], p[0], p[1], p[1])
	}
	pad := 0.04 * math.Max(xmax-xmin, ymax-ymin)
	return xmin - pad, xmax + pad, ymin - pad, ymax + pad
}

// colourRange returns the colour scale's range and the colour bar label;
// box, from crop, holds the finite values (the rest of a padded grid
// need not be read again).
func (m *MapSpec) colourRange(box cellBox) (lo, hi float64, unit string, below bool) {
	lo, hi, unit = m.Lo, m.Hi, m.Unit
	if !(hi > lo) {
		var clipped bool
		lo, hi, clipped = robustRange(box.rows(m)...)
		if clipped {
			unit += ", top 0.5 % clipped"
		}
	}
	if m.BelowZeroLabel != "" && lo < 0 {
		lo, below = 0, true
		unit += ", below 0 hatched"
		if !(hi > lo) {
			hi = 1
		}
	}
	return lo, hi, unit, below
}

// mapRaster paints a map's field into an image covering the data window
// [xmin, xmax]×[ymin, ymax] mm: colours from the scale over [lo, hi],
// hatching below lo when hatch is set.
type mapRaster struct {
	m                      *MapSpec
	lo, hi                 float64
	colors                 []color.NRGBA
	hatch                  bool
	xmin, xmax, ymin, ymax float64
}

// image returns the w×h-pixel picture (row 0 at ymax). Each pixel takes
// the bilinear interpolation of the finite cells among the four whose
// centres surround it (weights renormalised over those present), so the
// picture is smooth and its cost depends on the picture's size, not on
// the grid's. Pixels outside the base circle (or, without one, whose
// nearest cell is empty) stay transparent, so the base edge is the true
// circle, not the cells' staircase; values are clamped to [lo, hi].
// Every pixel is either opaque or fully transparent.
func (r *mapRaster) image(w, h int) *image.NRGBA {
	img := image.NewNRGBA(image.Rect(0, 0, w, h))
	m := r.m
	dx, dy := (r.xmax-r.xmin)/float64(w), (r.ymax-r.ymin)/float64(h)
	cols := make([]rasterPos, w)
	for px := range cols {
		cols[px] = newRasterPos(r.xmin+(float64(px)+0.5)*dx, m.X0MM, m.CellMM)
	}
	for py := 0; py < h; py++ {
		row := newRasterPos(r.ymax-(float64(py)+0.5)*dy, m.Y0MM, m.CellMM)
		r.paintRow(img.Pix[py*img.Stride:py*img.Stride+4*w], py, cols, row)
	}
	return img
}

// rasterPos is a pixel column's (or row's) position: x (mm), the index
// i of the cell centre at or before it and the fraction t of a cell
// past that centre, and the nearest cell's index near. The columns'
// positions are computed once for all rows.
type rasterPos struct {
	x, t    float64
	i, near int
}

// newRasterPos returns the position of x on an axis whose cell 0 is
// centred at x0, cells cell wide.
func newRasterPos(x, x0, cell float64) rasterPos {
	f := (x - x0) / cell
	i := int(math.Floor(f))
	return rasterPos{x: x, t: f - float64(i), i: i, near: int(math.Round(f))}
}

// paintRow paints the pixels of row py (pix, 4 bytes a pixel) at the
// row position y, the columns at cols.
func (r *mapRaster) paintRow(pix []uint8, py int, cols []rasterPos, y rasterPos) {
	m := r.m
	r2 := m.BaseRadiusMM * m.BaseRadiusMM
	scale := float64(len(r.colors)-1) / (r.hi - r.lo)
	row0, row1 := m.gridRow(y.i), m.gridRow(y.i+1)
	for px := range cols {
		x := &cols[px]
		if r2 > 0 && x.x*x.x+y.x*y.x > r2 {
			continue
		}
		if r2 == 0 && math.IsNaN(r.cell(x.near, y.near)) {
			continue
		}
		v, ok := bilinear(x, &y, row0, row1)
		if !ok {
			continue
		}
		var col color.NRGBA
		switch {
		case r.hatch && v < r.lo:
			col = hatchLight
			if (px+py)%7 < 2 {
				col = inkDark
			}
		default:
			// min and max are math.Min and math.Max, inlined.
			k := int((min(max(v, r.lo), r.hi)-r.lo)*scale + 0.5)
			col = r.colors[k]
		}
		if m.veiledCell(x.near, y.near) {
			col = blend(col, veil)
		}
		pix[4*px], pix[4*px+1], pix[4*px+2], pix[4*px+3] = col.R, col.G, col.B, col.A
	}
}

// bilinear returns the interpolation at (x, y) of the finite cells among
// the four whose centres surround it, the weights renormalised over
// those present; false when there are none. row0 and row1 are the grid
// rows y.i and y.i+1, nil outside the grid.
func bilinear(x, y *rasterPos, row0, row1 []float64) (float64, bool) {
	tx, ty := x.t, y.t
	var sum, wsum float64
	add := func(row []float64, i int, w float64) {
		if i >= 0 && i < len(row) {
			if v := row[i]; !math.IsNaN(v) && w > 0 {
				sum += w * v
				wsum += w
			}
		}
	}
	add(row0, x.i, (1-tx)*(1-ty))
	add(row0, x.i+1, tx*(1-ty))
	add(row1, x.i, (1-tx)*ty)
	add(row1, x.i+1, tx*ty)
	if wsum == 0 {
		return 0, false
	}
	return sum / wsum, true
}

// gridRow returns row j of the grid, nil outside it.
func (m *MapSpec) gridRow(j int) []float64 {
	if j < 0 || j >= m.Ny {
		return nil
	}
	return m.Values[j*m.Nx : (j+1)*m.Nx]
}

// cell returns the value of cell (i, j), NaN outside the grid.
func (r *mapRaster) cell(i, j int) float64 {
	m := r.m
	if i < 0 || j < 0 || i >= m.Nx || j >= m.Ny {
		return math.NaN()
	}
	return m.Values[j*m.Nx+i]
}

// pictureDPI is the resolution of the PNG pictures and of the raster a
// map embeds in its SVG.
const pictureDPI = 110

// WriteMap renders the map as "png" or "svg".
func WriteMap(w io.Writer, m *MapSpec, format string) error {
	l, err := m.layout()
	if err != nil {
		return err
	}
	return m.write(w, l, format)
}

// write draws the map laid out by l as format ("png" or "svg") to w.
func (m *MapSpec) write(w io.Writer, l *mapLayout, format string) error {
	mp, err := m.picture(l)
	if err != nil {
		return err
	}
	c, err := newCanvas(format, l.width, l.height)
	if err != nil {
		return err
	}
	r := layoutMap(draw.New(c), mp.plot, l.legendH)
	mp.plot.Draw(r.plotC)
	mp.bar.Draw(r.barC)
	mp.legend.Draw(r.legendC)
	_, err = c.WriteTo(w)
	return err
}

const (
	mapPlotW = 14 * vg.Centimeter  // map plot, axes included
	mapBarW  = 3.4 * vg.Centimeter // colour bar column
)

// mapRegions are the canvases of a map picture.
type mapRegions struct {
	plotC, barC, legendC draw.Canvas
}

// layoutMap splits the picture: the colour bar on the right, the legend in
// a strip of height legendH under the map, aligned with its data area.
func layoutMap(dc draw.Canvas, p *plot.Plot, legendH vg.Length) mapRegions {
	var r mapRegions
	r.plotC = draw.Crop(dc, 0, -mapBarW, legendH, 0)
	r.barC = draw.Crop(dc, mapPlotW+0.6*vg.Centimeter, 0, legendH+1.3*vg.Centimeter, -1.9*vg.Centimeter)
	legendC := draw.Crop(dc, 0, -mapBarW, 0, 0)
	legendC.Max.Y = legendC.Min.Y + legendH
	legendC.Min.X = p.DataCanvas(r.plotC).Min.X
	r.legendC = legendC
	return r
}

// mapPicture holds the parts of a map picture.
type mapPicture struct {
	plot, bar *plot.Plot
	raster    *image.NRGBA // the field's picture in the data area
	legend    plot.Legend
	entries   int // legend entries
}

// measuringCanvas returns a w × h canvas that only records what is drawn
// on it (gonum's recorder): enough to lay out a plot (plot.DataCanvas and
// Legend.Rectangle measure text with the fonts, not the canvas) without
// allocating and clearing the image a vgimg canvas would.
func measuringCanvas(w, h vg.Length) draw.Canvas {
	return draw.NewCanvas(new(recorder.Canvas), w, h)
}

// size returns the picture's size, the data area having the data
// window's aspect ratio, and the height of the legend strip.
func (mp *mapPicture) size() (w, h, legendH vg.Length) {
	p := mp.plot
	aspect := (p.Y.Max - p.Y.Min) / (p.X.Max - p.X.Min)
	// Measure the data area on a trial canvas, then grow or shrink the
	// height.
	trialH := vg.Length(float64(mapPlotW) * aspect)
	da := p.DataCanvas(measuringCanvas(mapPlotW, trialH))
	dw, dh := da.Max.X-da.Min.X, da.Max.Y-da.Min.Y
	plotH := trialH + vg.Length(float64(dw)*aspect) - dh
	if mp.entries > 0 {
		legendH = mp.legend.Rectangle(measuringCanvas(mapPlotW, plotH)).Size().Y + vg.Points(6)
	}
	return mapPlotW + mapBarW, plotH + legendH, legendH
}

// mapLayout is what a map's PNG and SVG pictures share, computed once
// for both by layout: the colour range and its label, the data window
// (mm), the field's raster and the picture's size.
type mapLayout struct {
	lo, hi                 float64
	unit                   string
	below                  bool // hatch the cells below lo
	xmin, xmax, ymin, ymax float64
	raster                 *image.NRGBA
	width, height, legendH vg.Length
}

// layout checks the map and lays it out: the colour range, the data
// window, the raster (the data area's size in pixels at pictureDPI,
// measured on a canvas of the final width without the overlays; the
// height follows the aspect ratio) and the picture's size (measured with
// them).
func (m *MapSpec) layout() (*mapLayout, error) {
	if err := m.validate(); err != nil {
		return nil, err
	}
	box := m.crop()
	l := &mapLayout{}
	l.lo, l.hi, l.unit, l.below = m.colourRange(box)
	l.xmin, l.xmax, l.ymin, l.ymax = m.extentMM(box)
	ras := &mapRaster{m: m, lo: l.lo, hi: l.hi, colors: scaleColors(m.Controls, 256), hatch: l.below,
		xmin: l.xmin, xmax: l.xmax, ymin: l.ymin, ymax: l.ymax}
	aspect := (l.ymax - l.ymin) / (l.xmax - l.xmin)
	da := m.axesPlot(l).DataCanvas(measuringCanvas(mapPlotW, vg.Length(float64(mapPlotW)*aspect)))
	wpx := max(1, int(float64(da.Max.X-da.Min.X)/vg.Inch.Points()*pictureDPI+0.5))
	hpx := max(1, int(float64(wpx)*aspect+0.5))
	l.raster = ras.image(wpx, hpx)
	mp, err := m.picture(l)
	if err != nil {
		return nil, err
	}
	l.width, l.height, l.legendH = mp.size()
	return l, nil
}

// plots lays the map out and builds its plot, colour bar and legend.
func (m *MapSpec) plots() (*mapPicture, error) {
	l, err := m.layout()
	if err != nil {
		return nil, err
	}
	return m.picture(l)
}

// axesPlot returns the map's plot with its title, axis labels and data
// window, nothing drawn in it yet.
func (m *MapSpec) axesPlot(l *mapLayout) *plot.Plot {
	p := plot.New()
	title := m.Title
	if slices.Contains(m.Interpolated, true) {
		title += " (grey: interpolated, no scan data)"
	}
	p.Title.Text = titleText(title, m.Labels)
	p.X.Label.Text = "x (mm)"
	p.Y.Label.Text = "y (mm)"
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = l.xmin, l.xmax, l.ymin, l.ymax
	return p
}

// picture builds the map's plot (the raster of l and the overlays), its
// colour bar and its legend: new ones for each picture drawn, as drawing
// a plot changes it.
func (m *MapSpec) picture(l *mapLayout) (*mapPicture, error) {
	p := m.axesPlot(l)
	p.Add(plotter.NewImage(l.raster, l.xmin, l.ymin, l.xmax, l.ymax))
	mp := &mapPicture{plot: p, raster: l.raster, legend: plot.NewLegend()}
	legend := &mp.legend
	legend.Top, legend.Left = true, true
	legend.TextStyle.Font.Size = vg.Points(11)
	legend.Padding = vg.Points(3)
	if r := m.ZoneDiameterMM / 2; r > 0 {
		z := &circleOutline{X: m.ZoneCentreMM[0], Y: m.ZoneCentreMM[1], R: r}
		p.Add(z)
		legend.Add(fmt.Sprintf("heating zone, %s mm across", strconv.FormatFloat(m.ZoneDiameterMM, 'f', -1, 64)), z)
		mp.entries++
	}
	if len(m.MarksMM) > 0 {
		pts := make(plotter.XYs, len(m.MarksMM))
		for i, c := range m.MarksMM {
			pts[i].X, pts[i].Y = c[0], c[1]
		}
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle = markStyle
		p.Add(sc)
		if m.MarkLabel != "" {
			legend.Add(m.MarkLabel, sc)
			mp.entries++
		}
	}
	if l.below {
		legend.Add(m.BelowZeroLabel, hatchSwatch{})
		mp.entries++
	}

	cb := plot.New()
	cb.HideX()
	cb.Y.Label.Text = l.unit
	cb.Y.Tick.Marker = shortTicks{}
	cb.Add(&plotter.ColorBar{ColorMap: newScale(m.Controls, l.lo, l.hi), Vertical: true, Colors: 256})
	mp.bar = cb
	return mp, nil
}

// markStyle is the support-point marker: a white disc in a dark ring with
// a dark centre dot, visible on every colour of the scales.
var markStyle = draw.GlyphStyle{Shape: ringGlyph{}, Radius: vg.Points(5.5), Color: inkDark}

// ringGlyph draws a two-tone marker: a dark disc of the style's radius, a
// white disc inside it, and a dark dot at the point itself.
type ringGlyph struct{}

func (ringGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius
	c.FillPolygon(inkDark, circlePoints(pt, r))
	c.FillPolygon(inkLight, circlePoints(pt, r-vg.Points(1.8)))
	c.FillPolygon(inkDark, circlePoints(pt, vg.Points(1.2)))
}

func circlePoints(ctr vg.Point, r vg.Length) []vg.Point {
	const n = 32
	pts := make([]vg.Point, n)
	for k := range pts {
		a := 2 * math.Pi * float64(k) / n
		pts[k] = vg.Point{X: ctr.X + r*vg.Length(math.Cos(a)), Y: ctr.Y + r*vg.Length(math.Sin(a))}
	}
	return pts
}

// circleOutline is a circle in data coordinates (mm) drawn as a dark
// dashed line over a white one, so it shows on dark and light colours.
type circleOutline struct{ X, Y, R float64 }

var (
	outlineUnder = draw.LineStyle{Color: inkLight, Width: vg.Points(3)}
	outlineOver  = draw.LineStyle{Color: inkDark, Width: vg.Points(1.4),
		Dashes: []vg.Length{vg.Points(6), vg.Points(3)}}
)

func (o *circleOutline) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	const n = 180
	pts := make([]vg.Point, n+1)
	for k := range pts {
		a := 2 * math.Pi * float64(k) / n
		pts[k] = vg.Point{X: trX(o.X + o.R*math.Cos(a)), Y: trY(o.Y + o.R*math.Sin(a))}
	}
	c.StrokeLines(outlineUnder, c.ClipLinesXY(pts)...)
	c.StrokeLines(outlineOver, c.ClipLinesXY(pts)...)
}

func (o *circleOutline) Thumbnail(c *draw.Canvas) {
	y := c.Center().Y
	c.StrokeLine2(outlineUnder, c.Min.X, y, c.Max.X, y)
	c.StrokeLine2(outlineOver, c.Min.X, y, c.Max.X, y)
}

// hatchSwatch is the legend thumbnail of hatched cells.
type hatchSwatch struct{}

func (hatchSwatch) Thumbnail(c *draw.Canvas) {
	r := c.Rectangle
	r.Min.Y += vg.Points(2)
	r.Max.Y -= vg.Points(2)
	c.FillPolygon(hatchLight, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}})
	sty := draw.LineStyle{Color: inkDark, Width: vg.Points(1.2)}
	h := r.Max.Y - r.Min.Y
	for x := r.Min.X - h; x < r.Max.X; x += vg.Points(4.5) {
		pts := []vg.Point{{X: x, Y: r.Min.Y}, {X: x + h, Y: r.Max.Y}}
		c.StrokeLines(sty, clipSegment(pts, r))
	}
	c.StrokeLines(draw.LineStyle{Color: inkDark, Width: vg.Points(0.5)},
		[]vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}, r.Min})
}

// clipSegment clips a 45° segment to r.
func clipSegment(s []vg.Point, r vg.Rectangle) []vg.Point {
	a, b := s[0], s[1]
	if a.X < r.Min.X {
		a.Y += r.Min.X - a.X
		a.X = r.Min.X
	}
	if b.X > r.Max.X {
		b.Y -= b.X - r.Max.X
		b.X = r.Max.X
	}
	return []vg.Point{a, b}
}

// RingChartSpec is the ring chart: flux per ring of the scan and its flat
// twin against the ring's mid radius.
type RingChartSpec struct {
	Title  string
	Labels PictureLabels
	Rings  []RingReport
	// ZoneRadiusMM, when positive, marks the heating zone's edge (drawn
	// only for a zone centred under the pan).
	ZoneRadiusMM float64
}

// ringChart is the ring chart laid out: two panels, each with its legend
// in the column to the right of the panels.
type ringChart struct {
	panels  [2]*plot.Plot
	legends [2]plot.Legend
}

// The ring chart's size.
const (
	ringChartW = 17 * vg.Centimeter
	ringChartH = 15 * vg.Centimeter
)

// WriteRingChart renders the ring chart as "png" or "svg": above, the heat
// flux into the pan per ring for the scan and its flat twin; below, the
// ring's mean and largest gap, on the same radius axis.
func WriteRingChart(w io.Writer, s *RingChartSpec, format string) error {
	rc, err := newRingChart(s)
	if err != nil {
		return err
	}
	return rc.write(w, format)
}

// write draws the chart's two panels and their legends as format ("png"
// or "svg") to w.
func (rc *ringChart) write(w io.Writer, format string) error {
	c, err := newCanvas(format, ringChartW, ringChartH)
	if err != nil {
		return err
	}
	plotCs, legendCs := rc.layout(draw.New(c))
	for k, p := range rc.panels {
		p.Draw(plotCs[k])
		rc.legends[k].Draw(legendCs[k])
	}
	_, err = c.WriteTo(w)
	return err
}

// layout returns the panels' canvases and their legends' canvases: the
// legends sit in a column right of the panels, level with each panel's
// data area, so they never cover a curve.
func (rc *ringChart) layout(dc draw.Canvas) (plots, legends [2]draw.Canvas) {
	tiles := draw.Tiles{Rows: 2, Cols: 1, PadTop: vg.Points(4), PadBottom: vg.Points(4), PadLeft: vg.Points(4),
		PadRight: vg.Points(8), PadY: vg.Points(10)}
	var lw vg.Length
	for k := range rc.legends {
		lw = max(lw, rc.legends[k].Rectangle(dc).Size().X)
	}
	left := draw.Crop(dc, 0, -(lw + vg.Points(8)), 0, 0)
	cs := plot.Align([][]*plot.Plot{{rc.panels[0]}, {rc.panels[1]}}, tiles, left)
	for k := range rc.panels {
		plots[k] = cs[k][0]
		da := rc.panels[k].DataCanvas(plots[k])
		lc := da
		lc.Min.X = left.Max.X + vg.Points(4)
		lc.Max.X = dc.Max.X
		legends[k] = lc
	}
	return plots, legends
}

// newRingChart builds the chart's two panels and their legends.
func newRingChart(s *RingChartSpec) (*ringChart, error) {
	rc := &ringChart{}
	for k := range rc.legends {
		rc.legends[k] = plot.NewLegend()
		rc.legends[k].Top, rc.legends[k].Left = true, true
		rc.legends[k].TextStyle.Font.Size = vg.Points(11)
		rc.legends[k].Padding = vg.Points(3)
	}
	top, err := fluxPanel(s, &rc.legends[0])
	if err != nil {
		return nil, err
	}
	bottom, err := gapPanel(s, &rc.legends[1])
	if err != nil {
		return nil, err
	}
	rc.panels = [2]*plot.Plot{top, bottom}
	rmax := 1.0
	for _, r := range s.Rings {
		rmax = math.Max(rmax, r.ROutMM)
	}
	if s.ZoneRadiusMM > 0 && s.ZoneRadiusMM < 2*rmax {
		for k, p := range rc.panels {
			edge := newVLine(s.ZoneRadiusMM)
			p.Add(edge)
			rc.legends[k].Add("heating zone edge", edge)
		}
		rmax = math.Max(rmax, 1.04*s.ZoneRadiusMM) // off the frame
	}
	for _, p := range rc.panels {
		p.X.Min, p.X.Max = 0, rmax
		p.X.Tick.Marker = shortTicks{}
		p.Y.Tick.Marker = shortTicks{}
	}
	return rc, nil
}

// Ring chart curve colours.
var (
	curveGrey = color.NRGBA{R: 0x80, G: 0x80, B: 0x80, A: 0xff}
	curveRed  = color.NRGBA{R: 0xb0, G: 0x30, B: 0x1c, A: 0xff}
	curveBlue = color.NRGBA{R: 0x2e, G: 0x3f, B: 0x8f, A: 0xff}
)

// fluxPanel is the chart's upper panel: flux per ring, kW/m², of the scan
// and its flat twin; below zero, where the pan heats the glass, a zero
// line and a legend note say so.
func fluxPanel(s *RingChartSpec, legend *plot.Legend) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = titleText(s.Title, s.Labels)
	p.Y.Label.Text = "heat flux into the pan (kW/m²)"
	p.Add(plotter.NewGrid())
	scan, flat := make(plotter.XYs, len(s.Rings)), make(plotter.XYs, len(s.Rings))
	fmin := 0.0
	for i, r := range s.Rings {
		mid := (r.RInMM + r.ROutMM) / 2
		scan[i] = plotter.XY{X: mid, Y: r.FluxKWM2}
		flat[i] = plotter.XY{X: mid, Y: r.FlatFluxKWM2}
		fmin = math.Min(fmin, math.Min(r.FluxKWM2, r.FlatFluxKWM2))
	}
	if err := addCurve(p, legend, flat, curveGrey, true, draw.CircleGlyph{}, "flat twin"); err != nil {
		return nil, err
	}
	if err := addCurve(p, legend, scan, curveRed, false, draw.BoxGlyph{}, "scan"); err != nil {
		return nil, err
	}
	p.Y.Min = 0
	if fmin < 0 {
		p.Y.Min = fmin
		zero := &plotter.Function{F: func(float64) float64 { return 0 }, LineStyle: draw.LineStyle{Color: inkDark, Width: vg.Points(0.8)}}
		p.Add(zero)
		legend.Add("below 0: heat flows", zero)
		legend.Add("back into the glass")
	}
	return p, nil
}

// gapPanel is the chart's lower panel: mean and largest gap per ring, mm.
func gapPanel(s *RingChartSpec, legend *plot.Legend) (*plot.Plot, error) {
	p := plot.New()
	p.X.Label.Text = "ring mid radius (mm)"
	p.Y.Label.Text = "gap (mm)"
	p.Add(plotter.NewGrid())
	mean, largest := make(plotter.XYs, len(s.Rings)), make(plotter.XYs, len(s.Rings))
	gmax := 0.0
	for i, r := range s.Rings {
		mid := (r.RInMM + r.ROutMM) / 2
		mean[i] = plotter.XY{X: mid, Y: r.MeanGapMM}
		largest[i] = plotter.XY{X: mid, Y: r.MaxGapMM}
		gmax = math.Max(gmax, r.MaxGapMM)
	}
	if err := addCurve(p, legend, largest, curveGrey, true, draw.TriangleGlyph{}, "largest"); err != nil {
		return nil, err
	}
	if err := addCurve(p, legend, mean, curveBlue, false, draw.BoxGlyph{}, "mean"); err != nil {
		return nil, err
	}
	p.Y.Min = 0
	if !(gmax > 0) {
		p.Y.Max = 0.01
	}
	return p, nil
}

// addCurve adds a line with point markers to p and its entry to legend.
func addCurve(p *plot.Plot, legend *plot.Legend, xy plotter.XYs, c color.Color, dashed bool, glyph draw.GlyphDrawer, label string) error {
	line, pts, err := plotter.NewLinePoints(xy)
	if err != nil {
		return fmt.Errorf("ring chart, %s: %w", label, err)
	}
	line.Color, pts.Color, pts.Shape = c, c, glyph
	line.Width = vg.Points(1.5)
	if dashed {
		line.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		line.Width = vg.Points(1)
	}
	p.Add(line, pts)
	legend.Add(label, line, pts)
	return nil
}

// vLine is a vertical dash-dotted line at X across the data area.
type vLine struct {
	X   float64
	sty draw.LineStyle
}

func newVLine(x float64) *vLine {
	return &vLine{X: x, sty: draw.LineStyle{Color: color.NRGBA{R: 0x3a, G: 0x6e, B: 0x2a, A: 0xff}, Width: vg.Points(1.2),
		Dashes: []vg.Length{vg.Points(6), vg.Points(2), vg.Points(1.5), vg.Points(2)}}}
}

func (l *vLine) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	x := trX(l.X)
	c.StrokeLine2(l.sty, x, c.Min.Y, x, c.Max.Y)
}

func (l *vLine) Thumbnail(c *draw.Canvas) {
	y := c.Center().Y
	c.StrokeLine2(l.sty, c.Min.X, y, c.Max.X, y)
}

// robustRange returns the colour range of a field, its values in one or
// more slices (the rows of a map's box): from its minimum to its
// maximum, or to its 99.5th percentile when a few extreme cells (a contact
// line, say) would otherwise wash out the rest of the map. The percentile
// is the value of rank ⌊0.995·(n−1)⌋ among the n finite values, found by
// selection in linear expected time (a full sort took 0.4 s on a
// 1.4 M-cell grid). The finite values are counted (and the extremes
// found) before they are copied, so that the copy holds only them: the
// rows of a base's box are about a fifth outside the disc (1 − π/4).
func robustRange(values ...[]float64) (lo, hi float64, clipped bool) {
	n := 0
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, row := range values {
		for _, x := range row {
			if x-x == 0 { // finite: NaN and ±Inf give NaN
				n++
				lo, hi = min(lo, x), max(hi, x)
			}
		}
	}
	if n == 0 {
		return 0, 1, false
	}
	v := make([]float64, 0, n)
	for _, row := range values {
		for _, x := range row {
			if x-x == 0 {
				v = append(v, x)
			}
		}
	}
	if p := order.Select(v, int(0.995*float64(len(v)-1))); p-lo < 0.5*(hi-lo) {
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

// newCanvas returns a PNG (pictureDPI, fastPNGCanvas) or SVG
// (fastSVGCanvas) canvas of the given size.
func newCanvas(format string, width, height vg.Length) (vg.CanvasWriterTo, error) {
	switch format {
	case "png":
		return newFastPNGCanvas(width, height), nil
	case "svg":
		return newFastSVGCanvas(width, height)
	}
	return nil, fmt.Errorf("picture format %q: want png or svg", format)
}

// countWriter counts the bytes written through it.
type countWriter struct {
	w io.Writer
	n int64
}

func (c *countWriter) Write(p []byte) (int, error) {
	n, err := c.w.Write(p)
	c.n += int64(n)
	return n, err
}

// belowZeroFlux names the hatched cells of a flux map.
const belowZeroFlux = "flux below 0: heat flows back into the glass"

// svgDocs keeps the SVG documents report.html embeds (gap, flux, rings),
// by name, as their files are written, so that the page need not read
// them back; a nil *svgDocs keeps nothing.
type svgDocs struct {
	mu   sync.Mutex
	docs map[string][]byte
}

// write draws a picture with draw into w, keeping the document as name.
func (s *svgDocs) write(w io.Writer, name string, draw func(io.Writer) error) error {
	if s == nil {
		return draw(w)
	}
	var doc bytes.Buffer
	if err := draw(&doc); err != nil {
		return err
	}
	s.mu.Lock()
	if s.docs == nil {
		s.docs = map[string][]byte{}
	}
	s.docs[name] = doc.Bytes()
	s.mu.Unlock()
	_, err := w.Write(doc.Bytes())
	return err
}

// pictureTasks returns the writes of the gap and flux maps and the ring
// chart of res into dir, each as PNG and SVG, one file a task, in the
// order their errors are reported; the SVG documents go to keep as well.
// Gaps are in mm, as in rings.csv; fluxes in kW/m².
func pictureTasks(dir string, res *Result, keep *svgDocs) []func() error {
	rep := res.Report
	labels := PictureLabels{PartNumber: res.PartNumber, Lot: res.Lot}
	if v := rep.Verdict; v != nil {
		labels.Verdict = "FAIL"
		switch {
		case v.Pass:
			labels.Verdict = "PASS"
		case v.Result == ResultInconclusive:
			labels.Verdict = "INCONCLUSIVE"
		}
	}
	title := res.Name
	var tasks []func() error
	if s := res.Form; s != nil && res.GapM != nil {
		inBase := func(src []float64, scale float64) []float64 { return baseValues(s, src, scale) }
		spec := &MapSpec{Title: "gap under " + title, Labels: labels, Unit: "gap (mm)", Nx: s.Nx, Ny: s.Ny,
			X0MM: s.X0M * 1e3, Y0MM: s.Y0M * 1e3, CellMM: s.CellM * 1e3, Values: inBase(res.GapM, 1e3),
			Controls: gapControls, MarkLabel: "support points", BaseRadiusMM: res.RadiusM * 1e3,
			ZoneDiameterMM: res.ZoneDiameterM * 1e3, ZoneCentreMM: [2]float64{res.ZoneCentreM[0] * 1e3, res.ZoneCentreM[1] * 1e3},
			Interpolated: unmeasured(s)}
		if res.Pose != nil {
			for _, c := range res.Pose.ContactPointsM {
				spec.MarksMM = append(spec.MarksMM, [2]float64{c[0] * 1e3, c[1] * 1e3})
			}
		}
		tasks = append(tasks, mapFileTasks(dir, "gap", spec, keep)...)
		if res.Scan != nil {
			fspec := *spec
			fspec.Title, fspec.Unit, fspec.Controls = "heat flux into "+title, "heat flux into the pan (kW/m²)", fluxControls
			fspec.Values, fspec.BelowZeroLabel = inBase(res.Scan.FluxWM2, 1e-3), belowZeroFlux
			tasks = append(tasks, mapFileTasks(dir, "flux", &fspec, keep)...)
		}
	}
	if len(rep.Rings) > 0 {
		spec := &RingChartSpec{Title: "heat flux by ring: " + title, Labels: labels, Rings: rep.Rings}
		if res.ZoneCentreM == [2]float64{} {
			spec.ZoneRadiusMM = res.ZoneDiameterM * 1e3 / 2
		}
		tasks = append(tasks, func() error {
			return WriteFileAtomic(filepath.Join(dir, "rings.png"), func(w io.Writer) error {
				return WriteRingChart(w, spec, "png")
			})
		}, func() error {
			return WriteFileAtomic(filepath.Join(dir, "rings.svg"), func(w io.Writer) error {
				return keep.write(w, "rings", func(w io.Writer) error { return WriteRingChart(w, spec, "svg") })
			})
		})
	}
	return tasks
}

// runParallel runs tasks, up to one per available processor at a time, and
// returns the error of the first task in the list that failed (so the
// error does not depend on the scheduling), or nil.
func runParallel(tasks []func() error) error {
	errs := make([]error, len(tasks))
	next := make(chan int, len(tasks))
	for i := range tasks {
		next <- i
	}
	close(next)
	var wg sync.WaitGroup
	for range min(len(tasks), runtime.GOMAXPROCS(0)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				errs[i] = tasks[i]()
			}
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// baseValues returns src scaled by scale in the base cells of s and NaN
// elsewhere (a map draws only the base).
func baseValues(s *scan.Surface, src []float64, scale float64) []float64 {
	out := make([]float64, len(src))
	for k, v := range src {
		out[k] = math.NaN()
		if s.InBase(k) {
			out[k] = v * scale
		}
	}
	return out
}

// unmeasured marks the Filled cells of s with no Measured cell among their
// eight neighbours: the places farther than about a cell (the point
// spacing, with the automatic cell) from any scan point. Isolated empty
// cells of a sparse cloud stay unmarked. nil when there are none.
func unmeasured(s *scan.Surface) []bool {
	var out []bool
	for j := range s.Ny {
		for i := range s.Nx {
			if s.State[s.Index(i, j)] != scan.Filled || nearMeasured(s, i, j) {
				continue
			}
			if out == nil {
				out = make([]bool, len(s.State))
			}
			out[s.Index(i, j)] = true
		}
	}
	return out
}

// nearMeasured reports whether a neighbour of cell (i, j) is Measured.
func nearMeasured(s *scan.Surface, i, j int) bool {
	for dj := -1; dj <= 1; dj++ {
		for di := -1; di <= 1; di++ {
			ii, jj := i+di, j+dj
			if ii >= 0 && jj >= 0 && ii < s.Nx && jj < s.Ny && s.State[s.Index(ii, jj)] == scan.Measured {
				return true
			}
		}
	}
	return false
}

// writeMapFiles writes spec as dir/name.png and dir/name.svg.
func writeMapFiles(dir, name string, spec *MapSpec) error {
	return runParallel(mapFileTasks(dir, name, spec, nil))
}

// mapFileTasks returns the writes of writeMapFiles, PNG first; the SVG
// document goes to keep as well. The two share one layout (colour range,
// raster, size), made by whichever runs first.
func mapFileTasks(dir, name string, spec *MapSpec, keep *svgDocs) []func() error {
	layout := sync.OnceValues(spec.layout)
	var tasks []func() error
	for _, ext := range []string{"png", "svg"} {
		tasks = append(tasks, func() error {
			return WriteFileAtomic(filepath.Join(dir, name+"."+ext), func(w io.Writer) error {
				l, err := layout()
				if err != nil {
					return err
				}
				if ext == "svg" {
					return keep.write(w, name, func(w io.Writer) error { return spec.write(w, l, ext) })
				}
				return spec.write(w, l, ext)
			})
		})
	}
	return tasks
}
