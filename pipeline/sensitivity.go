package pipeline

import (
	"context"
	"fmt"
	"math"

	"gapflux/thermal"
)

// SensitivityRow is one line of the heat section's sensitivity table: the
// loss against the flat twin with one hob setting moved, scan and flat
// twin both re-solved (issue 9 part 6).
type SensitivityRow struct {
	Setting      string  `json:"setting"`        // the job key moved
	Change       string  `json:"change"`         // by how much ("+40 K", "-10 %")
	LossPct      float64 `json:"loss_pct"`       // loss_pct with the setting moved
	DeltaLossPct float64 `json:"delta_loss_pct"` // its change from the reported loss_pct, percentage points
}

// sensitivityCase moves one hob setting of a plate problem. limiterK,
// when not 0, is the change of the limiter setting, K: a solve whose heater
// ran at full duty with its sensed temperature more than |limiterK| below
// the limiter is the same with the limiter moved, and is not repeated.
type sensitivityCase struct {
	setting, change string
	edit            func(p *thermal.Problem)
	limiterK        float64
}

// Tolerances of the sensitivity re-solves: looser than the reported
// solve's (1e-10 and 1e-6 K), which moves loss_pct by under 1e-3 points
// (the powers to about 1e-6 relative) and halves the iterations.
const (
	sensitivityRelTol   = 1e-7
	sensitivityOuterTol = 1e-3 // K
)

// sensitivityCases returns the hob settings that drive loss_pct in the
// job's mode, each moved down and up: the limiter (regulator) setting by
// ±40 K, the glass window's transmittance by ±0.1 and the rated power by
// ±10 % (DESIGN 5.3; issue 9 part 6). The steps are ours.
func sensitivityCases(job Job) []sensitivityCase {
	heater := func(f func(h *thermal.HeaterHob)) func(p *thermal.Problem) {
		return func(p *thermal.Problem) {
			h := *p.Heater
			if h.Coil != nil {
				c := *h.Coil
				h.Coil = &c
			}
			f(&h)
			p.Heater = &h
		}
	}
	var out []sensitivityCase
	switch job.Hob.Mode {
	case "temperature":
		if !job.Hob.PowerLimited {
			return nil
		}
		for _, s := range []float64{-0.1, 0.1} {
			out = append(out, sensitivityCase{"rated power", fmt.Sprintf("%+.0f %%", 100*s), func(p *thermal.Problem) {
				t := *p.Temperature
				t.RatedPowerW *= 1 + s
				p.Temperature = &t
			}, 0})
		}
		return out
	}
	limiter := "hob.limiter_c"
	if job.Hob.Mode == "solid-plate" {
		limiter = "hob.temperature_c"
	}
	for _, d := range []float64{-40, 40} {
		out = append(out, sensitivityCase{limiter, fmt.Sprintf("%+.0f K", d), heater(func(h *thermal.HeaterHob) { h.LimiterK += d }), d})
	}
	if job.Hob.Mode == "heater" {
		for _, d := range []float64{-0.1, 0.1} {
			out = append(out, sensitivityCase{"hob.glass_tau", fmt.Sprintf("%+.1f", d), heater(func(h *thermal.HeaterHob) {
				h.Coil.Tau = math.Min(math.Max(h.Coil.Tau+d, 0), 0.99)
			}), 0})
		}
	}
	for _, s := range []float64{-0.1, 0.1} {
		out = append(out, sensitivityCase{"hob.heater_power_w", fmt.Sprintf("%+.0f %%", 100*s), heater(func(h *thermal.HeaterHob) { h.PowerW *= 1 + s }), 0})
	}
	return out
}

// sensitivityCellM is the cell of the grid the sensitivity re-solves run
// on: the analysis grid sampled every f cells, f the whole number nearest
// to 2 mm / cell (at least 1). Our choice: at 0.5 mm cells it cuts the
// cells 16-fold, and loss_pct of the demo's bases on 2 mm cells is within
// a point of the 0.5 mm figure, while only differences are taken.
const sensitivityCellM = 2e-3

// coarseFactor is the f of coarsen that takes grid g to the 2 mm grid of
// the sensitivity table and the coarse starts (sensitivityCellM): the
// whole number nearest to 2 mm / cell, at least 1.
func coarseFactor(g thermal.Grid) int {
	return max(1, int(math.Round(sensitivityCellM/g.CellM)))
}

// The sensitivity table gives loss_pct with each hob setting of
// sensitivityCases moved. The scan and its flat twin are solved on a
// coarser grid (coarsen; sensitivityCellM), once as reported and once per
// moved setting, warm-started from the analysis's solutions sampled to it
// and to the looser sensitivity tolerances (a limiter move that cannot
// change a solve is skipped): sensitivitySide, one per side, each on its
// own solver right after that side's steady solve (surfaceRun.solveBoth).
// Each row's DeltaLossPct is the coarse difference, and its LossPct the
// reported loss plus that difference (sensitivityRows).

// hasSensitivity reports whether the job's mode has sensitivity cases.
func hasSensitivity(job Job) bool { return len(sensitivityCases(job)) > 0 }

// sidePowers is one side's (scan or flat twin) part of the sensitivity
// table: the coarse power as reported and with each case's setting moved,
// W.
type sidePowers struct {
	baseW  float64
	casesW []float64
}

