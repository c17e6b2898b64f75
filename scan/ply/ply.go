// Package ply reads and writes PLY polygon files (ASCII and binary, both
// byte orders).
//
// A PLY file is a text header ("ply", "format ...", then "element" and
// "property" lines, "end_header") followed by the elements' records in
// header order. Decode keeps the vertex element's x, y, z (any numeric
// type), its nx, ny, nz when all three are present, and the face element's
// vertex_indices (or vertex_index) lists, fan-triangulated; every other
// element and property is read and skipped.
package ply

import (
	"errors"
	"gapflux/internal/scanerr"
	"strconv"

	"gonum.org/v1/gonum/spatial/r3"
)

// Format is the encoding of a PLY file's data section.
type Format int

// The three PLY encodings.
const (
	ASCII Format = iota
	BinaryLittleEndian
	BinaryBigEndian
)

// String returns the format word used in the header, e.g. "binary_little_endian".
func (f Format) String() string {
	switch f {
	case ASCII:
		return "ascii"
	case BinaryLittleEndian:
		return "binary_little_endian"
	case BinaryBigEndian:
		return "binary_big_endian"
	}
	return "Format(" + strconv.Itoa(int(f)) + ")"
}

// Cloud is the geometry read from a PLY file, in file units.
type Cloud struct {
	// Points holds the vertex x, y, z.
	Points []r3.Vec
	// Normals holds the vertex nx, ny, nz when all three are present, else nil.
	Normals []r3.Vec
	// Faces holds the face element's polygons as triangles (polygons are
	// fan-triangulated from their first vertex); nil without a face element.
	Faces [][3]int32
	// Format is the file's encoding.
	Format Format
	// Comments holds the header's comment lines, without the keyword.
	Comments []string
}

// Options controls Decode.
type Options struct {
	// Name names the input in error messages, e.g. "pan.ply".
	Name string
	// SizeBytes is the size of the input when known (> 0); it bounds
	// allocations. Zero or negative means unknown.
	SizeBytes int64
	// MaxPoints caps the number of vertices; 0 means DefaultMaxPoints.
	// Triangles are capped at 4·MaxPoints.
	MaxPoints int
}

// DefaultMaxPoints is the vertex cap used when Options.MaxPoints is 0.
const DefaultMaxPoints = 50_000_000

// Errors wrapped in a *ParseError.
var (
	// ErrTooManyPoints means the file holds more points than
	// Options.MaxPoints allows (shared by the scan readers).
	ErrTooManyPoints = scanerr.ErrTooManyPoints
	// ErrNotFinite means a coordinate is NaN or infinite.
	ErrNotFinite = scanerr.ErrNotFinite
	// ErrIndexRange means a face refers to a vertex that does not exist.
	ErrIndexRange = errors.New("face vertex index out of range")
	// ErrCountMismatch means the element counts in the header do not
	// match the data: a binary file is too short for them or has bytes
	// left after the last element.
	ErrCountMismatch = errors.New("header element counts do not match the data")
)

// FormatError reports that the input is not valid PLY.
type FormatError string

func (e FormatError) Error() string { return "ply: invalid format: " + string(e) }

// UnsupportedError reports that the input is valid PLY using a feature
// this package does not handle (a format version other than 1.0).
type UnsupportedError string

func (e UnsupportedError) Error() string { return "ply: unsupported feature: " + string(e) }

// ParseError locates a decoding error in the input: the name, the line
// (text) or byte offset (binary), and the error. It is shared by the scan
// readers.
type ParseError = scanerr.ParseError
