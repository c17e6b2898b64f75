package stl

import (
	"bytes"
	"errors"
	"io"
)

// maxToken is the longest token the lexer accepts.
const maxToken = 64 << 10

var errTokenTooLong = errors.New("token too long")

// lexer splits its input into whitespace-separated tokens and keeps track
// of lines and byte offsets.
type lexer struct {
	r        io.Reader
	buf      []byte
	pos, end int
	base     int64 // offset of buf[0] in the input
	eof      bool
	err      error // read error other than io.EOF
	line     int   // line of buf[pos]
	lineOff  int64 // offset of the start of line
	tokLine  int   // line of the last token
	tokOff   int64 // offset of the last token
	tokStart int
}

func newLexer(r io.Reader, line int, off int64) *lexer {
	return &lexer{r: r, buf: make([]byte, 2*maxToken), line: line, base: off, lineOff: off}
}

// fill reads more input after shifting buf[keep:end] to the front.
func (l *lexer) fill(keep int) {
	n := copy(l.buf, l.buf[keep:l.end])
	l.base += int64(keep)
	l.pos -= keep
	l.tokStart -= keep
	l.end = n
	for !l.eof && l.end < len(l.buf) {
		m, err := l.r.Read(l.buf[l.end:])
		l.end += m
		if err != nil {
			l.eof = true
			if err != io.EOF {
				l.err = err
			}
		}
		if m > 0 {
			break
		}
	}
}

func isSpace(c byte) bool {
	return c == ' ' || c == '\n' || c == '\r' || c == '\t' || c == '\v' || c == '\f'
}

// next returns the next token, or nil at the end of the input. The token
// is valid until the next call.
func (l *lexer) next() ([]byte, error) {
	for {
		for l.pos < l.end {
			c := l.buf[l.pos]
			if !isSpace(c) {
				break
			}
			l.pos++
			if c == '\n' {
				l.line++
				l.lineOff = l.base + int64(l.pos)
			}
		}
		if l.pos < l.end {
			break
		}
		if l.eof {
			return nil, l.err
		}
		l.fill(l.pos)
	}
	l.tokStart = l.pos
	l.tokLine = l.line
	l.tokOff = l.base + int64(l.pos)
	for {
		for l.pos < l.end && !isSpace(l.buf[l.pos]) {
			l.pos++
		}
		if l.pos < l.end || l.eof {
			break
		}
		if l.pos-l.tokStart >= maxToken {
			return nil, errTokenTooLong
		}
		l.fill(l.tokStart)
	}
	if l.pos-l.tokStart > maxToken {
		return nil, errTokenTooLong
	}
	return l.buf[l.tokStart:l.pos], nil
}

// restOfLine returns the rest of the current line, trimmed of white space
// and cut to maxToken bytes, and moves to the start of the next line.
func (l *lexer) restOfLine() []byte {
	var out []byte
	for {
		i := bytes.IndexByte(l.buf[l.pos:l.end], '\n')
		if i >= 0 {
			out = appendMax(out, l.buf[l.pos:l.pos+i])
			l.pos += i + 1
			l.line++
			l.lineOff = l.base + int64(l.pos)
			break
		}
		out = appendMax(out, l.buf[l.pos:l.end])
		l.pos = l.end
		if l.eof {
			break
		}
		l.fill(l.pos)
	}
	return bytes.TrimSpace(out)
}

// appendMax appends b to out, keeping at most maxToken bytes.
func appendMax(out, b []byte) []byte {
	if n := maxToken - len(out); len(b) > n {
		b = b[:n]
	}
	return append(out, b...)
}

// column returns the 1-based column of the last token.
func (l *lexer) column() int {
	// tokOff and lineOff refer to the same line unless the token started
	// the line after a multi-line gap; tokLine is the line that was
	// current when the token started, so lineOff is its start.
	return int(l.tokOff-l.lineOff) + 1
}
