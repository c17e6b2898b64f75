package stl

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"strings"
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

// poolSoup returns a binary STL file of n facets whose corners are drawn
// from a pool of about n/2 vertices, mostly near the previous facet's
// (as a scanner's mesh) and sometimes anywhere (duplicates across parts
// and chunks); zero coordinates are written as −0 or +0 at random.
func poolSoup(n int, seed uint64) []byte {
	r := rand.New(rand.NewPCG(seed, 3))
	pool := make([][3]float32, max(n/2, 3))
	for i := range pool {
		pool[i] = [3]float32{float32(i % 7), float32(r.IntN(3)), float32(i) * 0.25}
	}
	zero := func(v float32) float32 {
		if v == 0 && r.IntN(2) == 0 {
			return float32(math.Copysign(0, -1))
		}
		return v
	}
	vals := make([]float32, 0, 12*n)
	at := 0
	for range n {
		vals = append(vals, 0, 0, zero(0))
		for range 3 {
			j := (at + r.IntN(8)) % len(pool)
			if r.IntN(10) == 0 {
				j = r.IntN(len(pool))
			}
			p := pool[j]
			vals = append(vals, zero(p[0]), zero(p[1]), p[2])
		}
		at = (at + 1) % len(pool)
	}
	return binSTL("pool", uint32(n), vals...)
}

// weldSoup welds an unwelded mesh one vertex at a time in file order,
// −0 equal to +0: what a binary welded decode must give.
func weldSoup(m *Mesh) (vs []r3.Vec, faces [][3]int32) {
	seen := map[r3.Vec]int32{}
	for f := range m.Normals {
		var t [3]int32
		for k := range 3 {
			v := m.Vertices[3*f+k]
			key := r3.Vec{X: v.X + 0, Y: v.Y + 0, Z: v.Z + 0}
			j, ok := seen[key]
			if !ok {
				j = int32(len(vs))
				seen[key] = j
				vs = append(vs, v)
			}
			t[k] = j
		}
		faces = append(faces, t)
	}
	return vs, faces
}

// TestWeldBinaryParts: a welded binary decode, whatever the number of
// processors (and so of parts per chunk) and whether the size is known,
// gives the vertices in order of first occurrence, −0 kept as first read,
// and the same faces and normals as welding the unwelded decode in file
// order; sizes straddle the part and chunk boundaries: a short third
// chunk of two parts and a bit (2·chunkFacets + 2·facetSplit + 3), and
// five chunks and a bit, whose stream decode grows the facet slices and
// the mesh's table several times.
func TestWeldBinaryParts(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	sizes := []int{1, 2, facetSplit - 1, 2*facetSplit + 1, chunkFacets - 1, chunkFacets, chunkFacets + 1,
		2*chunkFacets + 2*facetSplit + 3, 5*chunkFacets + 7}
	for i, n := range sizes {
		data := poolSoup(n, uint64(i))
		soup, err := Decode(bytes.NewReader(data), Options{SizeBytes: int64(len(data))})
		if err != nil {
			t.Fatal(err)
		}
		wantV, wantF := weldSoup(soup)
		for _, procs := range []int{1, 2, 3, 4} {
			runtime.GOMAXPROCS(procs)
			for _, size := range []int64{int64(len(data)), -1} {
				m, err := Decode(bytes.NewReader(data), Options{SizeBytes: size, Weld: true})
				if err != nil {
					t.Fatalf("%d facets, %d procs, size %d: %v", n, procs, size, err)
				}
				if !sameBits(m.Vertices, wantV) || !slices.Equal(m.Faces, wantF) || !sameBits(m.Normals, soup.Normals) {
					t.Fatalf("%d facets, %d procs, size %d: %d vertices %d faces, want %d %d (or values differ)",
						n, procs, size, len(m.Vertices), len(m.Faces), len(wantV), len(wantF))
				}
			}
		}
	}
}

