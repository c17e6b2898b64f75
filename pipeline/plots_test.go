package pipeline

import (
	"bytes"
	"fmt"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"gapflux/scan"
)

func TestRobustRange(t *testing.T) {
	v := make([]float64, 1000)
	for i := range v {
		v[i] = float64(i % 100)
	}
	v[3] = 1e6 // one extreme cell
	v[4] = math.NaN()
	lo, hi, clipped := robustRange(v)
	if lo != 0 || hi != 99 || !clipped {
		t.Errorf("range %g..%g clipped %v, want 0..99 clipped", lo, hi, clipped)
	}
	// The same values in rows of unequal lengths.
	if l, h, c := robustRange(v[:10], nil, v[10:517], v[517:]); l != lo || h != hi || c != clipped {
		t.Errorf("in rows: range %g..%g clipped %v, want %g..%g %v", l, h, c, lo, hi, clipped)
	}
	lo, hi, clipped = robustRange([]float64{2, 2, 2})
	if lo != 2 || !(hi > 2) || clipped {
		t.Errorf("constant field: %g..%g %v", lo, hi, clipped)
	}
}

func TestWriteMapAndRingChart(t *testing.T) {
	n := 41
	vals := make([]float64, n*n)
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			x, y := float64(i-20), float64(j-20)
			vals[j*n+i] = math.NaN()
			if x*x+y*y <= 400 {
				vals[j*n+i] = x*x + y*y
			}
		}
	}
	spec := &MapSpec{Title: "gap under test", Unit: "gap (µm)", Nx: n, Ny: n, X0MM: -20, Y0MM: -20, CellMM: 1,
		Values: vals, Controls: gapControls, MarksMM: [][2]float64{{0, 0}}, MarkLabel: "support points"}
	var buf bytes.Buffer
	if err := WriteMap(&buf, spec, "png"); err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(&buf)
	if err != nil {
		t.Fatal(err)
	}
	if b := img.Bounds(); b.Dx() < 400 || b.Dy() < 300 {
		t.Errorf("map is %v", b)
	}
	buf.Reset()
	if err := WriteMap(&buf, spec, "svg"); err != nil || !strings.Contains(buf.String(), "<svg") {
		t.Errorf("svg: %v", err)
	}
	if err := WriteMap(&buf, spec, "gif"); err == nil {
		t.Error("gif accepted")
	}
	rings := []RingReport{{RInMM: 0, ROutMM: 5, FluxKWM2: 40, FlatFluxKWM2: 60, MeanGapMM: 0.3, MaxGapMM: 0.31},
		{RInMM: 5, ROutMM: 10, FluxKWM2: 45, FlatFluxKWM2: 60, MeanGapMM: 0.2, MaxGapMM: 0.25}}
	buf.Reset()
	if err := WriteRingChart(&buf, &RingChartSpec{Title: "rings", Rings: rings}, "png"); err != nil {
		t.Fatal(err)
	}
	if _, err := png.Decode(&buf); err != nil {
		t.Error(err)
	}
}

// TestMapVeil checks that interpolated cells are drawn differently: only
// the veiled cells (x > 10 mm, the right quarter of the data) and the
// title change.
func TestMapVeil(t *testing.T) {
	n := 41
	vals := make([]float64, n*n)
	veiled := make([]bool, n*n)
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			vals[j*n+i] = float64(i + j)
			veiled[j*n+i] = i > 30
		}
	}
	render := func(interp []bool) image.Image {
		spec := &MapSpec{Title: "gap", Unit: "gap (µm)", Nx: n, Ny: n, X0MM: -20, Y0MM: -20, CellMM: 1,
			Values: vals, Controls: gapControls, Lo: 0, Hi: 80, Interpolated: interp}
		var buf bytes.Buffer
		if err := WriteMap(&buf, spec, "png"); err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(&buf)
		if err != nil {
			t.Fatal(err)
		}
		return img
	}
	a, b := render(nil), render(veiled)
	if a.Bounds() != b.Bounds() {
		t.Fatalf("sizes %v and %v", a.Bounds(), b.Bounds())
	}
	bd := a.Bounds()
	var right, left int
	for y := bd.Min.Y + bd.Dy()/6; y < bd.Max.Y; y++ {
		for x := bd.Min.X; x < bd.Max.X; x++ {
			if a.At(x, y) != b.At(x, y) {
				if x > bd.Dx()*2/5 {
					right++
				} else {
					left++
				}
			}
		}
	}
	if right < 1000 || left > right/50 {
		t.Errorf("%d pixels changed right of 40 %% of the width, %d left", right, left)
	}
}

