package pipeline

import (
	"bytes"
	"compress/zlib"
	"encoding/binary"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"testing"
)

// vtiArray is one array read back from a compressed .vti file.
type vtiArray struct {
	Name, Type string
	Raw        []byte // the stored bytes after decompression
	Blocks     int
	PartialLen uint64 // the header's #p-size
}

// readCompressedVTI is a small independent reader of the layout
// WriteVTICompressed writes (VTK wiki "VTK XML Formats", Compressed Data):
// it takes the DataArray offsets from the XML head, then for each array
// reads the UInt64 header [#blocks][#u-size][#p-size][#c-sizes…] and
// inflates every block, checking each block's length against the header.
func readCompressedVTI(file []byte) ([]vtiArray, error) {
	const tag = "<AppendedData encoding=\"raw\">"
	at := bytes.Index(file, []byte(tag))
	if at < 0 {
		return nil, errors.New("no raw AppendedData section")
	}
	under := bytes.IndexByte(file[at:], '_')
	if under < 0 {
		return nil, errors.New("no underscore before the appended data")
	}
	data := file[at+under+1:]
	type ref struct {
		name, typ string
		off       int
	}
	var refs []ref
	dec := xml.NewDecoder(bytes.NewReader(file[:at]))
	compressed := false
	for {
		tok, err := dec.Token()
		if err != nil {
			break // the head ends before the closing tags
		}
		se, ok := tok.(xml.StartElement)
		if !ok {
			continue
		}
		attr := map[string]string{}
		for _, a := range se.Attr {
			attr[a.Name.Local] = a.Value
		}
		switch se.Name.Local {
		case "VTKFile":
			if attr["header_type"] != "UInt64" || attr["byte_order"] != "LittleEndian" {
				return nil, fmt.Errorf("header_type %q byte_order %q", attr["header_type"], attr["byte_order"])
			}
			compressed = attr["compressor"] == "vtkZLibDataCompressor"
		case "DataArray":
			if attr["format"] != "appended" {
				return nil, fmt.Errorf("array %s: format %q", attr["Name"], attr["format"])
			}
			off, err := strconv.Atoi(attr["offset"])
			if err != nil || off < 0 || off > len(data) {
				return nil, fmt.Errorf("array %s: offset %q", attr["Name"], attr["offset"])
			}
			refs = append(refs, ref{attr["Name"], attr["type"], off})
		}
	}
	if !compressed {
		return nil, errors.New("no vtkZLibDataCompressor")
	}
	var out []vtiArray
	for _, r := range refs {
		word := func(i int) (uint64, error) {
			if r.off+8*(i+1) > len(data) {
				return 0, fmt.Errorf("array %s: header word %d past the end", r.name, i)
			}
			return binary.LittleEndian.Uint64(data[r.off+8*i:]), nil
		}
		nb, err := word(0)
		if err != nil {
			return nil, err
		}
		usize, _ := word(1)
		psize, err := word(2)
		if err != nil || nb > 1<<20 {
			return nil, fmt.Errorf("array %s: bad header (%d blocks)", r.name, nb)
		}
		arr := vtiArray{Name: r.name, Type: r.typ, Blocks: int(nb), PartialLen: psize}
		pos := r.off + 8*(3+int(nb))
		for b := 0; b < int(nb); b++ {
			csize, err := word(3 + b)
			if err != nil || pos+int(csize) > len(data) {
				return nil, fmt.Errorf("array %s: block %d runs past the end", r.name, b)
			}
			zr, err := zlib.NewReader(bytes.NewReader(data[pos : pos+int(csize)]))
			if err != nil {
				return nil, fmt.Errorf("array %s block %d: %w", r.name, b, err)
			}
			blk, err := io.ReadAll(zr)
			if err != nil {
				return nil, fmt.Errorf("array %s block %d: %w", r.name, b, err)
			}
			want := usize
			if b == int(nb)-1 && psize != 0 {
				want = psize
			}
			if uint64(len(blk)) != want {
				return nil, fmt.Errorf("array %s block %d: %d bytes, header says %d", r.name, b, len(blk), want)
			}
			arr.Raw = append(arr.Raw, blk...)
			pos += int(csize)
		}
		out = append(out, arr)
	}
	return out, nil
}

