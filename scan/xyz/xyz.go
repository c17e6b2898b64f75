// Package xyz reads and writes plain-text point clouds: one point per line,
// columns separated by whitespace, tabs, commas or semicolons, with an
// optional header row naming the columns.
//
// Decode detects the separator from the first data line, maps columns by
// name when a header names x, y and z (so "id,x,y,z" works), takes a unit
// hint from labels such as "x_mm", "x [mm]" or "X(mm)", and uses normals
// only when columns are labelled nx, ny, nz (or normal_x, normal_y,
// normal_z). Lines may carry "#" comments, whole or trailing. With a
// semicolon separator a decimal comma is accepted ("1,5;2,5;3,0").
package xyz

import (
	"errors"
	"gapflux/internal/scanerr"

	"gonum.org/v1/gonum/spatial/r3"
)

// Cloud is a point cloud read from a text file, in file units.
type Cloud struct {
	// Points holds the x, y, z of each data line.
	Points []r3.Vec
	// Normals holds nx, ny, nz when the header labels them, else nil.
	Normals []r3.Vec
	// UnitHint is "mm", "m", "um" or "in" when the header labels carry a
	// unit, else "".
	UnitHint string
	// Delimiter is the detected separator: ' ' (any run of spaces and
	// tabs), '\t', ',' or ';'.
	Delimiter rune
	// HasHeader reports whether the file has a header row.
	HasHeader bool
	// CommaAmbiguous reports a header-less, comma-separated file whose
	// first line holds six integers and no decimal point: read as six
	// columns (x, y, z and three ignored), it could also be three numbers
	// written with decimal commas ("1,5,2,5,3,0"). The columns reading was
	// taken; the caller should warn.
	CommaAmbiguous bool
}

// Options controls Decode.
type Options struct {
	// Name names the input in error messages, e.g. "pan.xyz".
	Name string
	// SizeBytes is the size of the input when known (> 0), used to size
	// buffers. Zero or negative means unknown.
	SizeBytes int64
	// MaxPoints caps the number of points; 0 means DefaultMaxPoints.
	MaxPoints int
}

// DefaultMaxPoints is the point cap used when Options.MaxPoints is 0.
const DefaultMaxPoints = 50_000_000

// Errors wrapped in a *ParseError.
var (
	// ErrTooManyPoints means the file holds more points than
	// Options.MaxPoints allows (shared by the scan readers).
	ErrTooManyPoints = scanerr.ErrTooManyPoints
	// ErrNotFinite means a coordinate is NaN or infinite.
	ErrNotFinite = scanerr.ErrNotFinite
	// ErrFieldCount means a line has fewer columns than the x, y, z (and
	// normal) columns need.
	ErrFieldCount = errors.New("too few columns")
	// ErrSyntax means a field that should hold a number does not.
	ErrSyntax = errors.New("not a number")
	// ErrNoColumns means a header row names no x, y and z columns.
	ErrNoColumns = errors.New("header does not name x, y and z columns")
	// ErrLineTooLong means a line is longer than MaxLineBytes.
	ErrLineTooLong = errors.New("line too long")
)

// MaxLineBytes is the longest line Decode accepts.
const MaxLineBytes = 1 << 20

// ParseError locates a decoding error in the input: the name, the line
// (text) or byte offset (binary), and the error. It is shared by the scan
// readers.
type ParseError = scanerr.ParseError
