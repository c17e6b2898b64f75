// Package stl reads and writes STL triangle meshes, binary and ASCII.
//
// A binary file is an 80-byte header, a little-endian uint32 facet count
// and 50 bytes per facet (normal, three vertices, all float32, and a uint16
// attribute), 84 + 50·N bytes in all. An ASCII file is a sequence of
// "solid name ... endsolid name" blocks of "facet normal / outer loop /
// vertex ×3 / endloop / endfacet" records.
//
// Many binary files start their header with "solid". Decode therefore
// trusts the size (84 + 50·N) when it is known, and otherwise the content:
// a file is ASCII only when "solid" is followed on a later line by "facet"
// or "endsolid".
//
// STL carries no units; coordinates are returned in file units.
package stl

import (
	"errors"
	"gapflux/internal/scanerr"

	"gonum.org/v1/gonum/spatial/r3"
)

// Mesh is a triangle soup as stored in an STL file.
type Mesh struct {
	// Vertices holds three vertices per facet, in file units; or, when
	// the mesh was read with Options.Weld, each distinct vertex once.
	Vertices []r3.Vec
	// Faces indexes Vertices, three per facet, when the mesh was read
	// with Options.Weld; else nil.
	Faces [][3]int32
	// Normals holds one normal per facet as stored (it may be zero).
	Normals []r3.Vec
	// Header is the binary file's 80-byte header with trailing NULs
	// removed, or the name after "solid" in an ASCII file.
	Header string
	// Binary reports whether the mesh was read from (or is to be
	// written as) a binary file.
	Binary bool
}

// Facets returns the number of facets: len(m.Faces) for a welded mesh,
// else len(m.Vertices)/3.
func (m *Mesh) Facets() int {
	if m.Faces != nil {
		return len(m.Faces)
	}
	return len(m.Vertices) / 3
}

// Options controls Decode.
type Options struct {
	// Name names the input in error messages, e.g. "pan.stl".
	Name string
	// SizeBytes is the size of the input when known (> 0); it decides
	// between binary and ASCII and bounds allocations. Zero or negative
	// means unknown (a pipe or a decompressed stream).
	SizeBytes int64
	// MaxPoints caps the number of vertices (3 per facet, welded or not);
	// 0 means DefaultMaxPoints.
	MaxPoints int
	// Weld stores each distinct vertex once (exactly equal coordinates)
	// with Mesh.Faces indexing them, instead of three vertices per facet:
	// a mesh's vertex is shared by about six facets, so this holds about
	// 60 bytes per facet instead of 96, at the cost of a hash table.
	Weld bool
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
	// ErrSizeMismatch means a binary file's size disagrees with its
	// facet count.
	ErrSizeMismatch = errors.New("file size does not match facet count")
	// ErrFacetVertices means an ASCII facet does not have three vertices.
	ErrFacetVertices = errors.New("facet does not have 3 vertices")
)

// FormatError reports that the input is not valid STL.
type FormatError string

func (e FormatError) Error() string { return "stl: invalid format: " + string(e) }

// ParseError locates a decoding error in the input: the name, the line
// (text) or byte offset (binary), and the error. It is shared by the scan
// readers.
type ParseError = scanerr.ParseError
