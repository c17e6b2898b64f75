package ply

import (
	"bytes"
	"errors"
	"io"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// TestFloatVerticesLarge checks the chunked, split decoding of large
// float and double vertex elements (more records than one chunk and more
// than one part per chunk): every point and normal back exactly, and a
// non-finite value or a cut-short file deep in the data reported at its
// own byte offset and record.
func TestFloatVerticesLarge(t *testing.T) {
	const n = 3*floatSplit + floatChunk/24 + 17 // several chunks, split parts
	c := &Cloud{Points: make([]r3.Vec, n), Normals: make([]r3.Vec, n)}
	for i := range c.Points {
		f := float64(i)
		c.Points[i] = r3.Vec{X: f * 0.5, Y: -f * 0.25, Z: f / 1024}
		c.Normals[i] = r3.Vec{X: 0, Y: float64(i % 3), Z: 1}
	}
	for _, tt := range []struct {
		name string
		typ  string
		size int // bytes per value
		bad  int // record given a NaN z; its index must come back in the error
	}{
		{"float", "float", 4, n - 5},
		{"double", "double", 8, 2*floatSplit + 3},
		{"float first part", "float", 4, 7},
	} {
		t.Run(tt.name, func(t *testing.T) {
			var buf bytes.Buffer
			if err := Write(&buf, c, WriteOptions{Format: BinaryLittleEndian, VertexType: tt.typ}); err != nil {
				t.Fatal(err)
			}
			data := buf.Bytes()
			got, err := Decode(bytes.NewReader(data), Options{Name: "t.ply", SizeBytes: int64(len(data))})
			if err != nil {
				t.Fatal(err)
			}
			if len(got.Points) != n || len(got.Normals) != n {
				t.Fatalf("%d points, %d normals, want %d", len(got.Points), len(got.Normals), n)
			}
			for i := range n {
				// Every value is exact in float32.
				if got.Points[i] != c.Points[i] || got.Normals[i] != c.Normals[i] {
					t.Fatalf("record %d: %v %v, want %v %v", i, got.Points[i], got.Normals[i], c.Points[i], c.Normals[i])
				}
			}
			rec := 6 * tt.size
			h := len(data) - n*rec
			// A NaN z in record tt.bad.
			bad := bytes.Clone(data)
			zOff := h + tt.bad*rec + 2*tt.size
			if tt.size == 4 {
				copy(bad[zOff:], le32(math.Float32bits(float32(math.NaN()))))
			} else {
				copy(bad[zOff:], le64(math.Float64bits(math.NaN())))
			}
			_, err = Decode(bytes.NewReader(bad), Options{Name: "t.ply", SizeBytes: int64(len(bad))})
			var pe *ParseError
			if !errors.As(err, &pe) || !errors.Is(err, ErrNotFinite) || pe.Offset != int64(zOff) {
				t.Fatalf("NaN at byte %d: got %v", zOff, err)
			}
			// Cut short inside record tt.bad.
			cut := data[:h+tt.bad*rec+5]
			_, err = Decode(bytes.NewReader(cut), Options{Name: "t.ply", SizeBytes: -1})
			if !errors.As(err, &pe) || !errors.Is(err, io.ErrUnexpectedEOF) || pe.Offset != int64(len(cut)) {
				t.Fatalf("cut at byte %d: got %v", len(cut), err)
			}
		})
	}
}

func le32(u uint32) []byte { return []byte{byte(u), byte(u >> 8), byte(u >> 16), byte(u >> 24)} }

func le64(u uint64) []byte {
	return append(le32(uint32(u)), le32(uint32(u>>32))...)
}
