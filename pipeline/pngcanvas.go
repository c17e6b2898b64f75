package pipeline

import (
	"image"
	"image/png"
	"io"
	"math"

	"git.sr.ht/~sbinet/gg"
	"golang.org/x/image/math/f64"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgimg"
)

// fastPNGCanvas is vgimg.PngCanvas written by writeOpaquePNG (the same
// pixels as image/png's default encoder in files 2 % smaller to 3 %
// larger; encoding 16.5 → 11.5 ms for a 0.5 mm map), and drawing a map's
// raster with drawBiLinear (the same pixels as vgimg's; the whole PNG map
// 63–73 → 30 ms, BenchmarkWriteMap, README "Performance"). It
// tracks whether a Translate, Scale or Rotate is in effect, as DrawImage
// needs the canvas's plain transformation.
type fastPNGCanvas struct {
	*vgimg.Canvas
	moved    bool   // a Translate, Scale or Rotate is in effect
	saved    []bool // moved at each Push not yet popped
	biLinear int    // images drawn by drawBiLinear (the rest went to vgimg)
}

// newFastPNGCanvas returns a white canvas of the given size at pictureDPI.
func newFastPNGCanvas(width, height vg.Length) *fastPNGCanvas {
	return &fastPNGCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(pictureDPI))}
}

// WriteTo writes the canvas as a PNG image: with writeOpaquePNG when it
// is opaque (the canvas has a white background), else with image/png at
// its fastest level.
func (c *fastPNGCanvas) WriteTo(w io.Writer) (int64, error) {
	cw := &countWriter{w: w}
	var err error
	if img, ok := c.Image().(*image.RGBA); ok && img.Opaque() {
		err = writeOpaquePNG(cw, img)
	} else {
		enc := png.Encoder{CompressionLevel: png.BestSpeed}
		err = enc.Encode(cw, c.Image())
	}
	return cw.n, err
}

// Push saves the canvas's state.
func (c *fastPNGCanvas) Push() {
	c.saved = append(c.saved, c.moved)
	c.Canvas.Push()
}

// Pop restores the state saved by the last Push.
func (c *fastPNGCanvas) Pop() {
	if n := len(c.saved); n > 0 {
		c.moved, c.saved = c.saved[n-1], c.saved[:n-1]
	}
	c.Canvas.Pop()
}

// Translate moves the canvas's origin.
func (c *fastPNGCanvas) Translate(pt vg.Point) {
	c.moved = true
	c.Canvas.Translate(pt)
}

// Scale scales the canvas's axes.
func (c *fastPNGCanvas) Scale(x, y float64) {
	c.moved = true
	c.Canvas.Scale(x, y)
}

// Rotate rotates the canvas's axes.
func (c *fastPNGCanvas) Rotate(t float64) {
	c.moved = true
	c.Canvas.Rotate(t)
}

// DrawImage draws img into rect. An *image.NRGBA with transparent pixels
// on the untransformed canvas (a map's raster) goes to drawBiLinear;
// anything else to vgimg.
func (c *fastPNGCanvas) DrawImage(rect vg.Rectangle, img image.Image) {
	src, ok := img.(*image.NRGBA)
	dst, isRGBA := c.Image().(*image.RGBA)
	if !ok || !isRGBA || c.moved || src.Opaque() || !drawBiLinear(dst, imageToCanvas(c.DPI(), dst.Bounds().Dy(), rect, src.Bounds()), src) {
		c.Canvas.DrawImage(rect, img)
		return
	}
	c.biLinear++
}

// imageToCanvas returns the affine map from an image's pixels (bounds b)
// to those of an untransformed vgimg canvas of canvasH pixels' height
// that draws it into rect: the matrix gg's DrawImage receives from
// vgimg.Canvas.DrawImage, composed with gg's own Matrix methods in the
// same order (vgimg.NewWith's InvertY, then DrawImage's flip, translation
// and scaling, then gg's anchor translation), so that it is the same to
// the last bit.
func imageToCanvas(dpi float64, canvasH int, rect vg.Rectangle, b image.Rectangle) f64.Aff3 {
	xmin, ymin := rect.Min.X.Dots(dpi), rect.Min.Y.Dots(dpi)
	size := rect.Size()
	width, height := size.X.Dots(dpi), size.Y.Dots(dpi)
	m := gg.Identity().Translate(0, float64(canvasH)).Scale(1, -1)
	m = m.Scale(1, -1).Translate(xmin, -ymin-height).Scale(width/float64(b.Dx()), height/float64(b.Dy()))
	m = m.Translate(0, 0)
	return f64.Aff3{m.XX, m.XY, m.X0, m.YX, m.YY, m.Y0}
}

