package pipeline

import (
	"context"

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
