package pipeline

import (
	"cmp"
	"context"
	"os"
	"path/filepath"
	"syscall"
	"testing"
	"time"
)

// benchPLY is the large test scan of the output benchmarks (about 2 M
// points) that scripts/bench.sh writes into $GAPFLUX_BENCH_DIR (else
// /tmp/gfbench); the benchmarks are skipped without it.
var benchPLY = filepath.Join(cmp.Or(os.Getenv("GAPFLUX_BENCH_DIR"), "/tmp/gfbench"), "pan-2m.ply")

// analyzedPLY analyses benchPLY with the default job, or skips b.
func analyzedPLY(b *testing.B) *Result {
	b.Helper()
	if _, err := os.Stat(benchPLY); err != nil {
		b.Skipf("%s: %v", benchPLY, err)
	}
	res, err := Analyze(context.Background(), ScanInput{PanPath: benchPLY, Name: filepath.Base(benchPLY), Job: DefaultJob()})
	if err != nil {
		b.Fatal(err)
	}
	return res
}

// BenchmarkWriteOutputsPLY writes every output of the analysed 2 M-point
// PLY scan (the analyze command's case), and each writer on its own.
func BenchmarkWriteOutputsPLY(b *testing.B) {
	res := analyzedPLY(b)
	out := filepath.Join(b.TempDir(), "out")
	if err := WriteOutputs(res, out); err != nil {
		b.Fatal(err)
	}
	b.Run("all", func(b *testing.B) {
		loopCPU(b, func() error { return WriteOutputs(res, out) })
	})
	tasks := pictureTasks(out, res, nil)
	names := []string{"gap.png", "gap.svg", "flux.png", "flux.svg", "rings.png", "rings.svg"}
	for i, task := range tasks {
		b.Run(names[i], func(b *testing.B) {
			loopCPU(b, task)
		})
	}
	b.Run("fields.vti", func(b *testing.B) {
		loopCPU(b, func() error { return writeFields(out, res) })
	})
	b.Run("report.html", func(b *testing.B) {
		svgs := &svgDocs{}
		if err := runParallel(pictureTasks(out, res, svgs)); err != nil {
			b.Fatal(err)
		}
		loopCPU(b, func() error { return writeReportHTML(out, res, svgs.docs) })
	})
	b.Run("report.json", func(b *testing.B) {
		loopCPU(b, func() error { _, err := MarshalReport(res.Report); return err })
	})
}

// cpuTime returns the process's user and system CPU time so far.
func cpuTime(b *testing.B) time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		b.Fatal(err)
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// loopCPU runs f b.N times and reports the CPU time per run (all
// threads), less noisy than the wall time on a shared host.
func loopCPU(b *testing.B, f func() error) {
	b.Helper()
	start, n := cpuTime(b), 0
	for b.Loop() {
		if err := f(); err != nil {
			b.Fatal(err)
		}
		n++
	}
	b.ReportMetric(float64(cpuTime(b)-start)/float64(n)/1e6, "cpu-ms/op")
}
