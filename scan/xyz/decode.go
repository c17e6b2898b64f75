package xyz

import (
	"gapflux/internal/decimal"

	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"strings"

	"gonum.org/v1/gonum/spatial/r3"
)

type decoder struct {
	opt  Options
	br   *bufio.Reader
	line int   // number of the last line read
	off  int64 // offset of the start of the last line read
	next int64 // offset of the start of the next line
	long []byte

	delim byte // ' ' for runs of white space, ',' or ';'; 0 until known
	comma bool // ',' is a decimal separator
	col   [6]int
	nc    int // 3, or 6 with normals
	need  int // columns a data line must have
	pos   []int
	c     *Cloud
	est   int // expected number of points from the size, 0 if unknown
}

// Decode reads a text point cloud from r. Errors are *ParseError values
// carrying the line and, for a bad field, its column.
func Decode(r io.Reader, opt Options) (*Cloud, error) {
	if opt.MaxPoints <= 0 {
		opt.MaxPoints = DefaultMaxPoints
	}
	d := &decoder{opt: opt, br: bufio.NewReaderSize(r, 64<<10), c: &Cloud{Points: []r3.Vec{}}}
	var (
		header     []byte
		headerLine int
		headerOff  int64
		sawCount   bool
	)
	for {
		line, err := d.readLine()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, d.errAt(0, err)
		}
		if d.line == 1 && bytes.HasPrefix(line, []byte("\xef\xbb\xbf")) {
			line[0], line[1], line[2] = ' ', ' ', ' ' // byte order mark
		}
		if i := bytes.IndexByte(line, '#'); i >= 0 {
			line = line[:i]
		}
		if len(bytes.TrimLeft(line, " \t\r\v\f")) == 0 {
			continue
		}
		if d.delim == 0 {
			delim, comma := detect(line)
			if header == nil {
				f := split(line, delim, nil)
				n := numeric(line, f, comma)
				switch {
				case n >= 3:
					d.setColumns(delim, comma, [6]int{0, 1, 2, -1, -1, -1})
					d.c.CommaAmbiguous = delim == ',' && len(f) == 12 && !bytes.ContainsAny(line, ".eE")
				case n == 1 && len(f) == 2 && !sawCount && isCount(line[f[0]:f[1]]):
					sawCount = true // a PTS-style point count: not trusted, skipped
					continue
				case n == len(f)/2:
					return nil, d.errAt(len(bytes.TrimRight(line, " \t\r\v\f"))+1,
						fmt.Errorf("%w: %d numbers, need 3 (x, y, z of a point on every line)", ErrFieldCount, n))
				default:
					header = bytes.Clone(line)
					headerLine, headerOff = d.line, d.off
					continue
				}
			} else {
				col, unit, err := mapHeader(header, delim)
				if err != nil {
					// The header may use its own separator.
					hd, _ := detect(header)
					col, unit, err = mapHeader(header, hd)
				}
				if err != nil {
					return nil, &ParseError{Name: d.opt.Name, Line: headerLine, Offset: headerOff, Err: err}
				}
				d.c.HasHeader, d.c.UnitHint = true, unit
				d.setColumns(delim, comma, col)
			}
		}
		if err := d.point(line); err != nil {
			return nil, err
		}
	}
	if d.delim == 0 && header != nil {
		col, unit, err := mapHeader(header, firstDelim(header))
		if err != nil {
			return nil, &ParseError{Name: d.opt.Name, Line: headerLine, Offset: headerOff, Err: err}
		}
		d.c.HasHeader, d.c.UnitHint = true, unit
		d.setColumns(firstDelim(header), false, col)
	}
	if d.c.Delimiter == 0 {
		d.c.Delimiter = ' '
	}
	return d.c, nil
}

func firstDelim(line []byte) byte { d, _ := detect(line); return d }

// setColumns fixes the separator and the columns of x, y, z (and nx, ny, nz
// when col[3] >= 0).
func (d *decoder) setColumns(delim byte, comma bool, col [6]int) {
	d.delim, d.comma, d.col = delim, comma, col
	d.nc = 3
	if col[3] >= 0 {
		d.nc = 6
		d.c.Normals = []r3.Vec{}
	}
	d.need = 0
	for _, c := range col[:d.nc] {
		d.need = max(d.need, c+1)
	}
	d.pos = make([]int, 0, 2*d.need)
	switch {
	case delim != ' ':
		d.c.Delimiter = rune(delim)
	default:
		d.c.Delimiter = ' '
	}
}

// errAt returns a *ParseError at 1-based column col (0: none) of the last line.
func (d *decoder) errAt(col int, err error) *ParseError {
	pe := &ParseError{Name: d.opt.Name, Line: d.line, Column: col, Offset: d.off, Err: err}
	if col > 0 {
		pe.Offset += int64(col - 1)
	}
	return pe
}

