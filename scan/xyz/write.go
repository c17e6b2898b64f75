package xyz

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
)

// WriteOptions controls Write.
type WriteOptions struct {
	// Delimiter separates columns: ' ' (the default when 0), '\t', ',' or ';'.
	Delimiter rune
	// Header writes a header row naming the columns.
	Header bool
	// Unit, when not empty, is appended to the header labels, e.g. "x_mm".
	Unit string
	// Normals writes nx, ny, nz columns from c.Normals.
	Normals bool
	// Precision is the number of digits after the decimal point; 0 or
	// less writes the shortest form that reads back to the same float64.
	Precision int
}

// Write writes c as a text point cloud, one point per line.
func Write(w io.Writer, c *Cloud, opt WriteOptions) error {
	d := opt.Delimiter
	if d == 0 {
		d = ' '
	}
	switch d {
	case ' ', '\t', ',', ';':
	default:
		return fmt.Errorf("xyz: unsupported delimiter %q", d)
	}
	if opt.Normals && len(c.Normals) != len(c.Points) {
		return fmt.Errorf("xyz: %d normals for %d points", len(c.Normals), len(c.Points))
	}
	for _, r := range opt.Unit {
		if r == '#' || r == ' ' || r == '\t' || r == ',' || r == ';' || r == '\n' || r == '\r' {
			return fmt.Errorf("xyz: unit %q contains a separator", opt.Unit)
		}
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	b := make([]byte, 0, 64<<10)
	if opt.Header {
		labels := []string{"x", "y", "z"}
		if opt.Normals {
			labels = append(labels, "nx", "ny", "nz")
		}
		for i, l := range labels {
			if i > 0 {
				b = append(b, byte(d))
			}
			b = append(b, l...)
			if opt.Unit != "" && i < 3 {
				b = append(b, '_')
				b = append(b, opt.Unit...)
			}
		}
		b = append(b, '\n')
	}
	fmtc, prec := byte('g'), -1
	if opt.Precision > 0 {
		fmtc, prec = 'f', opt.Precision
	}
	for i, p := range c.Points {
		vals := [6]float64{p.X, p.Y, p.Z}
		n := 3
		if opt.Normals {
			q := c.Normals[i]
			vals[3], vals[4], vals[5] = q.X, q.Y, q.Z
			n = 6
		}
		for k, v := range vals[:n] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("xyz: point %d: value %v is not finite", i, v)
			}
			if k > 0 {
				b = append(b, byte(d))
			}
			b = strconv.AppendFloat(b, v, fmtc, prec, 64)
		}
		b = append(b, '\n')
		if len(b) > 60<<10 {
			if _, err := bw.Write(b); err != nil {
				return err
			}
			b = b[:0]
		}
	}
	if _, err := bw.Write(b); err != nil {
		return err
	}
	return bw.Flush()
}
