package ply

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"runtime"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/internal/decimal"
	"gapflux/internal/grow"
	"gapflux/internal/hugemem"
	"gapflux/internal/parallel"
)

const (
	bufSize = 64 << 10
	// growCap is the initial capacity, in records, when the size of the
	// input is unknown.
	growCap = 1 << 14
)

// use says what Decode keeps from an element's records.
type use struct {
	vertex  bool
	coord   [6]int // property indices of x, y, z, nx, ny, nz; -1 if absent
	normals bool
	faces   bool
	list    int // property index of the face index list
}

type decoder struct {
	opt   Options
	lr    lineReader
	h     *header
	order binary.ByteOrder
	c     *Cloud
	// nverts is the number of vertices, or -1 until the vertex element
	// has been read.
	nverts int64
	maxTri int
}

// Decode reads a PLY file from r. Errors are *ParseError values: header
// errors carry the line; data errors name the element and record index and
// carry the line (ASCII) or the byte offset (binary). Header counts are
// checked against the data: data after the last element is an error, and
// in a binary file of known size the elements must fill the file exactly
// (records of fixed size) or at least fit it (records with lists), which
// is checked before anything is read; see ErrCountMismatch.
func Decode(r io.Reader, opt Options) (*Cloud, error) {
	if opt.MaxPoints <= 0 {
		opt.MaxPoints = DefaultMaxPoints
	}
	d := &decoder{opt: opt, nverts: -1, maxTri: math.MaxInt}
	if opt.MaxPoints <= math.MaxInt/4 {
		d.maxTri = 4 * opt.MaxPoints
	}
	d.lr = lineReader{br: bufio.NewReaderSize(r, bufSize), term: '\n'}
	h, err := d.readHeader()
	if err != nil {
		return nil, err
	}
	d.h = h
	d.c = &Cloud{Format: h.format, Comments: h.comments}
	switch h.format {
	case BinaryLittleEndian:
		d.order = binary.LittleEndian
	case BinaryBigEndian:
		d.order = binary.BigEndian
	}
	uses, err := d.plan()
	if err != nil {
		return nil, err
	}
	if h.format != ASCII {
		if err := d.checkBinarySize(); err != nil {
			return nil, err
		}
	}
	for _, u := range uses {
		if u.vertex {
			d.c.Points = []r3.Vec{}
			if u.normals {
				d.c.Normals = []r3.Vec{}
			}
		}
	}
	for i := range h.elems {
		e, u := &h.elems[i], &uses[i]
		if u.faces && d.c.Faces == nil {
			d.c.Faces = [][3]int32{}
		}
		if h.format == ASCII {
			err = d.asciiElement(e, u)
		} else {
			err = d.binaryElement(e, u)
		}
		if err != nil {
			return nil, err
		}
		if u.vertex {
			d.nverts = int64(len(d.c.Points))
		}
	}
	if h.format == ASCII {
		err = d.asciiTrailer()
	} else {
		err = d.binaryTrailer()
	}
	if err != nil {
		return nil, err
	}
	return d.c, d.checkLateFaces()
}

// satMul returns a·b for non-negative a and b, or math.MaxInt64 when it
// overflows.
func satMul(a, b int64) int64 {
	if b != 0 && a > math.MaxInt64/b {
		return math.MaxInt64
	}
	return a * b
}

// satAdd returns a+b for non-negative a and b, or math.MaxInt64 when it
// overflows.
func satAdd(a, b int64) int64 {
	if a > math.MaxInt64-b {
		return math.MaxInt64
	}
	return a + b
}

// checkBinarySize checks the header's element counts against the size of
// a binary input, when it is known, before any record is read: every
// element must fit in what is left of the file after the elements before
// it (a record is at least its fixed properties and list lengths), and when
// no element has lists the records must end exactly at the end of the
// file. A header count that is off by one record shows up here.
func (d *decoder) checkBinarySize() error {
	size := d.opt.SizeBytes
	if size <= 0 {
		return nil
	}
	end, exact := d.lr.off, true
	var last *element
	for i := range d.h.elems {
		e := &d.h.elems[i]
		fixed, least := e.recordSize()
		if len(e.props) == 0 || e.count == 0 {
			continue
		}
		last = e
		exact = exact && fixed > 0
		need := satMul(e.count, int64(least))
		next := satAdd(end, need)
		if next > size {
			what := "at least "
			if fixed > 0 {
				what = ""
			}
			return &ParseError{Name: d.opt.Name, Offset: size, Err: fmt.Errorf(
				"%w: element %s: %d records of %s%d bytes from byte %d need %s%d bytes, but the file ends at byte %d "+
					"(%w); the header's count for %q is too high or the file is cut short",
				ErrCountMismatch, e.name, e.count, what, least, end, what, need, size, io.ErrUnexpectedEOF, e.name)}
		}
		end = next
	}
	if exact && end < size {
		name, count := "header", int64(0)
		if last != nil {
			name, count = last.name, last.count
		}
		return &ParseError{Name: d.opt.Name, Offset: end, Err: fmt.Errorf(
			"%w: %d bytes follow the last element (%s, %d records), which ends at byte %d of %d; "+
				"a header count is too low or data was appended",
			ErrCountMismatch, size-end, name, count, end, size)}
	}
	return nil
}

