package stl

import (
	"gapflux/internal/decimal"

	"bytes"
	"encoding/binary"
	"errors"
	"io"
	"math"
	"runtime"
	"strings"
	"testing"
	"testing/iotest"

	"gonum.org/v1/gonum/spatial/r3"
)

// binSTL builds a binary STL file from a header, a facet count as written
// in the file and raw float32 values (12 per facet).
func binSTL(header string, count uint32, vals ...float32) []byte {
	b := make([]byte, 80, 84+len(vals)/12*50)
	copy(b, header)
	b = binary.LittleEndian.AppendUint32(b, count)
	for i, v := range vals {
		b = binary.LittleEndian.AppendUint32(b, math.Float32bits(v))
		if i%12 == 11 {
			b = append(b, 0, 0)
		}
	}
	return b
}

func vec(x, y, z float64) r3.Vec { return r3.Vec{X: x, Y: y, Z: z} }

const oneFacet = `solid pan base
  facet normal 0.000000e+000 0.000000e+000 1.000000e+000
    outer loop
      vertex -2.648000e-002 1.5 0
      vertex 1 0 0
      vertex 0 1 0
    endloop
  endfacet
endsolid pan base
`

func TestDecode(t *testing.T) {
	nanBits := math.Float32frombits(0x7fc00000)
	tests := []struct {
		name    string
		in      []byte
		size    bool // pass SizeBytes
		header  string
		binary  bool
		verts   []r3.Vec
		normals []r3.Vec
	}{
		{
			name: "ascii", in: []byte(oneFacet), header: "pan base",
			verts:   []r3.Vec{vec(-2.648e-2, 1.5, 0), vec(1, 0, 0), vec(0, 1, 0)},
			normals: []r3.Vec{vec(0, 0, 1)},
		},
		{
			name: "ascii upper case, CRLF, odd spacing",
			in: []byte("SOLID\r\n FACET  NORMAL 0 0 -1\r\nOUTER LOOP\r\n\tVERTEX 1e3 2E-3 +3\r\n" +
				"Vertex .5 -0. 6.\r\nvertex 7 8 9 EndLoop\r\nENDFACET\r\nENDSOLID"),
			header:  "",
			verts:   []r3.Vec{vec(1000, 0.002, 3), vec(0.5, 0, 6), vec(7, 8, 9)},
			normals: []r3.Vec{vec(0, 0, -1)},
		},
		{
			name:   "ascii all on one line after solid",
			in:     []byte("solid a\nfacet normal 1 0 0 outer loop vertex 1 2 3 vertex 4 5 6 vertex 7 8 9 endloop endfacet endsolid a"),
			header: "a", size: true,
			verts:   []r3.Vec{vec(1, 2, 3), vec(4, 5, 6), vec(7, 8, 9)},
			normals: []r3.Vec{vec(1, 0, 0)},
		},
		{
			name: "ascii two solids",
			in: []byte("solid one\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 0 1 0\nendloop\nendfacet\nendsolid one\n" +
				"solid two\nfacet normal 0 0 0\nouter loop\nvertex 0 0 1\nvertex 1 0 1\nvertex 0 1 1\nendloop\nendfacet\nendsolid two\n"),
			header: "one",
			verts: []r3.Vec{vec(0, 0, 0), vec(1, 0, 0), vec(0, 1, 0),
				vec(0, 0, 1), vec(1, 0, 1), vec(0, 1, 1)},
			normals: []r3.Vec{vec(0, 0, 1), vec(0, 0, 0)},
		},
		{
			name: "ascii empty solid", in: []byte("solid empty\nendsolid empty\n"), header: "empty",
		},
		{
			name: "binary",
			in:   binSTL("made by hand", 1, 0, 0, 1, 0.5, 0.25, 0.125, 1, 0, 0, 0, 1, 0),
			size: true, header: "made by hand", binary: true,
			verts:   []r3.Vec{vec(0.5, 0.25, 0.125), vec(1, 0, 0), vec(0, 1, 0)},
			normals: []r3.Vec{vec(0, 0, 1)},
		},
		{
			// The size decides: this header would fool a "solid" check.
			name: "binary header starting with solid, size known",
			in:   binSTL("solid\nfacet normal", 1, 0, 0, 1, 1, 2, 3, 4, 5, 6, 7, 8, 9),
			size: true, header: "solid\nfacet normal", binary: true,
			verts:   []r3.Vec{vec(1, 2, 3), vec(4, 5, 6), vec(7, 8, 9)},
			normals: []r3.Vec{vec(0, 0, 1)},
		},
		{
			name:   "binary header starting with solid, size unknown",
			in:     binSTL("solid part exported by a CAD program", 1, 0, 0, 1, 1, 2, 3, 4, 5, 6, 7, 8, 9),
			header: "solid part exported by a CAD program", binary: true,
			verts:   []r3.Vec{vec(1, 2, 3), vec(4, 5, 6), vec(7, 8, 9)},
			normals: []r3.Vec{vec(0, 0, 1)},
		},
		{
			name:    "binary NaN normal stored as zero",
			in:      binSTL("", 1, nanBits, 0, 1, 1, 2, 3, 4, 5, 6, 7, 8, 9),
			binary:  true,
			verts:   []r3.Vec{vec(1, 2, 3), vec(4, 5, 6), vec(7, 8, 9)},
			normals: []r3.Vec{vec(0, 0, 0)},
		},
		{
			name: "binary no facets", in: binSTL("x", 0), size: true, header: "x", binary: true,
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			opt := Options{Name: "t.stl", SizeBytes: -1}
			if tt.size {
				opt.SizeBytes = int64(len(tt.in))
			}
			// OneByteReader checks that nothing relies on full reads.
			for _, r := range []io.Reader{bytes.NewReader(tt.in), iotest.OneByteReader(bytes.NewReader(tt.in))} {
				m, err := Decode(r, opt)
				if err != nil {
					t.Fatal(err)
				}
				if m.Header != tt.header || m.Binary != tt.binary {
					t.Errorf("header %q binary %v, want %q %v", m.Header, m.Binary, tt.header, tt.binary)
				}
				if len(m.Vertices) != len(tt.verts) || len(m.Normals) != len(tt.normals) {
					t.Fatalf("%d vertices %d normals, want %d %d", len(m.Vertices), len(m.Normals), len(tt.verts), len(tt.normals))
				}
				for i := range tt.verts {
					if m.Vertices[i] != tt.verts[i] {
						t.Errorf("vertex %d = %v, want %v", i, m.Vertices[i], tt.verts[i])
					}
				}
				for i := range tt.normals {
					if m.Normals[i] != tt.normals[i] {
						t.Errorf("normal %d = %v, want %v", i, m.Normals[i], tt.normals[i])
					}
				}
			}
		})
	}
}

