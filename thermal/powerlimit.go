package thermal

import (
	"context"
	"fmt"
	"math"
)

// Tolerances of the power-limited temperature mode.
const (
	powerLimitRelTol = 1e-7 // |P − P_rated| / P_rated at which the top shift is accepted
	powerLimitMaxIt  = 40   // solves before solvePowerLimited gives up
)

// solvePowerLimited solves a temperature-mode problem whose hob cannot
// deliver more than p.Temperature.RatedPowerW (DESIGN 5.3, issue 9 part 3).
// It solves at the set point first; if the heat into the pan exceeds the
// rated power it finds the uniform shift δ ≥ 0 of the top field, T_top =
// TopK − δ, at which the heat into the pan equals the rated power. The heat
// P(δ) decreases monotonically in δ (every conductance is non-negative), so
// the root is bracketed by δ = 0 and the δ at which the mean top reaches
// the water; it is found by regula falsi (Illinois), each solve warm-started
// from the last, starting from the secant through P = 0 at that δ.
func (sv *Solver) solvePowerLimited(ctx context.Context, p *Problem) (*Solution, error) {
	rated := p.Temperature.RatedPowerW
	sol, err := sv.solveOnce(ctx, p)
	if err != nil || sol.PowerW <= rated*(1+powerLimitRelTol) {
		return sol, err
	}
	set := p.Temperature.TopK
	var meanTop float64
	nb := 0
	for k, in := range p.InBase {
		if in {
			meanTop += set[k]
			nb++
		}
	}
	meanTop /= float64(nb)
	q := *p
	th := *p.Temperature
	th.TopK = make([]float64, len(set))
	q.Temperature = &th
	last := sol
	f := func(d float64) (float64, error) {
		for k, t := range set {
			th.TopK[k] = math.Max(t-d, 1) // a shift never takes a top below 1 K
		}
		q.InitialTPanK = last.TPanK
		s, err := sv.solveOnce(ctx, &q)
		if err != nil {
			return 0, fmt.Errorf("thermal: power-limited top %.6g K below its set point: %w", d, err)
		}
		last = s
		return s.PowerW - rated, nil
	}
	a, fa := 0.0, sol.PowerW-rated
	b := meanTop - p.TWaterK // heat ≈ 0 here: the top is at the water's temperature on average
	fb := -rated
	if !(b > 0) {
		return nil, fmt.Errorf("thermal: the hob top (mean %.6g K) is not above the water (%.6g K): no power limit can apply", meanTop, p.TWaterK)
	}
	d := b * fa / (fa - fb)
	side := 0
	for it := 0; it < powerLimitMaxIt; it++ {
		fd, err := f(d)
		if err != nil {
			return nil, err
		}
		if math.Abs(fd) <= powerLimitRelTol*rated {
			last.PowerLimited, last.TopShiftK = true, d
			last.Warnings = append(last.Warnings, fmt.Sprintf(
				"power-limited: the hob delivers its rated %.0f W and the top runs %.1f K below its set point", rated, d))
			return last, nil
		}
		if fd > 0 {
			a, fa = d, fd
			if side == 1 {
				fb /= 2
			}
			side = 1
		} else {
			b, fb = d, fd
			if side == -1 {
				fa /= 2
			}
			side = -1
		}
		d = a - fa*(b-a)/(fb-fa)
	}
	return nil, fmt.Errorf("thermal: power-limited solve did not find the top temperature at %.0f W in %d solves", rated, powerLimitMaxIt)
}
