package scan

import (
	"os"
	"testing"
)

// benchPLY is a 2 million point scan of a pan base the benchmarks grid
// when it is present (see the repository's benchmark notes).
const benchPLY = "/tmp/gfbench/pan-2m.ply"

// levelledFile reads and levels the scan at path as the analysis does
// (readAndLevel), or skips the benchmark when the file is missing.
func levelledFile(b *testing.B, path string) *Levelled {
	b.Helper()
	f, err := os.Open(path)
	if err != nil {
		b.Skipf("no benchmark scan: %v", err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		b.Fatal(err)
	}
	c, err := Read(f, ReadOptions{Name: path, SizeBytes: st.Size()})
	if err != nil {
		b.Fatal(err)
	}
	l, err := Level(c, LevelOptions{Reuse: true, DropNormals: true})
	if err != nil {
		b.Fatal(err)
	}
	return l
}

// BenchmarkGridPLY2M grids the levelled 2 million point scan with the
// analysis's default options (automatic cell, 8 mm cut-off) and reports
// the points gridded per second and the CPU time per grid (all
// processors).
func BenchmarkGridPLY2M(b *testing.B) {
	l := levelledFile(b, benchPLY)
	opt := GridOptions{OutlierK: DefaultOutlierK, MaxCells: 4_000_000, MaxCellM: 8e-3 / 4}
	b.ResetTimer()
	cpu0 := cpuTime()
	for b.Loop() {
		if _, err := Grid(l, opt); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(l.Cloud.Points))*float64(b.N)/b.Elapsed().Seconds(), "points/s")
	b.ReportMetric(float64(cpuTime()-cpu0)/1e6/float64(b.N), "cpu-ms/op")
}