// readLine returns the next line without its line end, valid until the
// next call, or io.EOF.
func (d *decoder) readLine() ([]byte, error) {
	b, err := d.br.ReadSlice('\n')
	if err == bufio.ErrBufferFull {
		d.long = append(d.long[:0], b...)
		for err == bufio.ErrBufferFull && len(d.long) <= MaxLineBytes {
			b, err = d.br.ReadSlice('\n')
			d.long = append(d.long, b...)
		}
		b = d.long
	}
	d.off = d.next
	d.next += int64(len(b))
	if len(b) > 0 {
		d.line++
	}
	if len(b) > MaxLineBytes+1 {
		return nil, ErrLineTooLong
	}
	if err != nil && (err != io.EOF || len(b) == 0) {
		return nil, err
	}
	if n := len(b); n > 0 && b[n-1] == '\n' {
		b = b[:n-1]
	}
	if n := len(b); n > 0 && b[n-1] == '\r' {
		b = b[:n-1]
	}
	return b, nil
}

func isSpace(c byte) bool { return c == ' ' || c == '\t' || c == '\r' || c == '\v' || c == '\f' }

// detect returns the separator of line and whether ',' is a decimal
// separator: ';' (with decimal commas allowed), white space (with decimal
// commas when the white-space fields read as "1,5"), or ','.
func detect(line []byte) (delim byte, comma bool) {
	if bytes.IndexByte(line, ';') >= 0 {
		return ';', true
	}
	if bytes.IndexByte(line, ',') < 0 {
		return ' ', false
	}
	if decimalCommas(line) {
		return ' ', true
	}
	return ',', false
}

// decimalCommas reports whether the first three white-space fields of
// line are numbers, at least one written with a decimal comma ("1,5").
func decimalCommas(line []byte) bool {
	f := split(line, ' ', nil)
	if len(f) < 6 || numeric(line, f[:6], true) < 3 {
		return false
	}
	seen := false
	for k := 0; k < 6; k += 2 {
		b := line[f[k]:f[k+1]]
		if b[len(b)-1] == ',' {
			return false
		}
		seen = seen || bytes.IndexByte(b, ',') >= 0
	}
	return seen
}

// split appends to pos the start and end of each field of line and
// returns it. Fields are separated by runs of white space when delim is
// ' ', else by delim, and trimmed of white space and double quotes.
func split(line []byte, delim byte, pos []int) []int {
	pos = pos[:0]
	if delim == ' ' {
		i := 0
		for {
			for i < len(line) && isSpace(line[i]) {
				i++
			}
			if i == len(line) {
				return pos
			}
			s := i
			for i < len(line) && !isSpace(line[i]) {
				i++
			}
			pos = append(pos, s, i)
		}
	}
	s := 0
	for {
		e := bytes.IndexByte(line[s:], delim)
		last := e < 0
		if last {
			e = len(line)
		} else {
			e += s
		}
		a, b := s, e
		for a < b && isSpace(line[a]) {
			a++
		}
		for b > a && isSpace(line[b-1]) {
			b--
		}
		if b-a >= 2 && line[a] == '"' && line[b-1] == '"' {
			a, b = a+1, b-1
		}
		pos = append(pos, a, b)
		if last {
			return pos
		}
		s = e + 1
	}
}

// numeric returns how many of the leading fields (at most 3) are numbers.
func numeric(line []byte, pos []int, comma bool) int {
	n := 0
	for k := 0; k+1 < len(pos) && n < 3; k += 2 {
		if _, ok := decimal.ParseFloat(line[pos[k]:pos[k+1]], comma); !ok {
			break
		}
		n++
	}
	return n
}

// isCount reports whether b is a non-negative decimal integer.
func isCount(b []byte) bool {
	for _, c := range b {
		if c < '0' || c > '9' {
			return false
		}
	}
	return len(b) > 0
}

// point parses a data line and appends its point.
func (d *decoder) point(line []byte) error {
	d.pos = split(line, d.delim, d.pos)
	if len(d.pos) < 2*d.need {
		end := len(bytes.TrimRight(line, " \t\r\v\f")) + 1
		return d.errAt(end, fmt.Errorf("%w: %d, need %d as the first line sets; fix or remove this line", ErrFieldCount, len(d.pos)/2, d.need))
	}
	if len(d.c.Points) >= d.opt.MaxPoints {
		return d.errAt(0, fmt.Errorf("%w: more than %d", ErrTooManyPoints, d.opt.MaxPoints))
	}
	var v [6]float64
	for k := 0; k < d.nc; k++ {
		a, b := d.pos[2*d.col[k]], d.pos[2*d.col[k]+1]
		f, ok := decimal.ParseFloat(line[a:b], d.comma)
		if !ok {
			return d.errAt(a+1, ErrSyntax)
		}
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return d.errAt(a+1, ErrNotFinite)
		}
		v[k] = f
	}
	if len(d.c.Points) == cap(d.c.Points) {
		d.grow(len(line))
	}
	d.c.Points = append(d.c.Points, r3.Vec{X: v[0], Y: v[1], Z: v[2]})
	if d.nc == 6 {
		d.c.Normals = append(d.c.Normals, r3.Vec{X: v[3], Y: v[4], Z: v[5]})
	}
	return nil
}

