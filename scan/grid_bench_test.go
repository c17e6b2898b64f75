package scan

import (
	"cmp"
	"os"
	"path/filepath"
	"testing"
)

// benchPLY and benchSTL are scans of a pan base (2 million points, 1.3
// million triangles) that scripts/bench.sh writes; the benchmarks that
// read them are skipped when they are missing.
var (
	benchPLY = benchScan("pan-2m.ply")
	benchSTL = benchScan("pan-1m3.stl")
)

// benchScan returns the path of a scripts/bench.sh scan: in the folder
// $GAPFLUX_BENCH_DIR, else /tmp/gfbench.
func benchScan(name string) string {
	return filepath.Join(cmp.Or(os.Getenv("GAPFLUX_BENCH_DIR"), "/tmp/gfbench"), name)
}

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
func BenchmarkGridPLY2M(b *testing.B) { benchmarkGridFile(b, benchPLY) }

// BenchmarkGridSTL grids the levelled 1.3 million triangle scan as
// BenchmarkGridPLY2M does (points/s counts its vertices).
func BenchmarkGridSTL(b *testing.B) { benchmarkGridFile(b, benchSTL) }

func benchmarkGridFile(b *testing.B, path string) {
	l := levelledFile(b, path)
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

// BenchmarkLocalOutliersPLY2M runs the outlier test alone on every point
// of the levelled 2 million point scan (at the spacing Grid measures),
// reporting the CPU time per test (all processors).
func BenchmarkLocalOutliersPLY2M(b *testing.B) {
	l := levelledFile(b, benchPLY)
	g, err := Grid(l, GridOptions{OutlierK: DefaultOutlierK, MaxCells: 4_000_000, MaxCellM: 8e-3 / 4})
	if err != nil {
		b.Fatal(err)
	}
	pts := l.Cloud.Points
	x, y, z := make([]float64, len(pts)), make([]float64, len(pts)), make([]float64, len(pts))
	for i, p := range pts {
		x[i], y[i], z[i] = p.X, p.Y, p.Z
	}
	b.ResetTimer()
	cpu0 := cpuTime()
	for b.Loop() {
		LocalOutliers(x, y, z, g.PointSpacingM, DefaultOutlierK)
	}
	b.ReportMetric(float64(cpuTime()-cpu0)/1e6/float64(b.N), "cpu-ms/op")
}