func TestDecodeErrors(t *testing.T) {
	good := binSTL("h", 2, 0, 0, 1, 1, 2, 3, 4, 5, 6, 7, 8, 9, 0, 0, 1, 1, 2, 3, 4, 5, 6, 7, 8, 9) // 184 bytes
	nanAt := func(k int) []byte {                                                                  // k-th float of facet 1 made NaN
		b := bytes.Clone(good)
		binary.LittleEndian.PutUint32(b[84+50+4*k:], 0x7fc00000)
		return b
	}
	inf := bytes.Clone(good)
	binary.LittleEndian.PutUint32(inf[84+4*5:], 0x7f800000)
	tests := []struct {
		name   string
		in     []byte
		size   int64 // 0: unknown; -2: len(in)
		max    int
		line   int
		col    int
		offset int64
		err    error  // wrapped sentinel, or nil
		msg    string // substring of the message
	}{
		{name: "empty", in: nil, offset: 0, msg: "t.stl: byte 0: stl: invalid format: empty file"},
		{name: "binary cut in header", in: good[:50], offset: 50, err: io.ErrUnexpectedEOF, msg: "t.stl: byte 50: unexpected EOF in header"},
		{name: "binary cut in count", in: good[:83], offset: 83, err: io.ErrUnexpectedEOF},
		{name: "binary cut in facet 0", in: good[:84+25], offset: 109, err: io.ErrUnexpectedEOF, msg: "byte 109: unexpected EOF in facet 0 of 2"},
		{name: "binary cut at facet 1", in: good[:134], offset: 134, err: io.ErrUnexpectedEOF, msg: "in facet 1 of 2"},
		{name: "binary cut in last byte", in: good[:183], offset: 183, err: io.ErrUnexpectedEOF},
		{name: "binary size known, cut", in: good[:150], size: -2, offset: 80, err: ErrSizeMismatch,
			msg: "t.stl: byte 80: file size does not match facet count: 2 facets need 184 bytes, file has 150; the file is cut short (an interrupted copy or export?): export or copy it again"},
		{name: "binary size known, extra", in: append(bytes.Clone(good), 0), size: -2, offset: 80, err: ErrSizeMismatch},
		{name: "binary stream, extra", in: append(bytes.Clone(good), 1, 2), offset: 184, err: ErrSizeMismatch},
		{name: "binary NaN x", in: nanAt(3), offset: 84 + 50 + 12, err: ErrNotFinite, msg: "byte 146: coordinate is not finite in facet 1"},
		{name: "binary NaN last z", in: nanAt(11), offset: 84 + 50 + 44, err: ErrNotFinite},
		{name: "binary Inf", in: inf, size: -2, offset: 84 + 20, err: ErrNotFinite},
		{name: "binary too many", in: good, max: 5, offset: 80, err: ErrTooManyPoints,
			msg: "too many points: 2 facets (6 vertices), limit 5 vertices"},
		{name: "binary huge count", in: binSTL("", 1<<31), offset: 80, err: ErrTooManyPoints},
		{name: "ascii bad keyword", in: []byte("solid x\nfacet normal 0 0 1\n  outer lop\n"), line: 3, col: 9, offset: 35,
			msg: `t.stl: line 3, column 9: stl: invalid format: expected "loop"`},
		{name: "ascii not solid", in: []byte("solid x\nendsolid\nfoo"), line: 3, col: 1, offset: 17},
		{name: "ascii bad number", in: []byte("solid\nfacet normal 0 0 1\nouter loop\nvertex 1 2 3x\n"), line: 4, col: 12, offset: 47,
			msg: `vertex is not a number`},
		{name: "ascii NaN", in: []byte("solid\nfacet normal 0 0 1\nouter loop\nvertex 1 nan 3\n"), line: 4, col: 10, err: ErrNotFinite, offset: 45},
		{name: "ascii Inf", in: []byte("solid\nfacet normal 0 0 1\nouter loop\nvertex 1 2 -Inf\n"), line: 4, col: 12, err: ErrNotFinite, offset: 47},
		{name: "ascii overflow", in: []byte("solid\nfacet normal 0 0 1\nouter loop\nvertex 1e999 2 3\n"), line: 4, col: 8, err: ErrNotFinite, offset: 43},
		{name: "ascii two vertices", in: []byte("solid\n facet normal 0 0 1\nouter loop\nvertex 1 2 3\nvertex 1 2 3\nendloop\nendfacet\nendsolid\n"),
			line: 2, col: 2, offset: 7, err: ErrFacetVertices, msg: "line 2, column 2: facet does not have 3 vertices: found 2"},
		{name: "ascii four vertices", in: []byte("solid\nfacet normal 0 0 1\nouter loop\nvertex 1 2 3\nvertex 1 2 3\nvertex 1 2 3\nvertex 1 2 3\nendloop\n"),
			line: 2, col: 1, offset: 6, err: ErrFacetVertices},
		{name: "ascii truncated in facet", in: []byte("solid\nfacet normal 0 0 1\nouter loop\nvertex 1 2"), line: 4, col: 11, offset: 46,
			err: io.ErrUnexpectedEOF, msg: "t.stl: line 4, column 11: unexpected EOF: expected a number"},
		{name: "ascii missing endsolid", in: []byte(oneFacet[:len(oneFacet)-len("endsolid pan base\n")]), line: 9, col: 1, offset: 182,
			err: io.ErrUnexpectedEOF},
		{name: "ascii too many", in: []byte(oneFacet), max: 2, line: 2, col: 3, offset: 17, err: ErrTooManyPoints},
		{name: "ascii token too long", in: []byte("solid\nfacet normal " + strings.Repeat("1", maxToken+10)), line: 2, col: 14, offset: 19, err: errTokenTooLong},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			opt := Options{Name: "t.stl", SizeBytes: tt.size, MaxPoints: tt.max}
			if tt.size == -2 {
				opt.SizeBytes = int64(len(tt.in))
			}
			_, err := Decode(bytes.NewReader(tt.in), opt)
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a *ParseError", err)
			}
			if pe.Name != "t.stl" || pe.Line != tt.line || pe.Column != tt.col || pe.Offset != tt.offset {
				t.Errorf("at %s line %d col %d offset %d, want line %d col %d offset %d (%v)",
					pe.Name, pe.Line, pe.Column, pe.Offset, tt.line, tt.col, tt.offset, err)
			}
			if tt.err != nil && !errors.Is(err, tt.err) {
				t.Errorf("error %v does not wrap %v", err, tt.err)
			}
			if !strings.Contains(err.Error(), tt.msg) {
				t.Errorf("message %q does not contain %q", err, tt.msg)
			}
		})
	}
}

