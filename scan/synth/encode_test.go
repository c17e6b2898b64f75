package synth_test

import (
	"bytes"
	"compress/gzip"
	"encoding/json"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/scan/ply"
	"gapflux/scan/stl"
	"gapflux/scan/synth"
	"gapflux/scan/xyz"
)

// smallSpec is a 40 mm dished mesh at 1 mm spacing with a corner and wall,
// noise, normals, rotated and offset: about 2 300 vertices.
func smallSpec() synth.Spec {
	return synth.Spec{Name: "small", Shape: synth.Dish, DiameterM: 0.04, SagM: 0.1e-3, NoiseM: 10e-6,
		SpikeFraction: 0.01, Holes: 1, CornerRadiusM: 3e-3, WallHeightM: 6e-3, SpacingM: 1e-3,
		Mesh: true, Normals: true, RotationDeg: [3]float64{2, -3, 40}, OffsetM: [3]float64{0.1, -0.05, 0.3}, Seed: 42}
}

func encode(t testing.TB, sc *synth.Scan, enc synth.Encoding) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := synth.Encode(&buf, sc, enc); err != nil {
		t.Fatalf("%+v: %v", enc, err)
	}
	return buf.Bytes()
}

// closeVecs reports the largest |got − k·want| over the slices, in file
// units, and fails when it exceeds tol.
func closeVecs(t *testing.T, what string, got, want []r3.Vec, k, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, want %d", what, len(got), len(want))
	}
	var worst float64
	for i := range got {
		worst = max(worst, r3.Norm(r3.Sub(got[i], r3.Scale(k, want[i]))))
	}
	if worst > tol {
		t.Errorf("%s: off by up to %g, tolerance %g", what, worst, tol)
	}
}

