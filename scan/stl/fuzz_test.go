package stl

import (
	"bytes"
	"slices"
	"testing"
)

func FuzzDecode(f *testing.F) {
	f.Add([]byte(oneFacet), false)
	f.Add([]byte("solid\nendsolid\nsolid b\nfacet normal 0 0 1 outer loop vertex 1 2 3 vertex 1 2 3 vertex 1 2 3 endloop endfacet endsolid"), false)
	f.Add(binSTL("solid x", 1, 0, 0, 1, 1, 2, 3, 4, 5, 6, 7, 8, 9), true)
	f.Add(binSTL("solid x", 1, 0, 0, 1, 1, 2, 3, 4, 5, 6, 7, 8, 9), false)
	f.Add(binSTL("", 3, 0, 0, 1, 1, 2, 3, 4, 5, 6, 7, 8, 9), false)
	f.Add([]byte("solid\nfacet normal 0 0 1\nouter loop\nvertex 1 nan 3\n"), false)
	f.Fuzz(func(t *testing.T, data []byte, sized bool) {
		opt := Options{Name: "fuzz.stl", MaxPoints: 1 << 16}
		if sized {
			opt.SizeBytes = int64(len(data))
		}
		m, err := Decode(bytes.NewReader(data), opt)
		if err != nil {
			if _, ok := err.(*ParseError); !ok {
				t.Fatalf("error %T %v is not a *ParseError", err, err)
			}
			return
		}
		if len(m.Vertices) != 3*len(m.Normals) {
			t.Fatalf("%d vertices, %d normals", len(m.Vertices), len(m.Normals))
		}
		if m.Binary {
			// Welded, the same facets: the vertices by first occurrence.
			opt.Weld = true
			w, err := Decode(bytes.NewReader(data), opt)
			if err != nil {
				t.Fatalf("welded: %v", err)
			}
			vs, faces := weldSoup(m)
			if !sameBits(w.Vertices, vs) || !slices.Equal(w.Faces, faces) || !sameBits(w.Normals, m.Normals) {
				t.Fatalf("welded: %d vertices %d faces, want %d %d (or values differ)", len(w.Vertices), len(w.Faces), len(vs), len(faces))
			}
		}
		// What was read must write and read back unchanged.
		var buf bytes.Buffer
		write := WriteASCII
		if m.Binary {
			write = WriteBinary
		}
		if err := write(&buf, m); err != nil {
			t.Fatalf("write: %v", err)
		}
		m2, err := Decode(bytes.NewReader(buf.Bytes()), Options{SizeBytes: int64(buf.Len())})
		if err != nil {
			t.Fatalf("decode after write: %v", err)
		}
		if len(m2.Vertices) != len(m.Vertices) {
			t.Fatalf("%d vertices after round trip, want %d", len(m2.Vertices), len(m.Vertices))
		}
		for i := range m.Vertices {
			if m.Vertices[i] != m2.Vertices[i] {
				t.Fatalf("vertex %d: %v after round trip, want %v", i, m2.Vertices[i], m.Vertices[i])
			}
		}
	})
}
