package xyz

import (
	"bytes"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// benchData returns n random points written with opt.
func benchData(b *testing.B, n int, opt WriteOptions) []byte {
	r := rand.New(rand.NewPCG(5, 6))
	c := &Cloud{Points: make([]r3.Vec, n)}
	for i := range c.Points {
		c.Points[i] = vec(200*r.Float64()-100, 200*r.Float64()-100, 3*r.Float64())
	}
	var buf bytes.Buffer
	if err := Write(&buf, c, opt); err != nil {
		b.Fatal(err)
	}
	return buf.Bytes()
}

func benchDecode(b *testing.B, data []byte) {
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	t0 := cpuTime()
	for b.Loop() {
		if _, err := Decode(bytes.NewReader(data), Options{SizeBytes: int64(len(data))}); err != nil {
			b.Fatal(err)
		}
	}
	if cpu := cpuTime() - t0; cpu > 0 {
		b.ReportMetric(float64(len(data))*float64(b.N)/cpu.Seconds()/1e6, "MB/cpu-s")
	}
}

func BenchmarkDecode(b *testing.B) {
	// Scanner-like text: 4 decimals in mm, about 30 bytes a line.
	b.Run("space-4dp", func(b *testing.B) { benchDecode(b, benchData(b, 300_000, WriteOptions{Precision: 4})) })
	b.Run("csv-header-4dp", func(b *testing.B) {
		benchDecode(b, benchData(b, 300_000, WriteOptions{Precision: 4, Delimiter: ',', Header: true, Unit: "mm"}))
	})
	// Shortest round-trip form: 17 significant digits, the slow path.
	b.Run("space-shortest", func(b *testing.B) { benchDecode(b, benchData(b, 100_000, WriteOptions{})) })
}