// binaryTrailer checks that the last element ends the input: at
// opt.SizeBytes when the size is known, else at the end of the stream.
func (d *decoder) binaryTrailer() error {
	last := "header"
	var count int64
	for i := range d.h.elems {
		if e := &d.h.elems[i]; len(e.props) > 0 && e.count > 0 {
			last, count = e.name, e.count
		}
	}
	extra := int64(0)
	if d.opt.SizeBytes > 0 {
		extra = d.opt.SizeBytes - d.lr.off
	} else if b, _ := d.lr.br.Peek(1); len(b) > 0 {
		extra = -1 // unknown amount
	}
	if extra == 0 {
		return nil
	}
	amount := "bytes follow"
	if extra > 0 {
		amount = fmt.Sprintf("%d bytes follow", extra)
	}
	return &ParseError{Name: d.opt.Name, Offset: d.lr.off, Err: fmt.Errorf(
		"%w: %s the last element (%s, %d records), which ends at byte %d; a header count is too low or data was appended",
		ErrCountMismatch, amount, last, count, d.lr.off)}
}

// checkLateFaces checks face indices that were read before the vertex
// element.
func (d *decoder) checkLateFaces() error {
	for i, f := range d.c.Faces {
		for _, k := range f {
			if int64(k) >= d.nverts {
				return &ParseError{Name: d.opt.Name, Offset: -1,
					Err: fmt.Errorf("%w: triangle %d refers to vertex %d of %d", ErrIndexRange, i, k, d.nverts)}
			}
		}
	}
	return nil
}

// plan checks the header against what Decode needs and says what each
// element contributes.
func (d *decoder) plan() ([]use, error) {
	h := d.h
	uses := make([]use, len(h.elems))
	vi, fi := -1, -1
	for i := range h.elems {
		switch h.elems[i].name {
		case "vertex":
			if vi < 0 {
				vi = i
			}
		case "face":
			if fi < 0 {
				fi = i
			}
		}
	}
	if vi < 0 {
		return nil, d.headerError(d.lr.line, FormatError("no vertex element"))
	}
	e, u := &h.elems[vi], &uses[vi]
	u.vertex = true
	for k, name := range [6]string{"x", "y", "z", "nx", "ny", "nz"} {
		j := e.find(name)
		if j >= 0 && e.props[j].list {
			return nil, d.headerError(e.props[j].line, FormatError(fmt.Sprintf("vertex property %q is a list", name)))
		}
		if k < 3 && j < 0 {
			return nil, d.headerError(e.line, FormatError(fmt.Sprintf("vertex element has no %q property", name)))
		}
		u.coord[k] = j
	}
	u.normals = u.coord[3] >= 0 && u.coord[4] >= 0 && u.coord[5] >= 0
	if !u.normals {
		u.coord[3], u.coord[4], u.coord[5] = -1, -1, -1
	}
	if e.count > int64(d.opt.MaxPoints) {
		return nil, d.headerError(e.line, fmt.Errorf("%w: %d vertices, limit %d", ErrTooManyPoints, e.count, d.opt.MaxPoints))
	}
	if fi >= 0 {
		e := &h.elems[fi]
		k := e.find("vertex_indices")
		if k < 0 {
			k = e.find("vertex_index")
		}
		if k >= 0 {
			p := e.props[k]
			if !p.list {
				return nil, d.headerError(p.line, FormatError(fmt.Sprintf("face property %q is not a list", p.name)))
			}
			if p.kind.isFloat() {
				return nil, d.headerError(p.line, FormatError(fmt.Sprintf("face property %q has a floating-point item type", p.name)))
			}
			uses[fi].faces, uses[fi].list = true, k
		}
	}
	return uses, nil
}

