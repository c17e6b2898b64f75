package scan

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"gapflux/internal/parallel"
	"gapflux/internal/scanerr"
	"io"
	"math"
	"os"
	"strings"

	"gapflux/scan/ply"
	"gapflux/scan/stl"
	"gapflux/scan/xyz"
	"gonum.org/v1/gonum/spatial/r3"
)

// Errors every reader wraps in its *ParseError, for errors.Is.
var (
	// ErrTooManyPoints means the scan holds more points than
	// ReadOptions.MaxPoints allows.
	ErrTooManyPoints = scanerr.ErrTooManyPoints
	// ErrNotFinite means a coordinate is NaN or infinite.
	ErrNotFinite = scanerr.ErrNotFinite
)

// ReadOptions controls Read and ReadFile.
type ReadOptions struct {
	// Name names the input in error messages, e.g. "pan.stl".
	Name string
	// SizeBytes is the size of the input when known (> 0), compressed
	// or not; zero or negative means unknown.
	SizeBytes int64
	// Unit is the length unit of the file's numbers: "mm", "m", "um" or
	// "in"; "" takes a unit named in the file's header (text clouds, PLY
	// comments such as "units mm") and otherwise mm.
	Unit string
	// MaxPoints caps the number of points (vertices); 0 means the
	// readers' default of 50 million.
	MaxPoints int
}

// MaxGzipRatio bounds how many bytes a gzip stream may expand to per
// compressed byte (after a 16 MiB allowance), against decompression bombs.
// It is checked as the stream is read, so a bomb stops within 64 KiB of
// the limit. Scans compress 3 to 5 times (binary STL and PLY, point
// clouds) and noise-free synthetic ASCII STL up to 11 times (measured on
// our synth output); our choice.
const MaxGzipRatio = 32

// ErrGzipRatio means a gzip stream expanded beyond MaxGzipRatio.
var ErrGzipRatio = errors.New("gzip stream expands more than 32 times its compressed size, more than any scan does " +
	"(a decompression bomb?); if the file is genuine, decompress it and read the plain file")

// gzipAllowance is what a gzip stream may expand to before the ratio
// applies (a variable so tests can lower it).
var gzipAllowance int64 = 16 << 20

// UnitScale returns the number of metres in one unit: "mm", "m", "um"
// (also "µm", "μm") or "in".
func UnitScale(unit string) (metresPerUnit float64, err error) {
	switch unit {
	case "mm":
		return 1e-3, nil
	case "m":
		return 1, nil
	case "um", "µm", "μm":
		return 1e-6, nil
	case "in":
		return 0.0254, nil // exact by definition (international inch, 1959)
	}
	return 0, fmt.Errorf("unknown length unit %q (want mm, m, um or in)", unit)
}

// ReadFile opens and reads the scan at path; see Read. Name defaults to
// path, and SizeBytes is taken from the file.
func ReadFile(path string, opt ReadOptions) (*Cloud, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	if opt.Name == "" {
		opt.Name = path
	}
	if st, err := f.Stat(); err == nil && st.Mode().IsRegular() {
		opt.SizeBytes = st.Size()
	} else {
		opt.SizeBytes = -1
	}
	return Read(f, opt)
}

