package pipeline

import (
	"bytes"
	"encoding/base64"
	"image"
	"image/color"
	"image/png"
	"reflect"
	"regexp"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// svgImageRef matches an image reference of an SVG document: its mime
// label and its base64 data.
var svgImageRef = regexp.MustCompile(`xlink:href="data:image/(jpg|png);base64,([A-Za-z0-9+/=]*)"`)

// svgParts splits an SVG document into the text around its image
// references, their mime labels and their data decoded.
func svgParts(t *testing.T, doc []byte) (text [][]byte, mimes []string, images [][]byte) {
	t.Helper()
	at := 0
	for _, m := range svgImageRef.FindAllSubmatchIndex(doc, -1) {
		text = append(text, doc[at:m[0]])
		mimes = append(mimes, string(doc[m[2]:m[3]]))
		b, err := base64.StdEncoding.DecodeString(string(doc[m[4]:m[5]]))
		if err != nil {
			t.Fatal(err)
		}
		images = append(images, b)
		at = m[1]
	}
	return append(text, doc[at:]), mimes, images
}

// decodePNG decodes a PNG file as image/png does.
func decodePNG(t *testing.T, b []byte) image.Image {
	t.Helper()
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	return img
}

// TestFastSVGCanvas: a map's SVG through fastSVGCanvas is vgsvg's
// document to the byte but for its text lengths and its images'
// references: each decodes to
// the same image (type, bounds and pixels) as vgsvg's, labelled
// image/png, the map's raster encoded by writeNRGBAPNG. The maps: plain,
// one with a base circle, a zone, veiled cells and hatching, and one with
// no cell empty (its raster still has the transparent margin about the
// grid; TestWriteNRGBAPNG covers opaque images).
func TestFastSVGCanvas(t *testing.T) {
	plain, full := benchDisc(60, 0.5, 10), fullMapSpec()
	noEmpty := benchDisc(40, 0.5, 0)
	for k := range noEmpty.Values {
		noEmpty.Values[k] = float64(k % 97)
	}
	for _, tc := range []struct {
		name string
		spec *MapSpec
	}{{"plain", plain}, {"full", full}, {"no empty cell", noEmpty}} {
		t.Run(tc.name, func(t *testing.T) {
			var fast bytes.Buffer
			if err := WriteMap(&fast, tc.spec, "svg"); err != nil {
				t.Fatal(err)
			}
			var slow bytes.Buffer
			var c *vgsvg.Canvas
			drawMapOn(t, tc.spec, func(w, h vg.Length) vg.CanvasSizer { c = vgsvg.NewWith(vgsvg.UseWH(w, h)); return c })
			if _, err := c.WriteTo(&slow); err != nil {
				t.Fatal(err)
			}
			// The text lengths fastSVGCanvas adds (TestSVGTextLengths checks
			// them) aside, the document is vgsvg's.
			fastText, fastMimes, fastImages := svgParts(t, svgTextLengthAttr.ReplaceAll(fast.Bytes(), nil))
			slowText, _, slowImages := svgParts(t, slow.Bytes())
			if len(slowImages) != 2 || len(fastImages) != len(slowImages) {
				t.Fatalf("%d images, vgsvg %d; want 2 (raster, colour bar)", len(fastImages), len(slowImages))
			}
			if !reflect.DeepEqual(fastText, slowText) {
				t.Error("the text around the images differs from vgsvg's")
			}
			for k := range slowImages {
				a, b := decodePNG(t, fastImages[k]), decodePNG(t, slowImages[k])
				if !reflect.DeepEqual(a, b) {
					t.Errorf("image %d: %T %v differs from vgsvg's %T %v", k, a, a.Bounds(), b, b.Bounds())
				}
				if fastMimes[k] != "png" {
					t.Errorf("image %d labelled image/%s", k, fastMimes[k])
				}
			}
			// The raster is writeNRGBAPNG's file of the drawn image.
			raster, ok := decodePNG(t, slowImages[0]).(*image.NRGBA)
			if !ok {
				t.Fatalf("the raster decodes to %T, want *image.NRGBA", decodePNG(t, slowImages[0]))
			}
			var want bytes.Buffer
			if err := writeNRGBAPNG(&want, raster); err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(fastImages[0], want.Bytes()) {
				t.Error("the raster is not writeNRGBAPNG's file")
			}
		})
	}
}

// TestWriteNRGBAPNG: writeNRGBAPNG's file decodes to what png.Encode's
// file of the same image decodes to (the same type, bounds and pixels):
// opaque, with transparent and translucent pixels, and with bounds not at
// the origin.
func TestWriteNRGBAPNG(t *testing.T) {
	img := func(r image.Rectangle, alpha func(x, y int) uint8) *image.NRGBA {
		m := image.NewNRGBA(r)
		for y := r.Min.Y; y < r.Max.Y; y++ {
			for x := r.Min.X; x < r.Max.X; x++ {
				m.SetNRGBA(x, y, color.NRGBA{R: uint8(3*x + y), G: uint8(x * y), B: uint8(x - 5*y), A: alpha(x, y)})
			}
		}
		return m
	}
	for _, tc := range []struct {
		name string
		img  *image.NRGBA
	}{
		{"opaque", img(image.Rect(0, 0, 37, 23), func(int, int) uint8 { return 0xff })},
		{"transparent corners", img(image.Rect(0, 0, 40, 40), func(x, y int) uint8 {
			if (x-20)*(x-20)+(y-20)*(y-20) > 400 {
				return 0
			}
			return 0xff
		})},
		{"translucent", img(image.Rect(0, 0, 19, 31), func(x, y int) uint8 { return uint8(7 * (x + y)) })},
		{"offset bounds", img(image.Rect(-4, 6, 30, 17), func(x, y int) uint8 { return uint8(x * y) })},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var got, want bytes.Buffer
			if err := writeNRGBAPNG(&got, tc.img); err != nil {
				t.Fatal(err)
			}
			if err := png.Encode(&want, tc.img); err != nil {
				t.Fatal(err)
			}
			a, b := decodePNG(t, got.Bytes()), decodePNG(t, want.Bytes())
			if !reflect.DeepEqual(a, b) {
				t.Errorf("decodes to %T %v, png.Encode's to %T %v, or the pixels differ", a, a.Bounds(), b, b.Bounds())
			}
		})
	}
}

