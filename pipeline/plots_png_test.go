package pipeline

import (
	"bytes"
	"image"
	"image/color"
	"image/draw"
	"image/png"
	"math/rand/v2"
	"testing"

	xdraw "golang.org/x/image/draw"
	"golang.org/x/image/math/f64"

	"gonum.org/v1/plot/vg"
	vgdraw "gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// TestFastPNGCanvas: a map written through fastPNGCanvas (drawBiLinear,
// writeOpaquePNG) decodes to the pixels of the same map drawn by vgimg
// alone and written by its PngCanvas: only the speed and the encoding
// differ. One map is plain, one has a base circle, a zone, veiled cells
// and hatching below zero.
func TestFastPNGCanvas(t *testing.T) {
	for _, spec := range []*MapSpec{benchDisc(60, 0.5, 10), fullMapSpec()} {
		var fast bytes.Buffer
		if err := WriteMap(&fast, spec, "png"); err != nil {
			t.Fatal(err)
		}
		slow := vgimgMapPNG(t, spec)
		a, b := decodeNRGBA(t, fast.Bytes()), decodeNRGBA(t, slow)
		if a.Bounds() != b.Bounds() || !bytes.Equal(a.Pix, b.Pix) {
			t.Fatalf("pixels differ: %v vs %v", a.Bounds(), b.Bounds())
		}
		if bytes.Equal(fast.Bytes(), slow) {
			t.Error("the same bytes: the fast encoder was not used")
		}
		// Both fast paths ran: the raster went to drawBiLinear, and the
		// file is writeOpaquePNG's (not the image/png fallback's).
		var fc *fastPNGCanvas
		drawMapOn(t, spec, func(w, h vg.Length) vg.CanvasSizer { fc = newFastPNGCanvas(w, h); return fc })
		if fc.biLinear != 1 {
			t.Errorf("%d rasters drawn by drawBiLinear, want 1", fc.biLinear)
		}
		var want bytes.Buffer
		if err := writeOpaquePNG(&want, fc.Image().(*image.RGBA)); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(fast.Bytes(), want.Bytes()) {
			t.Error("WriteMap's PNG is not writeOpaquePNG's file of the drawn canvas")
		}
	}
}

// vgimgMapPNG draws spec as WriteMap does, but on a plain vgimg canvas,
// and returns it written by vgimg.PngCanvas.
func vgimgMapPNG(t *testing.T, spec *MapSpec) []byte {
	t.Helper()
	var c *vgimg.Canvas
	drawMapOn(t, spec, func(w, h vg.Length) vg.CanvasSizer {
		c = vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(pictureDPI))
		return c
	})
	var buf bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// drawMapOn lays out and draws spec as WriteMap does on the canvas that
// newCanvas makes for the picture's size.
func drawMapOn(t *testing.T, spec *MapSpec, newCanvas func(w, h vg.Length) vg.CanvasSizer) {
	t.Helper()
	mp, err := spec.plots()
	if err != nil {
		t.Fatal(err)
	}
	w, h, legendH := mp.size()
	dc := layoutMap(vgdraw.New(newCanvas(w, h)), mp.plot, legendH)
	mp.plot.Draw(dc.plotC)
	mp.bar.Draw(dc.barC)
	mp.legend.Draw(dc.legendC)
}

func decodeNRGBA(t *testing.T, b []byte) *image.NRGBA {
	t.Helper()
	im, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	out := image.NewNRGBA(im.Bounds())
	draw.Draw(out, out.Bounds(), im, im.Bounds().Min, draw.Src)
	return out
}

// TestDrawBiLinear: drawBiLinear draws the same pixels as x/image/draw's
// BiLinear.Transform, for images with transparent, opaque and translucent
// pixels, enlarged, shrunk, flipped and shifted by fractions of a pixel,
// over a non-uniform background; and it declines rotations.
func TestDrawBiLinear(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for trial := range 60 {
		src := image.NewNRGBA(image.Rect(rng.IntN(3), rng.IntN(3), 5+rng.IntN(40), 5+rng.IntN(40)))
		for k := range src.Pix {
			src.Pix[k] = uint8(rng.IntN(256))
		}
		for k := 3; k < len(src.Pix); k += 4 {
			src.Pix[k] = [...]uint8{0, 0xff, 0xff, uint8(rng.IntN(256))}[rng.IntN(4)]
		}
		sx, sy := 0.3+2*rng.Float64(), 0.3+2*rng.Float64()
		if trial%3 == 0 {
			sy = -sy
		}
		s2d := f64.Aff3{sx, 0, 60 * rng.Float64(), 0, sy, 40 + 60*rng.Float64()}
		want := image.NewRGBA(image.Rect(0, 0, 90, 110))
		for k := range want.Pix {
			want.Pix[k] = uint8(rng.IntN(256))
		}
		got := image.NewRGBA(want.Rect)
		copy(got.Pix, want.Pix)
		xdraw.BiLinear.Transform(want, s2d, src, src.Bounds(), xdraw.Over, nil)
		if !drawBiLinear(got, s2d, src) {
			t.Fatalf("trial %d: declined %v", trial, s2d)
		}
		if !bytes.Equal(got.Pix, want.Pix) {
			t.Fatalf("trial %d: pixels differ from x/image/draw for %v", trial, s2d)
		}
	}
	if drawBiLinear(image.NewRGBA(image.Rect(0, 0, 4, 4)), f64.Aff3{1, 0.1, 0, 0, 1, 0}, image.NewNRGBA(image.Rect(0, 0, 2, 2))) {
		t.Error("a sheared map was not declined")
	}
}

// TestWriteOpaquePNG: writeOpaquePNG's file decodes to the image's
// pixels, for rows that favour each filter (noise, a repeated row, a
// gradient), an image larger than one IDAT chunk and one not at the
// origin; and the filter takes Up where the row repeats the one above.
func TestWriteOpaquePNG(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for _, r := range []image.Rectangle{image.Rect(0, 0, 1, 1), image.Rect(0, 0, 300, 200), image.Rect(3, 5, 40, 9)} {
		img := image.NewRGBA(r)
		for y := r.Min.Y; y < r.Max.Y; y++ {
			for x := r.Min.X; x < r.Max.X; x++ {
				c := color.RGBA{uint8(x), uint8(2 * y), uint8(x + y), 0xff}
				switch {
				case y%5 == 1:
					c.R, c.G, c.B = uint8(rng.IntN(256)), uint8(rng.IntN(256)), uint8(rng.IntN(256))
				case y%5 == 2 && y > r.Min.Y:
					c = img.RGBAAt(x, y-1)
				}
				img.SetRGBA(x, y, c)
			}
		}
		var buf bytes.Buffer
		if err := writeOpaquePNG(&buf, img); err != nil {
			t.Fatal(err)
		}
		got := decodeNRGBA(t, buf.Bytes())
		want := image.NewNRGBA(r)
		draw.Draw(want, r, img, r.Min, draw.Src)
		if got.Bounds().Size() != r.Size() || !bytes.Equal(got.Pix, want.Pix) {
			t.Errorf("%v: decoded pixels differ", r)
		}
	}
	row := []byte{9, 200, 7, 250}
	out := make([]byte, 1+len(row))
	if filterNoneOrUp(out, row, row); out[0] != 2 || !bytes.Equal(out[1:], make([]byte, len(row))) {
		t.Errorf("repeated row filtered as %v, want Up and zeros", out)
	}
	if filterNoneOrUp(out, row, make([]byte, len(row))); out[0] != 0 || !bytes.Equal(out[1:], row) {
		t.Errorf("row under zeros filtered as %v, want None", out)
	}
}

// fullMapSpec is a 60 mm test map with all that a map can show: a base
// circle, an off-centre zone, veiled (interpolated) cells and cells below
// zero, hatched.
func fullMapSpec() *MapSpec {
	full := benchDisc(60, 0.4, 5)
	full.BaseRadiusMM, full.ZoneDiameterMM, full.ZoneCentreMM = 30, 40, [2]float64{3, -2}
	full.BelowZeroLabel, full.Controls = "below zero", fluxControls
	full.Interpolated = make([]bool, len(full.Values))
	for k, v := range full.Values {
		full.Values[k] = v - 0.1
		full.Interpolated[k] = k%5 == 0
	}
	return full
}
