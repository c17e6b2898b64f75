package synth_test

import (
	"bytes"
	"math"
	"testing"

	"gapflux/scan"
	"gapflux/scan/synth"
)

// TestPipelineForm writes each shape in one of the encodings, reads it back
// with scan.Read, and runs it through scan.Level, scan.Grid,
// scan.FormFilter (8 mm cut-off, the DESIGN.md 5.0 default) and
// scan.MeasureForm and checks the measured form against the truth. The
// tolerances (concavity within 2 % of the sag plus 3 σ of noise) are the
// acceptance figures set for package scan, our own choice.
func TestPipelineForm(t *testing.T) {
	if testing.Short() {
		t.Skip("full pipeline on 200 mm bases")
	}
	tests := []struct {
		name string
		spec synth.Spec
		face string // LevelOptions.Face
		enc  synth.Encoding
	}{
		{"dish-cloud-up", synth.Spec{Shape: synth.Dish, SagM: 0.5e-3, NoiseM: 8e-6,
			RotationDeg: [3]float64{3, -2, 25}, OffsetM: [3]float64{0.05, -0.02, 0.3}}, "up", synth.Encoding{Format: "ply", Binary: true}},
		{"dome-mesh-normals", synth.Spec{Shape: synth.Dome, SagM: 0.3e-3, NoiseM: 8e-6, Mesh: true,
			Face: "down", RotationDeg: [3]float64{0, 5, 0}}, "", synth.Encoding{Format: "stl", Binary: true}},
		{"saddle-wall", synth.Spec{Shape: synth.Saddle, SagM: 0.2e-3, NoiseM: 8e-6,
			CornerRadiusM: 5e-3, WallHeightM: 15e-3}, "", synth.Encoding{Format: "csv"}},
		{"bend-normals", synth.Spec{Shape: synth.Bend, SagM: 0.4e-3, NoiseM: 20e-6, Normals: true,
			RotationDeg: [3]float64{-4, 0, 60}}, "", synth.Encoding{Format: "xyz", Unit: "m", Gzip: true}},
		{"tilt", synth.Spec{Shape: synth.Tilt, SagM: 0.6e-3, NoiseM: 8e-6}, "up",
			synth.Encoding{Format: "ply", Binary: true, BigEndian: true, Double: true, Unit: "in"}},
		{"flat-spikes-holes", synth.Spec{Shape: synth.Flat, NoiseM: 8e-6, SpikeFraction: 0.002, Holes: 3}, "up", synth.Encoding{Format: "xyz"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s := tc.spec
			s.DiameterM, s.SpacingM, s.Seed = 0.2, 0.7e-3, 11
			sc, err := synth.Generate(s)
			if err != nil {
				t.Fatal(err)
			}
			var buf bytes.Buffer
			if err := synth.Encode(&buf, sc, tc.enc); err != nil {
				t.Fatal(err)
			}
			c, err := scan.Read(&buf, scan.ReadOptions{Name: tc.name, SizeBytes: int64(buf.Len())})
			if err != nil {
				t.Fatal(err)
			}
			if c.Format != tc.enc.FormatName() {
				t.Errorf("read format %q, want %q", c.Format, tc.enc.FormatName())
			}
			lv, err := scan.Level(c, scan.LevelOptions{Face: tc.face})
			if err != nil {
				t.Fatal(err)
			}
			g, err := scan.Grid(lv, scan.GridOptions{CellM: 1e-3})
			if err != nil {
				t.Fatal(err)
			}
			fr, err := scan.FormFilter(g.Raw, 8e-3)
			if err != nil {
				t.Fatal(err)
			}
			f, err := scan.MeasureForm(fr.Form, lv.RadiusM)
			if err != nil {
				t.Fatal(err)
			}
			tr := sc.Truth
			tol := 0.02*math.Abs(tr.SagMM) + 3*tr.NoiseUM*1e-3
			t.Logf("R %.3f mm (truth %.1f), concavity %.4f mm (truth %.4f), MZ %.4f mm, LS %.4f mm (truth %.4f), noise %.1f µm, outliers %d, face %s",
				lv.RadiusM*1e3, tr.DiameterMM/2, f.ConcavityM*1e3, tr.ConcavityMM, f.FlatnessMZM*1e3, f.FlatnessLSM*1e3,
				tr.FlatnessMM, fr.NoiseM*1e6, g.OutliersRemoved, lv.FaceSource)
			if math.Abs(lv.RadiusM*1e3-tr.DiameterMM/2) > 2*tr.SpacingMM {
				t.Errorf("radius %.3f mm, truth %.3f mm", lv.RadiusM*1e3, tr.DiameterMM/2)
			}
			if math.Abs(f.ConcavityM*1e3-tr.ConcavityMM) > tol {
				t.Errorf("concavity %.4f mm, truth %.4f mm ± %.4f", f.ConcavityM*1e3, tr.ConcavityMM, tol)
			}
			// The filtered minimum zone sits at the exact form's flatness
			// (a tilt is levelled away) within the same tolerance.
			if math.Abs(f.FlatnessMZM*1e3-tr.FlatnessMM) > tol+0.01*tr.FlatnessMM {
				t.Errorf("MZ flatness %.4f mm, truth %.4f mm", f.FlatnessMZM*1e3, tr.FlatnessMM)
			}
			// The filter takes out the white noise left in the cells:
			// 1 mm cells hold about two points at 0.7 mm spacing, so the
			// cell noise is near σ/√2 (binning, not a reference; ±0.15).
			if tr.NoiseUM > 0 && math.Abs(fr.NoiseM*1e6/tr.NoiseUM-math.Sqrt(0.5)) > 0.15 {
				t.Errorf("removed noise %.2f µm for σ = %.0f µm", fr.NoiseM*1e6, tr.NoiseUM)
			}
		})
	}
}
