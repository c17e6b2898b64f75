package ply

import (
	"bytes"
	"encoding/binary"
	"errors"
	"io"
	"math"
	"runtime"
	"strconv"
	"strings"
	"testing"
	"testing/iotest"

	"gonum.org/v1/gonum/spatial/r3"
)

func vec(x, y, z float64) r3.Vec { return r3.Vec{X: x, Y: y, Z: z} }

// bin builds binary data: each argument is appended in byte order o as its
// Go type (int8, uint8, int16, ... float64); a string is appended as is.
func bin(o binary.AppendByteOrder, vals ...any) []byte {
	var b []byte
	for _, v := range vals {
		switch v := v.(type) {
		case string:
			b = append(b, v...)
		case int8:
			b = append(b, byte(v))
		case uint8:
			b = append(b, v)
		case int16:
			b = o.AppendUint16(b, uint16(v))
		case uint16:
			b = o.AppendUint16(b, v)
		case int32:
			b = o.AppendUint32(b, uint32(v))
		case uint32:
			b = o.AppendUint32(b, v)
		case int64:
			b = o.AppendUint64(b, uint64(v))
		case uint64:
			b = o.AppendUint64(b, v)
		case float32:
			b = o.AppendUint32(b, math.Float32bits(v))
		case float64:
			b = o.AppendUint64(b, math.Float64bits(v))
		default:
			panic("bin: unsupported type")
		}
	}
	return b
}

var le, be = binary.LittleEndian, binary.BigEndian

const asciiQuad = "ply\nformat ascii 1.0\ncomment made by hand\nobj_info scanner 7\n" +
	"element vertex 4\nproperty float x\nproperty float y\nproperty float z\nproperty uchar red\n" +
	"element face 1\nproperty list uchar int vertex_indices\nend_header\n" +
	"0 0 0 255\n1 0 0.5 0\n1 1 -2.648000e-002 0\n0 1 1e3 7\n4 0 1 2 3\n"

