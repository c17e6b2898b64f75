package thermal

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gapflux/fluid"
)

// storedJ integrates m_w·c_p,w(T) + m_pan·c_pan from a to b by the trapezoid
// rule on 1 mK steps over fluid.WaterAt, independently of Heatup.
func storedJ(l Load, a, b float64) float64 {
	n := int(math.Ceil((b - a) / 1e-3))
	dt := (b - a) / float64(n)
	c := func(t float64) float64 {
		w, err := fluid.WaterAt(t)
		if err != nil {
			panic(err)
		}
		return l.WaterKg*w.CpJKgK + l.PanKg*l.PanCpJKgK
	}
	s := 0.5 * (c(a) + c(b))
	for i := 1; i < n; i++ {
		s += c(a + float64(i)*dt)
	}
	return s * dt
}

func constPower(panW, srcW float64) PowerFunc {
	return func(float64) (float64, float64, error) { return panW, srcW, nil }
}

func TestHeatupLossless(t *testing.T) {
	tests := []struct {
		name string
		load Load
	}{
		{"1 kg water", Load{WaterKg: 1, FromK: 288.15, ToK: 363.15}},
		{"1.5 kg water, 1 kg pan", Load{WaterKg: 1.5, FromK: 288.15, ToK: 363.15, PanKg: 1, PanCpJKgK: 900}},
		{"cold start to boiling", Load{WaterKg: 0.5, FromK: 273.15, ToK: 373.15, PanKg: 0.3, PanCpJKgK: 460}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			const panW, srcW = 1000, 1250
			res, err := Heatup(tc.load, constPower(panW, srcW), HeatupOptions{NoLosses: true})
			if err != nil {
				t.Fatal(err)
			}
			// ∫ m c_p(T) dT (+ pan) against an independent 1 mK trapezoid
			// sum: 1e-6 (the brief asks for 0.5 %).
			want := storedJ(tc.load, tc.load.FromK, tc.load.ToK)
			if fracDiff(res.PanEnergyJ, want) > 1e-6 {
				t.Errorf("pan energy %.9g J, ∫C dT %.9g J", res.PanEnergyJ, want)
			}
			// Constant power: t = E/P exactly, source energy in proportion.
			if fracDiff(res.TimeS, res.PanEnergyJ/panW) > 1e-12 {
				t.Errorf("time %g s, E/P %g s", res.TimeS, res.PanEnergyJ/panW)
			}
			if fracDiff(res.SourceEnergyJ, res.PanEnergyJ*srcW/panW) > 1e-12 {
				t.Errorf("source energy %g J, want %g", res.SourceEnergyJ, res.PanEnergyJ*srcW/panW)
			}
			if res.LossEnergyJ != 0 {
				t.Errorf("loss energy %g with losses off", res.LossEnergyJ)
			}
			checkCurve(t, tc.load, res)
		})
	}
	// 1 kg of water from 15 to 90 °C takes 4.186 kJ/(kg·K) × 75 K
	// = 313.95 kJ = 87.2 Wh (TRADE-FACTS.md 1.2 [C]); with Table A.6's c_p
	// at least that and within 0.5 % (it gives 87.21 Wh).
	res, err := Heatup(tests[0].load, constPower(1000, 1000), HeatupOptions{NoLosses: true})
	if err != nil {
		t.Fatal(err)
	}
	if wh := res.PanEnergyJ / 3600; wh < 87.2 || fracDiff(wh, 4.186*75/3.6) > 5e-3 {
		t.Errorf("1 kg water 15 → 90 °C: %.4g Wh, want 87.2 Wh", wh)
	}
}

// checkCurve checks the curve's ends and monotonicity.
func checkCurve(t *testing.T, l Load, res *HeatupResult) {
	t.Helper()
	c := res.Curve
	if len(c) != res.Steps+1 || res.Steps < 64 {
		t.Fatalf("%d curve points, %d steps (want steps+1 points, ≥ 64 steps)", len(c), res.Steps)
	}
	if c[0].TimeS != 0 || c[0].TWaterK != l.FromK {
		t.Errorf("curve starts at %g s, %g K", c[0].TimeS, c[0].TWaterK)
	}
	if last := c[len(c)-1]; last.TWaterK != l.ToK || last.TimeS != res.TimeS {
		t.Errorf("curve ends at %g s, %g K; want %g s, %g K exactly", last.TimeS, last.TWaterK, res.TimeS, l.ToK)
	}
	for i := 1; i < len(c); i++ {
		if !(c[i].TimeS > c[i-1].TimeS) || !(c[i].TWaterK > c[i-1].TWaterK) {
			t.Fatalf("curve not increasing at %d: %+v after %+v", i, c[i], c[i-1])
		}
	}
}

