package scan

import (
	"math"

	"gapflux/internal/hugemem"
	"gapflux/internal/parallel"
)

// binParts returns the number of contiguous sample ranges sortByCell
// splits n samples binned into nc cells between: one per processor, but
// few enough that the ranges' own counts (4 bytes per cell each) stay
// within the size of two coordinate arrays of the samples (16 bytes per
// sample), so a fine grid over few samples is binned on one processor.
func binParts(n, nc int) int {
	return max(1, min(rowParts(n), 1+4*n/max(nc, 1)))
}

// cellBins are samples binned by cell: cell q's are
// order[start[q]:start[q+1]], in index order.
type cellBins struct {
	order, start []int32
}

// sortByCell bins the samples 0 … n−1 (n = len(cellOf)) into nc cells,
// cellOf[i] being the cell of sample i (−1 leaves it out), and returns
// the samples sorted by cell and, within a cell, by index (a stable
// counting sort): cell q's are order[start[q]:start[q+1]].
//
// Contiguous ranges of samples are counted at once, each into counts of
// its own; a pass over the cells turns the counts into each range's
// offsets (range t's samples of a cell follow those of ranges 0 … t−1),
// and the ranges then place their samples at once. The result is the
// sequential sort's for any number of ranges.
func sortByCell(cellOf []int32, nc int) (order, start []int32) {
	n := len(cellOf)
	parts := binParts(n, nc)
	next := make([][]int32, parts)
	parallel.Do(n, parts, func(t, i0, i1 int) {
		c := make([]int32, nc)
		for _, q := range cellOf[i0:i1] {
			if q >= 0 {
				c[q]++
			}
		}
		next[t] = c
	})
	start = make([]int32, nc+1)
	sum := int32(0)
	for q := range nc {
		start[q] = sum
		for _, c := range next {
			k := c[q]
			c[q] = sum
			sum += k
		}
	}
	start[nc] = sum
	order = hugemem.Make[int32](int(sum), 0)
	parallel.Do(n, parts, func(t, i0, i1 int) {
		c := next[t]
		for i := i0; i < i1; i++ {
			if q := cellOf[i]; q >= 0 {
				order[c[q]] = int32(i)
				c[q]++
			}
		}
	})
	return order, start
}

// gridCells returns the cell of s holding each point (x[i], y[i]), −1 off
// the grid (gridIndex); ranges of points at once.
func gridCells(s *Surface, x, y []float64) []int32 {
	cellOf := hugemem.Make[int32](len(x), 0)
	parallelRows(len(x), func(i0, i1 int) {
		for i := i0; i < i1; i++ {
			cellOf[i] = int32(gridIndex(s, x[i], y[i]))
		}
	})
	return cellOf
}

// bounds returns the smallest and largest x and y, m (+Inf and −Inf for
// no samples). Ranges of samples are scanned at once: min and max give the
// same answer in any order.
func bounds(x, y []float64) (xmin, xmax, ymin, ymax float64) {
	parts := rowParts(len(x))
	b := make([][4]float64, parts)
	parallel.Do(len(x), parts, func(t, i0, i1 int) {
		lx, hx, ly, hy := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
		for i := i0; i < i1; i++ {
			lx, hx = min(lx, x[i]), max(hx, x[i])
			ly, hy = min(ly, y[i]), max(hy, y[i])
		}
		b[t] = [4]float64{lx, hx, ly, hy}
	})
	xmin, xmax, ymin, ymax = math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for _, v := range b {
		xmin, xmax = min(xmin, v[0]), max(xmax, v[1])
		ymin, ymax = min(ymin, v[2]), max(ymax, v[3])
	}
	return xmin, xmax, ymin, ymax
}