// TestWriteVTICompressedRoundTrip writes fields of several sizes (one
// block, blocks that end exactly on the block size, a partial last block)
// and reads them back with readCompressedVTI: every value comes back
// bit-identical to its Float32 (or byte) encoding.
func TestWriteVTICompressedRoundTrip(t *testing.T) {
	tests := []struct {
		nx, ny       int
		blocks       int
		partial      uint64
		uint8Blocks  int
		uint8Partial uint64
	}{
		{nx: 3, ny: 2, blocks: 1, partial: 24, uint8Blocks: 1, uint8Partial: 6},
		{nx: 128, ny: 64, blocks: 1, partial: 0, uint8Blocks: 1, uint8Partial: 8192},  // 32768 bytes: one full block
		{nx: 256, ny: 64, blocks: 2, partial: 0, uint8Blocks: 1, uint8Partial: 16384}, // two full blocks
		{nx: 101, ny: 99, blocks: 2, partial: 39996 - 32768, uint8Blocks: 1, uint8Partial: 9999},
	}
	for _, tc := range tests {
		t.Run(fmt.Sprintf("%dx%d", tc.nx, tc.ny), func(t *testing.T) {
			n := tc.nx * tc.ny
			height := make([]float64, n)
			state := make([]float64, n)
			for k := range height {
				i, j := k%tc.nx, k/tc.nx
				height[k] = 1e3*math.Sin(float64(i)/7)*math.Cos(float64(j)/5) + 1e-3*float64(k)
				state[k] = float64(k % 4)
			}
			height[n/2] = math.NaN()
			fields := []VTIField{{Name: "height_um", Values: height}, {Name: "cell_state", Values: state, UInt8: true}}
			var buf bytes.Buffer
			if err := WriteVTICompressed(&buf, VTIGrid{Nx: tc.nx, Ny: tc.ny, X0MM: -1, Y0MM: 2, SpacingMM: 0.5}, fields); err != nil {
				t.Fatal(err)
			}
			got, err := readCompressedVTI(buf.Bytes())
			if err != nil {
				t.Fatal(err)
			}
			if len(got) != 2 {
				t.Fatalf("read %d arrays, want 2", len(got))
			}
			for a, fld := range fields {
				if got[a].Name != fld.Name || got[a].Type != vtiType(fld) {
					t.Errorf("array %d is %s %s, want %s %s", a, got[a].Type, got[a].Name, vtiType(fld), fld.Name)
				}
				if !bytes.Equal(got[a].Raw, vtiBytes(fld, len(fld.Values))) {
					t.Errorf("%s: read-back bytes differ from the values written", fld.Name)
				}
			}
			if got[0].Blocks != tc.blocks || got[0].PartialLen != tc.partial {
				t.Errorf("Float32 array: %d blocks, p-size %d; want %d, %d", got[0].Blocks, got[0].PartialLen, tc.blocks, tc.partial)
			}
			if got[1].Blocks != tc.uint8Blocks || got[1].PartialLen != tc.uint8Partial {
				t.Errorf("UInt8 array: %d blocks, p-size %d; want %d, %d", got[1].Blocks, got[1].PartialLen, tc.uint8Blocks, tc.uint8Partial)
			}
			// The values themselves: Float32 of each input, NaN kept.
			for k, v := range height {
				f := math.Float32frombits(binary.LittleEndian.Uint32(got[0].Raw[4*k:]))
				if math.IsNaN(v) != math.IsNaN(float64(f)) || (!math.IsNaN(v) && f != float32(v)) {
					t.Fatalf("height[%d] = %v, want %v", k, f, float32(v))
				}
			}
			// Deterministic: the same fields give the same bytes.
			var again bytes.Buffer
			_ = WriteVTICompressed(&again, VTIGrid{Nx: tc.nx, Ny: tc.ny, X0MM: -1, Y0MM: 2, SpacingMM: 0.5}, fields)
			if !bytes.Equal(buf.Bytes(), again.Bytes()) {
				t.Error("two writes of the same fields differ")
			}
		})
	}
}