// TestHeatupLinearPower: with a constant heat capacity C and a power
// P(T) = P0 − b·(T − T0), no losses, C dT/dt = P gives the analytic
// t = (C/b)·ln(P(T0)/P(T1)). The water is 1e-9 kg so C is the pan's
// 1800 J/K (the water adds 2e-9 of it). The sampled monotone cubic
// reproduces a linear power exactly.
func TestHeatupLinearPower(t *testing.T) {
	const c, p0, b, t0, t1 = 1800.0, 2000.0, 20.0, 288.15, 363.15
	load := Load{WaterKg: 1e-9, FromK: t0, ToK: t1, PanKg: 2, PanCpJKgK: 900}
	power := func(tk float64) (float64, float64, error) { p := p0 - b*(tk-t0); return p, 2 * p, nil }
	for _, ns := range []int{2, 0, 23} {
		res, err := Heatup(load, power, HeatupOptions{NoLosses: true, PowerSamples: ns})
		if err != nil {
			t.Fatal(err)
		}
		p1 := p0 - b*(t1-t0)
		want := c / b * math.Log(p0/p1) // 124.766 s
		if fracDiff(res.TimeS, want) > 1e-7 {
			t.Errorf("%d samples: time %.10g s, analytic %.10g s", ns, res.TimeS, want)
		}
		// ∫P dt = C·ΔT; source power is twice the pan's.
		if fracDiff(res.PanEnergyJ, c*(t1-t0)) > 1e-7 || fracDiff(res.SourceEnergyJ, 2*res.PanEnergyJ) > 1e-12 {
			t.Errorf("%d samples: energies pan %g J (want %g), source %g J", ns, res.PanEnergyJ, c*(t1-t0), res.SourceEnergyJ)
		}
	}
}

// TestHeatupSampledPower: a curved power sampled at 7 temperatures gives
// the time of the same power sampled at 500 within 0.1 %, and the
// PowerFunc is called exactly PowerSamples times.
func TestHeatupSampledPower(t *testing.T) {
	load := Load{WaterKg: 1.5, FromK: 288.15, ToK: 363.15, PanKg: 1, PanCpJKgK: 900}
	calls := 0
	var temps []float64
	power := func(tk float64) (float64, float64, error) {
		calls++
		temps = append(temps, tk)
		d := tk - 288.15
		return 1500 - 0.15*d*d, 1800, nil
	}
	ref, err := Heatup(load, power, HeatupOptions{NoLosses: true, PowerSamples: 500})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		n, wantCalls int
		tol          float64
	}{{0, 7, 1e-3}, {7, 7, 1e-3}, {15, 15, 2e-4}, {1, 1, 0.2}} {
		calls, temps = 0, nil
		res, err := Heatup(load, power, HeatupOptions{NoLosses: true, PowerSamples: tc.n})
		if err != nil {
			t.Fatal(err)
		}
		if calls != tc.wantCalls {
			t.Errorf("%d samples: %d calls, want %d", tc.n, calls, tc.wantCalls)
		}
		if tc.n == 1 && temps[0] != 0.5*(load.FromK+load.ToK) {
			t.Errorf("one sample at %g K, want the mid temperature", temps[0])
		}
		if tc.n > 1 && (temps[0] != load.FromK || temps[len(temps)-1] != load.ToK) {
			t.Errorf("%d samples span %g–%g K", tc.n, temps[0], temps[len(temps)-1])
		}
		if d := fracDiff(res.TimeS, ref.TimeS); d > tc.tol {
			t.Errorf("%d samples: time %g s, 500 samples %g s (%.2g, tolerance %g)", tc.n, res.TimeS, ref.TimeS, d, tc.tol)
		}
	}
}

