package stl

import (
	"bytes"
	"math/rand/v2"
	"testing"
	"time"

	"gonum.org/v1/gonum/spatial/r3"
)

// benchMesh returns a mesh of n random facets.
func benchMesh(n int) *Mesh {
	r := rand.New(rand.NewPCG(1, 2))
	m := &Mesh{Vertices: make([]r3.Vec, 3*n), Normals: make([]r3.Vec, n)}
	for i := range m.Vertices {
		m.Vertices[i] = vec(200*r.Float64()-100, 200*r.Float64()-100, 3*r.Float64())
	}
	for i := range m.Normals {
		m.Normals[i] = vec(0, 0, 1)
	}
	return m
}

func benchDecode(b *testing.B, data []byte, sized bool) {
	benchDecodeWith(b, data, sized, Options{})
}

func benchDecodeWith(b *testing.B, data []byte, sized bool, opt Options) {
	opt.SizeBytes = -1
	if sized {
		opt.SizeBytes = int64(len(data))
	}
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	t0 := cpuTime()
	for b.Loop() {
		if _, err := Decode(bytes.NewReader(data), opt); err != nil {
			b.Fatal(err)
		}
	}
	reportCPU(b, t0, len(data))
}

// reportCPU reports the throughput per CPU second since t0.
func reportCPU(b *testing.B, t0 time.Duration, n int) {
	if cpu := cpuTime() - t0; cpu > 0 {
		b.ReportMetric(float64(n)*float64(b.N)/cpu.Seconds()/1e6, "MB/cpu-s")
	}
}

func BenchmarkDecodeBinary(b *testing.B) {
	var buf bytes.Buffer
	if err := WriteBinary(&buf, benchMesh(200_000)); err != nil {
		b.Fatal(err)
	}
	b.Run("sized", func(b *testing.B) { benchDecode(b, buf.Bytes(), true) })
	b.Run("stream", func(b *testing.B) { benchDecode(b, buf.Bytes(), false) })
	// A scanner's mesh: each vertex shared by six facets, welded as
	// scan.Read does.
	var grid bytes.Buffer
	if err := WriteBinary(&grid, gridSoup(300)); err != nil {
		b.Fatal(err)
	}
	b.Run("welded", func(b *testing.B) { benchDecodeWith(b, grid.Bytes(), true, Options{Weld: true}) })
	b.Run("welded-stream", func(b *testing.B) { benchDecodeWith(b, grid.Bytes(), false, Options{Weld: true}) })
	// The size of scripts/bench.sh's scan: 1.28 M facets, 64 MB, whose
	// vertex table no longer fits in the processor's cache.
	var large bytes.Buffer
	if err := WriteBinary(&large, gridSoup(800)); err != nil {
		b.Fatal(err)
	}
	b.Run("welded-large", func(b *testing.B) { benchDecodeWith(b, large.Bytes(), true, Options{Weld: true}) })
}

// BenchmarkDecodeASCII: an ASCII file of 20 000 facets as facets, and
// welded into a mesh as the pipeline reads it.
func BenchmarkDecodeASCII(b *testing.B) {
	var buf bytes.Buffer
	if err := WriteASCII(&buf, benchMesh(20_000)); err != nil {
		b.Fatal(err)
	}
	b.Run("facets", func(b *testing.B) { benchDecode(b, buf.Bytes(), true) })
	b.Run("welded", func(b *testing.B) { benchDecodeWith(b, buf.Bytes(), true, Options{Weld: true}) })
}

func BenchmarkWriteBinary(b *testing.B) {
	m := benchMesh(200_000)
	b.SetBytes(84 + 50*200_000)
	for b.Loop() {
		if err := WriteBinary(discard{}, m); err != nil {
			b.Fatal(err)
		}
	}
}

type discard struct{}

func (discard) Write(p []byte) (int, error) { return len(p), nil }
