package pipeline

import (
	"bufio"
	"bytes"
	"compress/zlib"
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
	// at, when set, gives the value of cell k in place of Values (then
	// nil), for every cell of the grid: the field is computed as it is
	// written, a block at a time, never held whole.
	at func(k int) float64
}

// count returns the number of values of fld on a grid of n cells.
func (fld VTIField) count(n int) int {
	if fld.at != nil {
		return n
	}
	return len(fld.Values)
}

// checkFields reports the first field whose number of values is not the
// grid's n cells.
func checkFields(fields []VTIField, n int) error {
	for _, fld := range fields {
		if c := fld.count(n); c != n {
			return fmt.Errorf("vti: field %s has %d values, grid has %d cells", fld.Name, c, n)
		}
	}
	return nil
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
	writeVTIHead(bw, g, fields, `version="0.1" byte_order="LittleEndian" header_type="UInt32"`)
	n := g.Nx * g.Ny
	if err := checkFields(fields, n); err != nil {
		return err
	}
	for _, fld := range fields {
		data := vtiBytes(fld, n)
		raw := make([]byte, 4, 4+len(data))
		binary.LittleEndian.PutUint32(raw, uint32(len(data)))
		raw = append(raw, data...)
		typ := vtiType(fld)
		fmt.Fprintf(bw, "        <DataArray type=\"%s\" Name=\"%s\" format=\"binary\">\n          ", typ, fld.Name)
		enc := base64.NewEncoder(base64.StdEncoding, bw)
		enc.Write(raw)
		enc.Close()
		fmt.Fprintf(bw, "\n        </DataArray>\n")
	}
	fmt.Fprintf(bw, "      </PointData>\n    </Piece>\n  </ImageData>\n</VTKFile>\n")
	return bw.Flush()
}

// vtiBlockBytes is the uncompressed size of one zlib block of a compressed
// array: 32 KiB, the block size VTK's own writers use (vtkXMLWriter's
// default BlockSize, from memory).
const vtiBlockBytes = 32 << 10

// WriteVTICompressed writes fields like WriteVTI, but as VTK XML image data
// version 1.0 with every array zlib-compressed (compressor
// "vtkZLibDataCompressor") into a raw appended-data section. Each array is
// split into blocks of vtiBlockBytes before compression and begins with the
// header [#blocks][#u-size][#p-size][#c-size-1]…[#c-size-#blocks], each a
// little-endian UInt64 (header_type="UInt64"): the block size, the size of
// the last partial block (0 when the last block is full) and the compressed
// size of each block (the layout of "Compressed Data" in VTK's XML file
// format documentation, VTK wiki "VTK XML Formats"). A DataArray's offset
// counts bytes from the first byte after the section's leading underscore.
// The output is byte-for-byte deterministic for a given Go release.
func WriteVTICompressed(w io.Writer, g VTIGrid, fields []VTIField) error {
	n := g.Nx * g.Ny
	if err := checkFields(fields, n); err != nil {
		return err
	}
	// The arrays are compressed at once, each on its own: the same bytes
	// as one after the other. Each is converted a block at a time, so no
	// array is held whole but compressed.
	blobs := make([][]byte, len(fields))
	tasks := make([]func() error, len(fields))
	for i, fld := range fields {
		tasks[i] = func() error {
			size := vtiValueBytes(fld)
			b, err := zlibBlocks(n*size, func(dst []byte, off int) { storeValues(dst, fld, off/size) })
			if err != nil {
				return fmt.Errorf("vti: compressing %s: %w", fld.Name, err)
			}
			blobs[i] = b
			return nil
		}
	}
	if err := runParallel(tasks); err != nil {
		return err
	}
	bw := bufio.NewWriter(w)
	writeVTIHead(bw, g, fields, `version="1.0" byte_order="LittleEndian" header_type="UInt64" compressor="vtkZLibDataCompressor"`)
	offset := 0
	for i, fld := range fields {
		fmt.Fprintf(bw, "        <DataArray type=\"%s\" Name=\"%s\" format=\"appended\" offset=\"%d\"/>\n",
			vtiType(fld), fld.Name, offset)
		offset += len(blobs[i])
	}
	fmt.Fprintf(bw, "      </PointData>\n    </Piece>\n  </ImageData>\n  <AppendedData encoding=\"raw\">\n   _")
	for _, b := range blobs {
		bw.Write(b)
	}
	fmt.Fprintf(bw, "\n  </AppendedData>\n</VTKFile>\n")
	return bw.Flush()
}

