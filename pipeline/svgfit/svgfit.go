// Package svgfit is an SVG canvas for gonum/plot whose text keeps the width
// the plot's layout gave it, whatever font the reader draws it in.
//
// gonum/plot lays text out with the metrics of its fonts (Liberation Serif
// by default), and its SVG canvas (vgsvg) names the font without
// embedding it. A reader without that font draws the text in one of its
// own, and a wider one runs labels and legends off the picture (seen in
// Chromium on Debian, which falls back to DejaVu). A Canvas writes vgsvg's
// document with each text element given the width its string has in the
// layout, as the attributes textLength and
// lengthAdjust="spacingAndGlyphs" (SVG 1.1, section 10.5), so that the
// reader squeezes or stretches its own font into the same room. Embedding
// the font instead would add some 400 kB to every picture.
package svgfit

import (
	"bytes"
	"fmt"
	"io"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Canvas is vgsvg's canvas whose WriteTo gives each text element its
// laid-out width. Everything but the text elements' two added attributes
// is vgsvg's document to the byte.
type Canvas struct {
	*vgsvg.Canvas
	widths []vg.Length // of the strings drawn, in order
}

// New returns a Canvas of the given size.
func New(width, height vg.Length) *Canvas {
	return &Canvas{Canvas: vgsvg.NewWith(vgsvg.UseWH(width, height))}
}

// FillString draws str with its left end at pt, as vgsvg does, and keeps
// its width in the font for WriteTo.
func (c *Canvas) FillString(f font.Face, pt vg.Point, str string) {
	c.widths = append(c.widths, f.Width(str))
	c.Canvas.FillString(f, pt, str)
}

// WriteTo writes vgsvg's document with each text element given its
// string's width.
func (c *Canvas) WriteTo(w io.Writer) (int64, error) {
	var doc bytes.Buffer
	if _, err := c.Canvas.WriteTo(&doc); err != nil {
		return 0, err
	}
	out, err := fitText(doc.Bytes(), c.widths)
	if err != nil {
		return 0, err
	}
	n, err := w.Write(out)
	return int64(n), err
}

// textStart is how vgsvg begins every text element. It escapes the
// strings it writes, so the sequence begins a text element wherever it
// occurs.
const textStart = `<text x="`

// textDigits is the significant digits of a textLength: vgsvg's own
// precision for coordinates (its unexported pr).
const textDigits = 5

// fitText returns doc with the attributes textLength (widths[k] in the
// document's units, points) and lengthAdjust="spacingAndGlyphs" added to
// its k-th text element; an empty string's element (width 0) is left as
// it is. The document must hold one text element per width.
func fitText(doc []byte, widths []vg.Length) ([]byte, error) {
	out := make([]byte, 0, len(doc)+64*len(widths))
	rest := doc
	for k, wd := range widths {
		at := bytes.Index(rest, []byte(textStart))
		if at < 0 {
			return nil, fmt.Errorf("svgfit: text %d of %d not found in the document", k+1, len(widths))
		}
		at += len("<text")
		out = append(out, rest[:at]...)
		if pt := wd.Points(); pt > 0 {
			out = fmt.Appendf(out, ` textLength="%.*g" lengthAdjust="spacingAndGlyphs"`, textDigits, pt)
		}
		rest = rest[at:]
	}
	if bytes.Contains(rest, []byte(textStart)) {
		return nil, fmt.Errorf("svgfit: more text elements in the document than the %d strings drawn", len(widths))
	}
	return append(out, rest...), nil
}
