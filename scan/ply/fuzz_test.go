package ply

import (
	"bytes"
	"testing"
)

func FuzzDecode(f *testing.F) {
	f.Add([]byte(asciiQuad), true)
	f.Add([]byte("ply\r\nformat ascii 1.0\r\nelement vertex 1\r\nproperty float x\r\nproperty float y\r\nproperty float z\r\nend_header\r\n1 2 3\r\n"), false)
	f.Add(bin(le, hdrF+"element face 1\nproperty list uchar int vertex_indices\nend_header\n",
		float32(1), float32(2), float32(3), float32(4), float32(5), float32(6), uint8(3), int32(0), int32(1), int32(1)), true)
	f.Add(bin(be, "ply\nformat binary_big_endian 1.0\nelement vertex 1\nproperty short x\nproperty list uchar int n\n"+
		"property double y\nproperty uint z\nelement junk 2\nproperty list int uchar a\nend_header\n",
		int16(1), uint8(1), int32(5), 2.5, uint32(3), int32(1), uint8(1), int32(0)), false)
	f.Fuzz(func(t *testing.T, data []byte, sized bool) {
		opt := Options{Name: "fuzz.ply", MaxPoints: 1 << 16}
		if sized {
			opt.SizeBytes = int64(len(data))
		}
		c, err := Decode(bytes.NewReader(data), opt)
		if err != nil {
			if _, ok := err.(*ParseError); !ok {
				t.Fatalf("error %T %v is not a *ParseError", err, err)
			}
			return
		}
		if c.Normals != nil && len(c.Normals) != len(c.Points) {
			t.Fatalf("%d normals for %d points", len(c.Normals), len(c.Points))
		}
		for _, f := range c.Faces {
			for _, k := range f {
				if k < 0 || int(k) >= len(c.Points) {
					t.Fatalf("face index %d with %d points", k, len(c.Points))
				}
			}
		}
		// What was read must write and read back unchanged.
		var buf bytes.Buffer
		if err := Write(&buf, c, WriteOptions{Format: BinaryBigEndian, VertexType: "double"}); err != nil {
			t.Fatalf("write: %v", err)
		}
		c2, err := Decode(&buf, Options{})
		if err != nil {
			t.Fatalf("decode after write: %v", err)
		}
		if !equalVecs(c2.Points, c.Points) || len(c2.Faces) != len(c.Faces) {
			t.Fatalf("round trip changed the cloud")
		}
	})
}
