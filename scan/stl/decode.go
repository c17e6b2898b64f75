package stl

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"runtime"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/internal/grow"
	"gapflux/internal/hugemem"
	"gapflux/internal/parallel"
)

const (
	headerLen = 84 // 80-byte header and uint32 count
	facetLen  = 50 // 12 float32 and a uint16 attribute
	// peekLen is how much of the input Decode inspects to tell ASCII from
	// binary when the size is unknown.
	peekLen = 4096
	// growCap is the initial capacity, in facets, when the size is
	// unknown: one chunk.
	growCap = chunkFacets
	// chunkFacets is how many binary facets are read at once.
	chunkFacets = 20972 // 1 MiB of facets
)

// Decode reads a binary or ASCII STL file from r. It tells the two apart by
// size when opt.SizeBytes is known and by content otherwise; see the
// package comment. Errors are *ParseError values.
func Decode(r io.Reader, opt Options) (*Mesh, error) {
	if opt.MaxPoints <= 0 {
		opt.MaxPoints = DefaultMaxPoints
	}
	br := bufio.NewReaderSize(r, 64<<10)
	d := &decoder{br: br, opt: opt}
	head, err := br.Peek(headerLen)
	if len(head) == 0 {
		if err == io.EOF {
			return nil, d.errAt(0, FormatError("empty file"))
		}
		return nil, d.errAt(0, err)
	}
	if opt.SizeBytes >= headerLen && len(head) == headerLen {
		n := int64(binary.LittleEndian.Uint32(head[80:]))
		if headerLen+facetLen*n == opt.SizeBytes {
			return d.binary()
		}
	}
	probe, _ := br.Peek(peekLen)
	if looksASCII(probe) {
		return d.ascii()
	}
	return d.binary()
}

type decoder struct {
	br   *bufio.Reader
	opt  Options
	weld *meshWelder // nil unless opt.Weld (ASCII)
}

func (d *decoder) errAt(off int64, err error) *ParseError {
	return &ParseError{Name: d.opt.Name, Offset: off, Err: err}
}

// looksASCII reports whether b, the start of a file, reads as an ASCII STL
// file: "solid", the rest of that line, then "facet" or "endsolid", or a
// text-only prefix when the window ends before that.
func looksASCII(b []byte) bool {
	b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf"))
	b = bytes.TrimLeft(b, " \t\r\n")
	if len(b) < 5 || !bytes.EqualFold(b[:5], []byte("solid")) {
		return false
	}
	if len(b) > 5 && !isSpace(b[5]) {
		return false
	}
	i := bytes.IndexByte(b, '\n')
	if i < 0 {
		return printable(b)
	}
	if !printable(b[:i]) {
		return false
	}
	rest := bytes.TrimLeft(b[i+1:], " \t\r\n\v\f")
	if len(rest) == 0 {
		return true // "solid name" and nothing more: let the ASCII parser report it
	}
	for _, kw := range [...]string{"facet", "endsolid"} {
		if len(rest) >= len(kw) && bytes.EqualFold(rest[:len(kw)], []byte(kw)) {
			return true
		}
		if len(rest) < len(kw) && bytes.EqualFold(rest, []byte(kw[:len(rest)])) {
			return true // window ends inside the keyword
		}
	}
	return false
}

// printable reports whether b holds only text (no control bytes other
// than white space).
func printable(b []byte) bool {
	for _, c := range b {
		if c < 0x20 && !isSpace(c) || c == 0x7f {
			return false
		}
	}
	return true
}

// binary decodes a binary STL file.
func (d *decoder) binary() (*Mesh, error) {
	var hdr [headerLen]byte
	if n, err := io.ReadFull(d.br, hdr[:]); err != nil {
		return nil, d.errAt(int64(n), eofErr(err, "in header"))
	}
	n := int64(binary.LittleEndian.Uint32(hdr[80:]))
	m := &Mesh{Header: string(bytes.TrimRight(hdr[:80], "\x00")), Binary: true}
	if 3*n > int64(d.opt.MaxPoints) {
		return nil, d.errAt(80, fmt.Errorf("%w: %d facets (%d vertices), limit %d vertices",
			ErrTooManyPoints, n, 3*n, d.opt.MaxPoints))
	}
	if d.opt.Weld && 3*n > math.MaxInt32 {
		return nil, d.errAt(80, fmt.Errorf("%w: %d facets could have more vertices than int32 indices reach", ErrTooManyPoints, n))
	}
	want := headerLen + facetLen*n
	c := n
	if d.opt.SizeBytes > 0 {
		if d.opt.SizeBytes != want {
			hint := "the file is cut short (an interrupted copy or export?): export or copy it again"
			if d.opt.SizeBytes > want {
				hint = "the file holds more than its facets: export it again as one binary STL"
			}
			return nil, d.errAt(80, fmt.Errorf("%w: %d facets need %d bytes, file has %d; %s",
				ErrSizeMismatch, n, want, d.opt.SizeBytes, hint))
		}
	} else {
		c = min(n, growCap)
	}
	if d.opt.Weld {
		m.Vertices = hugemem.Make[r3.Vec](0, meshVertices(c))
		m.Faces = hugemem.Make[[3]int32](0, int(c))
	} else {
		m.Vertices = hugemem.Make[r3.Vec](0, int(3*c))
	}
	m.Normals = hugemem.Make[r3.Vec](0, int(c))
	read := d.readChunks
	if d.opt.Weld {
		read = d.weldChunks
	}
	if err := read(m, n); err != nil {
		return nil, err
	}
	if d.opt.SizeBytes <= 0 {
		if extra, _ := d.br.Peek(1); len(extra) > 0 {
			return nil, d.errAt(want, fmt.Errorf("%w: data after the %d facets the header announces",
				ErrSizeMismatch, n))
		}
	}
	return m, nil
}

