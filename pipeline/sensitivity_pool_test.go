package pipeline

import (
	"context"
	"math"
	"testing"

	"gapflux/thermal"
)

// TestSensitivityPool: the moved-setting re-solves shared by two
// goroutines through a sensitivityPool give every side the powers that
// solving its cases one after another gives, to the bit, whichever
// goroutine and solver (one that solved a finer grid before) ran them;
// and a side that adds nothing (its steady solve failed) does not keep
// the other waiting.
func TestSensitivityPool(t *testing.T) {
	job := DefaultJob()
	p, flat := flatScene(t, job, 0.001) // 1 mm: coarsened 2-fold for the table
	ifaces := [2]thermal.Interface{constH(60), flat}
	var sols [2]*thermal.Solution
	var want [2]sidePowers
	for i, iface := range ifaces {
		q := *p
		q.Interface = iface
		s, err := thermal.Solve(&q)
		if err != nil {
			t.Fatal(err)
		}
		sols[i] = s
		want[i] = sensitivityOneByOne(t, job, p, iface, s)
		if len(want[i].casesW) != 6 {
			t.Fatalf("side %d: %d cases, want 6", i, len(want[i].casesW))
		}
	}
	for _, tc := range []struct {
		name   string
		failed int // side whose steady solve failed (adds nothing), −1 for none
	}{{"both sides", -1}, {"flat twin failed", 1}, {"scan failed", 0}} {
		t.Run(tc.name, func(t *testing.T) {
			pool := newSensitivityPool(2)
			var got [2]sidePowers
			var jobs [2][]*sensitivityJob
			var errs [2]error
			var svs [2]thermal.Solver
			side := func(i int) func() error {
				return func() error {
					func() {
						defer pool.done()
						if i == tc.failed {
							return
						}
						got[i], jobs[i], errs[i] = sensitivityBase(context.Background(), job, p, ifaces[i], sols[i], &svs[i])
						pool.add(jobs[i])
					}()
					pool.work(context.Background(), &svs[i])
					return errs[i]
				}
			}
			// A solver that kept a finer grid's buffers.
			q := *p
			q.Interface = ifaces[1]
			if _, err := svs[1].Solve(&q); err != nil {
				t.Fatal(err)
			}
			if e0, e1 := both(side(0), side(1)); e0 != nil || e1 != nil {
				t.Fatal(e0, e1)
			}
			for i := range got {
				if i == tc.failed {
					if got[i].casesW != nil {
						t.Errorf("side %d failed but has powers %v", i, got[i].casesW)
					}
					continue
				}
				for _, j := range jobs[i] {
					if j.err != nil {
						t.Errorf("side %d: %v", i, j.err)
					}
				}
				if math.Float64bits(got[i].baseW) != math.Float64bits(want[i].baseW) {
					t.Errorf("side %d: base power %.17g W, want %.17g W", i, got[i].baseW, want[i].baseW)
				}
				for c, w := range want[i].casesW {
					if math.Float64bits(got[i].casesW[c]) != math.Float64bits(w) {
						t.Errorf("side %d case %d: power %.17g W, want %.17g W (one after another)", i, c, got[i].casesW[c], w)
					}
				}
			}
		})
	}
}

// sensitivityOneByOne returns one side's sensitivity powers solved
// directly, each solve on a fresh solver: the coarse problem as reported,
// then each case's moved setting from its solution, but for a limiter
// move that cannot change the solve.
func sensitivityOneByOne(t *testing.T, job Job, prob *thermal.Problem, iface thermal.Interface, sol *thermal.Solution) sidePowers {
	t.Helper()
	p := coarsen(prob, coarseFactor(prob.Grid), iface, sol)
	p.TWaterK = job.Water.SteadyC + kelvin
	p.RelTol, p.OuterTolK = sensitivityRelTol, sensitivityOuterTol
	b, err := thermal.Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	out := sidePowers{baseW: b.PowerW}
	for _, c := range sensitivityCases(job) {
		if c.limiterK != 0 && b.DutyPct == 100 && b.RodK > 0 && b.RodK < p.Heater.LimiterK-math.Abs(c.limiterK) {
			out.casesW = append(out.casesW, b.PowerW) // the limiter stays off
			continue
		}
		q := *p
		q.InitialTPanK, q.InitialTGlassK, q.InitialDutyPct = b.TPanK, b.TGlassK, b.DutyPct
		c.edit(&q)
		s, err := thermal.Solve(&q)
		if err != nil {
			t.Fatal(err)
		}
		out.casesW = append(out.casesW, s.PowerW)
	}
	return out
}

// sensitivityInOrder solves one side's coarse problem, prob with iface on
// the 2 mm grid warm-started from sol (coarsen), as reported and with each
// case's setting moved, on solver sv, one solve after another: the tests'
// way to a side's table (the analysis shares the moved-setting solves of
// both sides between its two goroutines instead: sensitivityPool).
func sensitivityInOrder(ctx context.Context, job Job, prob *thermal.Problem, iface thermal.Interface, sol *thermal.Solution, sv *thermal.Solver) (sidePowers, error) {
	sp, jobs, err := sensitivityBase(ctx, job, prob, iface, sol, sv)
	if err != nil {
		return sidePowers{}, err
	}
	for _, j := range jobs {
		if j.run(ctx, sv); j.err != nil {
			return sidePowers{}, j.err
		}
	}
	return sp, nil
}
