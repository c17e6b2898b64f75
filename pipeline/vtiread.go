package pipeline

import (
	"bytes"
	"compress/zlib"
	"encoding/base64"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"regexp"
	"strconv"
	"strings"
)

// VTIData is what ReadVTI returns: the grid and the named arrays asked for,
// as float64 (NaN kept), indexed j·Nx + i.
type VTIData struct {
	Grid   VTIGrid
	Fields map[string][]float64
}

var (
	vtiExtentRe  = regexp.MustCompile(`<ImageData WholeExtent="0 (\d+) 0 (\d+) 0 0" Origin="(\S+) (\S+) 0" Spacing="(\S+) (\S+) 1">`)
	vtiArrayRe   = regexp.MustCompile(`<DataArray type="(Float32|UInt8)" Name="([A-Za-z0-9_]+)" format="(binary|appended)"(?: offset="(\d+)")?`)
	vtiVersionRe = regexp.MustCompile(`<VTKFile type="ImageData" version="(0\.1|1\.0)" byte_order="LittleEndian" header_type="(UInt32|UInt64)"`)
)

// ReadVTI reads the named arrays of a fields.vti written by WriteVTI or
// WriteVTICompressed (the two layouts this program writes; other VTK files
// are refused). maxCells bounds the grid before anything is allocated for
// it, and the file may be at most 16 + 40 bytes per cell plus 1 MiB.
func ReadVTI(path string, maxCells int, names ...string) (*VTIData, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, errors.Unwrap(err))
	}
	if lim := int64(maxCells)*56 + 1<<20; st.Size() > lim {
		return nil, fmt.Errorf("%s: %d bytes, more than a field file of at most %d cells holds; is it a gapflux fields.vti?", path, st.Size(), maxCells)
	}
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	bad := func(format string, a ...any) error {
		return fmt.Errorf("%s: not a gapflux fields.vti: %s; write it again with gapflux analyze --out", path, fmt.Sprintf(format, a...))
	}
	headEnd := bytes.Index(raw, []byte("<AppendedData"))
	if headEnd < 0 {
		headEnd = len(raw)
	}
	head := string(raw[:headEnd])
	ver := vtiVersionRe.FindStringSubmatch(head)
	if ver == nil {
		return nil, bad("no VTKFile ImageData element of version 0.1 or 1.0, little-endian")
	}
	m := vtiExtentRe.FindStringSubmatch(head)
	if m == nil {
		return nil, bad("no ImageData extent, origin and spacing")
	}
	var g VTIGrid
	nx, err1 := strconv.Atoi(m[1])
	ny, err2 := strconv.Atoi(m[2])
	x0, err3 := strconv.ParseFloat(m[3], 64)
	y0, err4 := strconv.ParseFloat(m[4], 64)
	sp, err5 := strconv.ParseFloat(m[5], 64)
	if err := errors.Join(err1, err2, err3, err4, err5); err != nil || nx < 1 || ny < 1 || m[5] != m[6] ||
		!(sp > 0 && sp < 1e3) || math.IsNaN(x0) || math.IsInf(x0, 0) || math.IsNaN(y0) || math.IsInf(y0, 0) {
		return nil, bad("grid %s×%s cells of %s mm at (%s, %s) is not valid", m[1], m[2], m[5], m[3], m[4])
	}
	g = VTIGrid{Nx: nx + 1, Ny: ny + 1, X0MM: x0, Y0MM: y0, SpacingMM: sp}
	n := g.Nx * g.Ny
	if g.Nx > maxCells || n > maxCells {
		return nil, bad("%d×%d cells, more than limits.max_cells = %d", g.Nx, g.Ny, maxCells)
	}
	var appended []byte
	if headEnd < len(raw) {
		u := bytes.IndexByte(raw[headEnd:], '_')
		if u < 0 {
			return nil, bad("AppendedData without its leading underscore")
		}
		appended = raw[headEnd+u+1:]
	}
	out := &VTIData{Grid: g, Fields: map[string][]float64{}}
	for _, loc := range vtiArrayRe.FindAllStringSubmatchIndex(head, -1) {
		name := head[loc[4]:loc[5]]
		if !wanted(name, names) {
			continue
		}
		typ, format := head[loc[2]:loc[3]], head[loc[6]:loc[7]]
		var data []byte
		var err error
		if format == "binary" {
			data, err = vtiInline(head[loc[1]:], ver[2])
		} else {
			off := -1
			if loc[8] >= 0 {
				off, _ = strconv.Atoi(head[loc[8]:loc[9]])
			}
			data, err = vtiAppended(appended, off, n*4)
		}
		if err != nil {
			return nil, bad("array %s: %v", name, err)
		}
		vals, err := vtiValues(data, typ, n)
		if err != nil {
			return nil, bad("array %s: %v", name, err)
		}
		out.Fields[name] = vals
	}
	for _, name := range names {
		if out.Fields[name] == nil {
			return nil, bad("no array %s", name)
		}
	}
	return out, nil
}