// BenchmarkEmbedRaster encodes a 0.5 mm gap map's raster (about 530 ×
// 530 pixels) for its SVG: by image/png at the default level, as vgsvg
// does, and by writeNRGBAPNG.
func BenchmarkEmbedRaster(b *testing.B) {
	spec := benchDisc(200, 0.5, 0)
	spec.BaseRadiusMM = 100
	mp, err := spec.plots()
	if err != nil {
		b.Fatal(err)
	}
	img := mp.raster
	for _, enc := range []struct {
		name string
		f    func(*bytes.Buffer) error
	}{
		{"png.Encode", func(w *bytes.Buffer) error { return png.Encode(w, img) }},
		{"writeNRGBAPNG", func(w *bytes.Buffer) error { return writeNRGBAPNG(w, img) }},
	} {
		b.Run(enc.name, func(b *testing.B) {
			var buf bytes.Buffer
			for b.Loop() {
				buf.Reset()
				if err := enc.f(&buf); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(buf.Len()), "bytes")
		})
	}
}

// svgTextLengthAttr matches the attributes fastSVGCanvas adds to a text
// element.
var svgTextLengthAttr = regexp.MustCompile(` textLength="[^"]*" lengthAdjust="spacingAndGlyphs"`)

// svgTextElem matches a text element as vgsvg writes it, with the text
// length svgfit may add: the length and the escaped string.
var svgTextElem = regexp.MustCompile(`<text(?: textLength="([^"]*)" lengthAdjust="spacingAndGlyphs")? x="[^"]*" y="[^"]*" transform="[^"]*"\s*style="[^"]*">([^<]*)</text>`)

// TestPicturesFitText: every text element of a map's and a ring chart's
// SVG carries a text length (svgfit; its tests check the widths against
// the font file), so that a reader without the pictures' font keeps the
// layout (a legend ran off the ring chart in Chromium on Debian).
func TestPicturesFitText(t *testing.T) {
	var rings []RingReport
	for k := range 20 {
		r := float64(k) * 5
		rings = append(rings, RingReport{RInMM: r, ROutMM: r + 5, FluxKWM2: 60 - 3*float64(k), FlatFluxKWM2: 70, MeanGapMM: 0.02 * float64(k), MaxGapMM: 0.5})
	}
	docs := map[string]func(w *bytes.Buffer) error{
		"map": func(w *bytes.Buffer) error { return WriteMap(w, fullMapSpec(), "svg") },
		"ring chart": func(w *bytes.Buffer) error {
			return WriteRingChart(w, &RingChartSpec{Title: "flux by ring", Rings: rings, ZoneRadiusMM: 90}, "svg")
		},
	}
	for name, write := range docs {
		t.Run(name, func(t *testing.T) {
			var doc bytes.Buffer
			if err := write(&doc); err != nil {
				t.Fatal(err)
			}
			elems := svgTextElem.FindAllSubmatch(doc.Bytes(), -1)
			if n := bytes.Count(doc.Bytes(), []byte("<text")); n != len(elems) || n < 5 {
				t.Fatalf("%d text elements matched of %d (want all, at least 5)", len(elems), n)
			}
			for _, e := range elems {
				if len(e[2]) > 0 && len(e[1]) == 0 {
					t.Errorf("text %q has no text length", e[2])
				}
			}
		})
	}
}