// capFor returns the initial capacity for count records of at least least
// bytes each: count when the input is big enough to hold them, less when
// the size says it cannot be, and growCap when the size is unknown.
func (d *decoder) capFor(count int64, least int) int {
	c := count
	if d.opt.SizeBytes > 0 {
		c = min(c, (d.opt.SizeBytes-d.lr.off)/int64(max(least, 1))+1)
	} else {
		c = min(c, growCap)
	}
	return int(max(c, 0))
}

// fan adds the triangles of a polygon's next index to the face list.
type fan struct {
	n         int
	v0, vprev int32
}

// addIndex validates index v of a face and adds a triangle from the
// third index on.
func (d *decoder) addIndex(f *fan, v int64) error {
	if v < 0 || v > math.MaxInt32 || (d.nverts >= 0 && v >= d.nverts) {
		n := d.nverts
		if n < 0 {
			n = math.MaxInt32 + 1
		}
		return fmt.Errorf("%w: %d not in [0, %d)", ErrIndexRange, v, n)
	}
	switch f.n {
	case 0:
		f.v0 = int32(v)
	case 1:
	default:
		if len(d.c.Faces) >= d.maxTri {
			return fmt.Errorf("%w: more than %d triangles", ErrTooManyPoints, d.maxTri)
		}
		d.c.Faces = append(d.c.Faces, [3]int32{f.v0, f.vprev, int32(v)})
	}
	f.vprev = int32(v)
	f.n++
	return nil
}

// binaryError returns a *ParseError at byte offset off in record i of e.
// Running out of data names the declared count too.
func (d *decoder) binaryError(off int64, e *element, i int64, err error) *ParseError {
	if err == io.EOF || err == io.ErrUnexpectedEOF {
		return &ParseError{Name: d.opt.Name, Offset: off, Err: fmt.Errorf(
			"element %s %d of %d: %w (%w): the header's count for %q is too high or the file is cut short",
			e.name, i, e.count, io.ErrUnexpectedEOF, ErrCountMismatch, e.name)}
	}
	return &ParseError{Name: d.opt.Name, Offset: off, Err: fmt.Errorf("element %s %d: %w", e.name, i, err)}
}

// errPolygon means a face lists fewer than 3 vertices.
var errPolygon = fmt.Errorf("%w: a face needs at least 3 vertex indices", ErrCountMismatch)

// polygon checks that a face's index list has at least 3 entries: a
// shorter one is no polygon, and in a binary file it is the usual sign
// that an earlier header count was too high and the records are read out
// of step.
func polygon(n int64) error {
	if n < 3 {
		return fmt.Errorf("%w, this one has %d (an earlier element's count may be too high)", errPolygon, n)
	}
	return nil
}

// take returns the next n bytes (n <= bufSize), valid until the next read.
func (d *decoder) take(n int, e *element, i int64) ([]byte, error) {
	b, err := d.lr.br.Peek(n)
	if len(b) < n {
		d.lr.off += int64(len(b))
		return nil, d.binaryError(d.lr.off, e, i, err)
	}
	d.lr.br.Discard(n)
	d.lr.off += int64(n)
	return b, nil
}

// skip discards n bytes.
func (d *decoder) skip(n int64, e *element, i int64) error {
	for n > 0 {
		k := int(min(n, 1<<30))
		m, err := d.lr.br.Discard(k)
		d.lr.off += int64(m)
		n -= int64(m)
		if err != nil {
			return d.binaryError(d.lr.off, e, i, err)
		}
	}
	return nil
}

// scalar decodes a binary value of kind k.
func scalar(b []byte, k kind, o binary.ByteOrder) float64 {
	switch k {
	case kInt8:
		return float64(int8(b[0]))
	case kUint8:
		return float64(b[0])
	case kInt16:
		return float64(int16(o.Uint16(b)))
	case kUint16:
		return float64(o.Uint16(b))
	case kInt32:
		return float64(int32(o.Uint32(b)))
	case kUint32:
		return float64(o.Uint32(b))
	case kInt64:
		return float64(int64(o.Uint64(b)))
	case kUint64:
		return float64(o.Uint64(b))
	case kFloat32:
		return float64(math.Float32frombits(o.Uint32(b)))
	}
	return math.Float64frombits(o.Uint64(b))
}