// grow enlarges the point (and normal) slices: to what the input size
// suggests for lines like this one (at most 1<<20 points at first), else
// by doubling, never far beyond the estimate.
func (d *decoder) grow(lineLen int) {
	n := len(d.c.Points)
	if n == 0 && d.opt.SizeBytes > 0 {
		d.est = int(min((d.opt.SizeBytes-d.off)/int64(lineLen+1)+16, int64(d.opt.MaxPoints)))
	}
	c := max(2*n, 4096)
	switch {
	case n == 0 && d.est > 0:
		c = min(d.est, 1<<20)
	case d.est > n:
		c = min(c, d.est+d.est/16)
	}
	d.c.Points = append(make([]r3.Vec, 0, c), d.c.Points...)
	if d.nc == 6 {
		d.c.Normals = append(make([]r3.Vec, 0, c), d.c.Normals...)
	}
}

// clip shortens a field for an error message.
// units maps unit labels to the unit hints.
var units = map[string]string{
	"mm": "mm", "millimeter": "mm", "millimetre": "mm", "millimeters": "mm", "millimetres": "mm",
	"m": "m", "meter": "m", "metre": "m", "meters": "m", "metres": "m",
	"um": "um", "µm": "um", "μm": "um", "micron": "um", "microns": "um", "micrometer": "um", "micrometre": "um",
	"in": "in", "inch": "in", "inches": "in",
}

// names maps normalised column names to the coordinate they hold
// (0..5 for x, y, z, nx, ny, nz).
var names = map[string]int{
	"x": 0, "y": 1, "z": 2,
	"nx": 3, "ny": 4, "nz": 5,
	"n_x": 3, "n_y": 4, "n_z": 5,
	"normal_x": 3, "normal_y": 4, "normal_z": 5,
	"normalx": 3, "normaly": 4, "normalz": 5,
	"normal x": 3, "normal y": 4, "normal z": 5,
}

// label splits a header label into its lower-case name and unit hint.
// Units are recognised in "x_mm", "x-mm", "x/mm", "x (mm)", "x[mm]"; an
// unknown unit yields "".
func label(s string) (name, unit string) {
	s = strings.ToLower(strings.Trim(strings.TrimSpace(s), `"'`))
	if i := strings.IndexAny(s, "(["); i > 0 {
		u := strings.TrimSpace(strings.TrimRight(s[i+1:], ")] "))
		return strings.TrimSpace(s[:i]), units[u]
	}
	if i := strings.LastIndexAny(s, "_-/ "); i > 0 {
		if u, ok := units[s[i+1:]]; ok {
			return strings.TrimSpace(s[:i]), u
		}
	}
	return s, ""
}

// mapHeader finds the columns of x, y, z (and nx, ny, nz, -1 when absent)
// in a header row, and the unit hint of x, y and z.
func mapHeader(header []byte, delim byte) (col [6]int, unit string, err error) {
	pos := split(header, delim, nil)
	var labels []string
	for k := 0; k < len(pos); k += 2 {
		f := string(header[pos[k]:pos[k+1]])
		// "x (mm)" split on white space: glue the unit to its name.
		if delim == ' ' && len(labels) > 0 && (f[0] == '(' || f[0] == '[') {
			labels[len(labels)-1] += f
			continue
		}
		labels = append(labels, f)
	}
	col = [6]int{-1, -1, -1, -1, -1, -1}
	for i, l := range labels {
		name, u := label(l)
		k, ok := names[name]
		if !ok || col[k] >= 0 {
			continue
		}
		col[k] = i
		if k < 3 && u != "" {
			if unit != "" && unit != u {
				return col, "", fmt.Errorf("x, y and z columns have different units: %s and %s", unit, u)
			}
			unit = u
		}
	}
	if col[0] < 0 || col[1] < 0 || col[2] < 0 {
		return col, "", fmt.Errorf("%w: name them x,y,z (or x_mm,y_mm,z_mm) in the first line", ErrNoColumns)
	}
	if col[3] < 0 || col[4] < 0 || col[5] < 0 {
		col[3], col[4], col[5] = -1, -1, -1
	}
	return col, unit, nil
}
