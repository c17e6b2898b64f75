package pipeline

import (
	"math"
	"testing"

	"gapflux/thermal"
)

// TestProlong checks prolong against analytic fields: bilinear
// interpolation reproduces a field linear in x and y exactly (to rounding,
// 1e-9 K) between the outermost coarse centres, and with a single finite
// coarse value every output cell takes it (the nearest-value and mean
// fallbacks), for coarsening factors 2, 3 and 4.
func TestProlong(t *testing.T) {
	g := thermal.Grid{Nx: 21, Ny: 17, CellM: 0.5e-3}
	for _, f := range []int{2, 3, 4} {
		o := f / 2
		cg := thermal.Grid{Nx: (g.Nx - o + f - 1) / f, Ny: (g.Ny - o + f - 1) / f, CellM: g.CellM * float64(f)}
		// T = 300 + 2·x + 3·y in fine cell units at the coarse centres.
		lin := func(I, J float64) float64 { return 300 + 2*I + 3*J }
		v := make([]float64, cg.Len())
		for j := 0; j < cg.Ny; j++ {
			for i := 0; i < cg.Nx; i++ {
				v[j*cg.Nx+i] = lin(float64(f*i+o), float64(f*j+o))
			}
		}
		out := prolong(v, cg, g, f)
		for J := o; J <= f*(cg.Ny-1)+o; J++ {
			for I := o; I <= f*(cg.Nx-1)+o; I++ {
				if got, want := out[J*g.Nx+I], lin(float64(I), float64(J)); math.Abs(got-want) > 1e-9 {
					t.Fatalf("f=%d: cell (%d, %d) = %.12g, want %.12g (linear field)", f, I, J, got, want)
				}
			}
		}
		// Holes: only one finite coarse value.
		one := make([]float64, cg.Len())
		for k := range one {
			one[k] = math.NaN()
		}
		one[cg.Len()/2] = 350
		for k, x := range prolong(one, cg, g, f) {
			if x != 350 {
				t.Fatalf("f=%d: cell %d = %g with a single finite coarse value 350", f, k, x)
			}
		}
	}
}