// sensitivityRows makes the table from both sides' coarse powers (scan
// first) and the reported solutions; nil when the flat twin's coarse
// power is not positive.
func sensitivityRows(job Job, solScan, solFlat *thermal.Solution, sides [2]sidePowers) []SensitivityRow {
	if sides[1].baseW <= 0 {
		return nil
	}
	reported := 100 * (1 - solScan.PowerW/solFlat.PowerW)
	base := 100 * (1 - sides[0].baseW/sides[1].baseW)
	var rows []SensitivityRow
	for c, cs := range sensitivityCases(job) {
		d := 100*(1-sides[0].casesW[c]/sides[1].casesW[c]) - base
		rows = append(rows, SensitivityRow{Setting: cs.setting, Change: cs.change,
			LossPct: roundTo(reported+d, 3), DeltaLossPct: roundTo(d, 3)})
	}
	return rows
}

// sensitivityBase solves one side's coarse problem, prob with iface on the
// 2 mm grid warm-started from sol (coarsen), as reported, on solver sv. It
// returns the side's powers with the reported coarse power and, for each
// case whose moved setting cannot change the solve, that power, and the
// re-solves of the other cases, each warm-started from the reported
// coarse solution, which fill in the rest when run.
func sensitivityBase(ctx context.Context, job Job, prob *thermal.Problem, iface thermal.Interface, sol *thermal.Solution, sv *thermal.Solver) (sidePowers, []*sensitivityJob, error) {
	cases := sensitivityCases(job)
	p := coarsen(prob, coarseFactor(prob.Grid), iface, sol)
	p.TWaterK = job.Water.SteadyC + kelvin
	p.RelTol, p.OuterTolK = sensitivityRelTol, sensitivityOuterTol
	b, err := sv.SolveContext(ctx, p)
	if err != nil {
		return sidePowers{}, nil, fmt.Errorf("sensitivity: coarse solve: %w", err)
	}
	pw := make([]float64, len(cases))
	var jobs []*sensitivityJob
	for i, c := range cases {
		if c.limiterK != 0 && b.DutyPct == 100 && b.RodK > 0 && b.RodK < p.Heater.LimiterK-math.Abs(c.limiterK) {
			pw[i] = b.PowerW
			continue
		}
		q := *p
		q.InitialTPanK, q.InitialTGlassK, q.InitialDutyPct = b.TPanK, b.TGlassK, b.DutyPct
		c.edit(&q)
		jobs = append(jobs, &sensitivityJob{setting: c.setting, change: c.change, prob: &q, powerW: &pw[i]})
	}
	return sidePowers{baseW: b.PowerW, casesW: pw}, jobs, nil
}

// sensitivityJob is one moved-setting re-solve of the sensitivity table:
// run solves prob and puts its power, W, into *powerW, or its error into
// err.
type sensitivityJob struct {
	setting, change string
	prob            *thermal.Problem
	powerW          *float64
	err             error
}

// run solves the job's problem on solver sv. The result does not depend
// on sv or on what it solved before (thermal.Solver), so that either side's
// goroutine may run it.
func (j *sensitivityJob) run(ctx context.Context, sv *thermal.Solver) {
	s, err := sv.SolveContext(ctx, j.prob)
	if err != nil {
		j.err = fmt.Errorf("sensitivity to %s %s: %w", j.setting, j.change, err)
		return
	}
	*j.powerW = s.PowerW
}

// coarsen returns the plate problem p on the grid that keeps every f-th
// cell in x and y (cell (f·i + f/2, f·j + f/2) of p's grid becomes cell
// (i, j), its centre unchanged), with the interface iface and the
// temperature-mode top sampled there, and the warm start sampled from
// sol. f = 1 returns a copy of p.
func coarsen(p *thermal.Problem, f int, iface thermal.Interface, sol *thermal.Solution) *thermal.Problem {
	q := *p
	g := p.Grid
	o := f / 2
	cg := coarseGrid(g, f)
	idx := make([]int, cg.Len())
	for j := 0; j < cg.Ny; j++ {
		for i := 0; i < cg.Nx; i++ {
			idx[j*cg.Nx+i] = (f*j+o)*g.Nx + f*i + o
		}
	}
	pick := func(v []float64) []float64 {
		if v == nil {
			return nil
		}
		out := make([]float64, len(idx))
		for k, fk := range idx {
			out[k] = v[fk]
		}
		return out
	}
	q.Grid = cg
	q.InBase = make([]bool, len(idx))
	for k, fk := range idx {
		q.InBase[k] = p.InBase[fk]
	}
	q.Interface = sampledInterface{iface, idx}
	if p.Temperature != nil {
		t := *p.Temperature
		t.TopK = pick(t.TopK)
		q.Temperature = &t
	}
	q.InitialTPanK, q.InitialTGlassK, q.InitialDutyPct = nil, nil, 0
	if sol != nil {
		// Only cells with a node are read by the solver; NaN elsewhere is fine.
		q.InitialTPanK, q.InitialTGlassK, q.InitialDutyPct = pick(sol.TPanK), pick(sol.TGlassK), sol.DutyPct
	}
	return &q
}

// coarseGrid returns the grid coarsen makes from g with factor f: every
// f-th cell in x and y, from cell (f/2, f/2), each keeping its centre.
func coarseGrid(g thermal.Grid, f int) thermal.Grid {
	o := f / 2
	return thermal.Grid{Nx: (g.Nx - o + f - 1) / f, Ny: (g.Ny - o + f - 1) / f, CellM: g.CellM * float64(f),
		X0M: g.X0M + float64(o)*g.CellM, Y0M: g.Y0M + float64(o)*g.CellM}
}

// sampledInterface is an interface evaluated at the fine-grid cells idx of
// a coarse grid's cells.
type sampledInterface struct {
	in  thermal.Interface
	idx []int
}

func (s sampledInterface) H(k int, tHobK, tPanK float64) (solid, gas, rad float64) {
	return s.in.H(s.idx[k], tHobK, tPanK)
}