func TestLooksASCII(t *testing.T) {
	tests := []struct {
		in   string
		want bool
	}{
		{"solid x\nfacet normal", true},
		{"  solid\r\n  endsolid", true},
		{"solid x\n fac", true}, // window ends inside the keyword
		{"solid x\n", true},
		{"solid name that goes on", true},
		{"solidx\nfacet", false},
		{"solid x\nvertex", false},
		{"solid x\x00\x01\nfacet", false},
		{"solid x\x00\x00\x00", false},
		{"facet", false},
		{"", false},
	}
	for _, tt := range tests {
		if got := looksASCII([]byte(tt.in)); got != tt.want {
			t.Errorf("looksASCII(%q) = %v, want %v", tt.in, got, tt.want)
		}
	}
}

func TestParseFloat(t *testing.T) {
	tests := []struct {
		in   string
		want float64
		ok   bool
	}{
		{"0", 0, true},
		{"-0", math.Copysign(0, -1), true},
		{"1", 1, true},
		{"+1.5", 1.5, true},
		{"-2.648000e-002", -2.648e-2, true},
		{"1E+05", 1e5, true},
		{".5", 0.5, true},
		{"5.", 5, true},
		{"0.1", 0.1, true},
		{"123456789.123456789", 123456789.123456789, true}, // strconv fallback
		{"1e-30", 1e-30, true},                             // strconv fallback
		{"0e999", 0, true},
		{"1e400", math.Inf(1), true},
		{"inf", math.Inf(1), true},
		{"", 0, false},
		{"-", 0, false},
		{".", 0, false},
		{"1e", 0, false},
		{"1e+", 0, false},
		{"1.2.3", 0, false},
		{"0x", 0, false},
		{"1,5", 0, false},
	}
	for _, tt := range tests {
		got, ok := parseFloat([]byte(tt.in))
		if ok != tt.ok || got != tt.want || math.Signbit(got) != math.Signbit(tt.want) {
			t.Errorf("parseFloat(%q) = %v, %v; want %v, %v", tt.in, got, ok, tt.want, tt.ok)
		}
	}
	// Against strconv on random decimal strings (exact agreement required).
	for i := 0; i < 20000; i++ {
		s := strconvRandom(uint64(i))
		want, _ := strconvParse(s)
		got, ok := parseFloat([]byte(s))
		if !ok || got != want {
			t.Fatalf("parseFloat(%q) = %v, %v; strconv says %v", s, got, ok, want)
		}
	}
}

