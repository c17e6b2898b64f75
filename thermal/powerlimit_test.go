package thermal

import (
	"math"
	"testing"
)

// TestPowerLimited checks the power-limited temperature mode (issue 9 part
// 3): with the limit on, the heat into the pan never exceeds the rated
// power; where the set point would draw more, the top is lowered uniformly
// and the heat equals the rated power to 1e-6; with a constant interface
// and water side the problem is linear, so the shift is exactly the share
// of the set-point excess: δ = (T_top − T_w)·(1 − P_rated/P_set).
func TestPowerLimited(t *testing.T) {
	g := Grid{Nx: 24, Ny: 24, CellM: 0.001, X0M: -0.0115, Y0M: -0.0115}
	in := discMask(g, 0, 0, 0.011)
	const top, tw = 523.15, 333.15
	base := func(iface Interface, rated float64) *Problem {
		return &Problem{Grid: g, InBase: in, BaseLayers: aluminium4mm, Interface: iface,
			Water: stubWater(1000), TWaterK: tw, Temperature: &TemperatureHob{TopK: fill(g.Len(), top), RatedPowerW: rated}}
	}
	free, err := Solve(base(stubH{1, 400, 20}, 0))
	if err != nil {
		t.Fatal(err)
	}
	freeRad, err := Solve(base(stubRad{300, 0.9, 0.3}, 0))
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name    string
		iface   Interface
		rated   float64
		free    float64
		limited bool
		shiftK  float64 // NaN: not checked
	}{
		{"linear, half the power", stubH{1, 400, 20}, free.PowerW / 2, free.PowerW, true, (top - tw) / 2},
		{"linear, a tenth", stubH{1, 400, 20}, free.PowerW / 10, free.PowerW, true, (top - tw) * 0.9},
		{"rated above the draw", stubH{1, 400, 20}, free.PowerW * 1.5, free.PowerW, false, 0},
		{"radiating gap, 60 %", stubRad{300, 0.9, 0.3}, freeRad.PowerW * 0.6, freeRad.PowerW, true, math.NaN()},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s, err := Solve(base(tc.iface, tc.rated))
			if err != nil {
				t.Fatal(err)
			}
			if s.PowerLimited != tc.limited {
				t.Fatalf("PowerLimited = %v, want %v", s.PowerLimited, tc.limited)
			}
			want := math.Min(tc.rated, tc.free)
			if d := math.Abs(s.PowerW-want) / want; d > 1e-6 {
				t.Errorf("power %.9g W, want %.9g (rel. %.2g)", s.PowerW, want, d)
			}
			if s.PowerW > tc.rated*(1+1e-6) {
				t.Errorf("power %.9g W above the rated %.9g W", s.PowerW, tc.rated)
			}
			if !math.IsNaN(tc.shiftK) && math.Abs(s.TopShiftK-tc.shiftK) > 1e-4 {
				t.Errorf("top shift %.9g K, want %.9g", s.TopShiftK, tc.shiftK)
			}
			if d := math.Abs(s.WaterW-s.PowerW) / s.PowerW; d > 1e-6 {
				t.Errorf("energy balance: into the pan %.9g W, into the water %.9g W", s.PowerW, s.WaterW)
			}
		})
	}
}

func TestPowerLimitedBadRating(t *testing.T) {
	g := Grid{Nx: 4, Ny: 4, CellM: 0.001}
	for _, r := range []float64{-1, math.NaN(), math.Inf(1)} {
		p := &Problem{Grid: g, InBase: allTrue(16), BaseLayers: aluminium4mm, Interface: stubH{1, 400, 0},
			Water: stubWater(1000), TWaterK: 333, Temperature: &TemperatureHob{TopK: fill(16, 500), RatedPowerW: r}}
		if _, err := Solve(p); err == nil {
			t.Errorf("rated power %g: no error", r)
		}
	}
}
