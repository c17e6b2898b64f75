package synth

import (
	"bufio"
	"compress/gzip"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/scan/ply"
	"gapflux/scan/stl"
	"gapflux/scan/xyz"
)

// Encoding says how Encode writes a scan.
type Encoding struct {
	// Format is "stl", "ply", "xyz" (space separated) or "csv" (comma
	// separated). STL needs a mesh; XYZ and CSV write the vertices only.
	Format string
	// Binary selects binary STL or PLY (ignored for XYZ and CSV).
	Binary bool
	// BigEndian selects binary_big_endian PLY (needs Binary).
	BigEndian bool
	// Double writes PLY vertex properties as double instead of float.
	Double bool
	// Gzip compresses the output (no name, zero time: reproducible).
	Gzip bool
	// Unit is the length unit of the numbers written: "mm" (when empty),
	// "m", "um" or "in".
	Unit string
	// Header is the binary STL header text, the ASCII STL solid name or a
	// PLY comment; "" gives "gapflux synthetic scan" and the Spec name.
	// A binary STL header may begin with "solid".
	Header string
	// Delimiter overrides the XYZ/CSV column separator (' ', '\t', ',' or
	// ';'); 0 means ' ' for XYZ and ',' for CSV.
	Delimiter rune
	// NoHeader omits the XYZ/CSV column header row (x_mm, y_mm, …).
	NoHeader bool
	// Precision is the number of decimals of the coordinates in text
	// encodings. XYZ/CSV: 0 gives a resolution of 1 nm in the unit (6
	// decimals in mm). ASCII STL/PLY: 0 writes every value in full;
	// otherwise coordinates are rounded to Precision decimals and normals
	// to 6, which keeps small sample files small.
	Precision int
}

// FormatName returns the name scan.Cloud.Format gives a file written with e,
// e.g. "stl-binary", "ply-binary-be", "csv+gz".
func (e Encoding) FormatName() string {
	var s string
	switch e.Format {
	case "stl":
		s = "stl-ascii"
		if e.Binary {
			s = "stl-binary"
		}
	case "ply":
		s = "ply-ascii"
		if e.Binary {
			s = "ply-binary-le"
			if e.BigEndian {
				s = "ply-binary-be"
			}
		}
	default:
		s = e.Format
	}
	if e.Gzip {
		s += "+gz"
	}
	return s
}

// Ext returns the file name extension for e, with the dot: ".stl", ".ply",
// ".xyz", ".csv", plus ".gz" when compressed.
func (e Encoding) Ext() string {
	s := "." + e.Format
	if e.Gzip {
		s += ".gz"
	}
	return s
}

// unitsPerMetre returns how many of unit make a metre.
func unitsPerMetre(unit string) (float64, error) {
	switch unit {
	case "", "mm":
		return 1e3, nil
	case "m":
		return 1, nil
	case "um":
		return 1e6, nil
	case "in":
		return 1 / 0.0254, nil
	}
	return 0, fmt.Errorf("synth: unknown unit %q (want mm, m, um or in)", unit)
}

func (e Encoding) check() error {
	switch e.Format {
	case "stl", "ply":
		if e.BigEndian && (!e.Binary || e.Format == "stl") {
			return errors.New("synth: big endian needs binary PLY")
		}
	case "xyz", "csv":
		if e.Binary || e.BigEndian || e.Double {
			return fmt.Errorf("synth: binary, big endian or double do not apply to %s", e.Format)
		}
		switch e.Delimiter {
		case 0, ' ', '\t', ',', ';':
		default:
			return fmt.Errorf("synth: delimiter %q, want space, tab, comma or semicolon", e.Delimiter)
		}
	default:
		return fmt.Errorf("synth: unknown format %q (want stl, ply, xyz or csv)", e.Format)
	}
	if e.Precision < 0 || e.Precision > 17 {
		return fmt.Errorf("synth: precision %d, want 0 … 17", e.Precision)
	}
	if e.Precision != 0 && e.Binary {
		return errors.New("synth: precision applies to text encodings only")
	}
	_, err := unitsPerMetre(e.Unit)
	return err
}