// drawBiLinear lays src over dst through the source-to-destination map
// s2d, as x/image/draw's BiLinear.Transform(dst, s2d, src, src.Bounds(),
// draw.Over, nil) does, to the same pixels, and reports true; false (and
// nothing drawn) when s2d rotates or shears. The library computes the
// kernel's taps and weights for every destination pixel; without
// rotation they depend on the column or the row only, so they are
// computed once per column and once per row here, and the pixels whose
// taps are all transparent are skipped (Over leaves them unchanged).
// The arithmetic, including its order and its rounding, is the
// library's (x/image v0.30.0, draw/impl.go transform_RGBA_NRGBA_Over).
func drawBiLinear(dst *image.RGBA, s2d f64.Aff3, src *image.NRGBA) bool {
	if s2d[1] != 0 || s2d[3] != 0 {
		return false
	}
	sr := src.Bounds()
	dr := transformRect(&s2d, &sr)
	adr := dst.Bounds().Intersect(dr)
	if adr.Empty() || sr.Empty() {
		return true
	}
	d2s := invertAff3(&s2d)
	// The library's bias keeps the source coordinates non-negative.
	bias := transformRect(&d2s, &adr).Min
	bias.X--
	bias.Y--
	d2s[2] -= float64(bias.X)
	d2s[5] -= float64(bias.Y)
	adr = adr.Sub(dr.Min)
	// d2s[1] and d2s[3] are zero: the library's xscale and yscale are
	// |d2s[0]| and |d2s[4]|.
	xs := newKernelTaps(adr.Min.X, adr.Max.X, dr.Min.X, d2s[0], d2s[2], abs64(d2s[0]), bias.X, sr.Min.X, sr.Max.X)
	ys := newKernelTaps(adr.Min.Y, adr.Max.Y, dr.Min.Y, d2s[4], d2s[5], abs64(d2s[4]), bias.Y, sr.Min.Y, sr.Max.Y)
	for dy := adr.Min.Y; dy < adr.Max.Y; dy++ {
		if ys.inside[dy-adr.Min.Y] {
			d := (dr.Min.Y+dy-dst.Rect.Min.Y)*dst.Stride + (dr.Min.X+adr.Min.X-dst.Rect.Min.X)*4
			overRow(dst.Pix[d:], src, &xs, &ys, dy-adr.Min.Y)
		}
	}
	return true
}

// kernelTaps are the bilinear kernel's source pixels along one axis for
// each destination column (or row) of the affected rectangle.
type kernelTaps struct {
	inside []bool    // the pixel's centre maps into the source
	first  []int     // first source index
	count  []int     // number of source indices
	w      []float64 // their normalised weights, stride entries per pixel
	stride int
}

// newKernelTaps returns the taps of destination indices [a0, a1) (offset
// by dmin) along an axis the inverse map scales by scale and shifts by
// offset (the bias already in offset, bias given apart for the inside
// test), the source spanning [smin, smax). axisScale is the library's
// xscale or yscale: above 1 (shrinking) the kernel is widened.
func newKernelTaps(a0, a1, dmin int, scale, offset, axisScale float64, bias, smin, smax int) kernelTaps {
	halfWidth, argScale := 1.0, 1.0 // BiLinear's support
	if axisScale > 1 {
		halfWidth *= axisScale
		argScale = 1 / axisScale
	}
	n := a1 - a0
	t := kernelTaps{inside: make([]bool, n), first: make([]int, n), count: make([]int, n), stride: 1 + 2*int(math.Ceil(halfWidth))}
	t.w = make([]float64, n*t.stride)
	for k := range n {
		s := float64(scale*(float64(dmin+a0+k)+0.5)) + offset
		if p := int(s) + bias; p < smin || p >= smax {
			continue
		}
		t.inside[k] = true
		s += float64(bias)
		s -= 0.5
		i, j := max(int(math.Floor(s-halfWidth)), smin), min(int(math.Ceil(s+halfWidth)), smax)
		w := t.w[k*t.stride : k*t.stride+j-i : (k+1)*t.stride]
		total := 0.0
		for q := i; q < j; q++ {
			w[q-i] = 0
			if u := abs64((s - float64(q)) * argScale); u < 1 {
				w[q-i] = 1 - u
			}
			total += w[q-i]
		}
		for q := range w {
			w[q] /= total
		}
		// Taps of weight zero at either end add nothing (the library
		// skips them too): leave them out.
		lead := 0
		for lead < len(w) && w[lead] == 0 {
			lead++
		}
		n := copy(w, w[lead:])
		for n > 0 && w[n-1] == 0 {
			n--
		}
		t.first[k], t.count[k] = i+lead, n
	}
	return t
}

