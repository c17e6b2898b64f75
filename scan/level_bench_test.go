package scan

import (
	"os"
	"testing"
	"time"
)

// benchLevelFile levels a fresh copy of the scan at path per iteration, as
// the analysis does (Reuse, DropNormals), and reports points per second of
// wall and of CPU time. It skips when the file is missing.
func benchLevelFile(b *testing.B, path string) {
	if _, err := os.Stat(path); err != nil {
		b.Skipf("%s: %v", path, err)
	}
	c, err := ReadFile(path, ReadOptions{})
	if err != nil {
		b.Fatal(err)
	}
	// The copies live in storage of their own, refilled per iteration, so
	// that the benchmark times Level rather than the allocator.
	buf := *c
	buf.Points = append(c.Points[:0:0], c.Points...)
	buf.Normals = append(c.Normals[:0:0], c.Normals...)
	buf.Triangles = append(c.Triangles[:0:0], c.Triangles...)
	buf.FacetNormals = append(c.FacetNormals[:0:0], c.FacetNormals...)
	var wall, cpu time.Duration
	for b.Loop() {
		b.StopTimer()
		fresh := *c
		fresh.Points = append(buf.Points[:0], c.Points...)
		fresh.Normals = append(buf.Normals[:0], c.Normals...)
		fresh.Triangles = append(buf.Triangles[:0], c.Triangles...)
		fresh.FacetNormals = append(buf.FacetNormals[:0], c.FacetNormals...)
		b.StartTimer()
		t0, c0 := time.Now(), cpuTime()
		if _, err := Level(&fresh, LevelOptions{Reuse: true, DropNormals: true}); err != nil {
			b.Fatal(err)
		}
		wall += time.Since(t0)
		cpu += cpuTime() - c0
	}
	n := float64(b.N) * float64(len(c.Points))
	b.ReportMetric(n/wall.Seconds(), "points/s")
	if cpu > 0 {
		b.ReportMetric(n/cpu.Seconds(), "points/cpu-s")
	}
}

// BenchmarkLevelPLY levels the 2 M-point benchmark PLY (with point
// normals).
func BenchmarkLevelPLY(b *testing.B) { benchLevelFile(b, benchPLY) }

// BenchmarkLevelSTL levels the 1.3 M-triangle benchmark STL (facet
// normals, shared vertices).
func BenchmarkLevelSTL(b *testing.B) { benchLevelFile(b, benchSTL) }
