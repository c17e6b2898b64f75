package pipeline

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestReadVTIRoundTrip writes both layouts and reads them back: every
// value equals its float32 rounding (the stored precision), NaN stays NaN.
func TestReadVTIRoundTrip(t *testing.T) {
	g := VTIGrid{Nx: 300, Ny: 40, X0MM: -12.5, Y0MM: 3.25, SpacingMM: 0.5} // 12000 cells: several 32 KiB blocks
	h := make([]float64, g.Nx*g.Ny)
	st := make([]float64, len(h))
	for k := range h {
		h[k] = math.Sin(float64(k)*0.37) * 123.456
		st[k] = float64(k % 3)
	}
	h[7] = math.NaN()
	fields := []VTIField{{Name: "height_um", Values: h}, {Name: "cell_state", Values: st, UInt8: true}}
	for _, tc := range []struct {
		name  string
		write func(w *bytes.Buffer) error
	}{
		{"plain", func(w *bytes.Buffer) error { return WriteVTI(w, g, fields) }},
		{"compressed", func(w *bytes.Buffer) error { return WriteVTICompressed(w, g, fields) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var buf bytes.Buffer
			if err := tc.write(&buf); err != nil {
				t.Fatal(err)
			}
			p := filepath.Join(t.TempDir(), "fields.vti")
			os.WriteFile(p, buf.Bytes(), 0o644)
			v, err := ReadVTI(p, 1<<20, "height_um", "cell_state")
			if err != nil {
				t.Fatal(err)
			}
			if v.Grid != g {
				t.Fatalf("grid %+v, want %+v", v.Grid, g)
			}
			for k := range h {
				got, want := v.Fields["height_um"][k], float64(float32(h[k]))
				if !(got == want || math.IsNaN(got) && math.IsNaN(want)) || v.Fields["cell_state"][k] != st[k] {
					t.Fatalf("cell %d: %g, %g; want %g, %g", k, got, v.Fields["cell_state"][k], want, st[k])
				}
			}
		})
	}
}

func TestReadVTIBad(t *testing.T) {
	g := VTIGrid{Nx: 50, Ny: 50, SpacingMM: 1}
	fields := []VTIField{{Name: "height_um", Values: make([]float64, 2500)}}
	var plain, comp bytes.Buffer
	WriteVTI(&plain, g, fields)
	WriteVTICompressed(&comp, g, fields)
	tests := []struct {
		name     string
		data     []byte
		maxCells int
		want     string
	}{
		{"not vti", []byte("solid cube\nendsolid\n"), 1 << 20, "no VTKFile"},
		{"grid beyond the limit", plain.Bytes(), 1000, "max_cells"},
		{"missing array", plain.Bytes(), 1 << 20, "no array gap_mm"},
		{"truncated compressed", comp.Bytes()[:comp.Len()-200], 1 << 20, "height_um"},
		{"truncated plain", plain.Bytes()[:plain.Len()/2], 1 << 20, "height_um"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p := filepath.Join(t.TempDir(), "fields.vti")
			os.WriteFile(p, tc.data, 0o644)
			names := []string{"height_um"}
			if tc.name == "missing array" {
				names = append(names, "gap_mm")
			}
			_, err := ReadVTI(p, tc.maxCells, names...)
			if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), p) {
				t.Fatalf("error %v, want one naming %s and saying %q", err, p, tc.want)
			}
		})
	}
}
