package ply

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// WriteOptions controls Write.
type WriteOptions struct {
	// Format is the data encoding.
	Format Format
	// VertexType is the type of the vertex properties: "float" (the
	// default when empty) or "double".
	VertexType string
	// CRLF ends header lines (and ASCII data lines) with "\r\n".
	CRLF bool
	// Comments are written as comment lines; when nil, c.Comments are.
	Comments []string
}

// Write writes c as a PLY file: a vertex element with x, y, z (and nx, ny,
// nz when c.Normals is not nil) and, when c.Faces is not nil, a face
// element with a "uchar int vertex_indices" list per triangle. ASCII
// numbers are written in the shortest form that reads back to the same
// value of the vertex type.
func Write(w io.Writer, c *Cloud, opt WriteOptions) error {
	if c.Normals != nil && len(c.Normals) != len(c.Points) {
		return fmt.Errorf("ply: %d normals for %d points", len(c.Normals), len(c.Points))
	}
	var (
		bits  int
		order binary.AppendByteOrder
	)
	switch opt.VertexType {
	case "", "float", "float32":
		bits = 32
		opt.VertexType = "float"
	case "double", "float64":
		bits = 64
		opt.VertexType = "double"
	default:
		return fmt.Errorf("ply: unsupported vertex type %q", opt.VertexType)
	}
	switch opt.Format {
	case ASCII:
	case BinaryLittleEndian:
		order = binary.LittleEndian
	case BinaryBigEndian:
		order = binary.BigEndian
	default:
		return fmt.Errorf("ply: unknown format %d", int(opt.Format))
	}
	for i, f := range c.Faces {
		for _, k := range f {
			if k < 0 || int(k) >= len(c.Points) {
				return fmt.Errorf("ply: face %d: vertex index %d out of range [0, %d)", i, k, len(c.Points))
			}
		}
	}
	eol := "\n"
	if opt.CRLF {
		eol = "\r\n"
	}
	comments := opt.Comments
	if comments == nil {
		comments = c.Comments
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	var h strings.Builder
	h.WriteString("ply" + eol + "format " + opt.Format.String() + " 1.0" + eol)
	for _, s := range comments {
		h.WriteString("comment " + strings.Join(strings.Fields(s), " ") + eol)
	}
	fmt.Fprintf(&h, "element vertex %d%s", len(c.Points), eol)
	props := []string{"x", "y", "z"}
	if c.Normals != nil {
		props = append(props, "nx", "ny", "nz")
	}
	for _, p := range props {
		h.WriteString("property " + opt.VertexType + " " + p + eol)
	}
	if c.Faces != nil {
		fmt.Fprintf(&h, "element face %d%s", len(c.Faces), eol)
		h.WriteString("property list uchar int vertex_indices" + eol)
	}
	h.WriteString("end_header" + eol)
	if _, err := bw.WriteString(h.String()); err != nil {
		return err
	}

	b := make([]byte, 0, 256)
	for i, p := range c.Points {
		vals := [6]float64{p.X, p.Y, p.Z}
		n := 3
		if c.Normals != nil {
			q := c.Normals[i]
			vals[3], vals[4], vals[5] = q.X, q.Y, q.Z
			n = 6
		}
		for k, v := range vals[:n] {
			if math.IsNaN(v) || math.IsInf(v, 0) || (bits == 32 && math.IsInf(float64(float32(v)), 0)) {
				return fmt.Errorf("ply: vertex %d: value %v is not finite in %s", i, v, opt.VertexType)
			}
			switch {
			case order == nil:
				if k > 0 {
					b = append(b, ' ')
				}
				b = strconv.AppendFloat(b, v, 'g', -1, bits)
			case bits == 32:
				b = order.AppendUint32(b, math.Float32bits(float32(v)))
			default:
				b = order.AppendUint64(b, math.Float64bits(v))
			}
		}
		if order == nil {
			b = append(b, eol...)
		}
		if len(b) > 32<<10 {
			if _, err := bw.Write(b); err != nil {
				return err
			}
			b = b[:0]
		}
	}
	for _, f := range c.Faces {
		if order == nil {
			b = append(b, '3')
			for _, k := range f {
				b = append(b, ' ')
				b = strconv.AppendInt(b, int64(k), 10)
			}
			b = append(b, eol...)
		} else {
			b = append(b, 3)
			for _, k := range f {
				b = order.AppendUint32(b, uint32(k))
			}
		}
		if len(b) > 32<<10 {
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
