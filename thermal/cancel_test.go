package thermal

import (
	"context"
	"errors"
	"testing"
)

// countdownCtx is a context whose Err turns to context.Canceled after n
// calls: a deterministic Ctrl-C in the middle of a solve.
type countdownCtx struct {
	context.Context
	n int
}

func (c *countdownCtx) Err() error {
	c.n--
	if c.n < 0 {
		return context.Canceled
	}
	return nil
}

// TestSolveContextCancelled: a solve stops with an error wrapping
// context.Canceled, whether the context is done before the start, during
// the outer iterations or inside a conjugate-gradient solve; the Solver is
// still usable afterwards and gives the uncancelled result.
func TestSolveContextCancelled(t *testing.T) {
	p := heaterScene(2e-3, stubH{solid: 0, gas: 300, rad: 0})
	var sv Solver
	want, err := sv.Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	calls := &countdownCtx{Context: context.Background(), n: 1 << 30}
	if _, err := sv.SolveContext(calls, p); err != nil {
		t.Fatal(err)
	}
	checks := 1<<30 - calls.n
	t.Logf("an uncancelled solve checks its context %d times", checks)
	if checks < 10 {
		t.Fatalf("the solve checked its context only %d times", checks)
	}
	done, cancel := context.WithCancel(context.Background())
	cancel()
	for _, tc := range []struct {
		name string
		ctx  context.Context
	}{
		{"before the start", done},
		{"after the first check", &countdownCtx{Context: context.Background(), n: 1}},
		{"half-way", &countdownCtx{Context: context.Background(), n: checks / 2}},
		{"at the last check", &countdownCtx{Context: context.Background(), n: checks - 1}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := sv.SolveContext(tc.ctx, p)
			if !errors.Is(err, context.Canceled) || s != nil {
				t.Fatalf("solution %v, error %v; want none and context.Canceled", s != nil, err)
			}
		})
	}
	got, err := sv.Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	if d := sameSolution(got, want); d != "" {
		t.Errorf("after cancelled solves the Solver gives another result: %s", d)
	}
}

// TestHeatupContextCancelled: the heat-up stops between power samples and
// between integration steps.
func TestHeatupContextCancelled(t *testing.T) {
	for _, n := range []int{0, 1, 3, 10} {
		ctx := &countdownCtx{Context: context.Background(), n: n}
		_, err := HeatupContext(ctx, scenarioLoad(), constPower(1500, 1800), HeatupOptions{PowerSamples: 3})
		if !errors.Is(err, context.Canceled) {
			t.Errorf("cancelled after %d checks: error %v, want context.Canceled", n, err)
		}
	}
	if _, err := HeatupContext(context.Background(), scenarioLoad(), constPower(1500, 1800), HeatupOptions{}); err != nil {
		t.Fatal(err)
	}
}
