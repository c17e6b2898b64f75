package pipeline

import (
	"context"
	"fmt"
	"math"
	"slices"

	"gapflux/thermal"
)

// solveChain is one interface's run of plate solves: its own solver (work
// buffers) and the last solution, the warm start of its next solve. Two
// chains share nothing, so they may run in two goroutines.
type solveChain struct {
	solver *thermal.Solver
	last   *thermal.Solution
}

// solve solves prob with iface and the water at tWaterK, K, warm-started
// from the chain's previous solution.
func (c *solveChain) solve(ctx context.Context, prob *thermal.Problem, iface thermal.Interface, tWaterK float64) (*thermal.Solution, error) {
	p := *prob
	p.Interface, p.TWaterK = iface, tWaterK
	if w := c.last; w != nil {
		p.InitialTPanK, p.InitialTGlassK, p.InitialDutyPct = w.TPanK, w.TGlassK, w.DutyPct
	}
	s, err := c.solver.SolveContext(ctx, &p)
	if err == nil {
		c.last = s
	}
	return s, err
}

// startCoarse gives the chain, when it has no previous solution and
// prob's grid is finer than 2 mm, the solution of prob with iface and
// the water at tWaterK, K, on the grid coarsened to 2 mm (coarseFactor)
// (coarsen, to the sensitivity table's looser tolerances) and spread back
// to prob's grid (prolong) as the warm start of its first solve. The
// converged solve is the same to the solver's tolerances; the start only
// saves outer iterations: on the demo's bases 2 of 7 to 9, on a 0.5 mm
// grid 2 of 7 and 9. A coarse solve that fails, or holds no base cell,
// leaves the built-in start (only a cancelled ctx is an error).
func (c *solveChain) startCoarse(ctx context.Context, prob *thermal.Problem, iface thermal.Interface, tWaterK float64) error {
	f := coarseFactor(prob.Grid)
	if c.last != nil || f < 2 {
		return nil
	}
	q := coarsen(prob, f, iface, nil)
	q.TWaterK = tWaterK
	q.RelTol, q.OuterTolK = sensitivityRelTol, sensitivityOuterTol
	sol, err := c.solver.SolveContext(ctx, q)
	if err != nil {
		if ctx.Err() != nil {
			return fmt.Errorf("coarse start: %w", err)
		}
		return nil
	}
	if !slices.ContainsFunc(sol.TPanK, func(t float64) bool { return !math.IsNaN(t) }) {
		return nil
	}
	c.last = &thermal.Solution{TPanK: prolong(sol.TPanK, q.Grid, prob.Grid, f, prob.InBase), DutyPct: sol.DutyPct}
	if sol.TGlassK != nil {
		c.last.TGlassK = prolong(sol.TGlassK, q.Grid, prob.Grid, f, glassNeed(prob))
	}
	return nil
}

// glassNeed returns the cells of prob's grid whose glass node the solver
// may read a start from: those whose centre lies within the glass radius
// of the zone centre, widened by two cells so that a centre on the rim,
// however rounded, is in (nil without a heater). Beyond it, up to a fifth
// of a square heater grid, the glass start is left NaN, which saves
// prolong the nearest-value search of every such cell (the values inside
// are the same: prolong spreads each cell on its own).
func glassNeed(prob *thermal.Problem) []bool {
	h, g := prob.Heater, prob.Grid
	if h == nil {
		return nil
	}
	need := make([]bool, g.Len())
	r := h.GlassRadiusM + 2*g.CellM
	for k := range need {
		x, y := g.CentreM(k)
		dx, dy := x-h.ZoneCentreM[0], y-h.ZoneCentreM[1]
		need[k] = dx*dx+dy*dy <= r*r
	}
	return need
}

// prolong spreads v, a field on the coarse grid cg that coarsen made from
// the grid g with factor f, back to g: each cell of g takes the mean of the
// finite values of the (up to four) coarse cells whose centres surround its
// centre, bilinearly weighted, or else the nearest finite coarse value
// within four coarse cells, or else the mean of all finite values. Every
// cell of the result is finite when v has a finite value, except that with
// need not nil the cells k with need[k] false are NaN: the solver reads a
// start only at its active nodes, and the pan layer's grid is mostly
// uncovered glass, where the nearest-value search would cost more than
// the rest of the spread (about 0.15 s of CPU on a 0.5 mm heater grid).
func prolong(v []float64, cg, g thermal.Grid, f int, need []bool) []float64 {
	var sum float64
	var n int
	for _, x := range v {
		if !math.IsNaN(x) {
			sum, n = sum+x, n+1
		}
	}
	mean := sum / float64(n)
	o := f / 2
	out := make([]float64, g.Len())
	at := func(i, j int) float64 {
		if i < 0 || j < 0 || i >= cg.Nx || j >= cg.Ny {
			return math.NaN()
		}
		return v[j*cg.Nx+i]
	}
	for J := 0; J < g.Ny; J++ {
		y := float64(J-o) / float64(f)
		j0 := int(math.Floor(y))
		wy := y - float64(j0)
		for I := 0; I < g.Nx; I++ {
			if need != nil && !need[J*g.Nx+I] {
				out[J*g.Nx+I] = math.NaN()
				continue
			}
			x := float64(I-o) / float64(f)
			i0 := int(math.Floor(x))
			wx := x - float64(i0)
			var s, w float64
			for _, c := range [4]struct {
				i, j int
				w    float64
			}{{i0, j0, (1 - wx) * (1 - wy)}, {i0 + 1, j0, wx * (1 - wy)}, {i0, j0 + 1, (1 - wx) * wy}, {i0 + 1, j0 + 1, wx * wy}} {
				if t := at(c.i, c.j); c.w > 0 && !math.IsNaN(t) {
					s, w = s+c.w*t, w+c.w
				}
			}
			if w > 0 {
				out[J*g.Nx+I] = s / w
				continue
			}
			out[J*g.Nx+I] = nearestFinite(at, int(math.Round(x)), int(math.Round(y)), 4, mean)
		}
	}
	return out
}

// nearestFinite returns the first finite at(i, j) on the square rings
// about (i0, j0) out to radius r, or else fallback.
func nearestFinite(at func(i, j int) float64, i0, j0, r int, fallback float64) float64 {
	for d := 0; d <= r; d++ {
		for j := j0 - d; j <= j0+d; j++ {
			for i := i0 - d; i <= i0+d; i++ {
				if max(abs(i-i0), abs(j-j0)) != d {
					continue
				}
				if t := at(i, j); !math.IsNaN(t) {
					return t
				}
			}
		}
	}
	return fallback
}

func abs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}

// both runs a and b at once (b in a new goroutine) and returns their
// errors. A panic in b is raised again in the caller's goroutine, so that
// the batch's recover still turns it into a failed scan.
func both(a, b func() error) (errA, errB error) {
	done := make(chan struct{})
	var panicked any
	go func() {
		defer close(done)
		defer func() { panicked = recover() }()
		errB = b()
	}()
	errA = a()
	<-done
	if panicked != nil {
		panic(panicked)
	}
	return errA, errB
}