// Encode writes sc to w as enc asks, with coordinates in enc.Unit.
// The same scan and encoding always give the same bytes.
func Encode(w io.Writer, sc *Scan, enc Encoding) error {
	if err := enc.check(); err != nil {
		return err
	}
	c := sc.Cloud
	if enc.Format == "stl" && len(c.Triangles) == 0 {
		return errors.New("synth: STL needs a mesh (Spec.Mesh)")
	}
	k, _ := unitsPerMetre(enc.Unit)
	unit := enc.Unit
	if unit == "" {
		unit = "mm"
	}
	header := enc.Header
	if header == "" {
		header = "gapflux synthetic scan"
		if sc.Truth.Name != "" {
			header += " " + sc.Truth.Name
		}
	}
	pts := make([]r3.Vec, len(c.Points))
	for i, p := range c.Points {
		pts[i] = r3.Scale(k, p)
	}
	normals, fnrm := c.Normals, c.FacetNormals
	if fnrm == nil && enc.Format == "stl" {
		fnrm = facetNormals(c.Points, c.Triangles)
	}
	if enc.Precision > 0 && (enc.Format == "stl" || enc.Format == "ply") {
		roundVecs(pts, enc.Precision)
		normals = roundVecs(slices.Clone(normals), 6)
		fnrm = roundVecs(slices.Clone(fnrm), 6)
	}

	var gz *gzip.Writer
	if enc.Gzip {
		gz = gzip.NewWriter(w)
		w = gz
	}
	var err error
	switch enc.Format {
	case "stl":
		m := &stl.Mesh{
			Vertices: make([]r3.Vec, 0, 3*len(c.Triangles)),
			Normals:  fnrm,
			Header:   header,
			Binary:   enc.Binary,
		}
		for _, t := range c.Triangles {
			m.Vertices = append(m.Vertices, pts[t[0]], pts[t[1]], pts[t[2]])
		}
		if enc.Binary {
			err = stl.WriteBinary(w, m)
		} else {
			err = stl.WriteASCII(w, m)
		}
	case "ply":
		pc := &ply.Cloud{Points: pts, Normals: normals, Faces: c.Triangles}
		opt := ply.WriteOptions{Format: ply.ASCII, VertexType: "float",
			Comments: []string{header, "unit " + unit}}
		if enc.Binary {
			opt.Format = ply.BinaryLittleEndian
			if enc.BigEndian {
				opt.Format = ply.BinaryBigEndian
			}
		}
		if enc.Double {
			opt.VertexType = "double"
		}
		err = ply.Write(w, pc, opt)
	case "xyz", "csv":
		d := enc.Delimiter
		if d == 0 {
			d = ' '
			if enc.Format == "csv" {
				d = ','
			}
		}
		prec := enc.Precision
		if prec == 0 {
			prec = max(0, int(math.Ceil(9-math.Log10(k)-1e-9))) // 1 nm
		}
		err = xyz.Write(w, &xyz.Cloud{Points: pts, Normals: c.Normals}, xyz.WriteOptions{
			Delimiter: d, Header: !enc.NoHeader, Unit: unit, Normals: c.Normals != nil, Precision: prec})
	}
	if err != nil {
		return fmt.Errorf("synth: %w", err)
	}
	if gz != nil {
		return gz.Close()
	}
	return nil
}

// roundVecs rounds every component of vs to d decimals, in place.
func roundVecs(vs []r3.Vec, d int) []r3.Vec {
	p := math.Pow10(d)
	r := func(v float64) float64 { return math.Round(v*p) / p }
	for i, v := range vs {
		vs[i] = r3.Vec{X: r(v.X), Y: r(v.Y), Z: r(v.Z)}
	}
	return vs
}

// WriteFiles writes sc to dir/base+enc.Ext() and its truth, with Format and
// Unit filled in, to dir/base+".truth.json". Each file is written to a
// temporary file in dir and renamed into place, so a reader never sees a
// partial file.
func WriteFiles(dir, base string, sc *Scan, enc Encoding) (scanPath, truthPath string, err error) {
	if err := enc.check(); err != nil {
		return "", "", err
	}
	if base == "" || strings.ContainsAny(base, `/\`) || base == "." || base == ".." {
		return "", "", fmt.Errorf("synth: bad base name %q", base)
	}
	scanPath = filepath.Join(dir, base+enc.Ext())
	truthPath = filepath.Join(dir, base+".truth.json")
	tr := sc.Truth
	tr.Format = enc.FormatName()
	tr.Unit = enc.Unit
	if tr.Unit == "" {
		tr.Unit = "mm"
	}
	js, err := json.MarshalIndent(tr, "", "  ")
	if err != nil {
		return "", "", fmt.Errorf("synth: %w", err)
	}
	js = append(js, '\n')
	if err := writeAtomic(scanPath, func(w io.Writer) error { return Encode(w, sc, enc) }); err != nil {
		return "", "", err
	}
	if err := writeAtomic(truthPath, func(w io.Writer) error { _, err := w.Write(js); return err }); err != nil {
		return "", "", err
	}
	return scanPath, truthPath, nil
}

// writeAtomic writes path through a temporary file in the same directory,
// synced and renamed into place.
func writeAtomic(path string, write func(io.Writer) error) (err error) {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".*.tmp")
	if err != nil {
		return fmt.Errorf("synth: %w", err)
	}
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(f.Name())
		}
	}()
	bw := bufio.NewWriterSize(f, 256<<10)
	if err = write(bw); err != nil {
		return fmt.Errorf("synth: %s: %w", path, err)
	}
	if err = bw.Flush(); err != nil {
		return fmt.Errorf("synth: %s: %w", path, err)
	}
	if err = f.Chmod(0o644); err != nil {
		return fmt.Errorf("synth: %w", err)
	}
	if err = f.Sync(); err != nil {
		return fmt.Errorf("synth: %w", err)
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("synth: %w", err)
	}
	if err = os.Rename(f.Name(), path); err != nil {
		return fmt.Errorf("synth: %w", err)
	}
	return nil
}
