package stl

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"fmt"
	"gapflux/internal/parallel"
	"io"
	"math"
	"runtime"

	"gonum.org/v1/gonum/spatial/r3"
)

const (
	headerLen = 84 // 80-byte header and uint32 count
	facetLen  = 50 // 12 float32 and a uint16 attribute
	// peekLen is how much of the input Decode inspects to tell ASCII from
	// binary when the size is unknown.
	peekLen = 4096
	// growCap is the initial capacity, in facets, when the size is unknown.
	growCap = 1 << 14
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
	buf  []byte
	weld *welder // nil unless opt.Weld
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
		// A mesh has about half as many vertices as facets.
		m.Vertices = make([]r3.Vec, 0, c/2+16)
		m.Faces = make([][3]int32, 0, c)
		d.weld = newWelder(int(c/2 + 16))
	} else {
		m.Vertices = make([]r3.Vec, 0, 3*c)
	}
	m.Normals = make([]r3.Vec, 0, c)
	d.buf = make([]byte, min(n, chunkFacets)*facetLen)
	var sc facetScratch
	for i := int64(0); i < n; {
		k := min(n-i, chunkFacets)
		b := d.buf[:k*facetLen]
		got, err := io.ReadFull(d.br, b)
		if err != nil {
			off := headerLen + i*facetLen + int64(got)
			return nil, d.errAt(off, eofErr(err,
				fmt.Sprintf("in facet %d of %d", i+int64(got)/facetLen, n)))
		}
		if j := decodeFacets(m, b, n, d.weld, &sc); j >= 0 {
			off := headerLen + (i+int64(j/12))*facetLen + 4*int64(j%12)
			return nil, d.errAt(off, fmt.Errorf("%w in facet %d", ErrNotFinite, i+int64(j/12)))
		}
		i += k
	}
	if d.opt.SizeBytes <= 0 {
		if extra, _ := d.br.Peek(1); len(extra) > 0 {
			return nil, d.errAt(want, fmt.Errorf("%w: data after the %d facets the header announces",
				ErrSizeMismatch, n))
		}
	}
	return m, nil
}

// facetSplit is the fewest facets decodeFacets shares between goroutines.
const facetSplit = 2048

// facetScratch holds one chunk's decoded vertices and their hashes before
// they are welded.
type facetScratch struct {
	verts []r3.Vec
	hash  []uint64
}

// decodeFacets appends the facets in b to m, which will hold at most n
// facets, welding the vertices when w is not nil (sc then holds the
// chunk's vertices on their way). The facets are decoded, and their
// vertices hashed, in contiguous parts, one per available processor; the
// vertices are then welded in file order, so the result does not depend
// on the split. It returns -1, or the index (12 per facet) of the first
// coordinate that is not finite. Non-finite normals are stored as zero.
func decodeFacets(m *Mesh, b []byte, n int64, w *welder, sc *facetScratch) int {
	vs, ns := m.Vertices, m.Normals
	k := len(b) / facetLen
	if cap(ns)-len(ns) < k {
		// Double rather than let append grow by 1.25: fewer copies of
		// large slices on streams of unknown size.
		c := max(min(2*cap(ns), int(n)), len(ns)+k)
		if w == nil {
			vs = append(make([]r3.Vec, 0, 3*c), vs...)
		} else {
			m.Faces = append(make([][3]int32, 0, c), m.Faces...)
		}
		ns = append(make([]r3.Vec, 0, c), ns...)
	}
	n0, v0 := len(ns), len(vs)
	ns = ns[:n0+k]
	var verts []r3.Vec
	var hash []uint64
	if w == nil {
		vs = vs[:v0+3*k]
		verts = vs[v0:]
	} else {
		if cap(sc.verts) < 3*k {
			sc.verts, sc.hash = make([]r3.Vec, 3*k), make([]uint64, 3*k)
		}
		verts, hash = sc.verts[:3*k], sc.hash[:3*k]
	}
	if bad := fillFacetsParallel(ns[n0:], verts, hash, b[:k*facetLen]); bad >= 0 {
		m.Vertices, m.Normals = vs[:v0], ns[:n0]
		return bad
	}
	if w != nil {
		for f := range k {
			m.Faces = append(m.Faces, [3]int32{w.addHashed(&vs, verts[3*f], hash[3*f]),
				w.addHashed(&vs, verts[3*f+1], hash[3*f+1]), w.addHashed(&vs, verts[3*f+2], hash[3*f+2])})
		}
	}
	m.Vertices, m.Normals = vs, ns
	return -1
}

// fillFacetsParallel runs fillFacets on contiguous parts of the facets in
// b, one per available processor, and returns the first bad index in file
// order, or -1.
func fillFacetsParallel(ns, verts []r3.Vec, hash []uint64, b []byte) int {
	k := len(ns)
	parts := min(runtime.GOMAXPROCS(0), max(1, k/facetSplit))
	part := func(f0, f1 int) int {
		var h []uint64
		if hash != nil {
			h = hash[3*f0 : 3*f1]
		}
		bad := fillFacets(ns[f0:f1], verts[3*f0:3*f1], h, b[f0*facetLen:f1*facetLen])
		if bad >= 0 {
			bad += 12 * f0
		}
		return bad
	}
	if v, ok := parallel.First(k, parts, func(f0, f1 int) (int, bool) {
		bad := part(f0, f1)
		return bad, bad >= 0
	}); ok {
		return v // the first in file order
	}
	return -1
}

// fillFacets decodes the facets in b into their normals ns (zero when not
// finite) and vertices verts (three per facet), and the vertices' weld
// hashes into hash when it is not nil. It returns -1, or the index (12 per
// facet) of the first vertex coordinate that is not finite.
func fillFacets(ns, verts []r3.Vec, hash []uint64, b []byte) int {
	for f := range ns {
		r := b[f*facetLen : f*facetLen+48]
		var v [12]float64
		for k := 0; k < 12; k++ {
			u := binary.LittleEndian.Uint32(r[4*k:])
			if k >= 3 && u&0x7f800000 == 0x7f800000 {
				return f*12 + k
			}
			v[k] = float64(math.Float32frombits(u))
		}
		nrm := r3.Vec{X: v[0], Y: v[1], Z: v[2]}
		if math.IsNaN(v[0]+v[1]+v[2]) || math.IsInf(v[0]+v[1]+v[2], 0) {
			nrm = r3.Vec{}
		}
		ns[f] = nrm
		vf := verts[3*f : 3*f+3]
		vf[0], vf[1], vf[2] = r3.Vec{X: v[3], Y: v[4], Z: v[5]}, r3.Vec{X: v[6], Y: v[7], Z: v[8]}, r3.Vec{X: v[9], Y: v[10], Z: v[11]}
		if hash != nil {
			for j := range 3 {
				hash[3*f+j] = hashVertex(vertexKey(vf[j]))
			}
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
