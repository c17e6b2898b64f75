package pipeline

import (
	"encoding/json"
	"math"
	"os/exec"
	"path/filepath"
	"testing"

	"gapflux/internal/reftable"
	"gapflux/scan/synth"
)

// vtkPython returns a python3 that can import VTK's Python module, or skips
// the test. Debian's /usr/bin/python3 comes first: a python3 earlier on PATH
// (pyenv, a virtualenv) usually lacks Debian's python3-vtk9, which .ci/run
// installs when it is missing.
func vtkPython(t *testing.T) string {
	t.Helper()
	cands := []string{"/usr/bin/python3"}
	if p, err := exec.LookPath("python3"); err == nil {
		cands = append(cands, p)
	}
	for _, py := range cands {
		if exec.Command(py, "-c", "import vtkmodules.vtkIOXML").Run() == nil {
			return py
		}
	}
	t.Skip("no python3 with the vtk module (Debian: apt-get install python3-vtk9); VTK read-back not checked")
	return ""
}

// vtkDump is what testdata/reference/gen.py vti prints.
type vtkDump struct {
	VTK     string    `json:"vtk"`
	Dims    []int     `json:"dims"`
	Origin  []float64 `json:"origin"`
	Spacing []float64 `json:"spacing"`
	Arrays  map[string]struct {
		Type   string     `json:"type"`
		Values []*float64 `json:"values"` // null for NaN
	} `json:"arrays"`
}

// TestFieldsVTIReadByVTK writes the fields.vti of a whole analysis and reads
// it back with VTK's own vtkXMLImageDataReader (Debian python3-vtk9,
// VTK 9.1.0, through testdata/reference/gen.py vti): the grid, every array's
// name and type, and every value must match what the pipeline meant to
// write. Values are written as Float32, so each must equal the float32
// rounding of the pipeline's value exactly; NaN (outside the base) must come
// back as NaN.
func TestFieldsVTIReadByVTK(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain and a child process")
	}
	py := vtkPython(t)
	res := analyzeSynth(t, synth.Spec{Shape: synth.Dish, DiameterM: 0.08, SagM: 0.2e-3, NoiseM: 5e-6,
		SpacingM: 1e-3, Seed: 9}, synth.Encoding{Format: "xyz"}, smallJob())
	dir := t.TempDir()
	if err := WriteOutputs(res, dir); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(py, filepath.Join(reftable.Dir(), "gen.py"), "vti", filepath.Join(dir, "fields.vti")).Output()
	if err != nil {
		t.Fatalf("VTK could not read fields.vti: %v\n%s", err, exitStderr(err))
	}
	var got vtkDump
	if err := json.Unmarshal(out, &got); err != nil {
		t.Fatalf("gen.py vti output: %v", err)
	}
	g := res.vtiGrid()
	if len(got.Dims) != 3 || got.Dims[0] != g.Nx || got.Dims[1] != g.Ny || got.Dims[2] != 1 {
		t.Errorf("VTK %s dims %v, want [%d %d 1]", got.VTK, got.Dims, g.Nx, g.Ny)
	}
	// Origin and spacing go through the XML as %g-style text: 1e-9 mm.
	for i, w := range [][2]float64{{got.Origin[0], g.X0MM}, {got.Origin[1], g.Y0MM}, {got.Spacing[0], g.SpacingMM}, {got.Spacing[1], g.SpacingMM}} {
		if math.Abs(w[0]-w[1]) > 1e-9 {
			t.Errorf("VTK origin/spacing #%d = %g, want %g", i, w[0], w[1])
		}
	}
	fields := res.vtiFields()
	if len(got.Arrays) != len(fields) {
		t.Errorf("VTK sees %d arrays, the pipeline wrote %d", len(got.Arrays), len(fields))
	}
	for _, f := range fields {
		f.Values = f.valuesOf(g.Nx * g.Ny)
		a, ok := got.Arrays[f.Name]
		if !ok {
			t.Errorf("VTK does not see array %q", f.Name)
			continue
		}
		wantType := "float"
		if f.UInt8 {
			wantType = "unsigned char"
		}
		if a.Type != wantType || len(a.Values) != len(f.Values) {
			t.Errorf("%s: VTK type %q with %d values, want %q with %d", f.Name, a.Type, len(a.Values), wantType, len(f.Values))
			continue
		}
		bad, finite := 0, 0
		for k, v := range f.Values {
			want := float64(float32(v))
			switch {
			case math.IsNaN(v):
				if a.Values[k] != nil {
					bad++
				}
			case a.Values[k] == nil || *a.Values[k] != want:
				bad++
			default:
				finite++
			}
		}
		if bad > 0 || finite == 0 {
			t.Errorf("%s: %d of %d values differ as read by VTK (%d finite matched)", f.Name, bad, len(f.Values), finite)
		}
	}
}

// exitStderr returns the standard error of a failed command, if any.
func exitStderr(err error) string {
	if ee, ok := err.(*exec.ExitError); ok {
		return string(ee.Stderr)
	}
	return ""
}
