package html

import (
	"bytes"
	"fmt"
	"html/template"
	"math"
	"strconv"
)

// Cell states of a CellMap.
const (
	CellOutside  uint8 = 0
	CellMeasured uint8 = 1
	CellFilled   uint8 = 2 // interpolated, not measured
)

// CellMap is the base grid's cells by state, drawn as an inline SVG with
// the base outline, the heating zone and the support points.
type CellMap struct {
	Nx, Ny       int
	X0MM, Y0MM   float64 // centre of cell (0, 0)
	CellMM       float64
	State        []uint8 // CellOutside, CellMeasured or CellFilled, row-major from (0, 0)
	BaseRadiusMM float64 // base circle about the origin; 0 = none
	// ZoneDiameterMM > 0 draws the heating zone centred at ZoneCentreMM.
	ZoneDiameterMM float64
	ZoneCentreMM   [2]float64
	SupportMM      [][2]float64
}

// FilledPct is the share of the base cells that are interpolated, %.
func (m *CellMap) FilledPct() float64 {
	var base, filled int
	for _, s := range m.State {
		if s != CellOutside {
			base++
		}
		if s == CellFilled {
			filled++
		}
	}
	if base == 0 {
		return 0
	}
	return 100 * float64(filled) / float64(base)
}

// SVG draws the map, y up, 1 user unit = 1 mm: measured cells in light
// grey, interpolated cells hatched dark (runs of cells along each row, so
// the size grows with the outline of the filled areas, not their area),
// the base circle, the zone (dashed) and the support points (rings).
func (m *CellMap) SVG() (template.HTML, error) {
	if m.Nx <= 0 || m.Ny <= 0 || len(m.State) != m.Nx*m.Ny || !(m.CellMM > 0) {
		return "", fmt.Errorf("cell map: %d states for %d×%d cells of %g mm", len(m.State), m.Nx, m.Ny, m.CellMM)
	}
	f := func(v float64) string { return strconv.FormatFloat(math.Round(v*1000)/1000, 'f', -1, 64) }
	h := m.CellMM / 2
	x0, y0 := m.X0MM-h, m.Y0MM-h
	x1, y1 := m.X0MM+float64(m.Nx)*m.CellMM-h, m.Y0MM+float64(m.Ny)*m.CellMM-h
	if r := m.BaseRadiusMM; r > 0 {
		x0, y0, x1, y1 = math.Min(x0, -r), math.Min(y0, -r), math.Max(x1, r), math.Max(y1, r)
	}
	if d := m.ZoneDiameterMM; d > 0 {
		cx, cy, r := m.ZoneCentreMM[0], m.ZoneCentreMM[1], d/2
		x0, y0, x1, y1 = math.Min(x0, cx-r), math.Min(y0, cy-r), math.Max(x1, cx+r), math.Max(y1, cy+r)
	}
	pad := 0.03 * math.Max(x1-x0, y1-y0)
	x0, y0, x1, y1 = x0-pad, y0-pad, x1+pad, y1+pad
	var b bytes.Buffer
	// The SVG y axis points down: flip it so +y of the base frame is up.
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" class="cellmap" viewBox="%s %s %s %s" role="img" aria-label="measured and interpolated cells">`,
		f(x0), f(-y1), f(x1-x0), f(y1-y0))
	sw := f(math.Max(x1-x0, y1-y0) / 300) // a hairline at any base size
	fmt.Fprintf(&b, `<defs><pattern id="hatch" patternUnits="userSpaceOnUse" width="%s" height="%s" patternTransform="rotate(45)"><rect width="%s" height="%s" fill="#fff"/><rect width="%s" height="%s" fill="#222"/></pattern></defs>`,
		f(4*m.CellMM), f(4*m.CellMM), f(4*m.CellMM), f(4*m.CellMM), f(2*m.CellMM), f(4*m.CellMM))
	fmt.Fprintf(&b, `<g transform="scale(1,-1)">`)
	m.runs(&b, CellMeasured, `#d9d9d9`, f)
	m.runs(&b, CellFilled, `url(#hatch)`, f)
	if r := m.BaseRadiusMM; r > 0 {
		fmt.Fprintf(&b, `<circle cx="0" cy="0" r="%s" fill="none" stroke="#000" stroke-width="%s"/>`, f(r), sw)
	}
	if d := m.ZoneDiameterMM; d > 0 {
		fmt.Fprintf(&b, `<circle cx="%s" cy="%s" r="%s" fill="none" stroke="#000" stroke-width="%s" stroke-dasharray="%s %s"/>`,
			f(m.ZoneCentreMM[0]), f(m.ZoneCentreMM[1]), f(d/2), sw, f(6*m.CellMM), f(3*m.CellMM))
	}
	rr := math.Max(x1-x0, y1-y0) / 110
	for _, p := range m.SupportMM {
		fmt.Fprintf(&b, `<circle cx="%s" cy="%s" r="%s" fill="#fff" stroke="#000" stroke-width="%s"/>`, f(p[0]), f(p[1]), f(rr), f(1.5*math.Max(x1-x0, y1-y0)/300))
	}
	b.WriteString(`</g></svg>`)
	return template.HTML(b.String()), nil
}

// runs writes one path of rectangles covering the runs of cells in state
// st along each row.
func (m *CellMap) runs(b *bytes.Buffer, st uint8, fill string, f func(float64) string) {
	h := m.CellMM / 2
	var d bytes.Buffer
	for j := 0; j < m.Ny; j++ {
		row := m.State[j*m.Nx : (j+1)*m.Nx]
		for i := 0; i < m.Nx; {
			if row[i] != st {
				i++
				continue
			}
			k := i
			for k < m.Nx && row[k] == st {
				k++
			}
			x := m.X0MM + float64(i)*m.CellMM - h
			y := m.Y0MM + float64(j)*m.CellMM - h
			fmt.Fprintf(&d, "M%s %sh%sv%sh-%sz", f(x), f(y), f(float64(k-i)*m.CellMM), f(m.CellMM), f(float64(k-i)*m.CellMM))
			i = k
		}
	}
	if d.Len() > 0 {
		fmt.Fprintf(b, `<path fill="%s" shape-rendering="crispEdges" d="%s"/>`, fill, d.String())
	}
}