// TestWeldASCII: a welded ASCII decode gives the vertices in order of
// first occurrence, −0 kept as first read, and the same faces as welding
// the unwelded decode in file order; the largest soup (about 6000
// distinct vertices) grows the welder's table from its first 8192 slots.
func TestWeldASCII(t *testing.T) {
	for i, n := range []int{1, 2, 50, 12000} {
		data := poolSoup(n, uint64(100+i))
		soup, err := Decode(bytes.NewReader(data), Options{SizeBytes: int64(len(data))})
		if err != nil {
			t.Fatal(err)
		}
		var asc bytes.Buffer
		if err := WriteASCII(&asc, soup); err != nil {
			t.Fatal(err)
		}
		wantV, wantF := weldSoup(soup)
		m, err := Decode(bytes.NewReader(asc.Bytes()), Options{SizeBytes: int64(asc.Len()), Weld: true})
		if err != nil {
			t.Fatalf("%d facets: %v", n, err)
		}
		if !sameBits(m.Vertices, wantV) || !slices.Equal(m.Faces, wantF) || !sameBits(m.Normals, soup.Normals) {
			t.Fatalf("%d facets: %d vertices %d faces, want %d %d (or values differ)",
				n, len(m.Vertices), len(m.Faces), len(wantV), len(wantF))
		}
	}
}

// sameBits reports whether a and b hold the same vectors bit for bit
// (−0 and +0 differ).
func sameBits(a, b []r3.Vec) bool {
	return slices.EqualFunc(a, b, func(u, v r3.Vec) bool {
		return math.Float64bits(u.X) == math.Float64bits(v.X) && math.Float64bits(u.Y) == math.Float64bits(v.Y) &&
			math.Float64bits(u.Z) == math.Float64bits(v.Z)
	})
}

// TestWeldBinaryNotFinite: a welded decode reports the first non-finite
// vertex coordinate in file order, as an unwelded one does, wherever it
// falls among parts and chunks.
func TestWeldBinaryNotFinite(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	const n = 2*chunkFacets + 100
	for _, bad := range [][2]int{{0, 3}, {facetSplit + 5, 11}, {chunkFacets - 1, 7}, {chunkFacets + 3*facetSplit, 4}, {n - 1, 11}} {
		data := poolSoup(n, 9)
		for _, f := range []int{bad[0], min(bad[0]+facetSplit, n-1)} { // a second one later
			binary.LittleEndian.PutUint32(data[84+50*f+4*bad[1]:], 0x7fc00000)
		}
		for _, procs := range []int{1, 2, 3} {
			runtime.GOMAXPROCS(procs)
			_, want := Decode(bytes.NewReader(data), Options{Name: "nan.stl", SizeBytes: int64(len(data))})
			_, err := Decode(bytes.NewReader(data), Options{Name: "nan.stl", SizeBytes: int64(len(data)), Weld: true})
			if err == nil || want == nil || err.Error() != want.Error() || !errors.Is(err, ErrNotFinite) {
				t.Errorf("NaN at facet %d coordinate %d, %d procs: %v, want %v", bad[0], bad[1], procs, err, want)
			}
			// The facet and byte offset written in, independent of both decodes.
			off := 84 + 50*bad[0] + 4*bad[1]
			if err != nil && (!strings.Contains(err.Error(), fmt.Sprintf("in facet %d", bad[0])) || !strings.Contains(err.Error(), fmt.Sprintf("byte %d", off))) {
				t.Errorf("NaN at facet %d coordinate %d (byte %d), %d procs: %v", bad[0], bad[1], off, procs, err)
			}
		}
	}
}

// TestWeldBinaryCutShort: a welded decode of a stream cut short reports
// what an unwelded one does: a non-finite coordinate in a chunk read
// before the cut, else the cut.
func TestWeldBinaryCutShort(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	const n = 3*chunkFacets + 10
	full := poolSoup(n, 5)
	for _, tc := range []struct{ nan, cut int }{
		{-1, 84 + 50*chunkFacets + 7}, {5, 84 + 50*(chunkFacets+1)}, {chunkFacets + 2, 84 + 50*(chunkFacets+3)},
		{chunkFacets + 2, 84 + 50*(2*chunkFacets+3)}, {2*chunkFacets + 1, 84 + 50*(2*chunkFacets+3)}, {-1, 90},
	} {
		data := slices.Clone(full[:tc.cut])
		if tc.nan >= 0 {
			binary.LittleEndian.PutUint32(data[84+50*tc.nan+20:], 0x7f800000)
		}
		for _, procs := range []int{1, 3} {
			runtime.GOMAXPROCS(procs)
			_, want := Decode(bytes.NewReader(data), Options{Name: "cut.stl"})
			_, err := Decode(bytes.NewReader(data), Options{Name: "cut.stl", Weld: true})
			if err == nil || want == nil || err.Error() != want.Error() {
				t.Errorf("NaN at %d, cut at %d, %d procs: %v, want %v", tc.nan, tc.cut, procs, err, want)
			}
		}
	}
}
