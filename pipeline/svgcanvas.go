package pipeline

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"

	"gonum.org/v1/plot/vg"

	"gapflux/pipeline/svgfit"
)

// fastSVGCanvas is svgfit's canvas (vgsvg's, with each text given its
// laid-out width) with its images encoded faster: vgsvg embeds each image
// as image/png's file at the default compression level (most of the time
// of a map's SVG, for its raster of some 530 × 530 pixels), labelled
// image/jpg. Here vgsvg draws a one-pixel placeholder instead, and WriteTo
// puts in its place the image itself as a PNG by writeNRGBAPNG (any other
// image type by image/png at its fastest level), labelled image/png. The
// decoded pixels are the same as vgsvg's; the rest of the document is
// svgfit's to the byte.
type fastSVGCanvas struct {
	*svgfit.Canvas
	images      []image.Image // drawn, in order
	placeholder []byte        // the placeholder's image reference in vgsvg's document
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
	return &fastSVGCanvas{Canvas: svgfit.New(width, height), placeholder: []byte(ref)}, nil
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

// WriteTo writes svgfit's document with each placeholder reference
// replaced, in order, by the reference to the image drawn there.
func (c *fastSVGCanvas) WriteTo(w io.Writer) (int64, error) {
	var doc bytes.Buffer
	if _, err := c.Canvas.WriteTo(&doc); err != nil {
		return 0, err
	}
	cw := &countWriter{w: w}
	rest := doc.Bytes()
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
	_, err := cw.Write(rest)
	return cw.n, err
}

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