// integer decodes a binary integer of kind k; ok is false for a uint64
// above math.MaxInt64.
func integer(b []byte, k kind, o binary.ByteOrder) (int64, bool) {
	switch k {
	case kInt8:
		return int64(int8(b[0])), true
	case kUint8:
		return int64(b[0]), true
	case kInt16:
		return int64(int16(o.Uint16(b))), true
	case kUint16:
		return int64(o.Uint16(b)), true
	case kInt32:
		return int64(int32(o.Uint32(b))), true
	case kUint32:
		return int64(o.Uint32(b)), true
	case kInt64:
		return int64(o.Uint64(b)), true
	}
	u := o.Uint64(b)
	return int64(u), u <= math.MaxInt64
}

func finite(f float64) bool { return !math.IsNaN(f) && !math.IsInf(f, 0) }

// binaryElement reads or skips the records of e in a binary file.
func (d *decoder) binaryElement(e *element, u *use) error {
	if len(e.props) == 0 || e.count == 0 {
		return nil
	}
	fixed, least := e.recordSize()
	switch {
	case u.vertex && fixed > 0 && fixed <= bufSize:
		return d.binaryVertices(e, u, fixed)
	case !u.vertex && !u.faces && fixed > 0:
		n := e.count * int64(fixed)
		if e.count > math.MaxInt64/int64(fixed) {
			n = math.MaxInt64
		}
		start := d.lr.off
		if err := d.skip(n, e, 0); err != nil {
			pe := err.(*ParseError)
			pe.Err = fmt.Errorf("element %s %d: %w", e.name, (d.lr.off-start)/int64(fixed), io.ErrUnexpectedEOF)
			return pe
		}
		return nil
	}
	return d.binaryRecords(e, u, least)
}

// binaryVertices reads a vertex element of fixed-size records.
func (d *decoder) binaryVertices(e *element, u *use, rec int) error {
	var off [6]int
	var kd [6]kind
	o := 0
	for j, p := range e.props {
		for k, c := range u.coord {
			if c == j {
				off[k], kd[k] = o, p.kind
			}
		}
		o += p.kind.size()
	}
	nc := 3
	if u.normals {
		nc = 6
	}
	c := d.capFor(e.count, rec)
	pts := hugemem.Make[r3.Vec](0, c)
	var nrm []r3.Vec
	if u.normals {
		nrm = hugemem.Make[r3.Vec](0, c)
	}
	same := kd[0]
	for j := 1; j < nc; j++ {
		if kd[j] != same {
			same = 0
		}
	}
	big := d.order == binary.BigEndian
	if same == kFloat32 || same == kFloat64 {
		pts, nrm, err := d.floatVertices(e, rec, off[:nc], same == kFloat32, big, pts, nrm)
		if err != nil {
			return err
		}
		d.c.Points, d.c.Normals = pts, nrm
		return nil
	}
	per := int64(bufSize / rec)
	for i := int64(0); i < e.count; {
		k := min(e.count-i, per)
		want := int(k) * rec
		b, err := d.lr.br.Peek(want)
		if len(b) < want {
			d.lr.off += int64(len(b))
			return d.binaryError(d.lr.off, e, i+int64(len(b)/rec), err)
		}
		pts = grow.Room(pts, int(k), e.count)
		if u.normals {
			nrm = grow.Room(nrm, int(k), e.count)
		}
		var bad int // 1 + index in b of the first non-finite value
		var v [6]float64
		for r := 0; r < int(k) && bad == 0; r++ {
			rb := b[r*rec : (r+1)*rec]
			for j := 0; j < nc; j++ {
				if v[j] = scalar(rb[off[j]:], kd[j], d.order); !finite(v[j]) {
					bad = r*rec + off[j] + 1
				}
			}
			pts = append(pts, r3.Vec{X: v[0], Y: v[1], Z: v[2]})
			if u.normals {
				nrm = append(nrm, r3.Vec{X: v[3], Y: v[4], Z: v[5]})
			}
		}
		if bad > 0 {
			return d.binaryError(d.lr.off+int64(bad-1), e, i+int64((bad-1)/rec), ErrNotFinite)
		}
		d.lr.br.Discard(want)
		d.lr.off += int64(want)
		i += k
	}
	d.c.Points, d.c.Normals = pts, nrm
	return nil
}

// floatChunk is the most bytes of vertex records floatVertices decodes at
// once; floatSplit the fewest records it shares between goroutines.
const (
	floatChunk = 1 << 20
	floatSplit = 4096
)