// meshVertices returns the room to make for the distinct vertices of c
// facets: a closed mesh has about half as many vertices as facets, and a
// scan (a mesh with a boundary) more by about the number on its boundary,
// which the margin covers for a scan of any size; a file with more grows
// the slice.
func meshVertices(c int64) int {
	return int(c/2 + c/64 + 1024)
}

// facetSplit is the fewest facets shared between goroutines.
const facetSplit = 2048

// readChunks reads the n facets of a binary file into m, unwelded, one
// chunk at a time.
func (d *decoder) readChunks(m *Mesh, n int64) error {
	buf := make([]byte, min(n, chunkFacets)*facetLen)
	for i := int64(0); i < n; {
		k := min(n-i, chunkFacets)
		b := buf[:k*facetLen]
		if err := d.readChunk(b, i, n); err != nil {
			return err
		}
		if j := decodeFacets(m, b, n); j >= 0 {
			return d.notFinite(i, j)
		}
		i += k
	}
	return nil
}

// readChunk reads into b the facets from facet i on, of n, or returns
// the error with its place.
func (d *decoder) readChunk(b []byte, i, n int64) error {
	got, err := io.ReadFull(d.br, b)
	if err != nil {
		off := headerLen + i*facetLen + int64(got)
		return d.errAt(off, eofErr(err, fmt.Sprintf("in facet %d of %d", i+int64(got)/facetLen, n)))
	}
	return nil
}

// notFinite returns the error for the non-finite coordinate j (12 per
// facet) of the chunk that starts at facet i.
func (d *decoder) notFinite(i int64, j int) error {
	off := headerLen + (i+int64(j/12))*facetLen + 4*int64(j%12)
	return d.errAt(off, fmt.Errorf("%w in facet %d", ErrNotFinite, i+int64(j/12)))
}

// decodeFacets appends the facets in b to m, unwelded, which will hold
// at most n facets. The facets are decoded in contiguous parts, one per
// available processor. It returns -1, or the index (12 per facet) of the
// first vertex coordinate that is not finite. Non-finite normals are
// stored as zero.
func decodeFacets(m *Mesh, b []byte, n int64) int {
	k := len(b) / facetLen
	growFacets(m, k, n, false)
	n0, v0 := len(m.Normals), len(m.Vertices)
	m.Normals, m.Vertices = m.Normals[:n0+k], m.Vertices[:v0+3*k]
	return fillFacetsParallel(m.Normals[n0:], m.Vertices[v0:], b, chunkParts(k))
}

// chunkParts returns how many parts to decode k facets in: one per
// available processor, of facetSplit facets at least.
func chunkParts(k int) int {
	return parallel.Parts(k, min(runtime.GOMAXPROCS(0), max(1, k/facetSplit)))
}

// growFacets makes room in m for k more facets, of at most n in all: in
// the normals and, welded, the faces or, not welded, the vertices (three
// per facet), each slice on its own capacity (grow.Room: quadrupling, few
// copies on streams of unknown size).
func growFacets(m *Mesh, k int, n int64, weld bool) {
	m.Normals = grow.Room(m.Normals, k, n)
	if weld {
		m.Faces = grow.Room(m.Faces, k, n)
	} else {
		m.Vertices = grow.Room(m.Vertices, 3*k, 3*n)
	}
}

// fillFacetsParallel runs fillFacets on parts contiguous parts of the
// facets in b and returns the first bad index in file order, or -1.
func fillFacetsParallel(ns, verts []r3.Vec, b []byte, parts int) int {
	if v, ok := parallel.First(len(ns), parts, func(f0, f1 int) (int, bool) {
		bad := fillFacets(ns[f0:f1], verts[3*f0:3*f1], b[f0*facetLen:f1*facetLen])
		return bad + 12*f0, bad >= 0
	}); ok {
		return v // the first in file order
	}
	return -1
}

// fillFacets decodes the facets in b into their normals ns (zero when not
// finite) and vertices verts (three per facet). It returns -1, or the
// index (12 per facet) of the first vertex coordinate that is not finite.
func fillFacets(ns, verts []r3.Vec, b []byte) int {
	for f := range ns {
		var u [12]uint32
		if bad := facetWords(&u, b, f); bad >= 0 {
			return 12*f + bad
		}
		ns[f] = normalBits(u[0], u[1], u[2])
		vf := verts[3*f : 3*f+3]
		vf[0] = r3.Vec{X: f64(u[3]), Y: f64(u[4]), Z: f64(u[5])}
		vf[1] = r3.Vec{X: f64(u[6]), Y: f64(u[7]), Z: f64(u[8])}
		vf[2] = r3.Vec{X: f64(u[9]), Y: f64(u[10]), Z: f64(u[11])}
	}
	return -1
}

// facetWords sets u to the twelve little-endian words of facet f of b
// (normal, then the three vertices, float32 bits) and returns -1, or the
// index (3 to 11) of the first vertex coordinate that is not finite.
func facetWords(u *[12]uint32, b []byte, f int) int {
	r := b[f*facetLen : f*facetLen+48]
	for i := range u {
		u[i] = binary.LittleEndian.Uint32(r[4*i:])
	}
	for i := 3; i < 12; i++ {
		if u[i]&0x7f800000 == 0x7f800000 {
			return i
		}
	}
	return -1
}

// eofErr turns io.EOF into io.ErrUnexpectedEOF and adds where it happened.
func eofErr(err error, where string) error {
	if err == io.EOF {
		err = io.ErrUnexpectedEOF
	}
	return fmt.Errorf("%w %s", err, where)
}
