package pipeline

import (
	"math"
	"testing"

	"gapflux/thermal"
)

// TestGlassNeed: glassNeed holds every cell where the solver has a glass
// node (a finite TGlassK), for a zone at the grid's centre and off it,
// and leaves out the grid's corners beyond the glass disc (the cells whose
// nearest-value search it saves); the glass start spread with it is the
// same, at every glass node, as the one spread without it.
func TestGlassNeed(t *testing.T) {
	job := DefaultJob()
	p, flat := flatScene(t, job, 0.002)
	for _, tc := range []struct {
		name   string
		centre [2]float64 // zone centre, m
	}{{"centred", [2]float64{}}, {"off centre", [2]float64{0.006, -0.0047}}} {
		t.Run(tc.name, func(t *testing.T) {
			q := *p
			h := *q.Heater
			h.ZoneCentreM = tc.centre
			q.Heater = &h
			sol, err := thermal.Solve(&q)
			if err != nil {
				t.Fatal(err)
			}
			need := glassNeed(&q)
			nodes, extra := 0, 0
			for k, tg := range sol.TGlassK {
				switch {
				case !math.IsNaN(tg) && !need[k]:
					t.Fatalf("cell %d has a glass node (%.6g K) but glassNeed leaves it out", k, tg)
				case !math.IsNaN(tg):
					nodes++
				case need[k]:
					extra++
				}
			}
			// The widened rim: about 2π·r·(2 cells)/cell² cells, at most 3 cells wide.
			if rim := 2 * math.Pi * h.GlassRadiusM * 3 / q.Grid.CellM; nodes == 0 || float64(extra) > rim {
				t.Errorf("%d glass nodes, %d needed cells without one (want at most %.0f)", nodes, extra, rim)
			}
			if need[0] || need[len(need)-1] {
				t.Errorf("a corner of the grid is needed (glass radius %g m)", h.GlassRadiusM)
			}
			// The start spread from a coarse solve, with and without the mask.
			f := 2
			cq := coarsen(&q, f, flat, nil)
			cs, err := thermal.Solve(cq)
			if err != nil {
				t.Fatal(err)
			}
			all := prolong(cs.TGlassK, cq.Grid, q.Grid, f, nil)
			for k, v := range prolong(cs.TGlassK, cq.Grid, q.Grid, f, need) {
				if !math.IsNaN(sol.TGlassK[k]) && math.Float64bits(v) != math.Float64bits(all[k]) {
					t.Fatalf("glass node %d: start %.17g K with the mask, %.17g K without", k, v, all[k])
				}
			}
		})
	}
}