// floatVertices reads the count fixed-size records of vertex element e
// whose coordinates (at byte offsets off, 3 or 6 of them) are all float32
// (f32) or all float64, appending them to pts (and nrm). It reads up to
// floatChunk bytes at a time and decodes each chunk's records in
// contiguous parts, one per available processor, into their places in the
// slices: the result does not depend on the split.
func (d *decoder) floatVertices(e *element, rec int, off []int, f32, big bool, pts, nrm []r3.Vec) (_, _ []r3.Vec, err error) {
	per := int64(max(1, floatChunk/rec))
	buf := make([]byte, min(per, e.count)*int64(rec))
	parts := max(1, runtime.GOMAXPROCS(0))
	for i := int64(0); i < e.count; {
		k := min(e.count-i, per)
		want := int(k) * rec
		b := buf[:want]
		if got, err := io.ReadFull(d.lr.br, b); err != nil {
			d.lr.off += int64(got)
			return nil, nil, d.binaryError(d.lr.off, e, i+int64(got/rec), err)
		}
		n0 := len(pts)
		pts = grow.Room(pts, int(k), e.count)[:n0+int(k)]
		var dn []r3.Vec
		if nrm != nil {
			nrm = grow.Room(nrm, int(k), e.count)[:n0+int(k)]
			dn = nrm[n0:]
		}
		bad := decodeFloatRecords(pts[n0:], dn, b, rec, off, f32, big, parts)
		if bad > 0 {
			return nil, nil, d.binaryError(d.lr.off+int64(bad-1), e, i+int64((bad-1)/rec), ErrNotFinite)
		}
		d.lr.off += int64(want)
		i += k
	}
	return pts, nrm, nil
}

// decodeFloatRecords decodes the records in b into pts (and nrm when not
// nil), split into up to parts contiguous runs decoded at once. It returns
// 1 + the index in b of the first non-finite value, or 0.
func decodeFloatRecords(pts, nrm []r3.Vec, b []byte, rec int, off []int, f32, big bool, parts int) int {
	n := len(b) / rec
	parts = min(parts, max(1, n/floatSplit))
	one := func(r0, r1 int) int {
		var dn []r3.Vec
		if nrm != nil {
			dn = nrm[r0:r1]
		}
		bb := b[r0*rec : r1*rec]
		var bad int
		if f32 {
			bad = fill32(pts[r0:r1], dn, bb, rec, off, big)
		} else {
			bad = fill64(pts[r0:r1], dn, bb, rec, off, big)
		}
		if bad > 0 {
			bad += r0 * rec
		}
		return bad
	}
	if v, ok := parallel.First(n, parts, func(r0, r1 int) (int, bool) {
		bad := one(r0, r1)
		return bad, bad > 0
	}); ok {
		return v // the first in file order
	}
	return 0
}

// fill32 decodes the fixed-size records in b, whose coordinates are all
// float32 at the given offsets, into pts[r] (and nrm[r] when nrm is not
// nil, off then has 6 entries). It returns 1 + the index in b of the
// first non-finite value, or 0.
func fill32(pts, nrm []r3.Vec, b []byte, rec int, off []int, big bool) int {
	if !big {
		return fill32LE(pts, nrm, b, rec, off)
	}
	var v [6]float64
	for r := range pts {
		rb := b[r*rec : (r+1)*rec]
		for j, o := range off {
			var u uint32
			if big {
				u = binary.BigEndian.Uint32(rb[o:])
			} else {
				u = binary.LittleEndian.Uint32(rb[o:])
			}
			if u&0x7f800000 == 0x7f800000 {
				return r*rec + o + 1
			}
			v[j] = float64(math.Float32frombits(u))
		}
		pts[r] = r3.Vec{X: v[0], Y: v[1], Z: v[2]}
		if nrm != nil {
			nrm[r] = r3.Vec{X: v[3], Y: v[4], Z: v[5]}
		}
	}
	return 0
}

// fill32LE is fill32 for little-endian records (the common case: x86 and
// ARM scanners write binary_little_endian), with the offsets held in
// locals and the six-value case unrolled.
func fill32LE(pts, nrm []r3.Vec, b []byte, rec int, off []int) int {
	const exp = 0x7f800000
	ox, oy, oz := off[0], off[1], off[2]
	if nrm == nil {
		for r := range pts {
			rb := b[r*rec : (r+1)*rec]
			x, y, z := uint32At(rb, ox), uint32At(rb, oy), uint32At(rb, oz)
			if x&exp == exp || y&exp == exp || z&exp == exp {
				return r*rec + firstNonFinite32(rb, off) + 1
			}
			pts[r] = r3.Vec{X: widen32(x), Y: widen32(y), Z: widen32(z)}
		}
		return 0
	}
	onx, ony, onz := off[3], off[4], off[5]
	nrm = nrm[:len(pts)]
	for r := range pts {
		rb := b[r*rec : (r+1)*rec]
		x, y, z := uint32At(rb, ox), uint32At(rb, oy), uint32At(rb, oz)
		nx, ny, nz := uint32At(rb, onx), uint32At(rb, ony), uint32At(rb, onz)
		if x&exp == exp || y&exp == exp || z&exp == exp || nx&exp == exp || ny&exp == exp || nz&exp == exp {
			return r*rec + firstNonFinite32(rb, off) + 1
		}
		pts[r] = r3.Vec{X: widen32(x), Y: widen32(y), Z: widen32(z)}
		nrm[r] = r3.Vec{X: widen32(nx), Y: widen32(ny), Z: widen32(nz)}
	}
	return 0
}