// overRow lays the resampled source over one destination row, pix
// starting at the affected rectangle's first column; ky indexes ys.
func overRow(pix []uint8, src *image.NRGBA, xs, ys *kernelTaps, ky int) {
	iy, ny := ys.first[ky], ys.count[ky]
	yw := ys.w[ky*ys.stride : ky*ys.stride+ny]
	for kx, d := 0, 0; kx < len(xs.inside); kx, d = kx+1, d+4 {
		if !xs.inside[kx] {
			continue
		}
		ix, nx := xs.first[kx], xs.count[kx]
		xw := xs.w[kx*xs.stride : kx*xs.stride+nx]
		var pr, pg, pb, pa float64
		for y, yWeight := range yw {
			if yWeight == 0 {
				continue
			}
			row := src.Pix[(iy+y-src.Rect.Min.Y)*src.Stride+(ix-src.Rect.Min.X)*4:]
			for x, xWeight := range xw {
				w := xWeight * yWeight
				// A transparent pixel adds +0 to the sums: skipping it
				// leaves them unchanged.
				if w == 0 || row[4*x+3] == 0 {
					continue
				}
				pau := uint32(row[4*x+3]) * 0x101
				pr += float64(float64(uint32(row[4*x+0])*pau/0xff) * w)
				pg += float64(float64(uint32(row[4*x+1])*pau/0xff) * w)
				pb += float64(float64(uint32(row[4*x+2])*pau/0xff) * w)
				pa += float64(float64(pau) * w)
			}
		}
		if pa != 0 { // else Over leaves the pixel as it is
			over(pix[d:d+4], pr, pg, pb, pa)
		}
	}
}

// over composites the premultiplied colour (pr, pg, pb, pa), 16 bits a
// channel as float sums, over the 8-bit pixel p, as the library does.
func over(p []uint8, pr, pg, pb, pa float64) {
	pr, pg, pb = min(pr, pa), min(pg, pa), min(pb, pa)
	pr0, pg0, pb0, pa0 := uint32(fffftou(pr)), uint32(fffftou(pg)), uint32(fffftou(pb)), uint32(fffftou(pa))
	pa1 := (0xffff - pa0) * 0x101
	p[0] = uint8((uint32(p[0])*pa1/0xffff + pr0) >> 8)
	p[1] = uint8((uint32(p[1])*pa1/0xffff + pg0) >> 8)
	p[2] = uint8((uint32(p[2])*pa1/0xffff + pb0) >> 8)
	p[3] = uint8((uint32(p[3])*pa1/0xffff + pa0) >> 8)
}

// fffftou converts [0, 65535] to [0, 0xffff], rounding (x/image/draw's).
func fffftou(f float64) uint16 {
	i := int32(f + 0.5)
	if i > 0xffff {
		return 0xffff
	}
	if i > 0 {
		return uint16(i)
	}
	return 0
}

// abs64 is x/image/draw's abs: |f|, keeping the sign of a zero.
func abs64(f float64) float64 {
	if f < 0 {
		f = -f
	}
	return f
}

// invertAff3 returns the inverse of m (x/image/draw's invert).
func invertAff3(m *f64.Aff3) f64.Aff3 {
	m00 := +m[3*1+1]
	m01 := -m[3*0+1]
	m02 := +float64(m[3*1+2]*m[3*0+1]) - float64(m[3*1+1]*m[3*0+2])
	m10 := -m[3*1+0]
	m11 := +m[3*0+0]
	m12 := +float64(m[3*1+0]*m[3*0+2]) - float64(m[3*1+2]*m[3*0+0])
	det := float64(m00*m11) - float64(m10*m01)
	return f64.Aff3{m00 / det, m01 / det, m02 / det, m10 / det, m11 / det, m12 / det}
}

// transformRect returns a rectangle containing sr mapped by s2d
// (x/image/draw's transformRect).
func transformRect(s2d *f64.Aff3, sr *image.Rectangle) (dr image.Rectangle) {
	ps := [...]image.Point{{sr.Min.X, sr.Min.Y}, {sr.Max.X, sr.Min.Y}, {sr.Min.X, sr.Max.Y}, {sr.Max.X, sr.Max.Y}}
	for i, p := range ps {
		sxf, syf := float64(p.X), float64(p.Y)
		dx := int(math.Floor(float64(s2d[0]*sxf) + float64(s2d[1]*syf) + s2d[2]))
		dy := int(math.Floor(float64(s2d[3]*sxf) + float64(s2d[4]*syf) + s2d[5]))
		// Rectangles include their low end, not their high end: +1.
		if i == 0 {
			dr = image.Rect(dx, dy, dx+1, dy+1)
			continue
		}
		dr.Min.X, dr.Max.X = min(dr.Min.X, dx), max(dr.Max.X, dx+1)
		dr.Min.Y, dr.Max.Y = min(dr.Min.Y, dy), max(dr.Max.Y, dy+1)
	}
	return dr
}