// scenarioLoad is the default scenario's load (DESIGN.md 5.3a: 1.5 kg water
// from 15 to 90 °C in a 1 kg pan; 23 °C room) with an invented 200 mm pan,
// 100 mm wetted wall.
func scenarioLoad() Load {
	return Load{
		WaterKg: 1.5, FromK: 288.15, ToK: 363.15, PanKg: 1, PanCpJKgK: 900,
		WaterSurfaceDiameterM: 0.2, WallHeightM: 0.1, WallDiameterM: 0.2,
		WallEmissivity: 0.3, RoomK: 296.15, Evaporation: true, RoomHumidity: 0.5,
	}
}

func TestHeatupWithLosses(t *testing.T) {
	load := scenarioLoad()
	power := constPower(1500, 1800)
	res, err := Heatup(load, power, HeatupOptions{})
	if err != nil {
		t.Fatal(err)
	}
	checkCurve(t, load, res)
	// Energy balance: heat in − losses = heat stored, to 1e-6.
	stored := storedJ(load, load.FromK, load.ToK)
	if d := math.Abs(res.PanEnergyJ-res.LossEnergyJ-stored) / stored; d > 1e-6 {
		t.Errorf("in %g − lost %g = %g J, stored %g J", res.PanEnergyJ, res.LossEnergyJ, res.PanEnergyJ-res.LossEnergyJ, stored)
	}
	if fracDiff(res.PanEnergyJ, 1500*res.TimeS) > 1e-9 {
		t.Errorf("pan energy %g J, 1500 W × %g s", res.PanEnergyJ, res.TimeS)
	}
	lossless, err := Heatup(load, power, HeatupOptions{NoLosses: true})
	if err != nil {
		t.Fatal(err)
	}
	if !(res.TimeS > lossless.TimeS) || !(res.LossEnergyJ > 0) {
		t.Errorf("with losses %g s (lost %g J), without %g s", res.TimeS, res.LossEnergyJ, lossless.TimeS)
	}
	end, err := load.LossesW(load.ToK)
	if err != nil {
		t.Fatal(err)
	}
	if last := res.Curve[len(res.Curve)-1]; fracDiff(last.LossW, end.TotalW()) > 1e-12 {
		t.Errorf("curve loss at the end %g W, LossesW %g W", last.LossW, end.TotalW())
	}
	// Starting below room temperature the load first gains heat (negative
	// loss).
	if first := res.Curve[0]; !(first.LossW < 0) {
		t.Errorf("loss at 15 °C in a 23 °C room: %g W, want negative", first.LossW)
	}
	// MaxStepS caps every step and changes the answer by less than 1e-7.
	capped, err := Heatup(load, power, HeatupOptions{MaxStepS: 2})
	if err != nil {
		t.Fatal(err)
	}
	for i := 1; i < len(capped.Curve); i++ {
		if dt := capped.Curve[i].TimeS - capped.Curve[i-1].TimeS; dt > 2*(1+1e-9) {
			t.Fatalf("step %d is %g s, cap 2 s", i, dt)
		}
	}
	if fracDiff(capped.TimeS, res.TimeS) > 1e-7 {
		t.Errorf("capped time %.10g s, uncapped %.10g s", capped.TimeS, res.TimeS)
	}
	t.Logf("scenario at 1500 W: %.1f s (lossless %.1f s), losses %.1f kJ, %d steps; losses at 90 °C %+v",
		res.TimeS, lossless.TimeS, res.LossEnergyJ/1e3, res.Steps, end)
}