func TestRoundTrip(t *testing.T) {
	m := &Mesh{
		Vertices: []r3.Vec{vec(0.1, -2.5e-3, 123.456), vec(1, 0, 0), vec(0, 1, 0), vec(-7, 8e10, 9e-10), vec(3, 2, 1), vec(1e-3, 0, 0)},
		Normals:  []r3.Vec{vec(0, 0, 1), vec(0, 0, 0)},
		Header:   "round trip",
	}
	var bin, asc bytes.Buffer
	if err := WriteBinary(&bin, m); err != nil {
		t.Fatal(err)
	}
	if bin.Len() != 84+2*50 {
		t.Fatalf("binary size %d, want 184", bin.Len())
	}
	if err := WriteASCII(&asc, m); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name  string
		data  []byte
		size  int64
		exact bool
	}{
		{"binary", bin.Bytes(), int64(bin.Len()), false},
		{"binary stream", bin.Bytes(), -1, false},
		{"ascii", asc.Bytes(), int64(asc.Len()), true},
		{"ascii stream", asc.Bytes(), -1, true},
	} {
		got, err := Decode(bytes.NewReader(c.data), Options{Name: c.name, SizeBytes: c.size})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if got.Header != m.Header || got.Binary == c.exact {
			t.Errorf("%s: header %q binary %v", c.name, got.Header, got.Binary)
		}
		for i, v := range m.Vertices {
			w := v
			if !c.exact { // binary stores float32
				w = vec(float64(float32(v.X)), float64(float32(v.Y)), float64(float32(v.Z)))
			}
			if got.Vertices[i] != w {
				t.Errorf("%s: vertex %d = %v, want %v", c.name, i, got.Vertices[i], w)
			}
		}
		for i, v := range m.Normals {
			if got.Normals[i] != v {
				t.Errorf("%s: normal %d = %v, want %v", c.name, i, got.Normals[i], v)
			}
		}
	}
	// nil normals are written as zero.
	bin.Reset()
	if err := WriteBinary(&bin, &Mesh{Vertices: m.Vertices[:3]}); err != nil {
		t.Fatal(err)
	}
	got, err := Decode(&bin, Options{})
	if err != nil || got.Normals[0] != (r3.Vec{}) {
		t.Errorf("nil normals: %v, %v", got, err)
	}
}

