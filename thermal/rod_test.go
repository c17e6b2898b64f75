package thermal

import (
	"math"
	"testing"
)

// radiantScene is heaterScene with the two-band glass and coil of the
// pipeline's defaults (element emissivity 0.85, window 0.7–2.7 µm, τ =
// 0.65), a pan emissivity of 0.09 and a rod limiter across the zone.
func radiantScene(cell float64, ifc Interface) *Problem {
	p := heaterScene(cell, ifc)
	p.PanEmissivity = 0.09
	p.Heater.Coil = &Coil{Emissivity: 0.85, BandLoM: 0.7e-6, BandHiM: 2.7e-6, Tau: 0.65}
	p.Heater.Rod = &Rod{LengthM: 0.18}
	return p
}

// TestRadiantBalance: with the coil model and a rod limiter every solve
// balances to 1e-6 relative: heater power = into the pan (interface and
// absorbed transmission) + down + uncovered glass + transmitted past the
// base; the element temperature and share agree with Coil.Balance at the
// zone-mean underside temperature of the converged state.
func TestRadiantBalance(t *testing.T) {
	tests := []struct {
		name  string
		ifc   Interface
		small bool // a pan smaller than the zone: radiation passes beside it
	}{
		{"flat contact", stubRad{3000, 0.9, 0.09}, false},
		{"poor contact", stubRad{30, 0.9, 0.09}, false},
		{"small pan", stubRad{300, 0.9, 0.09}, true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p := radiantScene(0.004, tc.ifc)
			if tc.small {
				p.InBase = discMask(p.Grid, 0.01, 0, 0.07)
			}
			s, err := Solve(p)
			if err != nil {
				t.Fatal(err)
			}
			checkBalance(t, tc.name, s, 0)
			if tc.small != (s.TransmittedLostW > 0) {
				t.Errorf("transmitted beside the pan %g W", s.TransmittedLostW)
			}
			if !(s.CoilK > 1000 && s.CoilK < 1400) || !(s.TransmittedShare > 0.1 && s.TransmittedShare < 0.35) {
				t.Errorf("element %.1f K, share %.4f", s.CoilK, s.TransmittedShare)
			}
			// The pan absorbs 9 % of what reaches it.
			if !tc.small {
				want := 0.09 * s.TransmittedShare * s.HeaterW
				if d := math.Abs(s.TransmittedW-want) / want; d > 1e-9 {
					t.Errorf("absorbed transmission %.9g W, want %.9g", s.TransmittedW, want)
				}
			}
			t.Logf("duty %.2f %%, rod %.1f K, element %.1f K, share %.4f, into pan %.1f W", s.DutyPct, s.RodK, s.CoilK, s.TransmittedShare, s.PowerW)
		})
	}
}

// hotPatch is a gas-only interface of h everywhere but hot·h in a 3×3-cell
// patch around (x, y).
func hotPatch(p *Problem, h, hot, x, y float64) stubField {
	f := make(stubField, p.Grid.Len())
	for k := range f {
		cx, cy := p.Grid.CentreM(k)
		f[k] = h
		if math.Abs(cx-x) <= 1.5*p.Grid.CellM && math.Abs(cy-y) <= 1.5*p.Grid.CellM {
			f[k] = hot
		}
	}
	return f
}

// TestRodLimiter: the rod limiter senses the mean underside along its rod,
// so a hot patch off the rod (a lifted spot of the base) does not cut the
// duty, while the hottest-node limiter of old does; a uniformly hotter
// glass (poorer contact everywhere) does cut it, and holds the rod's mean
// at the limiter temperature.
func TestRodLimiter(t *testing.T) {
	base := radiantScene(0.004, stubField(nil))
	good := hotPatch(base, 800, 800, 0, 0)
	spot := hotPatch(base, 800, 0.5, 0.05, 0.05)
	solve := func(ifc Interface, limK float64, rod bool) *Solution {
		t.Helper()
		p := radiantScene(0.004, ifc)
		p.Heater.LimiterK = limK
		if !rod {
			p.Heater.Rod = nil
		}
		s, err := Solve(p)
		if err != nil {
			t.Fatal(err)
		}
		checkBalance(t, "rod", s, 0)
		return s
	}
	free := solve(good, 0, true)
	lim := free.RodK + 5 // just above the flat, well-contacting case
	s := solve(good, lim, true)
	if s.DutyPct != 100 {
		t.Fatalf("good contact: duty %g %%", s.DutyPct)
	}
	s = solve(spot, lim, true)
	if s.DutyPct != 100 {
		t.Errorf("hot patch off the rod: duty %g %% (rod %.2f K, limiter %.2f K)", s.DutyPct, s.RodK, lim)
	}
	old := solve(spot, s.GlassMaxK-5, false)
	if !(old.DutyPct < 100) {
		t.Errorf("hottest-node limiter 5 K below the patch: duty %g %%", old.DutyPct)
	}
	s = solve(hotPatch(base, 150, 150, 0, 0), lim, true)
	if !(s.DutyPct < 100) || math.Abs(s.RodK-lim) > 1e-4 {
		t.Errorf("uniformly poorer contact: duty %g %%, rod %.6f K, limiter %.6f K", s.DutyPct, s.RodK, lim)
	}
}

func TestRodBadInput(t *testing.T) {
	for _, r := range []Rod{{LengthM: 0}, {LengthM: math.NaN()}, {OffsetM: 0.5, LengthM: 0.1}, {OffsetM: math.Inf(1), LengthM: 0.1}} {
		p := radiantScene(0.004, stubH{0, 1000, 0})
		p.Heater.Rod = &r
		if _, err := Solve(p); err == nil {
			t.Errorf("rod %+v: no error", r)
		}
	}
	p := radiantScene(0.004, stubH{0, 1000, 0})
	p.PanEmissivity = 0
	if _, err := Solve(p); err == nil {
		t.Error("coil with pan emissivity 0: no error")
	}
}
