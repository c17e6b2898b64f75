package pipeline

import (
	"context"
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"gapflux/scan/synth"
)

// TestWriteOutputsErrorOrder: when outputs cannot be written (a folder
// stands where the file goes), WriteOutputs reports the first failure in
// its fixed order (rings.csv, fields.vti, the pictures, report.html),
// whatever the scheduling, on one processor and on several, and writes
// no report.json.
func TestWriteOutputsErrorOrder(t *testing.T) {
	dir := t.TempDir()
	path := writeSynth(t, dir, "dish", synth.Spec{Shape: synth.Dish, DiameterM: 0.12, SagM: 0.3e-3, NoiseM: 8e-6, Seed: 3},
		synth.Encoding{Format: "ply", Binary: true})
	res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: filepath.Base(path), Job: DefaultJob()})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		blocked []string // outputs with a folder in their place
		want    string   // the output the error names
	}{
		{[]string{"report.html", "rings.svg", "fields.vti"}, "fields.vti"},
		{[]string{"report.html", "flux.svg", "gap.svg"}, "gap.svg"},
		{[]string{"report.html", "rings.png", "flux.png"}, "flux.png"},
		{[]string{"report.html"}, "report.html"},
	} {
		for _, procs := range []int{1, 4} {
			t.Run(tc.want+"/"+strings.Repeat("p", procs), func(t *testing.T) {
				defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
				out := t.TempDir()
				for _, b := range tc.blocked {
					if err := os.MkdirAll(filepath.Join(out, b, "x"), 0o755); err != nil {
						t.Fatal(err)
					}
				}
				err := WriteOutputs(res, out)
				if err == nil || !strings.Contains(err.Error(), filepath.Join(out, tc.want)) {
					t.Fatalf("error %v, want one naming %s", err, tc.want)
				}
				if _, err := os.Stat(filepath.Join(out, "report.json")); !errors.Is(err, fs.ErrNotExist) {
					t.Errorf("report.json written despite the failure (%v)", err)
				}
			})
		}
	}
}