// TestUnmeasured: a 5×5 block of Filled cells is veiled but for its
// border ring (each border cell touches a Measured one); an isolated
// Filled cell, as a sparse cloud leaves, is not.
func TestUnmeasured(t *testing.T) {
	s := scan.NewSurface(12, 12, 1e-3, 0, 0)
	for k := range s.State {
		s.State[k] = scan.Measured
	}
	for j := 2; j < 7; j++ {
		for i := 2; i < 7; i++ {
			s.State[s.Index(i, j)] = scan.Filled
		}
	}
	s.State[s.Index(10, 10)] = scan.Filled
	u := unmeasured(s)
	n := 0
	for k, v := range u {
		if v {
			n++
			if i, j := k%12, k/12; i < 3 || i > 5 || j < 3 || j > 5 {
				t.Errorf("cell (%d, %d) veiled", i, j)
			}
		}
	}
	if n != 9 {
		t.Errorf("%d cells veiled, want the 3×3 inside of the block", n)
	}
	for k := range s.State {
		s.State[k] = scan.Measured
	}
	if unmeasured(s) != nil {
		t.Error("veil without Filled cells")
	}
}

// TestWriteVTI checks the VTK image-data layout: extents, origin, spacing,
// and the base64 payload of a known array (header: byte count as UInt32,
// then little-endian Float32).
func TestWriteVTI(t *testing.T) {
	var buf bytes.Buffer
	err := WriteVTI(&buf, VTIGrid{Nx: 2, Ny: 1, X0MM: -0.5, Y0MM: 0, SpacingMM: 1},
		[]VTIField{{Name: "gap_um", Values: []float64{1, math.NaN()}}, {Name: "contact", Values: []float64{1, 0}, UInt8: true}})
	if err != nil {
		t.Fatal(err)
	}
	s := buf.String()
	for _, want := range []string{
		`WholeExtent="0 1 0 0 0 0" Origin="-0.5 0 0" Spacing="1 1 1"`,
		`<DataArray type="Float32" Name="gap_um" format="binary">`,
		// 8 (uint32) + 1.0f + NaN(0x7fc00000) → base64
		"CAAAAAAAgD8AAMB/",
		`<DataArray type="UInt8" Name="contact" format="binary">`,
		"AgAAAAEA", // 2, then bytes 1, 0
	} {
		if !strings.Contains(s, want) {
			t.Errorf("vti lacks %q:\n%s", want, s)
		}
	}
	if err := WriteVTI(&buf, VTIGrid{Nx: 3, Ny: 1}, []VTIField{{Name: "x", Values: []float64{1}}}); err == nil {
		t.Error("a short field was accepted")
	}
}

