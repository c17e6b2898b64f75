// Package scanerr holds the error values the scan readers (scan/stl,
// scan/ply, scan/xyz) share, so that callers can test for them once.
package scanerr

import (
	"errors"
	"strconv"
)

// Errors wrapped in a *ParseError by every reader.
var (
	// ErrTooManyPoints means the file holds more points (vertices) than
	// the reader's MaxPoints option allows.
	ErrTooManyPoints = errors.New("too many points")
	// ErrNotFinite means a coordinate is NaN or infinite.
	ErrNotFinite = errors.New("coordinate is not finite")
)

// ParseError locates a decoding error in the input.
type ParseError struct {
	Name   string // the input's name, e.g. "pan.stl"
	Line   int    // 1-based line for text input; 0 for binary data
	Column int    // 1-based byte column within Line; 0 if not known
	Offset int64  // byte offset from the start of the input; -1 if not known
	Err    error
}

// Error returns "name: line L, column C: err", or "name: byte B: err" for
// binary data.
func (e *ParseError) Error() string {
	s := e.Name
	if s == "" {
		s = "input"
	}
	switch {
	case e.Line > 0:
		s += ": line " + strconv.Itoa(e.Line)
		if e.Column > 0 {
			s += ", column " + strconv.Itoa(e.Column)
		}
	case e.Offset >= 0:
		s += ": byte " + strconv.FormatInt(e.Offset, 10)
	}
	return s + ": " + e.Err.Error()
}

// Unwrap returns the underlying error.
func (e *ParseError) Unwrap() error { return e.Err }
