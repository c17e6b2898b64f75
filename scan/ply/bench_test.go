package ply

import (
	"bytes"
	"math/rand/v2"
	"testing"
	"time"

	"gonum.org/v1/gonum/spatial/r3"
)

// benchCloud returns n random points with faces over them.
func benchCloud(n int, normals bool) *Cloud {
	r := rand.New(rand.NewPCG(3, 4))
	c := &Cloud{Points: make([]r3.Vec, n), Faces: make([][3]int32, 0, 2*n)}
	for i := range c.Points {
		c.Points[i] = vec(200*r.Float64()-100, 200*r.Float64()-100, 3*r.Float64())
	}
	if normals {
		c.Normals = make([]r3.Vec, n)
		for i := range c.Normals {
			c.Normals[i] = vec(0, 0, 1)
		}
	}
	for i := 0; i+2 < n; i += 2 {
		c.Faces = append(c.Faces, [3]int32{int32(i), int32(i + 1), int32(i + 2)})
	}
	return c
}

func benchDecode(b *testing.B, c *Cloud, opt WriteOptions, sized bool) {
	var buf bytes.Buffer
	if err := Write(&buf, c, opt); err != nil {
		b.Fatal(err)
	}
	data := buf.Bytes()
	o := Options{SizeBytes: -1}
	if sized {
		o.SizeBytes = int64(len(data))
	}
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	t0 := cpuTime()
	for b.Loop() {
		if _, err := Decode(bytes.NewReader(data), o); err != nil {
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
	pts := benchCloud(500_000, false)
	pts.Faces = nil
	nrm := benchCloud(500_000, true)
	nrm.Faces = nil
	b.Run("float-le", func(b *testing.B) { benchDecode(b, pts, WriteOptions{Format: BinaryLittleEndian}, true) })
	b.Run("float-le-stream", func(b *testing.B) { benchDecode(b, pts, WriteOptions{Format: BinaryLittleEndian}, false) })
	b.Run("double-le", func(b *testing.B) {
		benchDecode(b, pts, WriteOptions{Format: BinaryLittleEndian, VertexType: "double"}, true)
	})
	b.Run("float-be", func(b *testing.B) { benchDecode(b, pts, WriteOptions{Format: BinaryBigEndian}, true) })
	b.Run("float-le-normals", func(b *testing.B) { benchDecode(b, nrm, WriteOptions{Format: BinaryLittleEndian}, true) })
	b.Run("float-le-faces", func(b *testing.B) {
		benchDecode(b, benchCloud(500_000, false), WriteOptions{Format: BinaryLittleEndian}, true)
	})
}

func BenchmarkDecodeASCII(b *testing.B) {
	c := benchCloud(100_000, false)
	b.Run("points", func(b *testing.B) { c := *c; c.Faces = nil; benchDecode(b, &c, WriteOptions{}, true) })
	b.Run("faces", func(b *testing.B) { benchDecode(b, c, WriteOptions{}, true) })
}