func TestHeatupStall(t *testing.T) {
	tests := []struct {
		name  string
		load  Load
		power PowerFunc
		want  func(t *testing.T, e *StallError)
	}{
		{
			// P = 2000 − 40(T − 288.15) W is zero at 338.15 K, no losses.
			name:  "linear power runs out",
			load:  Load{WaterKg: 1, FromK: 288.15, ToK: 363.15},
			power: func(tk float64) (float64, float64, error) { return 2000 - 40*(tk-288.15), 2000, nil },
			want: func(t *testing.T, e *StallError) {
				if math.Abs(e.StallK-338.15) > 1e-6 {
					t.Errorf("stall at %.9g K, want 338.15", e.StallK)
				}
			},
		},
		{
			// 25 W against the open surface and wall losses: stalls where
			// the losses reach 25 W.
			name:  "losses catch up",
			load:  scenarioLoad(),
			power: constPower(25, 30),
			want: func(t *testing.T, e *StallError) {
				l, err := scenarioLoad().LossesW(e.StallK)
				if err != nil {
					t.Fatal(err)
				}
				if math.Abs(l.TotalW()-25) > 1e-4 || !(e.StallK > 288.15 && e.StallK < 363.15) {
					t.Errorf("stall at %g K with losses %g W, want 25 W", e.StallK, l.TotalW())
				}
			},
		},
		{
			// A dip 0.06 K wide between the even stall-check temperatures,
			// resolved by 5001 power samples: found at a sample.
			name: "narrow dip",
			load: Load{WaterKg: 1, FromK: 288.15, ToK: 363.15},
			power: func(tk float64) (float64, float64, error) {
				if math.Abs(tk-330.12) < 0.03 {
					return -100, 0, nil
				}
				return 1000, 1000, nil
			},
			want: func(t *testing.T, e *StallError) {
				if math.Abs(e.StallK-330.09) > 0.02 {
					t.Errorf("stall at %g K, want near 330.09", e.StallK)
				}
			},
		},
		{
			name:  "no power at all",
			load:  Load{WaterKg: 1, FromK: 288.15, ToK: 363.15},
			power: constPower(0, 0),
			want: func(t *testing.T, e *StallError) {
				if e.StallK != 288.15 {
					t.Errorf("stall at %g K, want the start 288.15", e.StallK)
				}
			},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			opt := HeatupOptions{NoLosses: tc.load.RoomK == 0}
			if tc.name == "narrow dip" {
				opt.PowerSamples = 5001
			}
			_, err := Heatup(tc.load, tc.power, opt)
			var e *StallError
			if !errors.As(err, &e) {
				t.Fatalf("error %v, want a *StallError", err)
			}
			if e.ToK != 363.15 || !strings.Contains(err.Error(), "never reaches 363.15 K") {
				t.Errorf("error %q", err)
			}
			tc.want(t, e)
		})
	}
}

func TestHeatupErrors(t *testing.T) {
	ok := scenarioLoad()
	errPower := errors.New("plate solve failed")
	tests := []struct {
		name  string
		mod   func(*Load)
		power PowerFunc
		opt   HeatupOptions
		want  string
	}{
		{name: "nil power", power: nil, want: "no power function"},
		{name: "no water", mod: func(l *Load) { l.WaterKg = 0 }, want: "water mass"},
		{name: "NaN water", mod: func(l *Load) { l.WaterKg = math.NaN() }, want: "water mass"},
		{name: "reversed", mod: func(l *Load) { l.FromK, l.ToK = 350, 300 }, want: "not above"},
		{name: "past boiling", mod: func(l *Load) { l.ToK = 380 }, want: "outside"},
		{name: "ice", mod: func(l *Load) { l.FromK = 260 }, want: "outside"},
		{name: "negative pan", mod: func(l *Load) { l.PanKg = -1 }, want: "pan mass"},
		{name: "no room", mod: func(l *Load) { l.RoomK = 0 }, want: "room temperature"},
		{name: "room too cold for the air table", mod: func(l *Load) { l.RoomK = 100 }, want: "outside the table"},
		{name: "wall half set", mod: func(l *Load) { l.WallDiameterM = 0 }, want: "both"},
		{name: "negative surface", mod: func(l *Load) { l.WaterSurfaceDiameterM = -0.2 }, want: "surface diameter"},
		{name: "emissivity", mod: func(l *Load) { l.WallEmissivity = 1.5 }, want: "emissivities"},
		{name: "humidity", mod: func(l *Load) { l.RoomHumidity = -0.1 }, want: "humidity"},
		{name: "samples", opt: HeatupOptions{PowerSamples: -3}, want: "power samples"},
		{name: "max step", opt: HeatupOptions{MaxStepS: -1}, want: "maximum step"},
		{
			name:  "power error",
			power: func(float64) (float64, float64, error) { return 0, 0, errPower },
			want:  "power at 288.15 K: plate solve failed",
		},
		{
			name:  "power NaN",
			power: func(float64) (float64, float64, error) { return math.NaN(), 1, nil },
			want:  "not finite",
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			l := ok
			if tc.mod != nil {
				tc.mod(&l)
			}
			p := tc.power
			if p == nil && tc.name != "nil power" {
				p = constPower(1500, 1800)
			}
			_, err := Heatup(l, p, tc.opt)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want one containing %q", err, tc.want)
			}
			if tc.name == "power error" && !errors.Is(err, errPower) {
				t.Errorf("error %v does not wrap the PowerFunc's", err)
			}
		})
	}
	// Losses off: room and loss geometry are not checked.
	l := ok
	l.RoomK, l.WallDiameterM = 0, 0
	if _, err := Heatup(l, constPower(1500, 1800), HeatupOptions{NoLosses: true}); err != nil {
		t.Errorf("losses off: %v", err)
	}
}