// uint32At returns the little-endian uint32 at b[o:].
func uint32At(b []byte, o int) uint32 { return binary.LittleEndian.Uint32(b[o:]) }

// widen32 widens the float32 with bits u.
func widen32(u uint32) float64 { return float64(math.Float32frombits(u)) }

// firstNonFinite32 returns the offset in the little-endian record rb of
// its first non-finite float32 coordinate, in off's order (fill32's), or
// -1 when there is none.
func firstNonFinite32(rb []byte, off []int) int {
	for _, o := range off {
		if uint32At(rb, o)&0x7f800000 == 0x7f800000 {
			return o
		}
	}
	return -1
}

// fill64 is fill32 for float64 coordinates.
func fill64(pts, nrm []r3.Vec, b []byte, rec int, off []int, big bool) int {
	var v [6]float64
	for r := range pts {
		rb := b[r*rec : (r+1)*rec]
		for j, o := range off {
			var u uint64
			if big {
				u = binary.BigEndian.Uint64(rb[o:])
			} else {
				u = binary.LittleEndian.Uint64(rb[o:])
			}
			if u&0x7ff0000000000000 == 0x7ff0000000000000 {
				return r*rec + o + 1
			}
			v[j] = math.Float64frombits(u)
		}
		pts[r] = r3.Vec{X: v[0], Y: v[1], Z: v[2]}
		if nrm != nil {
			nrm[r] = r3.Vec{X: v[3], Y: v[4], Z: v[5]}
		}
	}
	return 0
}

// binaryRecords reads the records of e one property at a time: an element
// with list properties, a face element, or a vertex element with very
// large records.
func (d *decoder) binaryRecords(e *element, u *use, least int) error {
	if u.vertex {
		c := d.capFor(e.count, least)
		d.c.Points = make([]r3.Vec, 0, c)
		if u.normals {
			d.c.Normals = make([]r3.Vec, 0, c)
		}
	}
	if u.faces && len(d.c.Faces) == 0 {
		d.c.Faces = make([][3]int32, 0, d.capFor(e.count, least))
	}
	if u.faces && len(e.props) == 1 {
		return d.binaryFaces(e, u)
	}
	for i := int64(0); i < e.count; i++ {
		if err := d.binaryRecord(e, u, i); err != nil {
			return err
		}
	}
	return nil
}

// binaryFaces reads a face element whose only property is the index
// list, straight from the read buffer. Records that do not fit in the
// buffer, or are cut short, go through binaryRecord.
func (d *decoder) binaryFaces(e *element, u *use) error {
	p := e.props[0]
	cs, is := p.countKind.size(), p.kind.size()
	for i := int64(0); i < e.count; {
		b, _ := d.lr.br.Peek(bufSize)
		pos := 0
		for i < e.count && pos+cs <= len(b) {
			n, ok := integer(b[pos:], p.countKind, d.order)
			if !ok || n < 0 || n > int64(len(b)-pos-cs)/int64(is) {
				break // let binaryRecord report it or read it in pieces
			}
			at := pos + cs
			if err := polygon(n); err != nil {
				return d.binaryError(d.lr.off+int64(pos), e, i, err)
			}
			var f fan
			for q := 0; q < int(n); q++ {
				x, ok := integer(b[at+q*is:], p.kind, d.order)
				if !ok {
					x = math.MaxInt64
				}
				if err := d.addIndex(&f, x); err != nil {
					return d.binaryError(d.lr.off+int64(at+q*is), e, i, err)
				}
			}
			pos = at + int(n)*is
			i++
		}
		d.lr.br.Discard(pos)
		d.lr.off += int64(pos)
		if pos == 0 && i < e.count {
			if err := d.binaryRecord(e, u, i); err != nil {
				return err
			}
			i++
		}
	}
	return nil
}