// Read decodes a scan from r, telling the format from the content: gzip
// (1f 8b, decompressed first), PLY ("ply"), STL (ASCII "solid ... facet",
// or binary: an 84 + 50·N size or a header that is not text), else a text
// point cloud. Coordinates are converted to metres; normals are scaled
// to unit length. Decoding errors are the readers' *ParseError values,
// which name the input and the line or byte offset.
func Read(r io.Reader, opt ReadOptions) (*Cloud, error) {
	name := opt.Name
	if name == "" {
		name = "scan"
	}
	if opt.Unit != "" {
		if _, err := UnitScale(opt.Unit); err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
	}
	br := bufio.NewReaderSize(r, 64<<10)
	suffix := ""
	if magic, _ := br.Peek(2); len(magic) == 2 && magic[0] == 0x1f && magic[1] == 0x8b {
		cr := &countReader{r: br}
		zr, err := gzip.NewReader(cr)
		if err != nil {
			return nil, fmt.Errorf("%s: gzip: %w", name, err)
		}
		defer zr.Close()
		br = bufio.NewReaderSize(&ratioReader{r: zr, in: cr}, 64<<10)
		opt.SizeBytes = -1
		suffix = "+gz"
	}
	head, err := br.Peek(512)
	if len(head) == 0 {
		if err == io.EOF || err == nil {
			return nil, fmt.Errorf("%s: empty file", name)
		}
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	if enc := utf16Text(head); enc != "" {
		return nil, fmt.Errorf("%s: the file is %s text, which no scan reader reads; save it as UTF-8 (or plain ASCII) text and try again", name, enc)
	}
	var c *Cloud
	hint := ""
	switch {
	case isPLY(head):
		c, hint, err = readPLY(br, opt)
	case isSTL(head, opt.SizeBytes):
		c, err = readSTL(br, opt)
	default:
		c, hint, err = readText(br, opt)
	}
	if err != nil {
		return nil, err
	}
	c.Format += suffix
	switch {
	case opt.Unit != "":
		c.Unit, c.UnitSource = opt.Unit, "option"
	case hint != "":
		c.Unit, c.UnitSource = hint, "header"
	default:
		c.Unit, c.UnitSource = "mm", "default"
	}
	k, err := UnitScale(c.Unit)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	if err := scaleToMetres(c.Points, k, c.Unit); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	unitVecs(c.Normals)
	return c, nil
}

// MaxReachM bounds the coordinates of a scan, m: 1000 km, far beyond any
// scanner, yet above a pan in micrometres read as metres (300 km), which
// the unit checks downstream name. A larger value is a corrupt or
// mistyped number, and would overflow the levelling's sums of squares.
const MaxReachM = 1e6

// scaleToMetres multiplies the points by k (metres per unit) and then
// checks them with checkReach. Parts of the points are done at once.
func scaleToMetres(pts []r3.Vec, k float64, unit string) error {
	parts := rowParts(len(pts))
	errs := make([]error, parts)
	parallel.Do(len(pts), parts, func(t, i0, i1 int) {
		for i := i0; i < i1; i++ {
			pts[i] = r3.Scale(k, pts[i])
		}
		errs[t] = checkReach(pts[i0:i1], i0, k, unit)
	})
	for _, err := range errs {
		if err != nil {
			return err // the first in file order
		}
	}
	return nil
}

// checkReach returns an error naming the first point with a coordinate
// beyond MaxReachM, in the file's unit (k metres per unit) and order; the
// points are the file's from index first on.
func checkReach(pts []r3.Vec, first int, k float64, unit string) error {
	for i, p := range pts {
		for a, v := range [3]float64{p.X, p.Y, p.Z} {
			if math.Abs(v) > MaxReachM {
				return fmt.Errorf("point %d (in the file's order) has %c = %g %s, beyond any scan's reach (%g km); correct or remove that value, and check the file's unit (--units)",
					first+i+1, "xyz"[a], v/k, unit, MaxReachM/1e3)
			}
		}
	}
	return nil
}

// utf16Text returns "UTF-16" (with its byte order) when head starts with a
// UTF-16 byte order mark, or is ASCII text written as UTF-16 without one
// (a NUL beside every character of its first line), else "".
func utf16Text(head []byte) string {
	switch {
	case len(head) >= 2 && head[0] == 0xFF && head[1] == 0xFE:
		return "UTF-16 (little-endian)"
	case len(head) >= 2 && head[0] == 0xFE && head[1] == 0xFF:
		return "UTF-16 (big-endian)"
	}
	n := min(len(head), 64) &^ 1
	if n < 8 {
		return ""
	}
	for _, odd := range []int{1, 0} { // little-endian: the NULs are at odd offsets
		ok := true
		for i := 0; i < n && ok; i += 2 {
			c, z := head[i+1-odd], head[i+odd]
			ok = z == 0 && (c == '\t' || c == '\n' || c == '\r' || c >= 0x20 && c < 0x7f)
		}
		if ok {
			if odd == 1 {
				return "UTF-16 (little-endian)"
			}
			return "UTF-16 (big-endian)"
		}
	}
	return ""
}

// isPLY reports whether head starts with the PLY magic line.
func isPLY(head []byte) bool {
	return len(head) >= 4 && string(head[:3]) == "ply" && (head[3] == '\n' || head[3] == '\r')
}

// isSTL reports whether head (the first bytes of a file of size bytes,
// <= 0 if unknown) is an STL file: its size is 84 + 50·N with N the count
// at offset 80, it starts with "solid", or it is binary.
func isSTL(head []byte, size int64) bool {
	if size >= 84 && len(head) >= 84 {
		n := int64(head[80]) | int64(head[81])<<8 | int64(head[82])<<16 | int64(head[83])<<24
		if 84+50*n == size {
			return true
		}
	}
	t := bytes.TrimLeft(bytes.TrimPrefix(head, []byte("\xef\xbb\xbf")), " \t\r\n")
	if len(t) >= 5 && strings.EqualFold(string(t[:5]), "solid") {
		return true
	}
	for _, c := range head {
		if c < 0x20 && c != '\n' && c != '\r' && c != '\t' && c != '\v' && c != '\f' {
			return true // not text: a binary STL is the only binary format left
		}
	}
	return false
}

func readSTL(r io.Reader, opt ReadOptions) (*Cloud, error) {
	m, err := stl.Decode(r, stl.Options{Name: opt.Name, SizeBytes: opt.SizeBytes, MaxPoints: opt.MaxPoints, Weld: true})
	if err != nil {
		return nil, err
	}
	c := &Cloud{Points: m.Vertices, FacetNormals: m.Normals, Triangles: m.Faces, Format: "stl-ascii"}
	if m.Binary {
		c.Format = "stl-binary"
	}
	return c, nil
}

func readPLY(r io.Reader, opt ReadOptions) (*Cloud, string, error) {
	p, err := ply.Decode(r, ply.Options{Name: opt.Name, SizeBytes: opt.SizeBytes, MaxPoints: opt.MaxPoints})
	if err != nil {
		return nil, "", err
	}
	c := &Cloud{Points: p.Points, Normals: p.Normals, Triangles: p.Faces}
	switch p.Format {
	case ply.ASCII:
		c.Format = "ply-ascii"
	case ply.BinaryLittleEndian:
		c.Format = "ply-binary-le"
	default:
		c.Format = "ply-binary-be"
	}
	return c, plyUnit(p.Comments), nil
}

// plyUnit returns the unit named by a comment such as "units mm" or
// "unit: m", or "".
func plyUnit(comments []string) string {
	for _, s := range comments {
		f := strings.Fields(strings.ToLower(strings.ReplaceAll(s, ":", " ")))
		if len(f) == 2 && (f[0] == "unit" || f[0] == "units") {
			if _, err := UnitScale(f[1]); err == nil {
				if f[1] == "µm" || f[1] == "μm" {
					return "um"
				}
				return f[1]
			}
		}
	}
	return ""
}

func readText(r io.Reader, opt ReadOptions) (*Cloud, string, error) {
	x, err := xyz.Decode(r, xyz.Options{Name: opt.Name, SizeBytes: opt.SizeBytes, MaxPoints: opt.MaxPoints})
	if err != nil {
		return nil, "", err
	}
	c := &Cloud{Points: x.Points, Normals: x.Normals, Format: "xyz"}
	if x.Delimiter == ',' || x.Delimiter == ';' {
		c.Format = "csv"
	}
	if x.CommaAmbiguous {
		c.Warnings = append(c.Warnings, fmt.Sprintf("%s: each line holds six comma-separated integers: read as columns x, y, z (and three ignored), "+
			"but it could be x, y, z written with decimal commas; use ';' or a header row to make it clear", opt.Name))
	}
	return c, x.UnitHint, nil
}

// unitVecs scales each non-zero vector of v to unit length (parts of v
// at once).
func unitVecs(v []r3.Vec) {
	parallelRows(len(v), func(i0, i1 int) {
		for i := i0; i < i1; i++ {
			if l := r3.Norm(v[i]); l > 0 && math.Abs(l-1) > 1e-12 {
				v[i] = r3.Scale(1/l, v[i])
			}
		}
	})
}

// countReader counts the bytes read through it.
type countReader struct {
	r io.Reader
	n int64
}

func (c *countReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n += int64(n)
	return n, err
}

// ratioReader fails with ErrGzipRatio once the decompressed stream passes
// 64 MiB plus MaxGzipRatio times the compressed bytes read so far.
type ratioReader struct {
	r   io.Reader
	in  *countReader
	out int64
}

func (z *ratioReader) Read(p []byte) (int, error) {
	n, err := z.r.Read(p)
	z.out += int64(n)
	if z.out > gzipAllowance+MaxGzipRatio*z.in.n {
		return n, ErrGzipRatio
	}
	return n, err
}
