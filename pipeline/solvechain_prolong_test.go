package pipeline

import (
	"context"
	"errors"
	"math"
	"testing"

	"gapflux/thermal"
)

// TestProlong checks prolong against analytic fields: bilinear
// interpolation reproduces a field linear in x and y exactly (to rounding,
// 1e-9 K) between the outermost coarse centres, and with a single finite
// coarse value every output cell takes it (the nearest-value and mean
// fallbacks), for coarsening factors 2, 3 and 4; cells a mask leaves out
// are NaN and the others unchanged.
func TestProlong(t *testing.T) {
	g := thermal.Grid{Nx: 21, Ny: 17, CellM: 0.5e-3}
	for _, f := range []int{2, 3, 4} {
		o := f / 2
		cg := coarseGrid(g, f)
		// T = 300 + 2·x + 3·y in fine cell units at the coarse centres.
		lin := func(I, J float64) float64 { return 300 + 2*I + 3*J }
		v := make([]float64, cg.Len())
		for j := 0; j < cg.Ny; j++ {
			for i := 0; i < cg.Nx; i++ {
				v[j*cg.Nx+i] = lin(float64(f*i+o), float64(f*j+o))
			}
		}
		out := prolong(v, cg, g, f, nil)
		for J := o; J <= f*(cg.Ny-1)+o; J++ {
			for I := o; I <= f*(cg.Nx-1)+o; I++ {
				if got, want := out[J*g.Nx+I], lin(float64(I), float64(J)); math.Abs(got-want) > 1e-9 {
					t.Fatalf("f=%d: cell (%d, %d) = %.12g, want %.12g (linear field)", f, I, J, got, want)
				}
			}
		}
		// A mask: the cells it leaves out are NaN, the others as without it.
		need := make([]bool, g.Len())
		for k := range need {
			need[k] = k%3 != 0
		}
		for k, x := range prolong(v, cg, g, f, need) {
			if need[k] && x != out[k] || !need[k] && !math.IsNaN(x) {
				t.Fatalf("f=%d: masked cell %d (need %v) = %g, unmasked %g", f, k, need[k], x, out[k])
			}
		}
		// Holes: only one finite coarse value.
		one := make([]float64, cg.Len())
		for k := range one {
			one[k] = math.NaN()
		}
		one[cg.Len()/2] = 350
		for k, x := range prolong(one, cg, g, f, nil) {
			if x != 350 {
				t.Fatalf("f=%d: cell %d = %g with a single finite coarse value 350", f, k, x)
			}
		}
	}
}

// TestStartCoarse checks the coarse start of a chain's first solve on the
// default 200 mm base at 0.5 mm cells (hob top at 250 °C, a 0.3 mm rim
// lift): the solve from it converges to the solve from the built-in start
// (heat into the pan within 1e-8 relative: the outer tolerance, 1e-6 K,
// over tens of kelvin across the interface) in no more outer iterations;
// a base too small to hold a cell of the 2 mm grid leaves the built-in
// start; a cancelled context is an error.
func TestStartCoarse(t *testing.T) {
	p := fixtureProblem(t, 250, 0.3e-3, 0.5e-3, 0.1)
	plain, err := thermal.Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	c := &solveChain{solver: new(thermal.Solver)}
	if err := c.startCoarse(context.Background(), p, p.Interface, p.TWaterK); err != nil {
		t.Fatal(err)
	}
	if c.last == nil {
		t.Fatal("no coarse start on a 0.5 mm grid")
	}
	got, err := c.solve(context.Background(), p, p.Interface, p.TWaterK)
	if err != nil {
		t.Fatal(err)
	}
	if d := math.Abs(got.PowerW/plain.PowerW - 1); d > 1e-8 {
		t.Errorf("power %.9g W from the coarse start, %.9g W from the built-in start (relative %.2g)", got.PowerW, plain.PowerW, d)
	}
	if got.OuterIterations > plain.OuterIterations {
		t.Errorf("%d outer iterations from the coarse start, %d from the built-in start", got.OuterIterations, plain.OuterIterations)
	}
	t.Logf("outer iterations: %d from the coarse start, %d from the built-in start", got.OuterIterations, plain.OuterIterations)

	tiny := fixtureProblem(t, 250, 0, 0.5e-3, 0.5e-3) // 1 mm across: the one 2 mm cell centre lies off it
	c = &solveChain{solver: new(thermal.Solver)}
	if err := c.startCoarse(context.Background(), tiny, tiny.Interface, tiny.TWaterK); err != nil || c.last != nil {
		t.Errorf("tiny base: error %v, start set %v; want the built-in start", err, c.last != nil)
	}

	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	c = &solveChain{solver: new(thermal.Solver)}
	if err := c.startCoarse(ctx, p, p.Interface, p.TWaterK); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled: error %v, want context.Canceled", err)
	}
}