func TestLossesW(t *testing.T) {
	l := scenarioLoad()
	l.Evaporation = false
	const tw = 353.15
	got, err := l.LossesW(tw)
	if err != nil {
		t.Fatal(err)
	}
	// Radiation, the formula as written: ε σ A (T⁴ − T_room⁴) with the
	// default ε_water 0.95 (surface) and ε_wall 0.3 (wall) [N].
	rad := fluid.StefanBoltzmann * (math.Pow(tw, 4) - math.Pow(l.RoomK, 4))
	if want := 0.95 * math.Pi * 0.01 * rad; fracDiff(got.SurfaceRadW, want) > 1e-12 {
		t.Errorf("surface radiation %g W, want %g", got.SurfaceRadW, want)
	}
	if want := 0.3 * math.Pi * 0.02 * rad; fracDiff(got.WallRadW, want) > 1e-12 {
		t.Errorf("wall radiation %g W, want %g", got.WallRadW, want)
	}
	hs, _ := AirPlateUpHWM2K(tw, l.RoomK, 0.05)
	hw, _ := AirVerticalHWM2K(tw, l.RoomK, 0.1)
	if fracDiff(got.SurfaceConvW, hs*math.Pi*0.01*(tw-l.RoomK)) > 1e-12 || fracDiff(got.WallConvW, hw*math.Pi*0.02*(tw-l.RoomK)) > 1e-12 {
		t.Errorf("convection: surface %g W (h %g), wall %g W (h %g)", got.SurfaceConvW, hs, got.WallConvW, hw)
	}
	if got.EvaporationW != 0 {
		t.Errorf("evaporation off: %g W", got.EvaporationW)
	}
	if s := got.TotalW(); fracDiff(s, got.SurfaceConvW+got.SurfaceRadW+got.WallConvW+got.WallRadW) > 1e-15 {
		t.Errorf("total %g", s)
	}

	// Evaporation: none from saturated room air at room temperature; more
	// into dry air than humid; rising with the water temperature.
	l.Evaporation = true
	l.RoomHumidity = 1
	if e, _ := l.LossesW(l.RoomK); e.EvaporationW != 0 {
		t.Errorf("water at room temperature, saturated air: evaporation %g W", e.EvaporationW)
	}
	// At room temperature with half-saturated room air the vapour alone
	// makes the surface air lighter: evaporation goes on, and the surface
	// coefficient exceeds the dry one at 90 °C.
	l.RoomHumidity = 0.5
	if e, _ := l.LossesW(l.RoomK); !(e.EvaporationW > 0) || e.SurfaceConvW != 0 {
		t.Errorf("water at room temperature, 50 %% humidity: %+v", e)
	}
	hMoist, _ := moistPlateUpHWM2K(363.15, l.RoomK, 0.5, 0.05)
	hDry, _ := AirPlateUpHWM2K(363.15, l.RoomK, 0.05)
	if !(hMoist > hDry) {
		t.Errorf("90 °C: moist-air h %g, dry %g", hMoist, hDry)
	}
	prev := 0.0
	for tk := 300.0; tk <= 373.15; tk += 5 {
		l.RoomHumidity = 0.5
		humid, _ := l.LossesW(tk)
		l.RoomHumidity = 0
		dry, _ := l.LossesW(tk)
		if !(dry.EvaporationW > humid.EvaporationW) || !(humid.EvaporationW > prev) {
			t.Errorf("%g K: evaporation dry %g W, humid %g W, previous %g W", tk, dry.EvaporationW, humid.EvaporationW, prev)
		}
		prev = humid.EvaporationW
	}
	// At 30 °C into dry air the driving force B is small (0.027) and the
	// flux approaches the low-rate form h_m·ρ_v,s, ρ_v,s = p_sat·M_w/(R·T)
	// (ideal gas), a different route to nearly the same number: they differ
	// by ln(1+B)/m_s = 1.014 and by the mean moist-air density times m_s
	// against ρ_v,s, 1.020 [N]; within 5 %.
	const ts = 303.15
	h, _ := AirPlateUpHWM2K(ts, l.RoomK, 0.05)
	a, _ := fluid.AirAt(0.5 * (ts + l.RoomK))
	dab := 0.26e-4 * math.Pow(0.5*(ts+l.RoomK)/298, 1.5)
	hm := h / (a.DensityKgM3 * a.CpJKgK * math.Pow(a.DiffusivityM2S/dab, 2.0/3))
	rhoV := WaterVapourPa(ts) * 18.015e-3 / (fluid.GasConstantJMolK * ts)
	mdot, err := evaporationKgM2S(ts, l.RoomK, 0, h)
	if err != nil {
		t.Fatal(err)
	}
	if d := fracDiff(mdot, hm*rhoV); d > 0.05 {
		t.Errorf("30 °C: ṁ″ %g, low-rate %g kg/(m²·s) (%.3g apart)", mdot, hm*rhoV, d)
	}

	// Colder than the room: every loss is negative.
	l.RoomHumidity = 1
	cold, err := l.LossesW(285)
	if err != nil {
		t.Fatal(err)
	}
	if !(cold.SurfaceConvW < 0 && cold.SurfaceRadW < 0 && cold.WallConvW < 0 && cold.WallRadW < 0 && cold.EvaporationW < 0) {
		t.Errorf("water colder than the room: %+v", cold)
	}
}

