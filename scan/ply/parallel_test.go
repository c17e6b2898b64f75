package ply

import (
	"bytes"
	"encoding/binary"
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

// TestFill32LittleEndian checks fill32's little-endian path against a
// direct decoding with encoding/binary (the reference) on records whose
// coordinates sit at scattered offsets between other properties, with
// and without normals, and that a non-finite value (NaN, ±Inf) at any
// coordinate of any record is reported at its own byte (the first such
// in record order, then in the offsets' order).
func TestFill32LittleEndian(t *testing.T) {
	const n, rec = 37, 32
	off := []int{8, 0, 20, 28, 4, 12} // x y z nx ny nz, out of order, gaps between
	data := make([]byte, n*rec)
	for i := range data {
		data[i] = byte(i*7 + 3)
	}
	for r := range n {
		for j, o := range off {
			v := float32(r)*0.25 - float32(j)*1.5
			binary.LittleEndian.PutUint32(data[r*rec+o:], math.Float32bits(v))
		}
	}
	ref := func(b []byte, r, j int) float64 {
		return float64(math.Float32frombits(binary.LittleEndian.Uint32(b[r*rec+off[j]:])))
	}
	for _, normals := range []bool{false, true} {
		k := 3
		if normals {
			k = 6
		}
		pts := make([]r3.Vec, n)
		var nrm []r3.Vec
		if normals {
			nrm = make([]r3.Vec, n)
		}
		if bad := fill32(pts, nrm, data, rec, off[:k], false); bad != 0 {
			t.Fatalf("normals %v: bad %d", normals, bad)
		}
		for r := range n {
			if want := (r3.Vec{X: ref(data, r, 0), Y: ref(data, r, 1), Z: ref(data, r, 2)}); pts[r] != want {
				t.Fatalf("normals %v: point %d = %v, want %v", normals, r, pts[r], want)
			}
			if normals {
				if want := (r3.Vec{X: ref(data, r, 3), Y: ref(data, r, 4), Z: ref(data, r, 5)}); nrm[r] != want {
					t.Fatalf("normal %d = %v, want %v", r, nrm[r], want)
				}
			}
		}
		for _, v := range []float32{float32(math.NaN()), float32(math.Inf(1)), float32(math.Inf(-1))} {
			for j := range k {
				for _, r := range []int{0, 17, n - 1} {
					b := bytes.Clone(data)
					binary.LittleEndian.PutUint32(b[r*rec+off[j]:], math.Float32bits(v))
					if j > 0 { // an earlier coordinate of the record bad too: it is the one reported
						binary.LittleEndian.PutUint32(b[r*rec+off[0]:], math.Float32bits(v))
					}
					want := r*rec + off[0] + 1
					if got := fill32(pts, nrm, b, rec, off[:k], false); got != want {
						t.Errorf("normals %v, %v at record %d coordinate %d: bad %d, want %d", normals, v, r, j, got, want)
					}
					// Alone at coordinate j.
					c := bytes.Clone(data)
					binary.LittleEndian.PutUint32(c[r*rec+off[j]:], math.Float32bits(v))
					if got, want := fill32(pts, nrm, c, rec, off[:k], false), r*rec+off[j]+1; got != want {
						t.Errorf("normals %v, %v alone at record %d coordinate %d: bad %d, want %d", normals, v, r, j, got, want)
					}
				}
			}
		}
	}
}
