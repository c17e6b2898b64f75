package xyz

import (
	"bytes"
	"testing"
)

func FuzzDecode(f *testing.F) {
	f.Add([]byte("1 2 3\n4.5 -5e-3 6\n"))
	f.Add([]byte("x_mm;y_mm;z_mm;nx;ny;nz\n1,5;2;3;0;0;1\n"))
	f.Add([]byte("\"id\",\"x\",\"y\",\"z\"\np1,1,2,3 # c\n"))
	f.Add([]byte("X (mm)\tY (mm)\tZ (mm)\r\n1,5\t2,5\t3,5\r\n"))
	f.Add([]byte("2\n1 2 3\n4 5\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		c, err := Decode(bytes.NewReader(data), Options{Name: "fuzz.xyz", MaxPoints: 1 << 16})
		if err != nil {
			if _, ok := err.(*ParseError); !ok {
				t.Fatalf("error %T %v is not a *ParseError", err, err)
			}
			return
		}
		if c.Normals != nil && len(c.Normals) != len(c.Points) {
			t.Fatalf("%d normals for %d points", len(c.Normals), len(c.Points))
		}
		// What was read must write and read back unchanged.
		var buf bytes.Buffer
		opt := WriteOptions{Delimiter: c.Delimiter, Header: true, Normals: c.Normals != nil, Unit: c.UnitHint}
		if err := Write(&buf, c, opt); err != nil {
			t.Fatalf("write: %v", err)
		}
		c2, err := Decode(&buf, Options{})
		if err != nil {
			t.Fatalf("decode after write: %v\n%s", err, buf.Bytes())
		}
		if !equalVecs(c2.Points, c.Points) || !equalVecs(c2.Normals, c.Normals) || c2.UnitHint != c.UnitHint {
			t.Fatalf("round trip changed the cloud")
		}
	})
}
