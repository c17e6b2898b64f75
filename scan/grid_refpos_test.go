package scan

import (
	"gapflux/internal/fpfuse"
	"math"
	"math/rand/v2"
	"testing"
)

// TestResidualsAt: the residuals from the samples' precomputed places
// equal residuals' (interp's) bit for bit, next to undefined and infinite
// cells, on grid lines and corners, outside the grid, on 1, 2 and 4
// processors.
func TestResidualsAt(t *testing.T) {
	if fpfuse.Fuses() {
		t.Skip("this build fuses multiply-add (internal/fpfuse): interp and the fast path round differently")
	}
	r := rand.New(rand.NewPCG(11, 12))
	g := refGrid{nx: 11, ny: 8, x0: -0.004, y0: 0.001, h: 0.001}
	const n = 30000
	x, y, z := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		x[i] = g.x0 + (float64(g.nx)+2)*g.h*r.Float64() - g.h
		y[i] = g.y0 + (float64(g.ny)+2)*g.h*r.Float64() - g.h
		if i%4 == 0 { // exactly on a grid line or corner
			x[i] = g.x0 + float64(r.IntN(g.nx))*g.h
		}
		if i%8 == 0 {
			y[i] = g.y0 + float64(r.IntN(g.ny))*g.h
		}
		z[i] = 1e-3 * (r.Float64() - 0.5)
	}
	cellOf := make([]int32, n)
	pos := newRefPos(g, x, y, cellOf)
	for i := range n {
		if want := g.cell(x[i], y[i]); int(cellOf[i]) != want {
			t.Fatalf("sample %d at (%g, %g): cell %d, want %d", i, x[i], y[i], cellOf[i], want)
		}
	}
	for _, nanShare := range []float64{0, 0.1, 0.5, 1} {
		f := randomRefField(r, g, nanShare)
		if nanShare == 0.1 {
			f[23], f[40] = math.Inf(1), math.Inf(-1)
		}
		want := make([]float64, n)
		residuals(g, f, x, y, z, want)
		for _, p := range []int{1, 2, 4} {
			withProcs(p, func() {
				got := make([]float64, n)
				residualsAt(g, f, pos, x, y, z, got, nil)
				for i := range got {
					if math.Float64bits(got[i]) != math.Float64bits(want[i]) && !(math.IsNaN(got[i]) && math.IsNaN(want[i])) {
						t.Fatalf("NaN share %.1f, %d procs: residual %d at (%g, %g) = %g, want %g",
							nanShare, p, i, x[i], y[i], got[i], want[i])
					}
				}
			})
		}
	}
}