// vtiType is the VTK type name of a field's stored values.
func vtiType(fld VTIField) string {
	if fld.UInt8 {
		return "UInt8"
	}
	return "Float32"
}

// vtiValueBytes is the size of one stored value of fld.
func vtiValueBytes(fld VTIField) int {
	if fld.UInt8 {
		return 1
	}
	return 4
}

// vtiBytes returns a field's n values as stored (storeValues).
func vtiBytes(fld VTIField, n int) []byte {
	out := make([]byte, n*vtiValueBytes(fld))
	storeValues(out, fld, 0)
	return out
}

// storeValues fills dst with fld's values from cell k0 on as stored:
// little-endian Float32, or unsigned bytes clamped to [0, 255] with NaN
// as 0.
func storeValues(dst []byte, fld VTIField, k0 int) {
	value := func(k int) float64 { return fld.Values[k] }
	if fld.at != nil {
		value = fld.at
	}
	if fld.UInt8 {
		for i := range dst {
			v := value(k0 + i)
			if math.IsNaN(v) || v < 0 {
				v = 0
			}
			dst[i] = byte(math.Min(v, 255))
		}
		return
	}
	for i := 0; i+4 <= len(dst); i += 4 {
		binary.LittleEndian.PutUint32(dst[i:], math.Float32bits(float32(value(k0+i/4))))
	}
}

// zlibBlocks compresses the size bytes that fill puts into each block
// (dst, from byte off on) in blocks of vtiBlockBytes, and returns the
// header (UInt64 words) followed by the compressed blocks.
func zlibBlocks(size int, fill func(dst []byte, off int)) ([]byte, error) {
	nb := (size + vtiBlockBytes - 1) / vtiBlockBytes
	head := make([]byte, 8*(3+nb))
	binary.LittleEndian.PutUint64(head[0:], uint64(nb))
	binary.LittleEndian.PutUint64(head[8:], vtiBlockBytes)
	binary.LittleEndian.PutUint64(head[16:], uint64(size%vtiBlockBytes))
	var body bytes.Buffer
	// The fastest level: some 4 % larger than the default level (a 2 M-point
	// scan's fields, 4.40 -> 4.58 MB) in well under half the time; any
	// zlib reader (VTK's, ReadVTI) gets the same values.
	zw, err := zlib.NewWriterLevel(&body, zlib.BestSpeed)
	if err != nil {
		return nil, err
	}
	raw := make([]byte, min(size, vtiBlockBytes))
	for b := 0; b < nb; b++ {
		start := body.Len()
		block := raw[:min(vtiBlockBytes, size-b*vtiBlockBytes)]
		fill(block, b*vtiBlockBytes)
		zw.Reset(&body)
		if _, err := zw.Write(block); err != nil {
			return nil, err
		}
		if err := zw.Close(); err != nil {
			return nil, err
		}
		binary.LittleEndian.PutUint64(head[8*(3+b):], uint64(body.Len()-start))
	}
	return append(head, body.Bytes()...), nil
}

// writeVTIHead writes the XML declaration and the opening elements up to
// PointData; attrs are the VTKFile element's format attributes.
func writeVTIHead(bw *bufio.Writer, g VTIGrid, fields []VTIField, attrs string) {
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', 10, 64) }
	ext := fmt.Sprintf("0 %d 0 %d 0 0", g.Nx-1, g.Ny-1)
	fmt.Fprintf(bw, "<?xml version=\"1.0\"?>\n")
	fmt.Fprintf(bw, "<VTKFile type=\"ImageData\" %s>\n", attrs)
	fmt.Fprintf(bw, "  <ImageData WholeExtent=\"%s\" Origin=\"%s %s 0\" Spacing=\"%s %s 1\">\n",
		ext, f(g.X0MM), f(g.Y0MM), f(g.SpacingMM), f(g.SpacingMM))
	fmt.Fprintf(bw, "    <Piece Extent=\"%s\">\n", ext)
	scalars := ""
	if len(fields) > 0 {
		scalars = fields[0].Name
	}
	fmt.Fprintf(bw, "      <PointData Scalars=\"%s\">\n", scalars)
}
