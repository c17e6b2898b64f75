package synth_test

import (
	"bytes"
	"compress/gzip"
	"encoding/json"
	"gapflux/internal/fpfuse"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"gapflux/scan"
	"gapflux/scan/ply"
	"gapflux/scan/stl"
	"gapflux/scan/synth"
	"gapflux/scan/xyz"
)

// testdata is the repository's sample folder, written by go generate.
const testdata = "../../testdata"

// TestSamples regenerates every sample, checks its size budget (each file
// < 100 KB, all < 1 MB), reads it back with the package readers, and
// compares it with the committed file. A build that fuses multiply-add
// (internal/fpfuse) may change last bits, so bytes are compared only on
// builds that do not, as the files were written.
func TestSamples(t *testing.T) {
	var total int
	seen := map[string]bool{}
	for _, s := range synth.Samples() {
		if seen[s.Base] {
			t.Fatalf("duplicate sample %s", s.Base)
		}
		seen[s.Base] = true
		sc, err := s.Generate()
		if err != nil {
			t.Fatalf("%s: %v", s.Base, err)
		}
		var buf bytes.Buffer
		if err := synth.Encode(&buf, sc, s.Encoding); err != nil {
			t.Fatalf("%s: %v", s.Base, err)
		}
		data := buf.Bytes()
		if len(data) >= 100<<10 {
			t.Errorf("%s: %d bytes, want < 100 KB", s.Base, len(data))
		}
		total += len(data)

		// Read it back.
		r := io.Reader(bytes.NewReader(data))
		size := int64(len(data))
		if s.Encoding.Gzip {
			zr, err := gzip.NewReader(r)
			if err != nil {
				t.Fatal(err)
			}
			r, size = zr, -1
		}
		var points int
		switch s.Encoding.Format {
		case "stl":
			m, err := stl.Decode(r, stl.Options{Name: s.Base, SizeBytes: size})
			if err != nil {
				t.Fatalf("%s: %v", s.Base, err)
			}
			if m.Binary != s.Encoding.Binary {
				t.Errorf("%s: read as binary = %v", s.Base, m.Binary)
			}
			if len(m.Vertices) != 3*sc.Truth.Triangles {
				t.Errorf("%s: %d vertices, truth %d facets", s.Base, len(m.Vertices), sc.Truth.Triangles)
			}
			points = sc.Truth.Points // STL repeats vertices per facet: no count to check
		case "ply":
			c, err := ply.Decode(r, ply.Options{Name: s.Base, SizeBytes: size})
			if err != nil {
				t.Fatalf("%s: %v", s.Base, err)
			}
			points = len(c.Points)
			if len(c.Faces) != sc.Truth.Triangles || (c.Normals != nil) != sc.Truth.Normals {
				t.Errorf("%s: %d faces, normals %v; truth %+v", s.Base, len(c.Faces), c.Normals != nil, sc.Truth)
			}
		default:
			c, err := xyz.Decode(r, xyz.Options{Name: s.Base, SizeBytes: size})
			if err != nil {
				t.Fatalf("%s: %v", s.Base, err)
			}
			points = len(c.Points)
			if c.UnitHint != "mm" || (c.Normals != nil) != sc.Truth.Normals {
				t.Errorf("%s: unit %q, normals %v", s.Base, c.UnitHint, c.Normals != nil)
			}
		}
		if points != sc.Truth.Points {
			t.Errorf("%s: %d points read, truth %d", s.Base, points, sc.Truth.Points)
		}

		// Against the committed files.
		path := filepath.Join(testdata, s.Base+s.Encoding.Ext())
		got, err := os.ReadFile(path)
		if err != nil {
			t.Errorf("%v (run go generate ./scan/synth)", err)
			continue
		}
		if !fpfuse.Fuses() && !bytes.Equal(got, data) {
			t.Errorf("%s differs from the generator's output (run go generate ./scan/synth)", path)
		}
		js, err := os.ReadFile(filepath.Join(testdata, s.Base+".truth.json"))
		if err != nil {
			t.Error(err)
			continue
		}
		var tr synth.Truth
		if err := json.Unmarshal(js, &tr); err != nil {
			t.Fatalf("%s: %v", s.Base, err)
		}
		want := sc.Truth
		want.Format, want.Unit = s.Encoding.FormatName(), "mm"
		if !reflect.DeepEqual(tr, want) {
			t.Errorf("%s truth:\n got %+v\nwant %+v", s.Base, tr, want)
		}
	}
	if total >= 1<<20 {
		t.Errorf("samples total %d bytes, want < 1 MB", total)
	}
	// The binary STL sample must begin with "solid" (the trap of
	// TRADE-FACTS.md section 4).
	for _, s := range synth.Samples() {
		if s.Encoding.Format == "stl" && s.Encoding.Binary && !strings.HasPrefix(s.Encoding.Header, "solid") {
			t.Errorf("%s: binary STL header %q does not start with solid", s.Base, s.Encoding.Header)
		}
	}
}

func TestWriteSamples(t *testing.T) {
	dir := t.TempDir()
	paths, err := synth.WriteSamples(dir)
	if err != nil {
		t.Fatal(err)
	}
	if want := 2 * len(synth.Samples()); len(paths) != want {
		t.Errorf("%d paths, want %d", len(paths), want)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != len(paths) {
		t.Errorf("%d files, want %d", len(entries), len(paths))
	}
	if _, err := synth.WriteSamples(filepath.Join(dir, "missing")); err == nil {
		t.Error("missing directory: no error")
	}
}

// TestReadSamples reads the committed samples with scan.ReadFile, which
// must tell every format and unit from the content alone.
func TestReadSamples(t *testing.T) {
	for _, s := range synth.Samples() {
		path := filepath.Join(testdata, s.Base+s.Encoding.Ext())
		c, err := scan.ReadFile(path, scan.ReadOptions{})
		if err != nil {
			t.Errorf("%v (run go generate ./scan/synth)", err)
			continue
		}
		sc, err := s.Generate()
		if err != nil {
			t.Fatal(err)
		}
		want := sc.Truth.Points // STL too: scan.Read welds the facets' shared vertices
		if c.Format != s.Encoding.FormatName() || len(c.Points) != want || c.Unit != "mm" {
			t.Errorf("%s: format %q, %d points, unit %q; want %q, %d, mm", path, c.Format, len(c.Points), c.Unit, s.Encoding.FormatName(), want)
		}
	}
}