// TestVTIReadsInVTK reads a written field file with VTK's own XML image-data
// reader (an independent general-purpose library), when python3 with the
// vtk module is installed (vtkPython); it is skipped elsewhere.
func TestVTIReadsInVTK(t *testing.T) {
	py := vtkPython(t)
	path := filepath.Join(t.TempDir(), "f.vti")
	vals := []float64{1, 2, 3, math.NaN(), 5, 6}
	var buf bytes.Buffer
	if err := WriteVTI(&buf, VTIGrid{Nx: 3, Ny: 2, X0MM: -1, Y0MM: 2, SpacingMM: 0.5},
		[]VTIField{{Name: "gap_um", Values: vals}, {Name: "contact", Values: []float64{1, 0, 1, 0, 1, 0}, UInt8: true}}); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	script := `import sys, vtk
r = vtk.vtkXMLImageDataReader(); r.SetFileName(sys.argv[1]); r.Update()
img = r.GetOutput(); pd = img.GetPointData()
g = pd.GetArray("gap_um"); c = pd.GetArray("contact")
print(img.GetDimensions(), img.GetOrigin(), img.GetSpacing(), [g.GetValue(i) for i in (0, 1, 5)], [c.GetValue(i) for i in range(6)])`
	out, err := exec.Command(py, "-c", script, path).CombinedOutput()
	if err != nil {
		t.Fatalf("vtk could not read the file: %v\n%s", err, out)
	}
	want := "(3, 2, 1) (-1.0, 2.0, 0.0) (0.5, 0.5, 1.0) [1.0, 2.0, 6.0] [1, 0, 1, 0, 1, 0]"
	if got := strings.TrimSpace(string(out)); got != want {
		t.Errorf("vtk read\n%s\nwant\n%s", got, want)
	}
}

// benchDisc returns a padded square grid of cellMM cells holding a dished
// disc of diameterMM (gap in mm, NaN outside the disc).
func benchDisc(diameterMM, cellMM, padMM float64) *MapSpec {
	half := int(math.Floor((diameterMM/2 + padMM) / cellMM))
	n := 2*half + 1
	vals := make([]float64, n*n)
	r := diameterMM / 2
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			x, y := float64(i-half)*cellMM, float64(j-half)*cellMM
			vals[j*n+i] = math.NaN()
			if x*x+y*y <= r*r {
				vals[j*n+i] = 0.4 * (1 - (x*x+y*y)/(r*r))
			}
		}
	}
	return &MapSpec{Title: "bench", Unit: "gap (mm)", Nx: n, Ny: n, X0MM: -float64(half) * cellMM, Y0MM: -float64(half) * cellMM,
		CellMM: cellMM, Values: vals, Controls: gapControls, MarksMM: [][2]float64{{0, r}, {r, 0}, {-r, 0}}, MarkLabel: "support points"}
}

