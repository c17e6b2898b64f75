package pipeline

import (
	"bytes"
	"image"
	"image/png"
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
// vtk module is installed; it is skipped elsewhere.
func TestVTIReadsInVTK(t *testing.T) {
	py, err := exec.LookPath("python3")
	if err != nil {
		t.Skip("no python3")
	}
	if exec.Command(py, "-c", "import vtk").Run() != nil {
		t.Skip("python3 has no vtk module")
	}
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
