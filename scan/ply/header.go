package ply

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// kind is a PLY scalar type.
type kind uint8

const (
	kInt8 kind = iota + 1
	kUint8
	kInt16
	kUint16
	kInt32
	kUint32
	kInt64
	kUint64
	kFloat32
	kFloat64
)

// kinds maps the header's type names, standard and alias, to kinds.
var kinds = map[string]kind{
	"char": kInt8, "int8": kInt8,
	"uchar": kUint8, "uint8": kUint8,
	"short": kInt16, "int16": kInt16,
	"ushort": kUint16, "uint16": kUint16,
	"int": kInt32, "int32": kInt32,
	"uint": kUint32, "uint32": kUint32,
	"int64": kInt64, "uint64": kUint64,
	"float": kFloat32, "float32": kFloat32,
	"double": kFloat64, "float64": kFloat64,
}

// size returns the size of k in bytes.
func (k kind) size() int {
	switch k {
	case kInt8, kUint8:
		return 1
	case kInt16, kUint16:
		return 2
	case kInt32, kUint32, kFloat32:
		return 4
	}
	return 8
}

func (k kind) isFloat() bool { return k == kFloat32 || k == kFloat64 }

// property is one property of an element.
type property struct {
	name      string
	list      bool
	countKind kind // list length type
	kind      kind // scalar type, or list item type
	line      int
}

// element is one element declaration and its properties.
type element struct {
	name  string
	count int64
	props []property
	line  int
}

// recordSize returns the binary size of a record, or -1 when the element
// has list properties, and the smallest size a record can have.
func (e *element) recordSize() (fixed, least int) {
	fixed = 0
	for _, p := range e.props {
		if p.list {
			least += p.countKind.size()
			fixed = -1
			continue
		}
		least += p.kind.size()
		if fixed >= 0 {
			fixed += p.kind.size()
		}
	}
	return fixed, least
}

// find returns the index of the property called name, or -1.
func (e *element) find(name string) int {
	for i, p := range e.props {
		if p.name == name {
			return i
		}
	}
	return -1
}

const (
	maxHeaderBytes = 1 << 20
	// MaxLineBytes is the longest ASCII data line Decode accepts.
	MaxLineBytes = 1 << 20
)

// lineReader reads lines ending in term from a bufio.Reader and counts
// lines and bytes.
type lineReader struct {
	br   *bufio.Reader
	term byte
	line int   // lines read so far
	off  int64 // bytes consumed so far
	long []byte
}

// readLine returns the next line without its terminator (and without a
// trailing '\r'), valid until the next read. At the end of the input it
// returns io.EOF, or the last unterminated line with a nil error.
func (lr *lineReader) readLine(max int) ([]byte, error) {
	b, err := lr.br.ReadSlice(lr.term)
	if err == bufio.ErrBufferFull {
		lr.long = append(lr.long[:0], b...)
		for err == bufio.ErrBufferFull {
			if len(lr.long) > max {
				lr.off += int64(len(lr.long))
				return nil, errLineTooLong
			}
			b, err = lr.br.ReadSlice(lr.term)
			lr.long = append(lr.long, b...)
		}
		b = lr.long
	}
	if len(b) > max+1 {
		lr.off += int64(len(b))
		return nil, errLineTooLong
	}
	if err != nil && (err != io.EOF || len(b) == 0) {
		return nil, err
	}
	lr.line++
	lr.off += int64(len(b))
	if n := len(b); n > 0 && b[n-1] == lr.term {
		b = b[:n-1]
	}
	if n := len(b); n > 0 && b[n-1] == '\r' {
		b = b[:n-1]
	}
	return b, nil
}

var errLineTooLong = errors.New("line too long")

// header is a parsed PLY header.
type header struct {
	format   Format
	elems    []element
	comments []string
}

// headerError returns a *ParseError at line.
func (d *decoder) headerError(line int, err error) *ParseError {
	return &ParseError{Name: d.opt.Name, Line: line, Offset: -1, Err: err}
}

