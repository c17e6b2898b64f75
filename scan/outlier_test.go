package scan

import (
	"gapflux/internal/fpfuse"
	"math"
	"math/rand/v2"
	"testing"
)

// interpRef is refGrid.interp written plainly: the bilinear weights
// renormalised over the defined corners of weight > 0, else the nearest
// cell's value.
func interpRef(g refGrid, f []float64, x, y float64) float64 {
	fi, fj := (x-g.x0)/g.h, (y-g.y0)/g.h
	i := min(max(int(math.Floor(fi)), 0), g.nx-2)
	j := min(max(int(math.Floor(fj)), 0), g.ny-2)
	tx, ty := min(max(fi-float64(i), 0), 1), min(max(fj-float64(j), 0), 1)
	q := j*g.nx + i
	idx := [4]int{q, q + 1, q + g.nx, q + g.nx + 1}
	wt := [4]float64{(1 - tx) * (1 - ty), tx * (1 - ty), (1 - tx) * ty, tx * ty}
	var s, w float64
	for k := range 4 {
		if v := f[idx[k]]; !math.IsNaN(v) && wt[k] > 0 {
			s += wt[k] * v
			w += wt[k]
		}
	}
	if w == 0 {
		return f[g.cell(x, y)]
	}
	return s / w
}

// randomRefField returns heights (m) on the reference grid g, up to
// ±50 µm, every fifth −0 and a share nanShare of them undefined (NaN).
func randomRefField(r *rand.Rand, g refGrid, nanShare float64) []float64 {
	f := make([]float64, g.nx*g.ny)
	for q := range f {
		f[q] = 1e-4 * (r.Float64() - 0.5)
		if q%5 == 0 {
			f[q] = -0.0
		}
		if r.Float64() < nanShare {
			f[q] = math.NaN()
		}
	}
	return f
}

// TestRefGridInterp: the interpolation (with its fast path for four
// defined corners) gives the plain formula's value bit for bit, on grid
// lines and corners, off the grid and next to undefined cells.
func TestRefGridInterp(t *testing.T) {
	if fpfuse.Fuses() {
		t.Skip("this build fuses multiply-add (internal/fpfuse): the plain formula rounds differently from the fast path")
	}
	r := rand.New(rand.NewPCG(7, 8))
	g := refGrid{nx: 9, ny: 7, x0: -0.004, y0: 0.001, h: 0.001}
	for _, nanShare := range []float64{0, 0.2, 0.6, 1} {
		f := randomRefField(r, g, nanShare)
		for n := 0; n < 20000; n++ {
			x := g.x0 + (float64(g.nx)+2)*g.h*r.Float64() - g.h
			y := g.y0 + (float64(g.ny)+2)*g.h*r.Float64() - g.h
			if n%4 == 0 { // exactly on a grid line or corner
				x = g.x0 + float64(r.IntN(g.nx))*g.h
			}
			if n%8 == 0 {
				y = g.y0 + float64(r.IntN(g.ny))*g.h
			}
			got, want := g.interp(f, x, y), interpRef(g, f, x, y)
			if math.Float64bits(got) != math.Float64bits(want) && !(math.IsNaN(got) && math.IsNaN(want)) {
				t.Fatalf("NaN share %.1f: interp(%g, %g) = %g, want %g", nanShare, x, y, got, want)
			}
		}
	}
}
