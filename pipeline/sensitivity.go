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

// sensitivityCase moves one hob setting of a plate problem.
type sensitivityCase struct {
	setting, change string
	edit            func(p *thermal.Problem)
}

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
			}})
		}
		return out
	}
	limiter := "hob.limiter_c"
	if job.Hob.Mode == "solid-plate" {
		limiter = "hob.temperature_c"
	}
	for _, d := range []float64{-40, 40} {
		out = append(out, sensitivityCase{limiter, fmt.Sprintf("%+.0f K", d), heater(func(h *thermal.HeaterHob) { h.LimiterK += d })})
	}
	if job.Hob.Mode == "heater" {
		for _, d := range []float64{-0.1, 0.1} {
			out = append(out, sensitivityCase{"hob.glass_tau", fmt.Sprintf("%+.1f", d), heater(func(h *thermal.HeaterHob) {
				h.Coil.Tau = math.Min(math.Max(h.Coil.Tau+d, 0), 0.99)
			})})
		}
	}
	for _, s := range []float64{-0.1, 0.1} {
		out = append(out, sensitivityCase{"hob.heater_power_w", fmt.Sprintf("%+.0f %%", 100*s), heater(func(h *thermal.HeaterHob) { h.PowerW *= 1 + s })})
	}
	return out
}

// sensitivity re-solves the scan and its flat twin with each hob setting
// of sensitivityCases moved, every solve warm-started from the reported
// solution of the same interface (so each takes a few outer iterations),
// and returns the loss with each setting moved. solve is the analysis's
// plate solve of an edited problem.
func sensitivity(ctx context.Context, job Job, prob *thermal.Problem, scanIf, flatIf thermal.Interface,
	solScan, solFlat *thermal.Solution, solve func(context.Context, *thermal.Problem) (*thermal.Solution, error)) ([]SensitivityRow, error) {
	if solFlat.PowerW <= 0 {
		return nil, nil
	}
	base := 100 * (1 - solScan.PowerW/solFlat.PowerW)
	var rows []SensitivityRow
	for _, c := range sensitivityCases(job) {
		var pw [2]float64
		for i, run := range []struct {
			iface thermal.Interface
			start *thermal.Solution
		}{{scanIf, solScan}, {flatIf, solFlat}} {
			p := *prob
			p.Interface, p.TWaterK = run.iface, job.Water.SteadyC+kelvin
			p.InitialTPanK, p.InitialTGlassK, p.InitialDutyPct = run.start.TPanK, run.start.TGlassK, run.start.DutyPct
			c.edit(&p)
			s, err := solve(ctx, &p)
			if err != nil {
				return nil, fmt.Errorf("sensitivity to %s %s: %w", c.setting, c.change, err)
			}
			pw[i] = s.PowerW
		}
		loss := 100 * (1 - pw[0]/pw[1])
		rows = append(rows, SensitivityRow{Setting: c.setting, Change: c.change,
			LossPct: roundTo(loss, 3), DeltaLossPct: roundTo(loss-base, 3)})
	}
	return rows, nil
}
