package scan

import (
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"testing"

	"gapflux/scan/ply"
	"gapflux/scan/stl"
	"gapflux/scan/xyz"
	"gonum.org/v1/gonum/spatial/r3"
)

// ReadBytesPerInputByte bounds what ReadFile allocates in all (so also at
// its peak) per byte of a plain input file, for a mesh whose vertices are
// shared by their facets or a point cloud: binary STL and PLY, text.
// Measured by TestReadMemory; the README states them.
var readAllocBound = map[string]float64{
	"stl-binary": 1.6, // 50 B/facet → ~60 B held: normal 24, face 12, half a vertex 12, hash table 4–8
	"stl-ascii":  1.2, // ~300 B/facet of text; the slices grow as the facets come
	"ply-binary": 2.5, // 12 B/vertex → 24 B; 13 B/face → 12 B
	"xyz":        2.5, // ≥ 20 B/point of text ("12.345 67.890 0.123\n") → 24 B
	"xyz+gz":     3.5, // per decompressed byte: the slices grow by doubling
}

// mesh returns a grid mesh of about 2·n² facets over a 200 mm square.
func memMesh(n int) (pts []r3.Vec, faces [][3]int32) {
	for j := 0; j <= n; j++ {
		for i := 0; i <= n; i++ {
			x, y := 200*float64(i)/float64(n)-100, 200*float64(j)/float64(n)-100
			pts = append(pts, r3.Vec{X: x, Y: y, Z: 1e-3 * (x*x + y*y) / 100})
		}
	}
	for j := range n {
		for i := range n {
			a := int32(j*(n+1) + i)
			faces = append(faces, [3]int32{a, a + 1, a + int32(n) + 2}, [3]int32{a, a + int32(n) + 2, a + int32(n) + 1})
		}
	}
	return pts, faces
}

// allocated returns the bytes ReadFile allocates reading path.
func allocated(t *testing.T, path string) uint64 {
	t.Helper()
	runtime.GC()
	var a, b runtime.MemStats
	runtime.ReadMemStats(&a)
	c, err := ReadFile(path, ReadOptions{})
	runtime.ReadMemStats(&b)
	if err != nil {
		t.Fatal(err)
	}
	runtime.KeepAlive(c)
	return b.TotalAlloc - a.TotalAlloc
}

// TestReadMemory: reading holds the per-format bound on allocations
// (issue 14, item 13), with the slack stated in readAllocBound.
func TestReadMemory(t *testing.T) {
	if testing.Short() {
		t.Skip("writes some 60 MB of scans")
	}
	pts, faces := memMesh(700) // 980 000 facets, 491 401 vertices
	soup := make([]r3.Vec, 0, 3*len(faces))
	for _, f := range faces {
		soup = append(soup, pts[f[0]], pts[f[1]], pts[f[2]])
	}
	dir := t.TempDir()
	write := func(name string, enc func(*bytes.Buffer) error) (string, int64) {
		var buf bytes.Buffer
		if err := enc(&buf); err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		return path, int64(buf.Len())
	}
	files := []struct {
		name, bound string
		enc         func(*bytes.Buffer) error
	}{
		{"a.stl", "stl-binary", func(b *bytes.Buffer) error { return stl.WriteBinary(b, &stl.Mesh{Vertices: soup}) }},
		{"b.stl", "stl-ascii", func(b *bytes.Buffer) error { return stl.WriteASCII(b, &stl.Mesh{Vertices: soup[:300000]}) }},
		{"c.ply", "ply-binary", func(b *bytes.Buffer) error {
			return ply.Write(b, &ply.Cloud{Points: pts, Faces: faces}, ply.WriteOptions{Format: ply.BinaryLittleEndian, VertexType: "float"})
		}},
		{"d.xyz", "xyz", func(b *bytes.Buffer) error { return xyz.Write(b, &xyz.Cloud{Points: pts}, xyz.WriteOptions{}) }},
		{"e.xyz.gz", "xyz+gz", func(b *bytes.Buffer) error {
			var raw bytes.Buffer
			if err := xyz.Write(&raw, &xyz.Cloud{Points: pts}, xyz.WriteOptions{}); err != nil {
				return err
			}
			t.Logf("e.xyz.gz: %d bytes decompressed", raw.Len())
			w := gzip.NewWriter(b)
			w.Write(raw.Bytes())
			return w.Close()
		}},
	}
	for _, f := range files {
		path, size := write(f.name, f.enc)
		got := allocated(t, path)
		per := float64(got) / float64(size)
		if f.bound == "xyz+gz" {
			var raw bytes.Buffer
			xyz.Write(&raw, &xyz.Cloud{Points: pts}, xyz.WriteOptions{})
			per = float64(got) / float64(raw.Len())
		}
		t.Logf("%s (%s): %d bytes, %d allocated, %.2f per input byte (bound %.1f)", f.name, f.bound, size, got, per, readAllocBound[f.bound])
		if per > readAllocBound[f.bound] {
			t.Errorf("%s: %.2f bytes allocated per input byte, bound %.1f", f.name, per, readAllocBound[f.bound])
		}
	}
}

// TestReadGzipBombMemory: a 3 MB gzip bomb stops at MaxGzipRatio with an
// error before it costs more than readAllocBound["xyz+gz"] times what the
// ratio lets through.
func TestReadGzipBombMemory(t *testing.T) {
	if testing.Short() {
		t.Skip("decompresses some 100 MB")
	}
	line := []byte("12.345678 -98.765432 0.001234\n")
	var buf bytes.Buffer
	w, _ := gzip.NewWriterLevel(&buf, gzip.BestCompression)
	for range (1 << 30) / len(line) { // 1 GiB of one line repeated
		w.Write(line)
	}
	w.Close()
	path := filepath.Join(t.TempDir(), "bomb.xyz.gz")
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	runtime.GC()
	var a, b runtime.MemStats
	runtime.ReadMemStats(&a)
	_, err := ReadFile(path, ReadOptions{})
	runtime.ReadMemStats(&b)
	if !errors.Is(err, ErrGzipRatio) {
		t.Fatalf("error %v, want ErrGzipRatio", err)
	}
	limit := float64(gzipAllowance + MaxGzipRatio*int64(buf.Len()))
	got := float64(b.TotalAlloc - a.TotalAlloc)
	t.Logf("bomb: %d bytes compressed, stopped after at most %.0f MiB decompressed; %.0f MiB allocated (%s)",
		buf.Len(), limit/(1<<20), got/(1<<20), fmt.Sprint(err)[:60])
	if got > readAllocBound["xyz+gz"]*limit {
		t.Errorf("%.0f MiB allocated, bound %.0f MiB", got/(1<<20), readAllocBound["xyz+gz"]*limit/(1<<20))
	}
}