// TestWriteVTICompressedBadInput: a field of the wrong length is an error
// naming it, and nothing is written.
func TestWriteVTICompressedBadInput(t *testing.T) {
	var buf bytes.Buffer
	err := WriteVTICompressed(&buf, VTIGrid{Nx: 3, Ny: 1}, []VTIField{{Name: "gap_mm", Values: []float64{1}}})
	if err == nil || !bytes.Contains([]byte(err.Error()), []byte("gap_mm")) {
		t.Errorf("short field: err = %v, want an error naming gap_mm", err)
	}
	if buf.Len() != 0 {
		t.Errorf("%d bytes written for a bad field", buf.Len())
	}
	// A corrupted block is caught by the reader (a test of the test).
	var ok bytes.Buffer
	if err := WriteVTICompressed(&ok, VTIGrid{Nx: 4, Ny: 4}, []VTIField{{Name: "x", Values: make([]float64, 16)}}); err != nil {
		t.Fatal(err)
	}
	b := ok.Bytes()
	end := bytes.LastIndex(b, []byte("\n  </AppendedData>"))
	b[end-2] ^= 0xff // inside the block's Adler-32 checksum
	if _, err := readCompressedVTI(b); err == nil {
		t.Error("a corrupted block was read without error")
	}
}

// BenchmarkWriteVTICompressed writes 13 fields over a 600×600 grid (a
// 280 mm base on a 0.5 mm grid with the glass margin), the size of one
// scan's fields.vti.
func BenchmarkWriteVTICompressed(b *testing.B) {
	const nx, ny = 600, 600
	fields := make([]VTIField, 13)
	for f := range fields {
		v := make([]float64, nx*ny)
		for k := range v {
			i, j := k%nx-nx/2, k/nx-ny/2
			if i*i+j*j > 280*280 {
				v[k] = math.NaN()
			} else {
				v[k] = float64(f+1) * (math.Sin(float64(i)/37) + 1e-4*float64(k%97))
			}
		}
		fields[f] = VTIField{Name: fmt.Sprintf("f%d", f), Values: v}
	}
	b.SetBytes(int64(13 * nx * ny * 4))
	for b.Loop() {
		if err := WriteVTICompressed(io.Discard, VTIGrid{Nx: nx, Ny: ny, SpacingMM: 0.5}, fields); err != nil {
			b.Fatal(err)
		}
	}
}

// TestVTIFieldAt: a field given cell by cell (VTIField.at, as vtiFields
// gives them) is written to the same bytes as the same values given as a
// slice, compressed (blocks filled one at a time, across block edges)
// and plain, for Float32 and UInt8 arrays.
func TestVTIFieldAt(t *testing.T) {
	for _, tc := range []struct{ nx, ny int }{{3, 2}, {128, 64}, {101, 99}, {300, 250}} {
		t.Run(fmt.Sprintf("%dx%d", tc.nx, tc.ny), func(t *testing.T) {
			n := tc.nx * tc.ny
			height := func(k int) float64 {
				if k%17 == 3 {
					return math.NaN()
				}
				return 1e3*math.Sin(float64(k)/7) + 1e-3*float64(k)
			}
			state := func(k int) float64 { return float64(k%5) - 1 }
			g := VTIGrid{Nx: tc.nx, Ny: tc.ny, X0MM: -1, Y0MM: 2, SpacingMM: 0.5}
			lazy := []VTIField{{Name: "height_um", at: height}, {Name: "cell_state", at: state, UInt8: true}}
			eager := make([]VTIField, len(lazy))
			for i, f := range lazy {
				eager[i] = VTIField{Name: f.Name, Values: f.valuesOf(n), UInt8: f.UInt8}
			}
			for _, w := range []struct {
				name  string
				write func(*bytes.Buffer, []VTIField) error
			}{
				{"compressed", func(b *bytes.Buffer, f []VTIField) error { return WriteVTICompressed(b, g, f) }},
				{"plain", func(b *bytes.Buffer, f []VTIField) error { return WriteVTI(b, g, f) }},
			} {
				var a, b bytes.Buffer
				if err := w.write(&a, lazy); err != nil {
					t.Fatal(err)
				}
				if err := w.write(&b, eager); err != nil {
					t.Fatal(err)
				}
				if !bytes.Equal(a.Bytes(), b.Bytes()) {
					t.Errorf("%s: fields given cell by cell are written differently", w.name)
				}
			}
		})
	}
}

// valuesOf returns fld's values on a grid of n cells as one slice.
func (fld VTIField) valuesOf(n int) []float64 {
	if fld.at == nil {
		return fld.Values
	}
	out := make([]float64, n)
	for k := range out {
		out[k] = fld.at(k)
	}
	return out
}
