package pipeline

import (
	"bufio"
	"compress/zlib"
	"encoding/binary"
	"fmt"
	"hash/crc32"
	"image"
	"io"
)

// writeOpaquePNG writes the opaque image img as an 8-bit RGB PNG, each
// row filtered with None or Up, whichever gives the smaller sum of the
// filtered bytes' magnitudes as signed bytes (None on a tie), and deflated
// at the fastest level. image/png uses the same sum but tries all five
// filters; Sub, Average and Paeth took most of its encoding time on our
// pictures, for files 2 % smaller to 3 % larger than these (the demo's 27
// PNGs against image/png's default level, README "Performance"). The
// caller checks that img is opaque: its alpha is not written.
func writeOpaquePNG(w io.Writer, img *image.RGBA) error {
	b := img.Bounds()
	return writeFastPNG(w, b.Dx(), b.Dy(), pngRGB, func(y int, row []byte) {
		pix := img.Pix[img.PixOffset(b.Min.X, b.Min.Y+y):]
		for x := range b.Dx() {
			copy(row[3*x:3*x+3], pix[4*x:4*x+3])
		}
	})
}

// writeNRGBAPNG writes img as image/png would choose to, 8-bit RGB when
// it is opaque and 8-bit RGBA (non-premultiplied, as img) otherwise, so
// that the file decodes to the same pixels as png.Encode's; but filtered
// and deflated as writeOpaquePNG's: 8 to 10 times faster than image/png's
// default level, for a file twice the size (a 0.5 mm map's raster,
// BenchmarkEmbedRaster: 9–12 against 91–134 ms, 139 against 70 kB, on a
// busy 2-core host).
func writeNRGBAPNG(w io.Writer, img *image.NRGBA) error {
	b := img.Bounds()
	if img.Opaque() {
		return writeFastPNG(w, b.Dx(), b.Dy(), pngRGB, func(y int, row []byte) {
			pix := img.Pix[img.PixOffset(b.Min.X, b.Min.Y+y):]
			for x := range b.Dx() {
				copy(row[3*x:3*x+3], pix[4*x:4*x+3])
			}
		})
	}
	return writeFastPNG(w, b.Dx(), b.Dy(), pngRGBA, func(y int, row []byte) {
		copy(row, img.Pix[img.PixOffset(b.Min.X, b.Min.Y+y):])
	})
}

// PNG colour types written by writeFastPNG: truecolour, and truecolour
// with alpha, 8 bits a channel.
const (
	pngRGB  = 2
	pngRGBA = 6
)

// pngChannels is the number of bytes a pixel of a colour type takes.
func pngChannels(colorType byte) int {
	if colorType == pngRGBA {
		return 4
	}
	return 3
}

// writeFastPNG writes a width × height PNG of colorType (pngRGB or
// pngRGBA) whose row y fill puts into row (bytes of the pixels, left to
// right): each row filtered with None or Up and deflated at the fastest
// level, as writeOpaquePNG says.
func writeFastPNG(w io.Writer, width, height int, colorType byte, fill func(y int, row []byte)) error {
	var ihdr [13]byte
	binary.BigEndian.PutUint32(ihdr[0:], uint32(width))
	binary.BigEndian.PutUint32(ihdr[4:], uint32(height))
	ihdr[8], ihdr[9] = 8, colorType // 8 bits a channel; deflate, adaptive filtering, no interlace
	if _, err := io.WriteString(w, "\x89PNG\r\n\x1a\n"); err != nil {
		return fmt.Errorf("png signature: %w", err)
	}
	if err := writePNGChunk(w, "IHDR", ihdr[:]); err != nil {
		return err
	}
	// IDAT chunks of the buffer's 32 KiB, as image/png writes them (a
	// larger write from the compressor passes the buffer in one chunk).
	bw := bufio.NewWriterSize(idatWriter{w}, 1<<15)
	zw, err := zlib.NewWriterLevel(bw, zlib.BestSpeed)
	if err != nil {
		return fmt.Errorf("png deflate: %w", err)
	}
	n := pngChannels(colorType) * width
	prev, cur, out := make([]byte, n), make([]byte, n), make([]byte, 1+n)
	for y := range height {
		fill(y, cur)
		filterNoneOrUp(out, cur, prev)
		if _, err := zw.Write(out); err != nil {
			return fmt.Errorf("png row %d: %w", y, err)
		}
		prev, cur = cur, prev
	}
	if err := zw.Close(); err != nil {
		return fmt.Errorf("png deflate: %w", err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("png data: %w", err)
	}
	return writePNGChunk(w, "IEND", nil)
}

// filterNoneOrUp writes into out the filter type and the row cur
// filtered with None or with Up (minus the previous row prev, zeros
// above the first row), whichever has the smaller sum of magnitudes of
// its bytes read as signed (None on ties).
func filterNoneOrUp(out, cur, prev []byte) {
	var sumNone, sumUp int
	for i, c := range cur {
		sumNone += absInt8(c)
		sumUp += absInt8(c - prev[i])
	}
	if sumUp >= sumNone {
		out[0] = 0
		copy(out[1:], cur)
		return
	}
	out[0] = 2
	for i, c := range cur {
		out[1+i] = c - prev[i]
	}
}

// absInt8 is |b| with b read as a signed byte.
func absInt8(b byte) int {
	v := int(int8(b))
	if v < 0 {
		return -v
	}
	return v
}

// idatWriter writes each Write as one IDAT chunk.
type idatWriter struct{ w io.Writer }

func (iw idatWriter) Write(p []byte) (int, error) {
	if err := writePNGChunk(iw.w, "IDAT", p); err != nil {
		return 0, err
	}
	return len(p), nil
}

// writePNGChunk writes a PNG chunk: length, type, data and the CRC of
// type and data.
func writePNGChunk(w io.Writer, typ string, data []byte) error {
	var head [8]byte
	binary.BigEndian.PutUint32(head[:4], uint32(len(data)))
	copy(head[4:], typ)
	crc := crc32.NewIEEE()
	crc.Write(head[4:])
	crc.Write(data)
	var tail [4]byte
	binary.BigEndian.PutUint32(tail[:], crc.Sum32())
	for _, part := range [][]byte{head[:], data, tail[:]} {
		if _, err := w.Write(part); err != nil {
			return fmt.Errorf("png %s chunk: %w", typ, err)
		}
	}
	return nil
}