// TestRoundTrip writes the scan in every encoding and reads it back with the
// readers of packages stl, ply and xyz. Tolerances are the precision
// written: binary float32 rounds to half an ulp (2⁻²⁴ relative to the
// largest coordinate), its shortest decimal form to one ulp; double and
// shortest float64 text are exact; 6 decimals in mm round to 5e-7 mm.
func TestRoundTrip(t *testing.T) {
	sc, err := synth.Generate(smallSpec())
	if err != nil {
		t.Fatal(err)
	}
	c := sc.Cloud
	soup := make([]r3.Vec, 0, 3*len(c.Triangles))
	for _, tri := range c.Triangles {
		soup = append(soup, c.Points[tri[0]], c.Points[tri[1]], c.Points[tri[2]])
	}
	var maxMM float64
	for _, p := range c.Points {
		maxMM = max(maxMM, math.Abs(p.X)*1e3, math.Abs(p.Y)*1e3, math.Abs(p.Z)*1e3)
	}
	f32 := maxMM * 0x1p-24

	for _, enc := range []synth.Encoding{
		{Format: "stl", Binary: true, Header: "solid but binary"},
		{Format: "stl", Binary: true, Gzip: true},
		{Format: "stl"},
	} {
		data := encode(t, sc, enc)
		r := io.Reader(bytes.NewReader(data))
		size := int64(len(data))
		if enc.Gzip {
			zr, err := gzip.NewReader(r)
			if err != nil {
				t.Fatal(err)
			}
			r, size = zr, -1
		}
		m, err := stl.Decode(r, stl.Options{Name: "rt.stl", SizeBytes: size})
		if err != nil {
			t.Fatalf("%s: %v", enc.FormatName(), err)
		}
		if m.Binary != enc.Binary {
			t.Errorf("%s: decoded binary = %v", enc.FormatName(), m.Binary)
		}
		tol := 1e-12
		if enc.Binary {
			tol = f32
		}
		closeVecs(t, enc.FormatName()+" vertices", m.Vertices, soup, 1e3, tol)
		closeVecs(t, enc.FormatName()+" normals", m.Normals, c.FacetNormals, 1, 0x1p-24)
		if enc.Header != "" && m.Header != enc.Header {
			t.Errorf("header %q, want %q", m.Header, enc.Header)
		}
	}

	for _, enc := range []synth.Encoding{
		{Format: "ply"},
		{Format: "ply", Binary: true},
		{Format: "ply", Binary: true, BigEndian: true, Double: true},
		{Format: "ply", Binary: true, BigEndian: true, Gzip: true},
		{Format: "ply", Double: true, Unit: "m"},
	} {
		data := encode(t, sc, enc)
		r := io.Reader(bytes.NewReader(data))
		if enc.Gzip {
			zr, err := gzip.NewReader(r)
			if err != nil {
				t.Fatal(err)
			}
			r = zr
		}
		p, err := ply.Decode(r, ply.Options{Name: "rt.ply", SizeBytes: -1})
		if err != nil {
			t.Fatalf("%s: %v", enc.FormatName(), err)
		}
		k, tol, ntol := 1e3, f32, 0x1p-24
		if !enc.Binary {
			tol, ntol = 2*f32, 0x1p-23
		}
		if enc.Unit == "m" {
			k = 1
		}
		if enc.Double {
			tol, ntol = 0, 0
		}
		closeVecs(t, enc.FormatName()+" points", p.Points, c.Points, k, tol)
		closeVecs(t, enc.FormatName()+" normals", p.Normals, c.Normals, 1, ntol)
		if len(p.Faces) != len(c.Triangles) {
			t.Fatalf("%s: %d faces, want %d", enc.FormatName(), len(p.Faces), len(c.Triangles))
		}
		for i := range p.Faces {
			if p.Faces[i] != c.Triangles[i] {
				t.Fatalf("%s: face %d = %v, want %v", enc.FormatName(), i, p.Faces[i], c.Triangles[i])
			}
		}
	}

	// Text: each coordinate rounds to half a unit of the last decimal, so
	// a vector by up to √3 of that.
	for _, tc := range []struct {
		enc       synth.Encoding
		k         float64 // units per metre
		decimals  int
		delims    string // accepted detected delimiters (a tab may read as white space)
		unit      string
		hasHeader bool
	}{
		{synth.Encoding{Format: "xyz"}, 1e3, 6, " ", "mm", true},
		{synth.Encoding{Format: "csv"}, 1e3, 6, ",", "mm", true},
		{synth.Encoding{Format: "csv", Unit: "m", Delimiter: ';'}, 1, 9, ";", "m", true},
		{synth.Encoding{Format: "xyz", Unit: "um", Delimiter: '\t', Gzip: true}, 1e6, 3, " \t", "um", true},
		{synth.Encoding{Format: "xyz", NoHeader: true, Precision: 3}, 1e3, 3, " ", "", false},
	} {
		data := encode(t, sc, tc.enc)
		r := io.Reader(bytes.NewReader(data))
		if tc.enc.Gzip {
			zr, err := gzip.NewReader(r)
			if err != nil {
				t.Fatal(err)
			}
			r = zr
		}
		x, err := xyz.Decode(r, xyz.Options{Name: "rt.xyz", SizeBytes: -1})
		if err != nil {
			t.Fatalf("%s: %v", tc.enc.FormatName(), err)
		}
		if !strings.ContainsRune(tc.delims, x.Delimiter) || x.UnitHint != tc.unit || x.HasHeader != tc.hasHeader {
			t.Errorf("%s: delimiter %q unit %q header %v", tc.enc.FormatName(), x.Delimiter, x.UnitHint, x.HasHeader)
		}
		tol := math.Sqrt(3)*0.5*math.Pow10(-tc.decimals) + 1e-12*tc.k
		closeVecs(t, tc.enc.FormatName()+" points", x.Points, c.Points, tc.k, tol)
		if tc.hasHeader {
			closeVecs(t, tc.enc.FormatName()+" normals", x.Normals, c.Normals, 1, tol)
		} else if x.Normals != nil {
			t.Errorf("%s: normals without a header", tc.enc.FormatName())
		}
	}
}

// TestEncodeDeterministic checks that the same Spec gives the same bytes in
// every encoding, and that another seed does not.
func TestEncodeDeterministic(t *testing.T) {
	encs := []synth.Encoding{
		{Format: "stl", Binary: true}, {Format: "stl"}, {Format: "ply"},
		{Format: "ply", Binary: true, BigEndian: true, Double: true, Gzip: true},
		{Format: "xyz"}, {Format: "csv", Gzip: true},
	}
	a, _ := synth.Generate(smallSpec())
	b, _ := synth.Generate(smallSpec())
	other := smallSpec()
	other.Seed++
	c, _ := synth.Generate(other)
	for _, enc := range encs {
		ea, eb, ec := encode(t, a, enc), encode(t, b, enc), encode(t, c, enc)
		if !bytes.Equal(ea, eb) {
			t.Errorf("%s: same spec, different bytes", enc.FormatName())
		}
		if bytes.Equal(ea, ec) {
			t.Errorf("%s: another seed, same bytes", enc.FormatName())
		}
	}
}

