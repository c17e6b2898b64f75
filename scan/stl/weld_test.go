package stl

import (
	"bytes"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// gridSoup returns a triangle soup of an n×n grid of squares (two facets
// each) with (n+1)² distinct vertices.
func gridSoup(n int) *Mesh {
	m := &Mesh{}
	p := func(i, j int) r3.Vec {
		return r3.Vec{X: float64(i) * 0.5, Y: float64(j) * 0.25, Z: float64((i*j)%5) - 2}
	}
	for j := range n {
		for i := range n {
			m.Vertices = append(m.Vertices, p(i, j), p(i+1, j), p(i+1, j+1), p(i, j), p(i+1, j+1), p(i, j+1))
			m.Normals = append(m.Normals, r3.Vec{Z: 1}, r3.Vec{Z: 1})
		}
	}
	return m
}

// TestWeld: a welded mesh keeps each distinct vertex once and its faces
// give back the soup, for binary and ASCII files, size known or not.
func TestWeld(t *testing.T) {
	const n = 60 // 7200 facets, 3721 vertices: the table grows on the way
	soup := gridSoup(n)
	var bin, asc bytes.Buffer
	if err := WriteBinary(&bin, soup); err != nil {
		t.Fatal(err)
	}
	if err := WriteASCII(&asc, soup); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		in   []byte
		size int64
	}{{"binary", bin.Bytes(), int64(bin.Len())}, {"binary stream", bin.Bytes(), -1}, {"ascii", asc.Bytes(), int64(asc.Len())}} {
		m, err := Decode(bytes.NewReader(tc.in), Options{Name: "w.stl", SizeBytes: tc.size, Weld: true})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if len(m.Vertices) != (n+1)*(n+1) || len(m.Faces) != 2*n*n || m.Facets() != 2*n*n || len(m.Normals) != 2*n*n {
			t.Fatalf("%s: %d vertices, %d faces, %d normals; want %d, %d, %d", tc.name, len(m.Vertices), len(m.Faces),
				len(m.Normals), (n+1)*(n+1), 2*n*n, 2*n*n)
		}
		for f, tri := range m.Faces {
			for k, v := range tri {
				if m.Vertices[v] != soup.Vertices[3*f+k] {
					t.Fatalf("%s: facet %d vertex %d is %v, want %v", tc.name, f, k, m.Vertices[v], soup.Vertices[3*f+k])
				}
			}
		}
	}
}
