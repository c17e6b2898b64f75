package xyz

import (
	"gapflux/internal/decimal"

	"bytes"
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

func TestDecode(t *testing.T) {
	p123 := []r3.Vec{vec(1, 2, 3), vec(4.5, -5e-3, 6)}
	tests := []struct {
		name    string
		in      string
		points  []r3.Vec
		normals []r3.Vec
		unit    string
		delim   rune
		header  bool
	}{
		{name: "spaces", in: "1 2 3\n4.5 -5e-3 6\n", points: p123, delim: ' '},
		{name: "runs of spaces and tabs, CRLF, no final newline", in: "  1 \t 2   3 \r\n\t4.5\t-5e-3  6", points: p123, delim: ' '},
		{name: "tabs", in: "1\t2\t3\n4.5\t-5e-3\t6\n", points: p123, delim: ' '},
		{name: "comma", in: "1,2,3\n4.5,-5e-3,6\n", points: p123, delim: ','},
		{name: "comma and spaces", in: "1, 2, 3\n 4.5 , -5e-3 , 6\n", points: p123, delim: ','},
		{name: "semicolon, decimal comma", in: "1;2;3\n4,5;-5e-3;6,0\n", points: p123, delim: ';'},
		{name: "spaces, decimal comma", in: "1,0 2 3\n4,5 -5e-3 6\n", points: p123, delim: ' '},
		{name: "comments and blank lines", in: "# scanner export\n\n1 2 3 # first\n   \n# second\n4.5 -5e-3 6\n#end", points: p123, delim: ' '},
		{name: "extra columns ignored", in: "1 2 3 255 0 0\n4.5 -5e-3 6 0 255 0\n", points: p123, delim: ' '},
		{name: "header x_mm", in: "x_mm,y_mm,z_mm\n1,2,3\n4.5,-5e-3,6\n", points: p123, unit: "mm", delim: ',', header: true},
		{name: "header id first, quoted", in: "\"id\",\"x\",\"y\",\"z\"\np1,1,2,3\np2,4.5,-5e-3,6\n", points: p123, delim: ',', header: true},
		{name: "header reordered, X[mm]", in: "Z[mm];X[mm];Y[mm]\n3;1;2\n6;4,5;-0,005\n", points: p123, unit: "mm", delim: ';', header: true},
		{name: "header x (um) with spaces", in: "x (um)  y (um)  z (um)  intensity\n1 2 3 9\n4.5 -5e-3 6 9\n", points: p123, unit: "um", delim: ' ', header: true},
		{name: "header units partly given", in: "x(in)\ty\tz\n1\t2\t3\n4.5\t-5e-3\t6\n", points: p123, unit: "in", delim: ' ', header: true},
		{name: "header unknown unit", in: "x (px),y (px),z (px)\n1,2,3\n4.5,-5e-3,6\n", points: p123, delim: ',', header: true},
		{name: "header with normals", in: "x y z nx ny nz\n1 2 3 0 0 1\n4.5 -5e-3 6 0 1 0\n", points: p123,
			normals: []r3.Vec{vec(0, 0, 1), vec(0, 1, 0)}, delim: ' ', header: true},
		{name: "header with normal_x, metres", in: "normal_x,normal_y,normal_z,X_m,Y_m,Z_m\n0,0,1,1,2,3\n0,1,0,4.5,-5e-3,6\n", points: p123,
			normals: []r3.Vec{vec(0, 0, 1), vec(0, 1, 0)}, unit: "m", delim: ',', header: true},
		{name: "unlabelled columns give no normals", in: "1 2 3 0 0 1\n4.5 -5e-3 6 0 1 0\n", points: p123, delim: ' '},
		{name: "header after comments, byte order mark", in: "\xef\xbb\xbf# export\nX,Y,Z\n1,2,3\n4.5,-5e-3,6\n", points: p123, delim: ',', header: true},
		{name: "header separator differs from data", in: "x y z\n1,2,3\n4.5,-5e-3,6\n", points: p123, delim: ',', header: true},
		{name: "point count line", in: "2\n1 2 3\n4.5 -5e-3 6\n", points: p123, delim: ' '},
		{name: "header only", in: "x,y,z\n", points: []r3.Vec{}, delim: ',', header: true},
		{name: "empty", in: "", points: []r3.Vec{}, delim: ' '},
		{name: "comments only", in: "# nothing\n\n", points: []r3.Vec{}, delim: ' '},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			for _, r := range []io.Reader{strings.NewReader(tt.in), iotest.OneByteReader(strings.NewReader(tt.in))} {
				c, err := Decode(r, Options{Name: "t.xyz", SizeBytes: -1})
				if err != nil {
					t.Fatal(err)
				}
				if !equalVecs(c.Points, tt.points) || !equalVecs(c.Normals, tt.normals) {
					t.Errorf("points %v normals %v, want %v %v", c.Points, c.Normals, tt.points, tt.normals)
				}
				if c.UnitHint != tt.unit || c.Delimiter != tt.delim || c.HasHeader != tt.header {
					t.Errorf("unit %q delimiter %q header %v, want %q %q %v", c.UnitHint, c.Delimiter, c.HasHeader, tt.unit, tt.delim, tt.header)
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

func TestDecodeErrors(t *testing.T) {
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
		{name: "two numbers", in: "1 2 3\n4 5\n", line: 2, col: 4, offset: 9, err: ErrFieldCount,
			msg: "t.xyz: line 2, column 4: too few columns: 2, need 3 as the first line sets; fix or remove this line"},
		{name: "two numbers first", in: "# c\n1 2  \n", line: 2, col: 4, offset: 7, err: ErrFieldCount},
		{name: "two numbers, comma", in: "1,2,3\n4,5\n", line: 2, col: 4, offset: 9, err: ErrFieldCount},
		{name: "empty field", in: "1,2,3\n4,,6\n", line: 2, col: 3, offset: 8, err: ErrSyntax, msg: `line 2, column 3: not a number`},
		{name: "bad number", in: "1 2 3\n4 5 6x\n", line: 2, col: 5, offset: 10, err: ErrSyntax, msg: `line 2, column 5: not a number`},
		{name: "NaN", in: "1 2 3\n4 NaN 6\n", line: 2, col: 3, offset: 8, err: ErrNotFinite},
		{name: "Inf", in: "1 2 3\n4 5 -inf\n", line: 2, col: 5, offset: 10, err: ErrNotFinite},
		{name: "overflow", in: "1 2 3\n1e999 5 6\n", line: 2, col: 1, offset: 6, err: ErrNotFinite},
		{name: "header without z", in: "x,y,w\n1,2,3\n", line: 1, offset: 0, err: ErrNoColumns,
			msg: `t.xyz: line 1: header does not name x, y and z columns: name them`},
		{name: "header mixed units", in: "x_mm y_m z_mm\n1 2 3\n", line: 1, offset: 0, msg: "different units"},
		{name: "header without z, no data", in: "# c\na b c\n", line: 2, offset: 4, err: ErrNoColumns},
		{name: "normals column missing", in: "x y z nx ny nz\n1 2 3 0 0 1\n1 2 3 0 0\n", line: 3, col: 10, offset: 36, err: ErrFieldCount,
			msg: "too few columns: 5, need 6"},
		{name: "second header", in: "x y z\n1 2 3\nx y z\n", line: 3, col: 1, offset: 12, err: ErrSyntax},
		{name: "too many", in: "1 2 3\n4 5 6\n7 8 9\n", max: 2, line: 3, offset: 12, err: ErrTooManyPoints},
		{name: "line too long", in: "1 2 3\n" + strings.Repeat(" ", MaxLineBytes+5) + "\n", line: 2, offset: 6, err: ErrLineTooLong},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Decode(strings.NewReader(tt.in), Options{Name: "t.xyz", SizeBytes: int64(len(tt.in)), MaxPoints: tt.max})
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a *ParseError", err)
			}
			if pe.Name != "t.xyz" || pe.Line != tt.line || pe.Column != tt.col || pe.Offset != tt.offset {
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

func TestDetect(t *testing.T) {
	tests := []struct {
		in    string
		delim byte
		comma bool
	}{
		{"1 2 3", ' ', false},
		{"1\t2\t3", ' ', false},
		{"1,2,3", ',', false},
		{"1, 2, 3", ',', false},
		{"1.5, 2.5, 3.5", ',', false},
		{"1;2;3", ';', true},
		{"1,5 2,5 3,5", ' ', true},
		{"1,5\t2,5\t3,5", ' ', true},
		{"x,y,z", ',', false},
		{"x y z", ' ', false},
	}
	for _, tt := range tests {
		d, c := detect([]byte(tt.in))
		if d != tt.delim || c != tt.comma {
			t.Errorf("detect(%q) = %q, %v; want %q, %v", tt.in, d, c, tt.delim, tt.comma)
		}
	}
}

func TestLabel(t *testing.T) {
	tests := []struct{ in, name, unit string }{
		{"x", "x", ""},
		{"X_mm", "x", "mm"},
		{"x (mm)", "x", "mm"},
		{"X[mm]", "x", "mm"},
		{"x [µm]", "x", "um"},
		{"y_in", "y", "in"},
		{"z-m", "z", "m"},
		{`"Z/mm"`, "z", "mm"},
		{"normal_x", "normal_x", ""},
		{"x (px)", "x", ""},
		{"x_coord", "x_coord", ""},
	}
	for _, tt := range tests {
		if n, u := label(tt.in); n != tt.name || u != tt.unit {
			t.Errorf("label(%q) = %q, %q; want %q, %q", tt.in, n, u, tt.name, tt.unit)
		}
	}
}

func TestParseFloatComma(t *testing.T) {
	tests := []struct {
		in    string
		comma bool
		want  float64
		ok    bool
	}{
		{"1,5", true, 1.5, true},
		{"1,5", false, 0, false},
		{"-0,125e2", true, -12.5, true},
		{"1.5", true, 1.5, true},
		{"1,2,3", true, 0, false},
		{"1.2,3", true, 0, false},
		{"123456789,123456789", true, 123456789.123456789, true}, // strconv fallback
		{"2.648000e-002", false, 2.648e-2, true},
	}
	for _, tt := range tests {
		got, ok := parseFloat([]byte(tt.in), tt.comma)
		if ok != tt.ok || got != tt.want {
			t.Errorf("parseFloat(%q, %v) = %v, %v; want %v, %v", tt.in, tt.comma, got, ok, tt.want, tt.ok)
		}
	}
	// Exact agreement with strconv on the fast path and the fallback.
	for i := 0; i < 10000; i++ {
		s := strconv.FormatFloat(math.Float64frombits(uint64(i)*0x9e3779b97f4a7c15>>2), 'g', -1, 64)
		want, err := strconv.ParseFloat(s, 64)
		got, ok := parseFloat([]byte(s), false)
		if (err == nil) != ok || (ok && got != want && !math.IsNaN(want)) {
			t.Fatalf("parseFloat(%q) = %v, %v; strconv %v, %v", s, got, ok, want, err)
		}
	}
}

func TestRoundTrip(t *testing.T) {
	c := &Cloud{
		Points:  []r3.Vec{vec(0.1, -2.5e-3, 123.456), vec(1, 0, 0), vec(-7, 8e10, 9e-10)},
		Normals: []r3.Vec{vec(0, 0, 1), vec(0, 0.6, 0.8), vec(1, 0, 0)},
	}
	for _, d := range []rune{0, ' ', '\t', ',', ';'} {
		for _, hdr := range []bool{false, true} {
			for _, nrm := range []bool{false, true} {
				opt := WriteOptions{Delimiter: d, Header: hdr, Normals: nrm}
				if hdr {
					opt.Unit = "um"
				}
				var buf bytes.Buffer
				if err := Write(&buf, c, opt); err != nil {
					t.Fatal(err)
				}
				got, err := Decode(&buf, Options{})
				if err != nil {
					t.Fatalf("%+v: %v", opt, err)
				}
				wantN := []r3.Vec(nil)
				if hdr && nrm {
					wantN = c.Normals
				}
				wantD := d
				if d == 0 || d == '\t' {
					wantD = ' '
				}
				if !equalVecs(got.Points, c.Points) || !equalVecs(got.Normals, wantN) || got.HasHeader != hdr || got.Delimiter != wantD {
					t.Errorf("%+v: got %+v", opt, got)
				}
				if hdr && got.UnitHint != "um" {
					t.Errorf("%+v: unit %q", opt, got.UnitHint)
				}
			}
		}
	}
	// Fixed precision.
	var buf bytes.Buffer
	if err := Write(&buf, &Cloud{Points: []r3.Vec{vec(1.23456, -2, 3e-4)}}, WriteOptions{Precision: 3, Delimiter: ','}); err != nil {
		t.Fatal(err)
	}
	if got := buf.String(); got != "1.235,-2.000,0.000\n" {
		t.Errorf("precision 3: %q", got)
	}
}

func TestWriteErrors(t *testing.T) {
	p := []r3.Vec{vec(0, 0, 0)}
	tests := []struct {
		name string
		c    *Cloud
		opt  WriteOptions
	}{
		{"delimiter", &Cloud{Points: p}, WriteOptions{Delimiter: '|'}},
		{"normals count", &Cloud{Points: p}, WriteOptions{Normals: true}},
		{"unit with separator", &Cloud{Points: p}, WriteOptions{Header: true, Unit: "m m"}},
		{"NaN", &Cloud{Points: []r3.Vec{vec(0, math.NaN(), 0)}}, WriteOptions{}},
	}
	for _, tt := range tests {
		if err := Write(io.Discard, tt.c, tt.opt); err == nil {
			t.Errorf("%s: no error", tt.name)
		}
	}
}

// TestAllocBound checks that memory follows the data: 1000 points
// allocate little more than their 24 kB with the size known or not, and a
// size that overstates the input costs at most the first 1<<20 points.
func TestAllocBound(t *testing.T) {
	in := strings.Repeat("1 2 3\n", 1000)
	for _, c := range []struct {
		size  int64
		bound uint64
	}{
		{int64(len(in)), 200 << 10},
		{-1, 300 << 10},
		{1 << 40, 26 << 20},
	} {
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		cl, err := Decode(strings.NewReader(in), Options{SizeBytes: c.size})
		runtime.ReadMemStats(&after)
		if err != nil || len(cl.Points) != 1000 {
			t.Fatal(err)
		}
		if d := after.TotalAlloc - before.TotalAlloc; d > c.bound {
			t.Errorf("size %d: allocated %d bytes for 1000 points, want <= %d", c.size, d, c.bound)
		}
	}
}

// parseFloat is the number parser the reader uses.
func parseFloat(b []byte, comma bool) (float64, bool) { return decimal.ParseFloat(b, comma) }