// binaryRecord reads record i of e one property at a time.
func (d *decoder) binaryRecord(e *element, u *use, i int64) error {
	var v [6]float64
	for j, p := range e.props {
		start := d.lr.off
		if !p.list {
			b, err := d.take(p.kind.size(), e, i)
			if err != nil {
				return err
			}
			if u.vertex {
				for k, c := range u.coord {
					if c == j {
						if v[k] = scalar(b, p.kind, d.order); !finite(v[k]) {
							return d.binaryError(start, e, i, ErrNotFinite)
						}
					}
				}
			}
			continue
		}
		b, err := d.take(p.countKind.size(), e, i)
		if err != nil {
			return err
		}
		n, ok := integer(b, p.countKind, d.order)
		if !ok || n < 0 {
			return d.binaryError(start, e, i, fmt.Errorf("list length %d of %q is negative", n, p.name))
		}
		size := int64(p.kind.size())
		if !(u.faces && j == u.list) {
			if n > math.MaxInt64/size {
				n = math.MaxInt64 / size
			}
			if err := d.skip(n*size, e, i); err != nil {
				return err
			}
			continue
		}
		if err := polygon(n); err != nil {
			return d.binaryError(start, e, i, err)
		}
		var f fan
		for n > 0 {
			// Read the list in pieces that fit the buffer.
			k := min(n, bufSize/size)
			at := d.lr.off
			b, err := d.take(int(k*size), e, i)
			if err != nil {
				return err
			}
			for q := 0; q < int(k); q++ {
				x, ok := integer(b[q*int(size):], p.kind, d.order)
				if !ok {
					x = math.MaxInt64
				}
				if err := d.addIndex(&f, x); err != nil {
					return d.binaryError(at+int64(q)*size, e, i, err)
				}
			}
			n -= k
		}
	}
	if u.vertex {
		d.c.Points = append(d.c.Points, r3.Vec{X: v[0], Y: v[1], Z: v[2]})
		if u.normals {
			d.c.Normals = append(d.c.Normals, r3.Vec{X: v[3], Y: v[4], Z: v[5]})
		}
	}
	return nil
}

// asciiError returns a *ParseError at column col (1-based, 0 if unknown)
// of the line that starts at byte off.
func (d *decoder) asciiError(line int, off int64, col int, e *element, i int64, err error) *ParseError {
	pe := &ParseError{Name: d.opt.Name, Line: line, Column: col, Offset: off, Err: fmt.Errorf("element %s %d: %w", e.name, i, err)}
	if col > 0 {
		pe.Offset += int64(col - 1)
	}
	return pe
}

// dataLine returns the next non-blank ASCII data line, its number and the
// offset of its start.
func (d *decoder) dataLine() ([]byte, int, int64, error) {
	for {
		start := d.lr.off
		b, err := d.lr.readLine(MaxLineBytes)
		if err != nil {
			return nil, d.lr.line + 1, start, err
		}
		if len(bytes.TrimLeft(b, " \t\r\v\f")) > 0 {
			return b, d.lr.line, start, nil
		}
	}
}

func isSpace(c byte) bool { return c == ' ' || c == '\t' || c == '\r' || c == '\v' || c == '\f' }

// field returns the token of line that starts at or after pos, its start,
// and the position after it; tok is nil at the end of the line.
func field(line []byte, pos int) (tok []byte, start, next int) {
	for pos < len(line) && isSpace(line[pos]) {
		pos++
	}
	start = pos
	for pos < len(line) && !isSpace(line[pos]) {
		pos++
	}
	if start == pos {
		return nil, start, pos
	}
	return line[start:pos], start, pos
}

// asciiElement reads or skips the records of e in an ASCII file, one
// non-blank line per record.
func (d *decoder) asciiElement(e *element, u *use) error {
	if len(e.props) == 0 || e.count == 0 {
		return nil
	}
	d.reserveASCII(e, u)
	slot := coordSlots(u)
	for i := int64(0); i < e.count; i++ {
		line, ln, lo, err := d.dataLine()
		if err != nil {
			if err == io.EOF {
				err = io.ErrUnexpectedEOF
			}
			return d.asciiError(ln, lo, 0, e, i, err)
		}
		v, col, err := d.asciiRecord(line, e, u, &slot)
		if err != nil {
			return d.asciiError(ln, lo, col, e, i, err)
		}
		if u.vertex {
			d.c.Points = append(d.c.Points, r3.Vec{X: v[0], Y: v[1], Z: v[2]})
			if u.normals {
				d.c.Normals = append(d.c.Normals, r3.Vec{X: v[3], Y: v[4], Z: v[5]})
			}
		}
	}
	return nil
}