func TestWriteErrors(t *testing.T) {
	tests := []struct {
		name string
		m    *Mesh
	}{
		{"vertices not a multiple of 3", &Mesh{Vertices: make([]r3.Vec, 4)}},
		{"normals count", &Mesh{Vertices: make([]r3.Vec, 3), Normals: make([]r3.Vec, 2)}},
		{"NaN", &Mesh{Vertices: []r3.Vec{vec(math.NaN(), 0, 0), {}, {}}}},
		{"Inf", &Mesh{Vertices: []r3.Vec{vec(0, math.Inf(-1), 0), {}, {}}}},
	}
	for _, tt := range tests {
		if err := WriteBinary(io.Discard, tt.m); err == nil {
			t.Errorf("%s: WriteBinary: no error", tt.name)
		}
		if err := WriteASCII(io.Discard, tt.m); err == nil {
			t.Errorf("%s: WriteASCII: no error", tt.name)
		}
	}
	// 1e39 overflows float32 but not float64.
	big := &Mesh{Vertices: []r3.Vec{vec(1e39, 0, 0), {}, {}}}
	if err := WriteBinary(io.Discard, big); err == nil {
		t.Error("1e39: WriteBinary: no error")
	}
	if err := WriteASCII(io.Discard, big); err != nil {
		t.Errorf("1e39: WriteASCII: %v", err)
	}
}

// TestHugeCountSmallFile checks that a header announcing 2^31 facets in a
// 200-byte stream is not believed when allocating.
func TestHugeCountSmallFile(t *testing.T) {
	in := binSTL("", 1<<31, make([]float32, 24)...)
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	_, err := Decode(bytes.NewReader(in), Options{Name: "huge.stl", MaxPoints: math.MaxInt})
	runtime.ReadMemStats(&after)
	if !errors.Is(err, io.ErrUnexpectedEOF) {
		t.Fatalf("error %v, want unexpected EOF", err)
	}
	if d := after.TotalAlloc - before.TotalAlloc; d > 8<<20 {
		t.Errorf("allocated %d bytes for a %d-byte file", d, len(in))
	}
}

// parseFloat is the number parser the ASCII reader uses.
func parseFloat(b []byte) (float64, bool) { return decimal.ParseFloat(b, false) }