// readHeader parses the header up to and including "end_header".
func (d *decoder) readHeader() (*header, error) {
	magic, err := d.lr.br.Peek(5)
	if len(magic) < 4 || string(magic[:3]) != "ply" {
		if err != nil && err != io.EOF && len(magic) < 4 {
			return nil, d.headerError(1, err)
		}
		return nil, d.headerError(1, FormatError(`not a PLY file: no "ply" magic`))
	}
	if magic[3] == '\r' && (len(magic) == 4 || magic[4] != '\n') {
		d.lr.term = '\r'
	}
	h := &header{format: -1}
	for {
		line, err := d.lr.readLine(64 << 10)
		n := d.lr.line
		if err == io.EOF {
			return nil, d.headerError(n+1, fmt.Errorf(`%w: header has no "end_header"`, io.ErrUnexpectedEOF))
		}
		if err != nil {
			return nil, d.headerError(n+1, err)
		}
		if d.lr.off > maxHeaderBytes {
			return nil, d.headerError(n, FormatError("header longer than 1 MiB"))
		}
		f := strings.Fields(string(line))
		if n == 1 {
			if len(f) != 1 || f[0] != "ply" {
				return nil, d.headerError(1, FormatError(`not a PLY file: no "ply" magic`))
			}
			continue
		}
		if len(f) == 0 {
			continue
		}
		done, err := h.addLine(f, line, n)
		if err != nil {
			return nil, d.headerError(n, err)
		}
		if done {
			return h, nil
		}
	}
}

// addLine adds header line n (fields f of the raw line) to h. It reports
// done at "end_header", or the line's fault.
func (h *header) addLine(f []string, line []byte, n int) (done bool, err error) {
	switch f[0] {
	case "comment":
		text := bytes.TrimSpace(bytes.TrimPrefix(bytes.TrimLeft(line, " \t"), []byte("comment")))
		h.comments = append(h.comments, string(text))
	case "obj_info":
	case "format":
		return false, h.setFormat(f)
	case "element":
		return false, h.addElement(f, n)
	case "property":
		return false, h.addProperty(f, n)
	case "end_header":
		if len(f) != 1 {
			return false, FormatError("text after end_header")
		}
		if h.format < 0 {
			return false, FormatError("no format line")
		}
		return true, nil
	default:
		return false, FormatError("unknown header keyword (want format, element, property, comment, obj_info or end_header)")
	}
	return false, nil
}

// setFormat reads a "format <encoding> 1.0" line.
func (h *header) setFormat(f []string) error {
	if h.format >= 0 {
		return FormatError("second format line")
	}
	if len(f) != 3 {
		return FormatError(`format line must be "format <encoding> 1.0"`)
	}
	switch f[1] {
	case "ascii":
		h.format = ASCII
	case "binary_little_endian":
		h.format = BinaryLittleEndian
	case "binary_big_endian":
		h.format = BinaryBigEndian
	default:
		return FormatError("unknown encoding (want ascii, binary_little_endian or binary_big_endian)")
	}
	if v, err := strconv.ParseFloat(f[2], 64); err != nil || v != 1 {
		return UnsupportedError("a version other than 1.0")
	}
	return nil
}

// addElement reads an "element <name> <count>" line (line n). The count
// is only a claim: readers never size anything by it.
func (h *header) addElement(f []string, n int) error {
	if h.format < 0 {
		return FormatError("element before the format line")
	}
	if len(f) != 3 {
		return FormatError(`element line must be "element <name> <count>"`)
	}
	c, err := strconv.ParseInt(f[2], 10, 64)
	if err != nil || c < 0 {
		return FormatError("element count is not a whole number >= 0")
	}
	h.elems = append(h.elems, element{name: f[1], count: c, line: n})
	return nil
}

// addProperty reads a "property <type> <name>" or "property list <count
// type> <item type> <name>" line (line n) into the last element.
func (h *header) addProperty(f []string, n int) error {
	if len(h.elems) == 0 {
		return FormatError("property before any element")
	}
	p := property{line: n}
	switch {
	case len(f) == 3 && f[1] != "list":
		p.name = f[2]
		if p.kind = kinds[f[1]]; p.kind == 0 {
			return FormatError("unknown property type")
		}
	case len(f) == 5 && f[1] == "list":
		p.name, p.list = f[4], true
		if p.countKind = kinds[f[2]]; p.countKind == 0 || p.countKind.isFloat() {
			return FormatError("list count type is not an integer type")
		}
		if p.kind = kinds[f[3]]; p.kind == 0 {
			return FormatError("unknown list item type")
		}
	default:
		return FormatError(`property line must be "property <type> <name>" or "property list <count type> <item type> <name>"`)
	}
	e := &h.elems[len(h.elems)-1]
	e.props = append(e.props, p)
	return nil
}

// clip shortens a string for an error message.
