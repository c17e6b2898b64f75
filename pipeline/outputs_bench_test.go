package pipeline

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"gapflux/scan/synth"
)

// BenchmarkWriteOutputs writes every output of one analysed scan (a 200 mm
// dished base, about 126 k points, default job: maps, ring chart,
// rings.csv, fields.vti, report.html and report.json); the bytes per
// operation are the outputs' total size.
func BenchmarkWriteOutputs(b *testing.B) {
	dir := b.TempDir()
	path := writeSynth(b, dir, "dish", synth.Spec{Shape: synth.Dish, DiameterM: 0.2, SagM: 0.4e-3, NoiseM: 8e-6, Seed: 1},
		synth.Encoding{Format: "ply", Binary: true})
	res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: filepath.Base(path), Job: DefaultJob()})
	if err != nil {
		b.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	if err := WriteOutputs(res, out); err != nil {
		b.Fatal(err)
	}
	entries, err := os.ReadDir(out)
	if err != nil {
		b.Fatal(err)
	}
	var size int64
	for _, e := range entries {
		if fi, err := e.Info(); err == nil {
			size += fi.Size()
		}
	}
	b.SetBytes(size)
	for b.Loop() {
		if err := WriteOutputs(res, out); err != nil {
			b.Fatal(err)
		}
	}
}
