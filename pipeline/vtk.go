package pipeline

import (
	"bufio"
	"encoding/base64"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"strconv"
)

// VTIField is one named per-cell array of a VTK image-data file.
type VTIField struct {
	Name   string    // with its unit, e.g. "gap_mm"
	Values []float64 // NaN where undefined
	UInt8  bool      // store as unsigned bytes (masks, states)
}

// VTIGrid places the cells: point (i, j) of the image is the centre of cell
// (i, j), at (X0 + i·Spacing, Y0 + j·Spacing), in mm.
type VTIGrid struct {
	Nx, Ny     int
	X0MM, Y0MM float64
	SpacingMM  float64
}

// WriteVTI writes fields as VTK XML image data (.vti, "ImageData" version
// 0.1, little-endian, base64-encoded binary arrays with a UInt32 byte-count
// header) that general-purpose scientific viewers open. The fields are point
// data at the cell centres.
func WriteVTI(w io.Writer, g VTIGrid, fields []VTIField) error {
	bw := bufio.NewWriter(w)
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', 10, 64) }
	ext := fmt.Sprintf("0 %d 0 %d 0 0", g.Nx-1, g.Ny-1)
	fmt.Fprintf(bw, "<?xml version=\"1.0\"?>\n")
	fmt.Fprintf(bw, "<VTKFile type=\"ImageData\" version=\"0.1\" byte_order=\"LittleEndian\" header_type=\"UInt32\">\n")
	fmt.Fprintf(bw, "  <ImageData WholeExtent=\"%s\" Origin=\"%s %s 0\" Spacing=\"%s %s 1\">\n",
		ext, f(g.X0MM), f(g.Y0MM), f(g.SpacingMM), f(g.SpacingMM))
	fmt.Fprintf(bw, "    <Piece Extent=\"%s\">\n", ext)
	scalars := ""
	if len(fields) > 0 {
		scalars = fields[0].Name
	}
	fmt.Fprintf(bw, "      <PointData Scalars=\"%s\">\n", scalars)
	n := g.Nx * g.Ny
	for _, fld := range fields {
		if len(fld.Values) != n {
			return fmt.Errorf("vti: field %s has %d values, grid has %d cells", fld.Name, len(fld.Values), n)
		}
		typ, size := "Float32", 4
		if fld.UInt8 {
			typ, size = "UInt8", 1
		}
		raw := make([]byte, 4+size*n)
		binary.LittleEndian.PutUint32(raw, uint32(size*n))
		for i, v := range fld.Values {
			if fld.UInt8 {
				if math.IsNaN(v) || v < 0 {
					v = 0
				}
				raw[4+i] = byte(math.Min(v, 255))
			} else {
				binary.LittleEndian.PutUint32(raw[4+4*i:], math.Float32bits(float32(v)))
			}
		}
		fmt.Fprintf(bw, "        <DataArray type=\"%s\" Name=\"%s\" format=\"binary\">\n          ", typ, fld.Name)
		enc := base64.NewEncoder(base64.StdEncoding, bw)
		enc.Write(raw)
		enc.Close()
		fmt.Fprintf(bw, "\n        </DataArray>\n")
	}
	fmt.Fprintf(bw, "      </PointData>\n    </Piece>\n  </ImageData>\n</VTKFile>\n")
	return bw.Flush()
}