// TestGzip checks that a gzip encoding decompresses to the plain one.
func TestGzip(t *testing.T) {
	sc, _ := synth.Generate(smallSpec())
	for _, enc := range []synth.Encoding{{Format: "ply", Binary: true}, {Format: "csv"}} {
		plain := encode(t, sc, enc)
		enc.Gzip = true
		z := encode(t, sc, enc)
		if len(z) < 2 || z[0] != 0x1f || z[1] != 0x8b {
			t.Fatalf("%s: no gzip magic", enc.FormatName())
		}
		zr, err := gzip.NewReader(bytes.NewReader(z))
		if err != nil {
			t.Fatal(err)
		}
		got, err := io.ReadAll(zr)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got, plain) {
			t.Errorf("%s: gunzipped %d bytes differ from plain %d", enc.FormatName(), len(got), len(plain))
		}
	}
}

func TestEncodeHeaders(t *testing.T) {
	sc, _ := synth.Generate(smallSpec())
	tests := []struct {
		enc    synth.Encoding
		prefix string
		size   int
	}{
		// Binary STL: 84 + 50·N bytes (TRADE-FACTS.md section 4).
		{synth.Encoding{Format: "stl", Binary: true, Header: "solid dish"}, "solid dish", 84 + 50*len(sc.Cloud.Triangles)},
		{synth.Encoding{Format: "stl"}, "solid gapflux synthetic scan small\n  facet normal ", -1},
		{synth.Encoding{Format: "ply", Binary: true, BigEndian: true, Double: true},
			"ply\nformat binary_big_endian 1.0\ncomment gapflux synthetic scan small\ncomment unit mm\n", -1},
		{synth.Encoding{Format: "csv"}, "x_mm,y_mm,z_mm,nx,ny,nz\n", -1},
		{synth.Encoding{Format: "xyz", Unit: "in"}, "x_in y_in z_in nx ny nz\n", -1},
	}
	for _, tc := range tests {
		data := encode(t, sc, tc.enc)
		if !bytes.HasPrefix(data, []byte(tc.prefix)) {
			t.Errorf("%s: starts %q, want %q", tc.enc.FormatName(), data[:min(len(data), 80)], tc.prefix)
		}
		if tc.size >= 0 && len(data) != tc.size {
			t.Errorf("%s: %d bytes, want %d", tc.enc.FormatName(), len(data), tc.size)
		}
	}
	// 6 decimals in mm, 9 in m, 8 in inches: a resolution of 1 nm or better.
	for _, tc := range []struct {
		unit     string
		decimals int
	}{{"mm", 6}, {"m", 9}, {"um", 3}, {"in", 8}} {
		data := encode(t, sc, synth.Encoding{Format: "xyz", Unit: tc.unit, NoHeader: true})
		field := strings.Fields(string(data[:bytes.IndexByte(data, '\n')]))[0]
		if d := len(field) - strings.IndexByte(field, '.') - 1; d != tc.decimals {
			t.Errorf("unit %s: %q has %d decimals, want %d", tc.unit, field, d, tc.decimals)
		}
	}
}

