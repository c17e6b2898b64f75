package pipeline

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// fastSVGCanvas is vgsvg's canvas with its images encoded faster and its
// text laid out as measured.
//
// Images: vgsvg embeds each image as image/png's file at the default
// compression level (most of the time of a map's SVG, for its raster of
// some 530 × 530 pixels), labelled image/jpg. Here vgsvg draws a
// one-pixel placeholder instead, and WriteTo puts in its place the image
// itself as a PNG by writeNRGBAPNG (any other image type by image/png at
// its fastest level), labelled image/png. The decoded pixels are the same
// as vgsvg's.
//
// Text: the plots are laid out with the metrics of their font (Liberation
// Serif), which vgsvg names but does not embed; a reader without it draws
// the text in a font of its own, and a wider one ran a legend off the
// picture (DejaVu Sans in Chromium on Debian). WriteTo gives each text
// element the width its string has in the layout, as the SVG attributes
// textLength and lengthAdjust="spacingAndGlyphs" (SVG 1.1, section 10.5),
// so that any reader fits the text into the room the layout gave it.
// Embedding the font instead would add some 400 kB to every picture.
//
// The rest of the document is vgsvg's to the byte.
type fastSVGCanvas struct {
	*vgsvg.Canvas
	images      []image.Image // drawn, in order
	placeholder []byte        // the placeholder's image reference in vgsvg's document
	widths      []vg.Length   // of the strings drawn, in order
}

// svgPlaceholderRef is the start of the image reference vgsvg writes for
// every image (text it writes escaped, so it never holds the quote).
const svgPlaceholderRef = `xlink:href="data:image/jpg;base64,`

// newFastSVGCanvas returns an SVG canvas of the given size.
func newFastSVGCanvas(width, height vg.Length) (*fastSVGCanvas, error) {
	var b bytes.Buffer
	if err := png.Encode(&b, svgPlaceholderImage()); err != nil {
		return nil, fmt.Errorf("svg image placeholder: %w", err)
	}
	ref := svgPlaceholderRef + base64.StdEncoding.EncodeToString(b.Bytes()) + `"`
	return &fastSVGCanvas{Canvas: vgsvg.NewWith(vgsvg.UseWH(width, height)), placeholder: []byte(ref)}, nil
}

// svgPlaceholderImage is the image vgsvg embeds in place of each image
// drawn: one pixel, the same every time.
func svgPlaceholderImage() image.Image {
	img := image.NewNRGBA(image.Rect(0, 0, 1, 1))
	img.SetNRGBA(0, 0, color.NRGBA{R: 0x5a, G: 0xa5, B: 0x3c, A: 0x7f})
	return img
}

// DrawImage draws img into rect: vgsvg writes the element with the
// placeholder, WriteTo the image.
func (c *fastSVGCanvas) DrawImage(rect vg.Rectangle, img image.Image) {
	c.images = append(c.images, img)
	c.Canvas.DrawImage(rect, svgPlaceholderImage())
}

// FillString draws str with its left end at pt, as vgsvg does, and keeps
// its width in the font for WriteTo.
func (c *fastSVGCanvas) FillString(f font.Face, pt vg.Point, str string) {
	c.widths = append(c.widths, f.Width(str))
	c.Canvas.FillString(f, pt, str)
}

// svgTextStart is how vgsvg begins every text element.
const svgTextStart = `<text x="`

// WriteTo writes vgsvg's document with each text element given its
// string's width (textLength), and each placeholder reference replaced,
// in order, by the reference to the image drawn there.
func (c *fastSVGCanvas) WriteTo(w io.Writer) (int64, error) {
	var doc bytes.Buffer
	if _, err := c.Canvas.WriteTo(&doc); err != nil {
		return 0, err
	}
	text, err := c.fitText(doc.Bytes())
	if err != nil {
		return 0, err
	}
	cw := &countWriter{w: w}
	rest := text
	for k, img := range c.images {
		at := bytes.Index(rest, c.placeholder)
		if at < 0 {
			return cw.n, fmt.Errorf("svg: image %d of %d not found in the document", k+1, len(c.images))
		}
		if _, err := cw.Write(rest[:at]); err != nil {
			return cw.n, err
		}
		if err := writeImageRef(cw, img); err != nil {
			return cw.n, fmt.Errorf("svg: image %d of %d: %w", k+1, len(c.images), err)
		}
		rest = rest[at+len(c.placeholder):]
	}
	_, err = cw.Write(rest)
	return cw.n, err
}

// fitText returns doc with the attributes textLength (the width drawn,
// in the document's units, points) and lengthAdjust="spacingAndGlyphs"
// added to each of its text elements, in order; an empty string's
// element is left as it is. vgsvg escapes the strings, so the start of a
// text element is found only where one begins.
func (c *fastSVGCanvas) fitText(doc []byte) ([]byte, error) {
	out := make([]byte, 0, len(doc)+64*len(c.widths))
	rest := doc
	for k, wd := range c.widths {
		at := bytes.Index(rest, []byte(svgTextStart))
		if at < 0 {
			return nil, fmt.Errorf("svg: text %d of %d not found in the document", k+1, len(c.widths))
		}
		out = append(out, rest[:at+len("<text")]...)
		if pt := wd.Points(); pt > 0 {
			out = fmt.Appendf(out, ` textLength="%.*g" lengthAdjust="spacingAndGlyphs"`, svgTextDigits, pt)
		}
		rest = rest[at+len("<text"):]
	}
	if bytes.Contains(rest, []byte(svgTextStart)) {
		return nil, fmt.Errorf("svg: more text elements in the document than the %d strings drawn", len(c.widths))
	}
	return append(out, rest...), nil
}

// svgTextDigits is the significant digits of a textLength: vgsvg's own
// precision for coordinates (its unexported pr).
const svgTextDigits = 5

// writeImageRef writes the attribute xlink:href="data:image/png;base64,…"
// referring to img encoded as a PNG.
func writeImageRef(w io.Writer, img image.Image) error {
	if _, err := io.WriteString(w, `xlink:href="data:image/png;base64,`); err != nil {
		return err
	}
	enc := base64.NewEncoder(base64.StdEncoding, w)
	var err error
	if m, ok := img.(*image.NRGBA); ok {
		err = writeNRGBAPNG(enc, m)
	} else {
		err = (&png.Encoder{CompressionLevel: png.BestSpeed}).Encode(enc, img)
	}
	if err != nil {
		return err
	}
	if err := enc.Close(); err != nil {
		return err
	}
	_, err = io.WriteString(w, `"`)
	return err
}
