package scan

import (
	"bytes"
	"encoding/binary"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gapflux/scan/ply"
	"gapflux/scan/stl"
	"gonum.org/v1/gonum/spatial/r3"
)

// TestReadFileCountsLie: a binary PLY or STL file whose header count was
// changed by one (issue 14, item 11) is refused by ReadFile, plain or
// gzip-compressed, with the file name and a byte offset, instead of being
// read as different geometry.
func TestReadFileCountsLie(t *testing.T) {
	pts := []r3.Vec{{X: 0, Y: 0, Z: 0}, {X: 1, Y: 0, Z: 0}, {X: 0, Y: 1, Z: 0}, {X: 1, Y: 1, Z: 0.5}}
	var pb bytes.Buffer
	if err := ply.Write(&pb, &ply.Cloud{Points: pts, Faces: [][3]int32{{0, 1, 2}, {1, 3, 2}}},
		ply.WriteOptions{Format: ply.BinaryLittleEndian, VertexType: "float"}); err != nil {
		t.Fatal(err)
	}
	good := pb.Bytes()
	var sb bytes.Buffer
	if err := stl.WriteBinary(&sb, &stl.Mesh{Vertices: append(pts[:3:3], pts[1], pts[3], pts[2])}); err != nil {
		t.Fatal(err)
	}
	stlGood := sb.Bytes()
	stlCount := func(n uint32) []byte {
		b := bytes.Clone(stlGood)
		binary.LittleEndian.PutUint32(b[80:], n)
		return b
	}
	tests := []struct {
		name, file string
		in         []byte
		want       string // "" = no error
	}{
		{"ply honest", "a.ply", good, ""},
		{"ply face count one short", "a.ply", bytes.Replace(good, []byte("element face 2"), []byte("element face 1"), 1), "follow the last element (face, 1 records)"},
		{"ply face count zero", "a.ply", bytes.Replace(good, []byte("element face 2"), []byte("element face 0"), 1), "follow the last element (vertex, 4 records)"},
		{"ply vertex count one too high", "a.ply", bytes.Replace(good, []byte("element vertex 4"), []byte("element vertex 5"), 1), "element face"},
		{"stl honest", "a.stl", stlGood, ""},
		{"stl count one short", "a.stl", stlCount(1), "1 facets"},
		{"stl count one too high", "a.stl", stlCount(3), "3 facets"},
		{"stl count zero", "a.stl", stlCount(0), "0 facets"},
	}
	dir := t.TempDir()
	for _, tt := range tests {
		for _, zip := range []bool{false, true} {
			in, file := tt.in, tt.file
			if zip {
				in, file = gz(t, in), file+".gz"
			}
			path := filepath.Join(dir, file)
			if err := os.WriteFile(path, in, 0o644); err != nil {
				t.Fatal(err)
			}
			c, err := ReadFile(path, ReadOptions{})
			switch {
			case tt.want == "" && err != nil:
				t.Errorf("%s (gz %v): %v", tt.name, zip, err)
			case tt.want != "" && err == nil:
				t.Errorf("%s (gz %v): no error; read %d points, %d triangles", tt.name, zip, len(c.Points), len(c.Triangles))
			case tt.want != "":
				msg := err.Error()
				if !strings.HasPrefix(msg, path+": byte ") {
					t.Errorf("%s (gz %v): %q does not name the file and a byte offset", tt.name, zip, msg)
				}
				if !zip && !strings.Contains(msg, tt.want) {
					t.Errorf("%s: %q lacks %q", tt.name, msg, tt.want)
				}
			}
		}
	}
}