func TestWaterVapourPa(t *testing.T) {
	tests := []struct {
		name     string
		tK, want float64
		tol      float64
	}{
		// Normal boiling point: 1 atm at 100 °C by definition.
		{"100 °C", 373.15, 101325, 5e-4},
		// Steam tables, 2.339 kPa at 20 °C (from memory [M]).
		{"20 °C", 293.15, 2339, 3e-3},
		// Incropera Table A.6 p column (fluid's table, [M]): 0.03531 bar at
		// 300 K, 0.4163 bar at 350 K.
		{"300 K", 300, 3531, 5e-3},
		{"350 K", 350, 41630, 5e-3},
	}
	for _, tc := range tests {
		if got := WaterVapourPa(tc.tK); fracDiff(got, tc.want) > tc.tol {
			t.Errorf("%s: %g Pa, want %g within %g", tc.name, got, tc.want, tc.tol)
		}
	}
	w, _ := fluid.WaterAt(350)
	if fracDiff(WaterVapourPa(350), w.SaturationPressurePa) > 5e-3 {
		t.Errorf("350 K: Buck %g Pa, fluid table %g Pa", WaterVapourPa(350), w.SaturationPressurePa)
	}
}

// BenchmarkHeatup is the default scenario with all losses and a cheap
// PowerFunc (the plate solves it would call are benchmarked elsewhere).
func BenchmarkHeatup(b *testing.B) {
	load := scenarioLoad()
	power := func(tk float64) (float64, float64, error) { return 1600 - 2*(tk-288.15), 1800, nil }
	for b.Loop() {
		if _, err := Heatup(load, power, HeatupOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkLossesW(b *testing.B) {
	load := scenarioLoad()
	s := 0.0
	for i := 0; b.Loop(); i++ {
		l, _ := load.LossesW(300 + float64(i&63))
		s += l.TotalW()
	}
	_ = s
}

func TestHeatupWarnings(t *testing.T) {
	tests := []struct {
		name string
		mod  func(*Load)
		want []string
	}{
		{"scenario with evaporation to 90 °C", func(*Load) {}, []string{"evaporation above 80 °C"}},
		{"no evaporation", func(l *Load) { l.Evaporation = false }, nil},
		// A 20 mm tube 0.5 m high: D/L = 0.04 is below 35/Gr^(1/4)
		// (Gr ≈ 7e8 at 90 °C: 0.21 [N]) (Incropera eq. 9.33 [M]).
		{"slender wall", func(l *Load) { l.Evaporation, l.WallHeightM, l.WallDiameterM = false, 0.5, 0.02 }, []string{"too slender"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			l := scenarioLoad()
			tc.mod(&l)
			res, err := Heatup(l, constPower(1500, 1800), HeatupOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Warnings) != len(tc.want) {
				t.Fatalf("warnings %q, want %d", res.Warnings, len(tc.want))
			}
			for i, w := range tc.want {
				if !strings.Contains(res.Warnings[i], w) {
					t.Errorf("warning %q, want one containing %q", res.Warnings[i], w)
				}
			}
		})
	}
}