func TestBadEncoding(t *testing.T) {
	mesh, _ := synth.Generate(smallSpec())
	cloudSpec := smallSpec()
	cloudSpec.Mesh = false
	cloud, _ := synth.Generate(cloudSpec)
	tests := []struct {
		name string
		sc   *synth.Scan
		enc  synth.Encoding
	}{
		{"unknown format", mesh, synth.Encoding{Format: "obj"}},
		{"empty format", mesh, synth.Encoding{}},
		{"stl from a cloud", cloud, synth.Encoding{Format: "stl", Binary: true}},
		{"big endian ascii ply", mesh, synth.Encoding{Format: "ply", BigEndian: true}},
		{"big endian stl", mesh, synth.Encoding{Format: "stl", Binary: true, BigEndian: true}},
		{"binary xyz", mesh, synth.Encoding{Format: "xyz", Binary: true}},
		{"double csv", mesh, synth.Encoding{Format: "csv", Double: true}},
		{"unknown unit", mesh, synth.Encoding{Format: "xyz", Unit: "ft"}},
		{"bad delimiter", mesh, synth.Encoding{Format: "csv", Delimiter: '|'}},
		{"bad precision", mesh, synth.Encoding{Format: "csv", Precision: 40}},
	}
	for _, tc := range tests {
		if err := synth.Encode(io.Discard, tc.sc, tc.enc); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
	dir := t.TempDir()
	for _, base := range []string{"", "a/b", "..", `a\b`} {
		if _, _, err := synth.WriteFiles(dir, base, mesh, synth.Encoding{Format: "ply"}); err == nil {
			t.Errorf("base %q: no error", base)
		}
	}
	if _, _, err := synth.WriteFiles(filepath.Join(dir, "missing"), "x", mesh, synth.Encoding{Format: "ply"}); err == nil {
		t.Error("missing directory: no error")
	}
	if _, _, err := synth.WriteFiles(dir, "x", cloud, synth.Encoding{Format: "stl"}); err == nil {
		t.Error("stl from a cloud: no error")
	}
	if left, _ := os.ReadDir(dir); len(left) != 0 {
		t.Errorf("failed writes left %d files", len(left))
	}
}

func TestWriteFiles(t *testing.T) {
	sc, _ := synth.Generate(smallSpec())
	dir := t.TempDir()
	enc := synth.Encoding{Format: "ply", Binary: true, Gzip: true}
	scanPath, truthPath, err := synth.WriteFiles(dir, "pan", sc, enc)
	if err != nil {
		t.Fatal(err)
	}
	if scanPath != filepath.Join(dir, "pan.ply.gz") || truthPath != filepath.Join(dir, "pan.truth.json") {
		t.Errorf("paths %s, %s", scanPath, truthPath)
	}
	got, err := os.ReadFile(scanPath)
	if err != nil {
		t.Fatal(err)
	}
	if want := encode(t, sc, enc); !bytes.Equal(got, want) {
		t.Error("file differs from Encode's bytes")
	}
	js, err := os.ReadFile(truthPath)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(js, &m); err != nil {
		t.Fatal(err)
	}
	want := map[string]any{
		"schema": synth.TruthSchema, "kind": "pan-base", "name": "small", "shape": "dish", "face": "up",
		"diameter_mm": 40.0, "sag_mm": 0.1, "concavity_mm": 0.1, "flatness_mm": 0.1, "noise_um": 10.0,
		"holes": 1.0, "corner_radius_mm": 3.0, "wall_height_mm": 6.0, "spacing_mm": 1.0, "seed": 42.0,
		"mesh": true, "normals": true, "format": "ply-binary-le+gz", "unit": "mm",
		"points": float64(sc.Truth.Points), "triangles": float64(sc.Truth.Triangles), "spikes": float64(sc.Truth.Spikes),
	}
	for k, v := range want {
		if f, ok := v.(float64); ok {
			if g, ok := m[k].(float64); !ok || math.Abs(g-f) > 1e-12 {
				t.Errorf("%s = %v, want %v", k, m[k], v)
			}
		} else if m[k] != v {
			t.Errorf("%s = %v, want %v", k, m[k], v)
		}
	}
	if sc.Truth.Format != "" {
		t.Error("WriteFiles changed the scan's truth")
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 2 {
		t.Errorf("%d files in dir, want 2 (no temporaries left)", len(entries))
	}
	// Overwrite in place.
	if _, _, err := synth.WriteFiles(dir, "pan", sc, enc); err != nil {
		t.Fatal(err)
	}
}

func BenchmarkEncode(b *testing.B) {
	sc, err := synth.Generate(synth.Spec{Shape: synth.Dish, DiameterM: 0.2, SagM: 0.5e-3, NoiseM: 8e-6,
		Mesh: true, Normals: true, Seed: 3})
	if err != nil {
		b.Fatal(err)
	}
	for _, enc := range []synth.Encoding{
		{Format: "stl", Binary: true}, {Format: "ply", Binary: true}, {Format: "xyz"}, {Format: "csv", Gzip: true},
	} {
		b.Run(enc.FormatName(), func(b *testing.B) {
			var buf bytes.Buffer
			for b.Loop() {
				buf.Reset()
				if err := synth.Encode(&buf, sc, enc); err != nil {
					b.Fatal(err)
				}
				b.SetBytes(int64(buf.Len()))
			}
		})
	}
}