// reserveASCII allocates the points, normals and faces an ASCII element
// may hold, bounded by what the rest of the input can hold (capFor), never
// by the header's count alone.
func (d *decoder) reserveASCII(e *element, u *use) {
	_, least := e.recordSize()
	if u.vertex {
		c := d.capFor(e.count, 2*len(e.props))
		d.c.Points = make([]r3.Vec, 0, c)
		if u.normals {
			d.c.Normals = make([]r3.Vec, 0, c)
		}
	}
	if u.faces && len(d.c.Faces) == 0 {
		d.c.Faces = make([][3]int32, 0, d.capFor(e.count, 2*least))
	}
}

// coordSlots maps each of the first 16 properties to the coordinate it
// holds (index into u.coord), or -1.
func coordSlots(u *use) [16]int8 {
	var slot [16]int8
	for j := range slot {
		slot[j] = -1
	}
	for k, c := range u.coord {
		if c >= 0 && c < len(slot) {
			slot[c] = int8(k)
		}
	}
	return slot
}

// coordOf returns the coordinate property j holds (index into u.coord),
// or -1.
func coordOf(u *use, slot *[16]int8, j int) int {
	if j < len(slot) {
		return int(slot[j])
	}
	k := -1
	for kk, c := range u.coord {
		if c == j {
			k = kk
		}
	}
	return k
}

// asciiRecord parses one ASCII record: the coordinates it holds (x, y, z,
// nx, ny, nz) and, when it is the face list, its polygon into the faces.
// On a fault it returns the 1-based column of the offending token (the
// line's length + 1 when the line ends early).
func (d *decoder) asciiRecord(line []byte, e *element, u *use, slot *[16]int8) (v [6]float64, col int, err error) {
	pos := 0
	for j, p := range e.props {
		tok, start, next := field(line, pos)
		pos = next
		if tok == nil {
			return v, len(line) + 1, fmt.Errorf("line ends before property %q", p.name)
		}
		if p.list {
			if pos, col, err = d.asciiList(line, pos, tok, start, p, u.faces && j == u.list); err != nil {
				return v, col, err
			}
			continue
		}
		if !u.vertex {
			continue
		}
		k := coordOf(u, slot, j)
		if k < 0 {
			continue
		}
		f, ok := decimal.ParseFloat(tok, false)
		if !ok {
			return v, start + 1, fmt.Errorf("property %q: not a number", p.name)
		}
		if !finite(f) {
			return v, start + 1, fmt.Errorf("property %q: %w", p.name, ErrNotFinite)
		}
		v[k] = f
	}
	if tok, start, _ := field(line, pos); tok != nil {
		return v, start + 1, fmt.Errorf("unexpected value after the last property")
	}
	return v, 0, nil
}

// asciiList reads a list property whose length token tok starts at start;
// pos is just past it. A face list's indices become faces; other lists are
// skipped. It returns the position after the list.
func (d *decoder) asciiList(line []byte, pos int, tok []byte, start int, p property, isFace bool) (next, col int, err error) {
	n, ok := decimal.ParseInt(tok)
	if !ok || n < 0 {
		return pos, start + 1, fmt.Errorf("list %q: length is not a whole number >= 0", p.name)
	}
	if isFace {
		if err := polygon(n); err != nil {
			return pos, start + 1, err
		}
	}
	var f fan
	for ; n > 0; n-- {
		tok, start, pos = field(line, pos)
		if tok == nil {
			return pos, len(line) + 1, fmt.Errorf("line ends inside list %q", p.name)
		}
		if !isFace {
			continue
		}
		x, ok := decimal.ParseInt(tok)
		if !ok {
			return pos, start + 1, fmt.Errorf("list %q: item is not an integer", p.name)
		}
		if err := d.addIndex(&f, x); err != nil {
			return pos, start + 1, err
		}
	}
	return pos, 0, nil
}

// asciiTrailer checks that nothing but blank lines follows the last element.
func (d *decoder) asciiTrailer() error {
	_, ln, lo, err := d.dataLine()
	switch {
	case err == io.EOF:
		return nil
	case err != nil:
		return &ParseError{Name: d.opt.Name, Line: ln, Offset: lo, Err: err}
	}
	return &ParseError{Name: d.opt.Name, Line: ln, Column: 1, Offset: lo,
		Err: FormatError("data after the last element")}
}
