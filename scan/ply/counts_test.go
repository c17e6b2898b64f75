package ply

import (
	"bytes"
	"errors"
	"fmt"
	"strings"
	"testing"
)

// cube returns a binary little-endian PLY of a unit cube's 8 vertices
// (float x, y, z) and 12 triangles (list uchar int), with the header's
// counts given, followed by the real data for 8 vertices and 12 faces.
func cube(nv, nf int, faces bool) []byte {
	h := fmt.Sprintf("ply\nformat binary_little_endian 1.0\nelement vertex %d\n"+
		"property float x\nproperty float y\nproperty float z\n", nv)
	if faces {
		h += fmt.Sprintf("element face %d\nproperty list uchar int vertex_indices\n", nf)
	}
	h += "end_header\n"
	b := []byte(h)
	for i := range 8 {
		b = append(b, bin(le, float32(i&1), float32(i>>1&1), float32(i>>2&1))...)
	}
	if faces {
		tris := [12][3]int32{{0, 2, 1}, {1, 2, 3}, {4, 5, 6}, {5, 7, 6}, {0, 1, 4}, {1, 5, 4},
			{2, 6, 3}, {3, 6, 7}, {0, 4, 2}, {2, 4, 6}, {1, 3, 5}, {3, 7, 5}}
		for _, t := range tris {
			b = append(b, bin(le, uint8(3), t[0], t[1], t[2])...)
		}
	}
	return b
}

// TestBinaryCountsLie: a binary PLY whose header counts do not match its
// data (issue 14, item 11) is an error naming the element, its count and
// a byte offset, whether or not the file size is known; honest counts
// still read.
func TestBinaryCountsLie(t *testing.T) {
	tests := []struct {
		name    string
		in      []byte
		want    string // in the message; "" means no error
		unknown bool   // also check with the size unknown (a stream)
	}{
		{name: "honest", in: cube(8, 12, true), unknown: true},
		{name: "honest, vertices only", in: cube(8, 0, false), unknown: true},
		{name: "face count one short", in: cube(8, 11, true), want: "(face, 11 records)", unknown: true},
		{name: "face count zero", in: cube(8, 0, true), want: "(vertex, 8 records)", unknown: true},
		{name: "vertex count one too high", in: cube(9, 12, true), want: "a face needs at least 3 vertex indices, this one has 0", unknown: true},
		{name: "vertex count one too high, no faces", in: cube(9, 0, false), want: "element vertex: 9 records", unknown: true},
		{name: "vertex count one too low, no faces", in: cube(7, 0, false), want: "12 bytes follow the last element (vertex, 7 records)", unknown: true},
		{name: "face count one too high", in: cube(8, 13, true), want: "element face 12 of 13: unexpected EOF", unknown: true},
		{name: "appended byte", in: append(cube(8, 12, true), 0), want: "1 bytes follow the last element (face, 12 records)", unknown: true},
	}
	for _, tt := range tests {
		sizes := []int64{int64(len(tt.in))}
		if tt.unknown {
			sizes = append(sizes, -1)
		}
		for _, size := range sizes {
			t.Run(fmt.Sprintf("%s/size %d", tt.name, size), func(t *testing.T) {
				c, err := Decode(bytes.NewReader(tt.in), Options{Name: "lie.ply", SizeBytes: size})
				if tt.want == "" {
					if err != nil {
						t.Fatal(err)
					}
					if len(c.Points) != 8 {
						t.Errorf("%d points, want 8", len(c.Points))
					}
					return
				}
				if err == nil {
					t.Fatalf("no error; read %d points, %d faces", len(c.Points), len(c.Faces))
				}
				msg := err.Error()
				var pe *ParseError
				if !errors.As(err, &pe) || pe.Offset < 0 {
					t.Errorf("error %q has no byte offset", msg)
				}
				if !strings.HasPrefix(msg, "lie.ply: byte ") {
					t.Errorf("error %q does not name the file and byte", msg)
				}
				if size > 0 && !errors.Is(err, ErrCountMismatch) {
					t.Errorf("error %q is not ErrCountMismatch", msg)
				}
				if size > 0 && !strings.Contains(msg, tt.want) {
					t.Errorf("error %q lacks %q", msg, tt.want)
				}
				t.Log(msg)
			})
		}
	}
}
