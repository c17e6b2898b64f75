package scan

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// medianBenchSets returns count slices of n heights, m: scanner noise of
// 8 µm about a height that differs between slices (a cell's samples).
func medianBenchSets(n, count int) [][]float64 {
	r := rand.New(rand.NewPCG(1, uint64(n)))
	sets := make([][]float64, count)
	for s := range sets {
		z0 := 1e-3 * r.Float64()
		a := make([]float64, n)
		for i := range a {
			a[i] = z0 + 8e-6*r.NormFloat64()
		}
		sets[s] = a
	}
	return sets
}

// benchMedians runs median on copies of 1024 sets of n noisy heights in
// turn (a copy per call, as the callers gather theirs).
func benchMedians(b *testing.B, n int, median func([]float64) float64) {
	sets := medianBenchSets(n, 1024)
	buf := make([]float64, n)
	sink := 0.0
	i := 0
	for b.Loop() {
		copy(buf, sets[i&1023])
		sink += median(buf)
		i++
	}
	if sink == 0 {
		b.Log(sink)
	}
}

// BenchmarkMedianOf compares medianOf with medianInPlace (its reference)
// on the slice lengths the grid's callers see most: 16 samples a cell
// (binCloud), 49 cells a window (windowMedians), 64 samples a reference
// cell (refStart).
func BenchmarkMedianOf(b *testing.B) {
	for _, n := range []int{4, 16, 49, 64} {
		b.Run(fmt.Sprintf("n=%d/old", n), func(b *testing.B) { benchMedians(b, n, medianInPlace) })
		b.Run(fmt.Sprintf("n=%d/new", n), func(b *testing.B) { benchMedians(b, n, medianOf) })
	}
}

// dishRefField returns a reference grid of 1 mm cells over a 210 mm
// square and cell medians of a 200 mm dish on it (0.4 mm sag, 1 µm
// noise; NaN off the base), m.
func dishRefField() (refGrid, []float64) {
	r := rand.New(rand.NewPCG(2, 3))
	g := refGrid{nx: 210, ny: 210, h: 1e-3}
	f := make([]float64, g.nx*g.ny)
	for q := range f {
		x, y := float64(q%g.nx-g.nx/2)*g.h, float64(q/g.nx-g.ny/2)*g.h
		rr := (x*x + y*y) / (0.1 * 0.1)
		f[q] = nan
		if rr <= 1 {
			f[q] = 0.4e-3*(1-rr) + 1e-6*r.NormFloat64()
		}
	}
	return g, f
}

// BenchmarkWindowMedians compares, on one worker, windowRowMedians with
// gathering every window and taking medianInPlace of it (the former
// code), over a dish's reference grid.
func BenchmarkWindowMedians(b *testing.B) {
	g, med := dishRefField()
	out := make([]float64, g.nx*g.ny)
	buf := make([]float64, 0, (2*refMedianHalf+1)*(2*refMedianHalf+1))
	for _, v := range []struct {
		name string
		run  func()
	}{
		{"old", func() {
			for q := range out {
				buf = gatherWindow(g, med, q%g.nx, q/g.nx, buf)
				out[q] = nan
				if len(buf) > 0 {
					out[q] = medianInPlace(buf)
				}
			}
		}},
		{"new", func() {
			for j := range g.ny {
				buf = windowRowMedians(g, med, j, out[j*g.nx:(j+1)*g.nx], buf)
			}
		}},
	} {
		b.Run(v.name, func(b *testing.B) {
			for b.Loop() {
				v.run()
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(out)), "ns/cell")
		})
	}
}

// gatherWindow returns the non-NaN values of med over the window of cell
// (i, j), row by row, in buf's storage.
func gatherWindow(g refGrid, med []float64, i, j int, buf []float64) []float64 {
	buf = buf[:0]
	for jj := max(0, j-refMedianHalf); jj <= min(g.ny-1, j+refMedianHalf); jj++ {
		for ii := max(0, i-refMedianHalf); ii <= min(g.nx-1, i+refMedianHalf); ii++ {
			if v := med[jj*g.nx+ii]; !math.IsNaN(v) {
				buf = append(buf, v)
			}
		}
	}
	return buf
}

// BenchmarkCellMediansPLY2M compares medianOf with medianInPlace on the
// heights of the cells of the levelled 2 million point scan (0.125 mm
// spacing), gathered in index order as refStart and binCloud do: on the
// reference grid (1 mm cells, about 64 samples) and on a 0.5 mm grid
// like binCloud's (about 16). ns/cell is per cell holding samples.
func BenchmarkCellMediansPLY2M(b *testing.B) {
	l := levelledFile(b, benchPLY)
	pts := l.Cloud.Points
	x, y, z := make([]float64, len(pts)), make([]float64, len(pts)), make([]float64, len(pts))
	for i, p := range pts {
		x[i], y[i], z[i] = p.X, p.Y, p.Z
	}
	for _, grid := range []struct {
		name  string
		cellM float64
	}{{"ref-1mm", OutlierCutoffM / refCellsPerCutoff}, {"grid-0.5mm", 0.5e-3}} {
		cells := cellHeights(newRefGrid(x, y, grid.cellM), x, y, z)
		for _, m := range []struct {
			name   string
			median func([]float64) float64
		}{{"old", medianInPlace}, {"new", medianOf}} {
			b.Run(grid.name+"/"+m.name, func(b *testing.B) {
				var buf []float64
				for b.Loop() {
					for _, a := range cells {
						buf = append(buf[:0], a...)
						m.median(buf)
					}
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(cells)), "ns/cell")
			})
		}
	}
}

// cellHeights returns the heights of each cell of g holding samples, in
// index order.
func cellHeights(g refGrid, x, y, z []float64) [][]float64 {
	cellOf := make([]int32, len(z))
	for i := range z {
		cellOf[i] = int32(g.cell(x[i], y[i]))
	}
	byCell, start := sortByCell(cellOf, g.nx*g.ny)
	var cells [][]float64
	for q := range g.nx * g.ny {
		if start[q] == start[q+1] {
			continue
		}
		a := make([]float64, 0, start[q+1]-start[q])
		for _, i := range byCell[start[q]:start[q+1]] {
			a = append(a, z[i])
		}
		cells = append(cells, a)
	}
	return cells
}