func TestDecode(t *testing.T) {
	quad := []r3.Vec{vec(0, 0, 0), vec(1, 0, 0.5), vec(1, 1, -2.648e-2), vec(0, 1, 1000)}
	quadFaces := [][3]int32{{0, 1, 2}, {0, 2, 3}}
	tests := []struct {
		name     string
		in       []byte
		format   Format
		points   []r3.Vec
		normals  []r3.Vec
		faces    [][3]int32
		comments []string
	}{
		{name: "ascii", in: []byte(asciiQuad), points: quad, faces: quadFaces, comments: []string{"made by hand"}},
		{
			name: "ascii CRLF, extra spaces, blank data lines",
			in: []byte(strings.ReplaceAll("ply\nformat   ascii  1.0 \ncomment  two  spaces\n"+
				"element  vertex 2\nproperty double x\nproperty double y\n\nproperty double z\n"+
				"end_header\n\n 1  2 3 \n\n\t4 5 6\n\n", "\n", "\r\n")),
			points: []r3.Vec{vec(1, 2, 3), vec(4, 5, 6)}, comments: []string{"two  spaces"},
		},
		{
			name: "ascii old Mac line ends, vertex_index, normals, element order",
			in: []byte("ply\rformat ascii 1.0\relement face 1\rproperty list uchar uint vertex_index\r" +
				"element vertex 3\rproperty float nx\rproperty float ny\rproperty float nz\r" +
				"property short x\rproperty short y\rproperty short z\rend_header\r" +
				"3 2 1 0\r0 0 1 -1 -2 -3\r0 1 0 4 5 6\r1 0 0 7 8 9\r"),
			points:  []r3.Vec{vec(-1, -2, -3), vec(4, 5, 6), vec(7, 8, 9)},
			normals: []r3.Vec{vec(0, 0, 1), vec(0, 1, 0), vec(1, 0, 0)},
			faces:   [][3]int32{{2, 1, 0}},
		},
		{
			name: "ascii skipped element with lists",
			in: []byte("ply\nformat ascii 1.0\nelement vertex 1\nproperty float x\nproperty list int float extra\n" +
				"property float y\nproperty float z\nelement edge 2\nproperty list uchar int ends\nproperty uchar w\n" +
				"end_header\n1 2 9 9 2 3\n2 0 1 5\n0 7\n"),
			points: []r3.Vec{vec(1, 2, 3)},
		},
		{
			name: "binary little endian, double, normals, faces",
			in: bin(le, "ply\nformat binary_little_endian 1.0\nelement vertex 3\n"+
				"property double x\nproperty double y\nproperty double z\nproperty float nx\nproperty float ny\nproperty float nz\n"+
				"element face 1\nproperty list uchar int vertex_indices\nend_header\n",
				0.1, 0.2, 0.3, float32(0), float32(0), float32(1),
				1.5, -2.5, 1e-3, float32(0), float32(0), float32(-1),
				-7.0, 8.0, 9.0, float32(0.5), float32(0.25), float32(0),
				uint8(3), int32(0), int32(1), int32(2)),
			format:  BinaryLittleEndian,
			points:  []r3.Vec{vec(0.1, 0.2, 0.3), vec(1.5, -2.5, 1e-3), vec(-7, 8, 9)},
			normals: []r3.Vec{vec(0, 0, 1), vec(0, 0, -1), vec(0.5, 0.25, 0)},
			faces:   [][3]int32{{0, 1, 2}},
		},
		{
			name: "binary big endian, every type and alias",
			in: bin(be, "ply\nformat binary_big_endian 1.0\nelement vertex 2\n"+
				"property char a\nproperty uint8 b\nproperty int16 x\nproperty ushort c\nproperty int32 y\n"+
				"property uint d\nproperty float32 z\nproperty float64 e\nproperty int64 f\nproperty uint64 g\n"+
				"property int8 h\nproperty uchar i\nproperty short j\nproperty uint16 k\nproperty int l\nproperty uint32 m\n"+
				"property float n\nproperty double o\nend_header\n",
				int8(-1), uint8(2), int16(-300), uint16(4), int32(-70000), uint32(6), float32(0.75), 8.0, int64(9), uint64(10),
				int8(1), uint8(2), int16(3), uint16(4), int32(5), uint32(6), float32(7), 8.0,
				int8(-1), uint8(2), int16(300), uint16(4), int32(70000), uint32(6), float32(-0.75), 8.0, int64(9), uint64(10),
				int8(1), uint8(2), int16(3), uint16(4), int32(5), uint32(6), float32(7), 8.0),
			format: BinaryBigEndian,
			points: []r3.Vec{vec(-300, -70000, 0.75), vec(300, 70000, -0.75)},
		},
		{
			// 0x0a as the first data byte must not be taken for a blank line.
			name: "binary CRLF header, data starting with a newline byte",
			in: bin(le, "ply\r\nformat binary_little_endian 1.0\r\nelement vertex 1\r\n"+
				"property uchar x\r\nproperty uchar y\r\nproperty uchar z\r\nend_header\r\n", uint8('\n'), uint8('\r'), uint8(' ')),
			format: BinaryLittleEndian,
			points: []r3.Vec{vec(10, 13, 32)},
		},
		{
			name: "binary: skipped elements, lists in vertex, faces before vertices, quad",
			in: bin(le, "ply\nformat binary_little_endian 1.0\nelement camera 2\nproperty float k\nproperty uchar q\n"+
				"element face 1\nproperty uchar flags\nproperty list ushort uint vertex_indices\nproperty list uchar float uv\n"+
				"element vertex 4\nproperty float x\nproperty list uint8 int16 nb\nproperty float y\nproperty float z\n"+
				"element misc 1\nproperty list int int stuff\nend_header\n",
				float32(1), uint8(2), float32(3), uint8(4),
				uint8(9), uint16(4), uint32(3), uint32(2), uint32(1), uint32(0), uint8(2), float32(0.5), float32(0.25),
				float32(1), uint8(0), float32(2), float32(3),
				float32(4), uint8(2), int16(1), int16(2), float32(5), float32(6),
				float32(7), uint8(1), int16(1), float32(8), float32(9),
				float32(10), uint8(0), float32(11), float32(12),
				int32(2), int32(5), int32(6)),
			format: BinaryLittleEndian,
			points: []r3.Vec{vec(1, 2, 3), vec(4, 5, 6), vec(7, 8, 9), vec(10, 11, 12)},
			faces:  [][3]int32{{3, 2, 1}, {3, 1, 0}},
		},
		{
			name:   "no faces, vertex count 0",
			in:     []byte("ply\nformat binary_big_endian 1.0\nelement vertex 0\nproperty float x\nproperty float y\nproperty float z\nend_header\n"),
			format: BinaryBigEndian,
			points: []r3.Vec{},
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			for _, size := range []int64{int64(len(tt.in)), -1} {
				for _, r := range []io.Reader{bytes.NewReader(tt.in), iotest.OneByteReader(bytes.NewReader(tt.in))} {
					c, err := Decode(r, Options{Name: "t.ply", SizeBytes: size})
					if err != nil {
						t.Fatal(err)
					}
					if c.Format != tt.format {
						t.Errorf("format %v, want %v", c.Format, tt.format)
					}
					if !equalVecs(c.Points, tt.points) || !equalVecs(c.Normals, tt.normals) {
						t.Errorf("points %v normals %v, want %v %v", c.Points, c.Normals, tt.points, tt.normals)
					}
					if len(c.Faces) != len(tt.faces) || (c.Faces == nil) != (tt.faces == nil) {
						t.Fatalf("faces %v, want %v", c.Faces, tt.faces)
					}
					for i := range tt.faces {
						if c.Faces[i] != tt.faces[i] {
							t.Errorf("face %d = %v, want %v", i, c.Faces[i], tt.faces[i])
						}
					}
					if strings.Join(c.Comments, "|") != strings.Join(tt.comments, "|") {
						t.Errorf("comments %q, want %q", c.Comments, tt.comments)
					}
				}
			}
		})
	}
}