func wanted(name string, names []string) bool {
	for _, n := range names {
		if n == name {
			return true
		}
	}
	return false
}

// vtiInline decodes a base64 array that follows its DataArray tag, led by
// a UInt32 byte count.
func vtiInline(rest, header string) ([]byte, error) {
	gt := strings.IndexByte(rest, '>')
	end := strings.Index(rest, "</DataArray>")
	if gt < 0 || end < gt || header != "UInt32" {
		return nil, errors.New("inline data not found")
	}
	b, err := base64.StdEncoding.DecodeString(strings.TrimSpace(rest[gt+1 : end]))
	if err != nil || len(b) < 4 {
		return nil, errors.New("inline data is not base64")
	}
	size := binary.LittleEndian.Uint32(b)
	if uint64(size) != uint64(len(b)-4) {
		return nil, fmt.Errorf("byte count %d, data holds %d", size, len(b)-4)
	}
	return b[4:], nil
}

// vtiAppended decompresses one array of the appended section at offset
// off: zlib blocks behind a UInt64 header (see WriteVTICompressed), at
// most maxBytes once decompressed.
func vtiAppended(app []byte, off, maxBytes int) ([]byte, error) {
	if off < 0 || off+24 > len(app) {
		return nil, fmt.Errorf("offset %d outside the appended data (%d bytes)", off, len(app))
	}
	h := app[off:]
	word := func(i int) uint64 { return binary.LittleEndian.Uint64(h[8*i:]) }
	nb, bs, last := word(0), word(1), word(2)
	if nb == 0 || bs == 0 || nb*bs > uint64(maxBytes)+bs || uint64(len(h)) < 8*(3+nb) {
		return nil, fmt.Errorf("compressed header of %d blocks of %d bytes does not fit", nb, bs)
	}
	pos := 8 * (3 + nb)
	var out bytes.Buffer
	for b := range nb {
		cs := word(int(3 + b))
		if cs > uint64(len(h))-pos {
			return nil, fmt.Errorf("block %d runs past the end of the file", b)
		}
		zr, err := zlib.NewReader(bytes.NewReader(h[pos : pos+cs]))
		if err != nil {
			return nil, fmt.Errorf("block %d: %w", b, err)
		}
		want := bs
		if b == nb-1 && last != 0 {
			want = last
		}
		k, err := io.Copy(&out, io.LimitReader(zr, int64(want)+1))
		if err != nil || uint64(k) != want {
			return nil, fmt.Errorf("block %d holds %d bytes, want %d (%v)", b, k, want, err)
		}
		pos += cs
	}
	return out.Bytes(), nil
}

// vtiValues turns stored bytes into n values.
func vtiValues(data []byte, typ string, n int) ([]float64, error) {
	out := make([]float64, n)
	switch {
	case typ == "UInt8" && len(data) == n:
		for i, b := range data {
			out[i] = float64(b)
		}
	case typ == "Float32" && len(data) == 4*n:
		for i := range out {
			out[i] = float64(math.Float32frombits(binary.LittleEndian.Uint32(data[4*i:])))
		}
	default:
		return nil, fmt.Errorf("%d bytes of %s for %d cells", len(data), typ, n)
	}
	return out, nil
}
