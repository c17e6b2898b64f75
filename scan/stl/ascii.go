package stl

import (
	"gapflux/internal/decimal"

	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"

	"gonum.org/v1/gonum/spatial/r3"
)

// ascii decodes an ASCII STL file: one or more solid blocks.
func (d *decoder) ascii() (*Mesh, error) {
	l := newLexer(d.br, 1, 0)
	p := &asciiParser{d: d, l: l, m: &Mesh{}}
	if d.opt.Weld {
		p.m.Faces = [][3]int32{}
		d.weld = newMeshWelder(1 << 12)
	}
	if err := p.parse(); err != nil {
		return nil, err
	}
	return p.m, nil
}

type asciiParser struct {
	d *decoder
	l *lexer
	m *Mesh
}

// fail returns a *ParseError at the last token.
func (p *asciiParser) fail(err error) error {
	return &ParseError{Name: p.d.opt.Name, Line: p.l.tokLine, Column: p.l.column(),
		Offset: p.l.tokOff, Err: err}
}

// failEOF returns a *ParseError at the end of the input.
func (p *asciiParser) failEOF(what string) error {
	l := p.l
	if l.err != nil {
		return &ParseError{Name: p.d.opt.Name, Line: l.line, Offset: l.base + int64(l.pos), Err: l.err}
	}
	return &ParseError{Name: p.d.opt.Name, Line: l.line, Column: int(l.base+int64(l.pos)-l.lineOff) + 1,
		Offset: l.base + int64(l.pos), Err: fmt.Errorf("%w: expected %s", io.ErrUnexpectedEOF, what)}
}

// token returns the next token, failing at the end of the input.
func (p *asciiParser) token(what string) ([]byte, error) {
	t, err := p.l.next()
	if err != nil {
		if errors.Is(err, errTokenTooLong) {
			return nil, p.fail(err)
		}
		return nil, p.failEOF(what)
	}
	if t == nil {
		return nil, p.failEOF(what)
	}
	return t, nil
}

func is(t []byte, kw string) bool {
	return string(t) == kw || bytes.EqualFold(t, []byte(kw))
}

// keyword consumes the keyword kw.
func (p *asciiParser) keyword(kw string) error {
	t, err := p.l.next()
	switch {
	case err != nil && errors.Is(err, errTokenTooLong):
		return p.fail(err)
	case t == nil:
		return p.failEOF(strconv.Quote(kw))
	case !is(t, kw):
		return p.fail(FormatError(fmt.Sprintf("expected %q", kw)))
	}
	return nil
}

// vec reads three numbers.
func (p *asciiParser) vec(what string) (r3.Vec, error) {
	var v [3]float64
	for k := range v {
		t, err := p.token("a number")
		if err != nil {
			return r3.Vec{}, err
		}
		f, ok := decimal.ParseFloat(t, false)
		if !ok {
			return r3.Vec{}, p.fail(FormatError(what + " is not a number"))
		}
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return r3.Vec{}, p.fail(fmt.Errorf("%w: %s", ErrNotFinite, what))
		}
		v[k] = f
	}
	return r3.Vec{X: v[0], Y: v[1], Z: v[2]}, nil
}

func (p *asciiParser) parse() error {
	first := true
	for {
		t, err := p.l.next()
		if err != nil {
			return p.fail(err)
		}
		if t == nil {
			if first {
				return p.failEOF(`"solid"`)
			}
			return nil
		}
		if !is(t, "solid") {
			return p.fail(FormatError(`expected "solid"`))
		}
		name := p.l.restOfLine()
		if first {
			p.m.Header = string(name)
			first = false
		}
		if err := p.solid(); err != nil {
			return err
		}
	}
}

// solid parses facets up to and including "endsolid" and its name.
func (p *asciiParser) solid() error {
	for {
		t, err := p.token(`"facet" or "endsolid"`)
		if err != nil {
			return err
		}
		switch {
		case is(t, "endsolid"):
			p.l.restOfLine()
			return nil
		case is(t, "facet"):
			if err := p.facet(); err != nil {
				return err
			}
		default:
			return p.fail(FormatError(`expected "facet" or "endsolid"`))
		}
	}
}

// facet parses a facet after its "facet" keyword.
func (p *asciiParser) facet() error {
	line, col, off := p.l.tokLine, p.l.column(), p.l.tokOff
	if err := p.keyword("normal"); err != nil {
		return err
	}
	n, err := p.vec("normal")
	if err != nil {
		return err
	}
	if err := p.keyword("outer"); err != nil {
		return err
	}
	if err := p.keyword("loop"); err != nil {
		return err
	}
	if 3*len(p.m.Normals)+3 > min(p.d.opt.MaxPoints, math.MaxInt32) {
		return &ParseError{Name: p.d.opt.Name, Line: line, Column: col, Offset: off,
			Err: fmt.Errorf("%w: more than %d vertices", ErrTooManyPoints, p.d.opt.MaxPoints)}
	}
	var vs [3]r3.Vec
	k := 0
	for {
		t, err := p.token(`"vertex" or "endloop"`)
		if err != nil {
			return err
		}
		if is(t, "endloop") {
			break
		}
		if !is(t, "vertex") {
			return p.fail(FormatError(`expected "vertex" or "endloop"`))
		}
		if k == 3 {
			return &ParseError{Name: p.d.opt.Name, Line: line, Column: col, Offset: off,
				Err: fmt.Errorf("%w: more than 3", ErrFacetVertices)}
		}
		if vs[k], err = p.vec("vertex"); err != nil {
			return err
		}
		k++
	}
	if k != 3 {
		return &ParseError{Name: p.d.opt.Name, Line: line, Column: col, Offset: off,
			Err: fmt.Errorf("%w: found %d", ErrFacetVertices, k)}
	}
	if err := p.keyword("endfacet"); err != nil {
		return err
	}
	p.m.Normals = append(p.m.Normals, n)
	if w := p.d.weld; w != nil {
		vv := &p.m.Vertices
		p.m.Faces = append(p.m.Faces, [3]int32{weldVertex(w, vv, vs[0]), weldVertex(w, vv, vs[1]), weldVertex(w, vv, vs[2])})
	} else {
		p.m.Vertices = append(p.m.Vertices, vs[:]...)
	}
	return nil
}

// clip shortens a token for an error message.
