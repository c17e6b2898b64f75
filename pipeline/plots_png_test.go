package pipeline

import (
	"bytes"
	"image"
	"image/draw"
	"image/png"
	"testing"

	vgdraw "gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// TestFastPNGCanvas: a map written through fastPNGCanvas decodes to the
// canvas's own pixels, and to those of the default-level encoder
// (vgimg.PngCanvas): only the compression differs.
func TestFastPNGCanvas(t *testing.T) {
	spec := benchDisc(60, 0.5, 10)
	var fast bytes.Buffer
	if err := WriteMap(&fast, spec, "png"); err != nil {
		t.Fatal(err)
	}
	mp, err := spec.plots()
	if err != nil {
		t.Fatal(err)
	}
	w, h, legendH := mp.size()
	c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(pictureDPI))
	dc := layoutMap(vgdraw.New(c), mp.plot, legendH)
	mp.plot.Draw(dc.plotC)
	mp.bar.Draw(dc.barC)
	mp.legend.Draw(dc.legendC)
	var slow bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&slow); err != nil {
		t.Fatal(err)
	}
	a, b := decodeNRGBA(t, fast.Bytes()), decodeNRGBA(t, slow.Bytes())
	if a.Bounds() != b.Bounds() || !bytes.Equal(a.Pix, b.Pix) {
		t.Fatalf("pixels differ: %v vs %v", a.Bounds(), b.Bounds())
	}
	if bytes.Equal(fast.Bytes(), slow.Bytes()) {
		t.Error("the same bytes: the fast encoder was not used")
	}
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
