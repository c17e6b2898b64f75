package stl

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/spatial/r3"
)

// checkMesh validates the slice lengths of m and returns its facet count.
func checkMesh(m *Mesh) (int, error) {
	if len(m.Vertices)%3 != 0 {
		return 0, fmt.Errorf("stl: %d vertices is not a multiple of 3", len(m.Vertices))
	}
	n := len(m.Vertices) / 3
	if m.Normals != nil && len(m.Normals) != n {
		return 0, fmt.Errorf("stl: %d normals for %d facets", len(m.Normals), n)
	}
	return n, nil
}

func normal(m *Mesh, i int) r3.Vec {
	if m.Normals == nil {
		return r3.Vec{}
	}
	return m.Normals[i]
}

// WriteBinary writes m as a binary STL file. m.Header fills the 80-byte
// header (truncated, padded with NULs); coordinates are rounded to float32.
// Normals may be nil, in which case zero normals are written. It returns an
// error for a non-finite value or one that overflows float32.
func WriteBinary(w io.Writer, m *Mesh) error {
	n, err := checkMesh(m)
	if err != nil {
		return err
	}
	if uint64(n) > math.MaxUint32 {
		return errors.New("stl: too many facets for a binary file")
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	var hdr [84]byte
	copy(hdr[:80], m.Header)
	binary.LittleEndian.PutUint32(hdr[80:], uint32(n))
	if _, err := bw.Write(hdr[:]); err != nil {
		return err
	}
	var rec [50]byte
	for i := 0; i < n; i++ {
		vs := [4]r3.Vec{normal(m, i), m.Vertices[3*i], m.Vertices[3*i+1], m.Vertices[3*i+2]}
		for j, v := range vs {
			for k, c := range [3]float64{v.X, v.Y, v.Z} {
				f := float32(c)
				if math.IsNaN(c) || math.IsInf(float64(f), 0) {
					return fmt.Errorf("stl: facet %d: value %v does not fit float32", i, c)
				}
				binary.LittleEndian.PutUint32(rec[12*j+4*k:], math.Float32bits(f))
			}
		}
		if _, err := bw.Write(rec[:]); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// WriteASCII writes m as an ASCII STL file with a single solid named by
// m.Header (line breaks replaced by spaces). Numbers are written in the
// shortest form that reads back to the same float64.
func WriteASCII(w io.Writer, m *Mesh) error {
	n, err := checkMesh(m)
	if err != nil {
		return err
	}
	name := strings.Join(strings.Fields(m.Header), " ")
	bw := bufio.NewWriterSize(w, 64<<10)
	b := make([]byte, 0, 256)
	b = append(b, "solid"...)
	if name != "" {
		b = append(b, ' ')
		b = append(b, name...)
	}
	b = append(b, '\n')
	vec := func(b []byte, v r3.Vec) []byte {
		for _, c := range [3]float64{v.X, v.Y, v.Z} {
			b = append(b, ' ')
			b = strconv.AppendFloat(b, c, 'e', -1, 64)
		}
		return append(b, '\n')
	}
	for i := 0; i < n; i++ {
		for _, v := range [4]r3.Vec{normal(m, i), m.Vertices[3*i], m.Vertices[3*i+1], m.Vertices[3*i+2]} {
			if !finite(v) {
				return fmt.Errorf("stl: facet %d: non-finite value", i)
			}
		}
		b = append(b, "  facet normal"...)
		b = vec(b, normal(m, i))
		b = append(b, "    outer loop\n"...)
		for k := 0; k < 3; k++ {
			b = append(b, "      vertex"...)
			b = vec(b, m.Vertices[3*i+k])
		}
		b = append(b, "    endloop\n  endfacet\n"...)
		if _, err := bw.Write(b); err != nil {
			return err
		}
		b = b[:0]
	}
	b = append(b, "endsolid"...)
	if name != "" {
		b = append(b, ' ')
		b = append(b, name...)
	}
	b = append(b, '\n')
	if _, err := bw.Write(b); err != nil {
		return err
	}
	return bw.Flush()
}

func finite(v r3.Vec) bool {
	return !math.IsNaN(v.X) && !math.IsInf(v.X, 0) &&
		!math.IsNaN(v.Y) && !math.IsInf(v.Y, 0) &&
		!math.IsNaN(v.Z) && !math.IsInf(v.Z, 0)
}