func equalVecs(a, b []r3.Vec) bool {
	if len(a) != len(b) || (a == nil) != (b == nil) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

const hdrF = "ply\nformat binary_little_endian 1.0\nelement vertex 2\nproperty float x\nproperty float y\nproperty float z\n"

func TestDecodeErrors(t *testing.T) {
	good := bin(le, hdrF+"element face 1\nproperty list uchar int vertex_indices\nend_header\n",
		float32(1), float32(2), float32(3), float32(4), float32(5), float32(6), uint8(3), int32(0), int32(1), int32(1))
	h := len(hdrF) + len("element face 1\nproperty list uchar int vertex_indices\nend_header\n") // 160
	nan := bytes.Clone(good)
	le.PutUint32(nan[h+16:], 0x7fc00000)
	inf := bytes.Clone(good)
	le.PutUint32(inf[h+8:], 0xff800000)
	badIdx := bytes.Clone(good)
	le.PutUint32(badIdx[h+24+9:], 2)
	negIdx := bytes.Clone(good)
	le.PutUint32(negIdx[h+24+1:], 0xffffffff)
	tests := []struct {
		name   string
		in     string
		max    int
		line   int
		col    int
		offset int64
		err    error
		msg    string
	}{
		{name: "empty", in: "", line: 1, offset: -1, msg: `t.ply: line 1: ply: invalid format: not a PLY file: no "ply" magic`},
		{name: "not ply", in: "solid x\n", line: 1, offset: -1},
		{name: "ply prefix only", in: "plyx\nformat ascii 1.0\n", line: 1, offset: -1},
		{name: "header cut", in: "ply\nformat ascii 1.0\nelement vertex 1\n", line: 4, offset: -1, err: io.ErrUnexpectedEOF,
			msg: `t.ply: line 4: unexpected EOF: header has no "end_header"`},
		{name: "unknown keyword", in: "ply\nformat ascii 1.0\nelemnt vertex 1\nend_header\n", line: 3, offset: -1,
			msg: `line 3: ply: invalid format: unknown header keyword (want format`},
		{name: "bad encoding", in: "ply\nformat utf8 1.0\nend_header\n", line: 2, offset: -1},
		{name: "version 2", in: "ply\nformat ascii 2.0\nend_header\n", line: 2, offset: -1, msg: `unsupported feature: a version other than 1.0`},
		{name: "no format", in: "ply\nend_header\n", line: 2, offset: -1},
		{name: "element before format", in: "ply\nelement vertex 1\n", line: 2, offset: -1},
		{name: "bad count", in: "ply\nformat ascii 1.0\nelement vertex -1\n", line: 3, offset: -1},
		{name: "property first", in: "ply\nformat ascii 1.0\nproperty float x\n", line: 3, offset: -1},
		{name: "unknown type", in: "ply\nformat ascii 1.0\nelement vertex 1\nproperty real x\n", line: 4, offset: -1},
		{name: "float list count", in: "ply\nformat ascii 1.0\nelement vertex 1\nproperty list float int x\n", line: 4, offset: -1},
		{name: "x is a list", in: "ply\nformat ascii 1.0\nelement vertex 1\nproperty list uchar float x\nproperty float y\nproperty float z\nend_header\n",
			line: 4, offset: -1, msg: `line 4: ply: invalid format: vertex property "x" is a list`},
		{name: "no z", in: "ply\nformat ascii 1.0\nelement vertex 1\nproperty float x\nproperty float y\nend_header\n", line: 3, offset: -1},
		{name: "no vertex element", in: "ply\nformat ascii 1.0\nelement point 1\nproperty float x\nend_header\n", line: 5, offset: -1},
		{name: "face indices not a list", in: hdrF + "element face 1\nproperty int vertex_indices\nend_header\n", line: 8, offset: -1},
		{name: "face indices float", in: hdrF + "element face 1\nproperty list uchar float vertex_indices\nend_header\n", line: 8, offset: -1},
		{name: "too many vertices", in: hdrF + "end_header\n", max: 1, line: 3, offset: -1, err: ErrTooManyPoints},
		{name: "header line too long", in: "ply\nformat ascii 1.0\ncomment " + strings.Repeat("x", 70000), line: 3, offset: -1},
		{name: "binary cut in vertex 0", in: string(good[:h+5]), offset: int64(h + 5), err: io.ErrUnexpectedEOF,
			msg: "t.ply: byte 174: header element counts do not match the data: element vertex: 2 records of 12 bytes from byte 169 need 24 bytes, but the file ends at byte 174"},
		{name: "binary cut in vertex 1", in: string(good[:h+23]), offset: int64(h + 23), err: io.ErrUnexpectedEOF, msg: "element vertex: 2 records"},
		{name: "binary cut before face", in: string(good[:h+24]), offset: int64(h + 24), err: io.ErrUnexpectedEOF, msg: "element face: 1 records of at least 1 bytes"},
		{name: "binary cut in face list", in: string(good[:h+30]), offset: int64(h + 30), err: io.ErrUnexpectedEOF},
		{name: "binary NaN", in: string(nan), offset: int64(h + 16), err: ErrNotFinite, msg: "byte 185: element vertex 1: coordinate is not finite"},
		{name: "binary Inf", in: string(inf), offset: int64(h + 8), err: ErrNotFinite},
		{name: "binary index out of range", in: string(badIdx), offset: int64(h + 33), err: ErrIndexRange,
			msg: "byte 202: element face 0: face vertex index out of range: 2 not in [0, 2)"},
		{name: "binary negative index", in: string(negIdx), offset: int64(h + 25), err: ErrIndexRange},
		{name: "binary huge skipped list", in: string(bin(le, hdrF+"element junk 1\nproperty list uint uchar a\nend_header\n",
			float32(1), float32(2), float32(3), float32(4), float32(5), float32(6), uint32(0xffffffff), "abc")),
			offset: int64(len(hdrF)+len("element junk 1\nproperty list uint uchar a\nend_header\n")) + 31, err: io.ErrUnexpectedEOF,
			msg: "element junk 0 of 1: unexpected EOF (header element counts do not match the data): the header's count for \"junk\" is too high"},
		{name: "binary fixed skip cut", in: string(bin(le, hdrF+"element junk 5\nproperty int a\nend_header\n",
			float32(1), float32(2), float32(3), float32(4), float32(5), float32(6), int32(1), int32(2), "ab")),
			offset: int64(len(hdrF)+len("element junk 5\nproperty int a\nend_header\n")) + 34, err: io.ErrUnexpectedEOF,
			msg: "element junk: 5 records of 4 bytes from byte 169 need 20 bytes"},
		{name: "too many triangles", in: "ply\nformat ascii 1.0\nelement vertex 1\nproperty float x\nproperty float y\nproperty float z\n" +
			"element face 1\nproperty list uchar int vertex_indices\nend_header\n1 2 3\n7 0 0 0 0 0 0 0\n", max: 1,
			line: 11, col: 15, offset: 174, err: ErrTooManyPoints, msg: "element face 0: too many points: more than 4 triangles"},
		{name: "binary late face out of range",
			in: string(bin(le, "ply\nformat binary_little_endian 1.0\nelement face 1\nproperty list uchar int vertex_indices\n"+
				"element vertex 1\nproperty float x\nproperty float y\nproperty float z\nend_header\n",
				uint8(3), int32(0), int32(0), int32(1), float32(1), float32(2), float32(3))),
			offset: -1, err: ErrIndexRange, msg: "t.ply: face vertex index out of range: triangle 0 refers to vertex 1 of 1"},
		{name: "ascii count larger than data", in: asciiQuad[:len(asciiQuad)-len("4 0 1 2 3\n")], line: 17, offset: int64(len(asciiQuad) - 10),
			err: io.ErrUnexpectedEOF, msg: "t.ply: line 17: element face 0: unexpected EOF"},
		{name: "ascii short line", in: strings.Replace(asciiQuad, "1 0 0.5 0\n", "1 0\n", 1), line: 14, col: 4, offset: 226,
			msg: `t.ply: line 14, column 4: element vertex 1: line ends before property "z"`},
		{name: "ascii extra value", in: strings.Replace(asciiQuad, "1 0 0.5 0\n", "1 0 0.5 0 9\n", 1), line: 14, col: 11, offset: 233},
		{name: "ascii bad number", in: strings.Replace(asciiQuad, "1 0 0.5 0\n", "1 0 0,5 0\n", 1), line: 14, col: 5, offset: 227,
			msg: `element vertex 1: property "z": not a number`},
		{name: "ascii NaN", in: strings.Replace(asciiQuad, "1 0 0.5 0\n", "1 NaN 0.5 0\n", 1), line: 14, col: 3, offset: 225, err: ErrNotFinite},
		{name: "ascii Inf", in: strings.Replace(asciiQuad, "1 0 0.5 0\n", "1 0 -inf 0\n", 1), line: 14, col: 5, offset: 227, err: ErrNotFinite},
		{name: "ascii index out of range", in: strings.Replace(asciiQuad, "4 0 1 2 3\n", "4 0 1 2 4\n", 1), line: 17, col: 9, err: ErrIndexRange,
			offset: int64(len(asciiQuad) - 2)},
		{name: "ascii negative index", in: strings.Replace(asciiQuad, "4 0 1 2 3\n", "4 0 -1 2 3\n", 1), line: 17, col: 5, err: ErrIndexRange,
			offset: int64(len(asciiQuad) - 6)},
		{name: "ascii huge list count", in: strings.Replace(asciiQuad, "4 0 1 2 3\n", "4000000000 0 1 2 3\n", 1), line: 17, col: 19,
			offset: int64(len(asciiQuad) + 8), msg: `line ends inside list "vertex_indices"`},
		{name: "ascii bad list count", in: strings.Replace(asciiQuad, "4 0 1 2 3\n", "-4 0 1 2 3\n", 1), line: 17, col: 1,
			offset: int64(len(asciiQuad) - 10)},
		{name: "ascii data after last element", in: asciiQuad + "\n5 5\n", line: 19, col: 1, offset: int64(len(asciiQuad) + 1)},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Decode(strings.NewReader(tt.in), Options{Name: "t.ply", SizeBytes: int64(len(tt.in)), MaxPoints: tt.max})
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a *ParseError", err)
			}
			if pe.Name != "t.ply" || pe.Line != tt.line || pe.Column != tt.col || pe.Offset != tt.offset {
				t.Errorf("at line %d col %d offset %d, want line %d col %d offset %d (%v)",
					pe.Line, pe.Column, pe.Offset, tt.line, tt.col, tt.offset, err)
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

func TestRoundTrip(t *testing.T) {
	c := &Cloud{
		Points:   []r3.Vec{vec(0.1, -2.5e-3, 123.456), vec(1, 0, 0), vec(0, 1, 0), vec(-7, 8e10, 9e-10)},
		Normals:  []r3.Vec{vec(0, 0, 1), vec(0, 0.6, 0.8), vec(1, 0, 0), vec(0, 0, -1)},
		Faces:    [][3]int32{{0, 1, 2}, {0, 2, 3}},
		Comments: []string{"round trip"},
	}
	for _, f := range []Format{ASCII, BinaryLittleEndian, BinaryBigEndian} {
		for _, typ := range []string{"float", "double"} {
			for _, crlf := range []bool{false, true} {
				for _, nrm := range []bool{false, true} {
					in := *c
					if !nrm {
						in.Normals, in.Faces = nil, nil
					}
					var buf bytes.Buffer
					if err := Write(&buf, &in, WriteOptions{Format: f, VertexType: typ, CRLF: crlf}); err != nil {
						t.Fatal(err)
					}
					got, err := Decode(&buf, Options{Name: "rt.ply", SizeBytes: -1})
					if err != nil {
						t.Fatalf("%v %s crlf=%v: %v", f, typ, crlf, err)
					}
					// float: binary stores float32; ASCII stores the shortest
					// decimal that reads back to the float32, read as float64.
					round := func(v []r3.Vec) []r3.Vec {
						if typ == "double" || v == nil {
							return v
						}
						r := func(x float64) float64 {
							if f != ASCII {
								return float64(float32(x))
							}
							y, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', -1, 32), 64)
							return y
						}
						out := make([]r3.Vec, len(v))
						for i, p := range v {
							out[i] = vec(r(p.X), r(p.Y), r(p.Z))
						}
						return out
					}
					if got.Format != f || !equalVecs(got.Points, round(in.Points)) || !equalVecs(got.Normals, round(in.Normals)) {
						t.Errorf("%v %s crlf=%v normals=%v: got %+v", f, typ, crlf, nrm, got)
					}
					if len(got.Faces) != len(in.Faces) || len(got.Comments) != 1 || got.Comments[0] != "round trip" {
						t.Errorf("%v %s: faces %v comments %q", f, typ, got.Faces, got.Comments)
					}
					for i := range in.Faces {
						if got.Faces[i] != in.Faces[i] {
							t.Errorf("face %d = %v", i, got.Faces[i])
						}
					}
				}
			}
		}
	}
}

func TestWriteErrors(t *testing.T) {
	p := []r3.Vec{vec(0, 0, 0), vec(1, 1, 1), vec(2, 2, 2)}
	tests := []struct {
		name string
		c    *Cloud
		opt  WriteOptions
	}{
		{"normals count", &Cloud{Points: p, Normals: p[:2]}, WriteOptions{}},
		{"vertex type", &Cloud{Points: p}, WriteOptions{VertexType: "int"}},
		{"format", &Cloud{Points: p}, WriteOptions{Format: 7}},
		{"face index", &Cloud{Points: p, Faces: [][3]int32{{0, 1, 3}}}, WriteOptions{}},
		{"NaN", &Cloud{Points: []r3.Vec{vec(math.NaN(), 0, 0)}}, WriteOptions{}},
		{"float32 overflow", &Cloud{Points: []r3.Vec{vec(1e39, 0, 0)}}, WriteOptions{Format: BinaryLittleEndian}},
	}
	for _, tt := range tests {
		if err := Write(io.Discard, tt.c, tt.opt); err == nil {
			t.Errorf("%s: no error", tt.name)
		}
	}
	if err := Write(io.Discard, &Cloud{Points: []r3.Vec{vec(1e39, 0, 0)}}, WriteOptions{VertexType: "double"}); err != nil {
		t.Errorf("1e39 as double: %v", err)
	}
}

// TestHugeCountSmallFile checks that headers announcing 2^31 vertices or
// faces in a tiny stream are not believed when allocating.
func TestHugeCountSmallFile(t *testing.T) {
	for _, in := range []string{
		string(bin(le, "ply\nformat binary_little_endian 1.0\nelement vertex 2147483648\nproperty float x\nproperty float y\nproperty float z\nend_header\n", float32(1), float32(2))),
		"ply\nformat ascii 1.0\nelement vertex 2147483648\nproperty float x\nproperty float y\nproperty float z\nend_header\n1 2 3\n",
		string(bin(le, hdrF+"element face 2147483648\nproperty list uchar int vertex_indices\nend_header\n",
			float32(1), float32(2), float32(3), float32(4), float32(5), float32(6), uint8(3), int32(0))),
	} {
		for _, size := range []int64{int64(len(in)), -1} {
			var before, after runtime.MemStats
			runtime.ReadMemStats(&before)
			_, err := Decode(strings.NewReader(in), Options{Name: "huge.ply", SizeBytes: size, MaxPoints: math.MaxInt})
			runtime.ReadMemStats(&after)
			if !errors.Is(err, io.ErrUnexpectedEOF) {
				t.Fatalf("error %v, want unexpected EOF", err)
			}
			if d := after.TotalAlloc - before.TotalAlloc; d > 8<<20 {
				t.Errorf("allocated %d bytes for a %d-byte file", d, len(in))
			}
		}
	}
}
