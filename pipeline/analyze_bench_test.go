package pipeline

import (
	"context"
	"fmt"
	"path/filepath"
	"testing"

	"gapflux/scan/synth"
)

// writeSynth writes a synthetic scan into dir and returns its path.
func writeSynth(tb testing.TB, dir, name string, spec synth.Spec, enc synth.Encoding) string {
	tb.Helper()
	spec.Name = name
	sc, err := synth.Generate(spec)
	if err != nil {
		tb.Fatal(err)
	}
	path, _, err := synth.WriteFiles(dir, name, sc, enc)
	if err != nil {
		tb.Fatal(err)
	}
	return path
}

// BenchmarkAnalyze runs the whole chain on a 200 mm dished base scanned as
// a point cloud at 0.5 mm spacing (about 126 k points), default job.
func BenchmarkAnalyze(b *testing.B) {
	for _, tc := range []struct {
		name string
		mode string
	}{{"heater", "heater"}, {"temperature", "temperature"}} {
		b.Run(tc.name, func(b *testing.B) {
			dir := b.TempDir()
			path := writeSynth(b, dir, "dish", synth.Spec{Shape: synth.Dish, DiameterM: 0.2, SagM: 0.4e-3, NoiseM: 8e-6, Seed: 1},
				synth.Encoding{Format: "ply", Binary: true})
			job := DefaultJob()
			job.Hob.Mode = tc.mode
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				if _, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: filepath.Base(path), Job: job}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkBatchDemo measures batch throughput (scans per second) on the
// demo product line with 1 and 2 workers; every iteration re-runs all
// scans (Force).
func BenchmarkBatchDemo(b *testing.B) {
	dir := b.TempDir()
	if err := WriteDemoScans(dir); err != nil {
		b.Fatal(err)
	}
	job, err := ReadJobFile(filepath.Join(dir, JobName))
	if err != nil {
		b.Fatal(err)
	}
	for _, workers := range []int{1, 2} {
		b.Run(fmt.Sprintf("workers=%d", workers), func(b *testing.B) {
			out := b.TempDir()
			scans := 0
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: job, Workers: workers, Force: true})
				if err != nil {
					b.Fatal(err)
				}
				scans += res.Total
			}
			b.ReportMetric(float64(scans)/b.Elapsed().Seconds(), "scans/s")
		})
	}
}