// BenchmarkWriteMap draws the gap map of a 200 mm base at the default
// 0.5 mm cells and at 0.15 mm cells (a fine grid from a 2 M-point scan),
// the grid padded by 100 mm of glass as in heater mode.
func BenchmarkWriteMap(b *testing.B) {
	for _, cell := range []float64{0.5, 0.15} {
		spec := benchDisc(200, cell, 100)
		for _, format := range []string{"png", "svg"} {
			b.Run(fmt.Sprintf("cell%gmm/%s", cell, format), func(b *testing.B) {
				for i := 0; i < b.N; i++ {
					if err := WriteMap(io.Discard, spec, format); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// relLuminance is the relative luminance of an sRGB colour, WCAG 2.1
// (W3C 2018, "relative luminance" definition: linearised sRGB,
// 0.2126 R + 0.7152 G + 0.0722 B).
func relLuminance(c color.Color) float64 {
	r, g, b, _ := c.RGBA()
	lin := func(v uint32) float64 {
		s := float64(v) / 0xffff
		if s <= 0.04045 {
			return s / 12.92
		}
		return math.Pow((s+0.055)/1.055, 2.4)
	}
	return 0.2126*lin(r) + 0.7152*lin(g) + 0.0722*lin(b)
}

// contrast is the WCAG 2.1 contrast ratio (L1 + 0.05)/(L2 + 0.05).
func contrast(a, b color.Color) float64 {
	la, lb := relLuminance(a), relLuminance(b)
	return (math.Max(la, lb) + 0.05) / (math.Min(la, lb) + 0.05)
}

// minOverlayContrast is the contrast an overlay (marker, zone outline,
// hatching) must keep with the colour under it: 3:1, the WCAG 2.1 success
// criterion 1.4.11 minimum for graphical objects.
const minOverlayContrast = 3

func TestOverlayContrast(t *testing.T) {
	for _, sc := range []struct {
		name     string
		controls []color.Color
	}{{"gap", gapControls}, {"flux", fluxControls}} {
		cols := scaleColors(sc.controls, 256)
		// Greyscale readability: luminance rises along the scale.
		for k := 1; k < len(cols); k++ {
			if relLuminance(cols[k]) < relLuminance(cols[k-1]) {
				t.Errorf("%s scale: luminance falls at colour %d", sc.name, k)
			}
		}
		for k, c := range cols {
			best := math.Max(contrast(inkDark, c), contrast(inkLight, c))
			if best < minOverlayContrast {
				t.Errorf("%s colour %d %v: overlay contrast %.2f < %d", sc.name, k, c, best, minOverlayContrast)
			}
		}
		// The two ends, where the old single-colour marker vanished:
		// white on the darkest, dark ink on the lightest.
		if got := contrast(inkLight, cols[0]); got < 7 {
			t.Errorf("%s darkest: white marker contrast %.2f, want ≥ 7", sc.name, got)
		}
		if got := contrast(inkDark, cols[255]); got < 7 {
			t.Errorf("%s lightest: dark ring contrast %.2f, want ≥ 7", sc.name, got)
		}
	}
	if got := contrast(inkDark, hatchLight); got < minOverlayContrast {
		t.Errorf("hatching stripes contrast %.2f", got)
	}
}

// discSpec is a 41×41 grid of 1 mm cells holding a disc of radius 20 mm
// whose value is f(x, y), NaN outside.
func discSpec(f func(x, y float64) float64) *MapSpec {
	n := 41
	vals := make([]float64, n*n)
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			x, y := float64(i-20), float64(j-20)
			vals[j*n+i] = math.NaN()
			if x*x+y*y <= 400 {
				vals[j*n+i] = f(x, y)
			}
		}
	}
	return &MapSpec{Title: "gap under test", Unit: "gap (mm)", Nx: n, Ny: n, X0MM: -20, Y0MM: -20, CellMM: 1,
		Values: vals, Controls: gapControls, BaseRadiusMM: 20}
}

// renderedMap renders m as PNG and returns the image and a function
// giving the pixel of a point in mm, from the same layout.
func renderedMap(t *testing.T, m *MapSpec) (image.Image, func(x, y float64) (int, int), *mapPicture, mapRegions) {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteMap(&buf, m, "png"); err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(&buf)
	if err != nil {
		t.Fatal(err)
	}
	mp, err := m.plots()
	if err != nil {
		t.Fatal(err)
	}
	w, h, lh := mp.size()
	r := layoutMap(draw.New(vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(pictureDPI))), mp.plot, lh)
	da := mp.plot.DataCanvas(r.plotC)
	trX, trY := mp.plot.Transforms(&da)
	hpx := img.Bounds().Dy()
	toPx := func(x, y float64) (int, int) {
		return int(float64(trX(x)) / 72 * pictureDPI), hpx - 1 - int(float64(trY(y))/72*pictureDPI)
	}
	return img, toPx, mp, r
}

// TestMapMarkersVisible renders support marks over the darkest and the
// lightest end of the gap scale and checks, on the picture's pixels, that
// the marker's white disc and dark ring are there and that one of them
// contrasts by minOverlayContrast with the map beside the marker.
func TestMapMarkersVisible(t *testing.T) {
	// Left half at the bottom of the scale, right half at the top.
	m := discSpec(func(x, _ float64) float64 {
		if x < 0 {
			return 0
		}
		return 1
	})
	m.Lo, m.Hi = 0, 1
	m.MarksMM, m.MarkLabel = [][2]float64{{-10, 0}, {10, 0}}, "support points"
	img, toPx, _, _ := renderedMap(t, m)
	pt := func(pts float64) int { return int(math.Round(pts / 72 * pictureDPI)) } // points → pixels
	for _, mk := range m.MarksMM {
		cx, cy := toPx(mk[0], mk[1])
		under := img.At(cx+pt(12), cy) // the map beside the marker
		fill := img.At(cx+pt(2.6), cy) // inside the white disc
		ring := img.At(cx+pt(4.6), cy) // in the dark ring
		if l := relLuminance(fill); l < 0.8 {
			t.Errorf("mark at %v: fill luminance %.2f, want white", mk, l)
		}
		if l := relLuminance(ring); l > 0.05 {
			t.Errorf("mark at %v: ring luminance %.3f, want dark", mk, l)
		}
		if c := math.Max(contrast(fill, under), contrast(ring, under)); c < minOverlayContrast {
			t.Errorf("mark at %v over %v: contrast %.2f < %d", mk, under, c, minOverlayContrast)
		}
	}
}

// TestMapZoneOutline checks that the zone outline is drawn where the
// zone is: on a uniform mid-scale field, white and dark pixels lie on the
// circle of the zone radius at the offset centre, and none without a zone.
func TestMapZoneOutline(t *testing.T) {
	count := func(m *MapSpec) int {
		img, toPx, _, _ := renderedMap(t, m)
		hits := 0
		for k := 0; k < 12; k++ {
			a := 2 * math.Pi * (float64(k) + 0.5) / 12
			cx, cy := toPx(3+12*math.Cos(a), -2+12*math.Sin(a))
			white, dark := false, false
			for dy := -3; dy <= 3; dy++ {
				for dx := -3; dx <= 3; dx++ {
					l := relLuminance(img.At(cx+dx, cy+dy))
					white = white || l > 0.9
					dark = dark || l < 0.02
				}
			}
			if white && dark {
				hits++
			}
		}
		return hits
	}
	m := discSpec(func(_, _ float64) float64 { return 0.5 })
	m.Lo, m.Hi = 0, 1
	if n := count(m); n != 0 {
		t.Errorf("no zone: %d outline hits", n)
	}
	m.ZoneDiameterMM, m.ZoneCentreMM = 24, [2]float64{3, -2}
	if n := count(m); n < 10 {
		t.Errorf("zone outline found at %d of 12 places, want ≥ 10", n)
	}
	if mp, _ := m.plots(); mp.entries != 1 {
		t.Errorf("legend has %d entries, want the zone", mp.entries)
	}
}

// TestMapRaster checks the raster: transparent outside the base circle,
// clamped colours inside, hatching below zero when asked.
func TestMapRaster(t *testing.T) {
	m := discSpec(func(x, _ float64) float64 { return x / 10 }) // −2 … 2
	m.BelowZeroLabel = "below zero"
	lo, hi, _, below := m.colourRange(m.crop())
	if lo != 0 || hi != 2 || !below {
		t.Fatalf("range %g..%g below %v, want 0..2 hatched", lo, hi, below)
	}
	cols := scaleColors(gapControls, 256)
	r := &mapRaster{m: m, lo: lo, hi: hi, colors: cols, hatch: below, xmin: -25, xmax: 25, ymin: -25, ymax: 25}
	img := r.image(100, 100) // 0.5 mm pixels, pixel (px, py) at x = −25 + 0.5 px + 0.25
	at := func(x, y float64) color.NRGBA {
		return img.NRGBAAt(int((x+25)/0.5), int((25-y)/0.5))
	}
	if c := at(-24, 0); c.A != 0 {
		t.Errorf("outside the base: %v, want transparent", c)
	}
	if c := at(19.8, 0); c.A != 0xff {
		t.Errorf("inside the rim, past the last cell centre: %v, want painted", c)
	}
	if c := at(15.1, 0.1); c != cols[194] && c != cols[193] { // x/10 ≈ 1.51 → 255·1.51/2 ≈ 193
		t.Errorf("x = 15: %v, want scale colour 193", c)
	}
	// The base edge is the circle r = 20 mm, not the cells' staircase
	// (whose runs of rim cells at ±R used to show as straight dark
	// strips): just inside is painted, just outside is not, all round.
	fine := r.image(500, 500) // 0.1 mm pixels
	for deg := 0; deg < 360; deg += 5 {
		a := float64(deg) * math.Pi / 180
		for _, c := range []struct {
			rMM    float64
			opaque bool
		}{{19.6, true}, {20.3, false}} {
			x, y := c.rMM*math.Cos(a), c.rMM*math.Sin(a)
			px := fine.NRGBAAt(int((x+25)/0.1), int((25-y)/0.1))
			if (px.A == 0xff) != c.opaque {
				t.Errorf("r %g mm at %d°: alpha %d, want opaque %v", c.rMM, deg, px.A, c.opaque)
			}
		}
	}
	// The data window leaves a margin round the disc.
	if xmin, xmax, ymin, ymax := m.extentMM(m.crop()); xmin > -21 || xmax < 21 || ymin > -21 || ymax < 21 {
		t.Errorf("window %g..%g × %g..%g leaves no margin round the 20 mm disc", xmin, xmax, ymin, ymax)
	}
	seen := map[color.NRGBA]bool{}
	for px := 0; px < 10; px++ {
		seen[img.NRGBAAt(30+px, 50)] = true // x ≈ −10
	}
	if !seen[hatchLight] || !seen[inkDark] || len(seen) != 2 {
		t.Errorf("below zero: colours %v, want hatching", seen)
	}
}

// TestMapLegendOutsideData checks that the map's legend strip lies below
// the data area and the colour bar beside it.
func TestMapLegendOutsideData(t *testing.T) {
	m := discSpec(func(x, y float64) float64 { return x*x + y*y })
	m.MarksMM, m.MarkLabel, m.ZoneDiameterMM = [][2]float64{{0, 20}}, "support points", 30
	_, _, mp, r := renderedMap(t, m)
	da := mp.plot.DataCanvas(r.plotC)
	lrect := mp.legend.Rectangle(r.legendC)
	if overlaps(lrect, da.Rectangle) || lrect.Max.Y > r.legendC.Max.Y+0.01 {
		t.Errorf("legend %v overlaps the data area %v", lrect, da.Rectangle)
	}
	if overlaps(r.barC.Rectangle, da.Rectangle) {
		t.Errorf("colour bar %v overlaps the data area %v", r.barC.Rectangle, da.Rectangle)
	}
}

func overlaps(a, b vg.Rectangle) bool {
	return a.Min.X < b.Max.X && b.Min.X < a.Max.X && a.Min.Y < b.Max.Y && b.Min.Y < a.Max.Y
}

// legendBox is the box Legend.Draw fills for a top-left legend in c
// (gonum's Legend.Rectangle puts a Left legend on the right).
func legendBox(l *plot.Legend, c draw.Canvas) vg.Rectangle {
	s := l.Rectangle(c).Size()
	return vg.Rectangle{Min: vg.Point{X: c.Min.X, Y: c.Max.Y - s.Y}, Max: vg.Point{X: c.Min.X + s.X, Y: c.Max.Y}}
}

// TestRingChartLegendsClear lays out ring charts whose curves fill every
// corner and checks in canvas coordinates that no legend box holds a data
// point or overlaps a data area.
func TestRingChartLegendsClear(t *testing.T) {
	var rings []RingReport
	for k := 0; k < 20; k++ {
		r := float64(k) * 5
		rings = append(rings, RingReport{RInMM: r, ROutMM: r + 5, FluxKWM2: 60 - 3.5*float64(k), FlatFluxKWM2: 70 - 4*float64(k),
			MeanGapMM: 0.02 * float64(k), MaxGapMM: 0.5 - 0.02*float64(k)})
	}
	for _, zone := range []float64{0, 90} {
		rc, err := newRingChart(&RingChartSpec{Title: "rings", Rings: rings, ZoneRadiusMM: zone,
			Labels: PictureLabels{PartNumber: "P-1", Lot: "L7", Verdict: "FAIL"}})
		if err != nil {
			t.Fatal(err)
		}
		plots, legends := rc.layout(draw.New(vgimg.NewWith(vgimg.UseWH(ringChartW, ringChartH), vgimg.UseDPI(pictureDPI))))
		for k, p := range rc.panels {
			da := p.DataCanvas(plots[k])
			box := legendBox(&rc.legends[k], legends[k])
			if overlaps(box, da.Rectangle) {
				t.Errorf("zone %g panel %d: legend %v overlaps data area %v", zone, k, box, da.Rectangle)
			}
			if box.Max.X > ringChartW+0.01 {
				t.Errorf("zone %g panel %d: legend %v runs off the picture", zone, k, box)
			}
			trX, trY := p.Transforms(&da)
			for _, r := range rings {
				mid := (r.RInMM + r.ROutMM) / 2
				for _, y := range [][2]float64{{r.FluxKWM2, r.FlatFluxKWM2}, {r.MeanGapMM, r.MaxGapMM}}[k] {
					pt := vg.Point{X: trX(mid), Y: trY(y)}
					if pt.X >= box.Min.X && pt.X <= box.Max.X && pt.Y >= box.Min.Y && pt.Y <= box.Max.Y {
						t.Errorf("zone %g panel %d: point %v inside legend %v", zone, k, pt, box)
					}
				}
			}
		}
	}
}

func TestPictureLabels(t *testing.T) {
	tests := []struct {
		l    PictureLabels
		want string
	}{
		{PictureLabels{}, "t"},
		{PictureLabels{Verdict: "PASS"}, "t\nverdict PASS"},
		{PictureLabels{PartNumber: "FP-200", Lot: "A2", Verdict: "FAIL"}, "t\npart FP-200 · lot A2 · verdict FAIL"},
	}
	for _, tt := range tests {
		if got := titleText("t", tt.l); got != tt.want {
			t.Errorf("%+v: %q, want %q", tt.l, got, tt.want)
		}
	}
}

func TestWriteMapBadInput(t *testing.T) {
	tests := []struct {
		name   string
		mod    func(*MapSpec)
		format string
		want   string
	}{
		{"short values", func(m *MapSpec) { m.Values = m.Values[:10] }, "png", "10 values for 41×41 cells of 1 mm"},
		{"zero cell", func(m *MapSpec) { m.CellMM = 0 }, "png", "cells of 0 mm"},
		{"NaN cell", func(m *MapSpec) { m.CellMM = math.NaN() }, "svg", "cells of NaN mm"},
		{"Inf cell", func(m *MapSpec) { m.CellMM = math.Inf(1) }, "png", "cells of +Inf mm"},
		{"NaN zone", func(m *MapSpec) { m.ZoneDiameterMM = math.NaN() }, "png", "want finite numbers"},
		{"Inf mark", func(m *MapSpec) { m.MarksMM = [][2]float64{{0, math.Inf(-1)}} }, "png", "mark at (0, -Inf) mm"},
		{"gif", func(*MapSpec) {}, "gif", `picture format "gif": want png or svg`},
	}
	for _, tt := range tests {
		m := discSpec(func(x, y float64) float64 { return x })
		tt.mod(m)
		err := WriteMap(io.Discard, m, tt.format)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%s: error %v, want %q", tt.name, err, tt.want)
		}
	}
}
