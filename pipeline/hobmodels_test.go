package pipeline

import (
	"context"
	"fmt"
	"math"
	"testing"

	"gapflux/contact"
	"gapflux/fluid"
	"gapflux/scan"
	"gapflux/thermal"
)

// benchFixture solves a 200 mm, 4 mm aluminium base (the default job's)
// on a hob top held at topC (no power limit) with the base in full contact
// over the inner half of its area (r ≤ R/√2) and lifting linearly from
// there to rimGapM at the rim; rimGapM = 0 is the flat base. It returns the
// heat into the pan, W.
func benchFixture(t *testing.T, topC, rimGapM, cellM float64) float64 {
	t.Helper()
	s, err := thermal.Solve(fixtureProblem(t, topC, rimGapM, cellM, 0.1))
	if err != nil {
		t.Fatal(err)
	}
	return s.PowerW
}

// fixtureProblem is benchFixture's plate problem for a base of radius rM,
// m.
func fixtureProblem(t *testing.T, topC, rimGapM, cellM, rM float64) *thermal.Problem {
	t.Helper()
	job := DefaultJob()
	lib := contact.Materials()
	ip, err := interfaceParams(job, lib)
	if err != nil {
		t.Fatal(err)
	}
	n := int(math.Round(2*rM/cellM)) + 1
	g := thermal.Grid{Nx: n, Ny: n, CellM: cellM, X0M: -rM, Y0M: -rM}
	in := make([]bool, g.Len())
	gap := make([]float64, g.Len())
	mask := make([]bool, g.Len())
	rc := rM / math.Sqrt2
	var aC float64
	for k := range in {
		x, y := g.CentreM(k)
		r := math.Hypot(x, y)
		gap[k] = math.NaN()
		if r > rM {
			continue
		}
		in[k] = true
		gap[k] = 0
		if r > rc {
			gap[k] = rimGapM * (r - rc) / (rM - rc)
		}
		if gap[k] <= contact.ContactBandSigmas*ip.SigmaM {
			mask[k] = true
			aC += cellM * cellM
		}
	}
	load := (job.Pan.MassKg + job.Water.MassKg) * gravityMS2
	f, err := contact.NewField(ip, gap, mask, load/aC)
	if err != nil {
		t.Fatal(err)
	}
	layers, err := baseLayers(job, lib)
	if err != nil {
		t.Fatal(err)
	}
	return &thermal.Problem{Grid: g, InBase: in, BaseLayers: layers, Interface: f,
		Water: waterSide(job, 2*rM), TWaterK: job.Water.SteadyC + kelvin,
		Temperature: &thermal.TemperatureHob{TopK: fillK(g.Len(), topC+kelvin)}}
}

func fillK(n int, v float64) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = v
	}
	return out
}

// TestBenchFixtureLoss: a fixture held at 307 °C (power limit off) under a
// 200 mm aluminium base in full contact over the inner half of its area
// and lifting linearly to 2.54 mm (0.1 in) and to 10.16 mm (0.4 in) at the
// rim. A recorded bench study of that shape measured about 29 % and 36 %
// less heat than a flat base (a fact of the trade, no source). Our model,
// with the default job's interface and water side, must give 30 % ± 8
// points for both (our tolerance: the bench study's water side and surface
// finish are unknown, and its two results differ by 7 points), and the
// higher lift must lose more.
func TestBenchFixtureLoss(t *testing.T) {
	if testing.Short() {
		t.Skip("three plate solves on a 200 mm base")
	}
	const cell = 0.002
	flat := benchFixture(t, 307, 0, cell)
	var prev float64
	for _, rim := range []float64{2.54e-3, 10.16e-3} {
		loss := 100 * (1 - benchFixture(t, 307, rim, cell)/flat)
		t.Logf("rim lift %.2f mm: loss %.2f %%", rim*1e3, loss)
		if math.Abs(loss-30) > 8 {
			t.Errorf("rim lift %.2f mm: loss %.2f %%, want 30 %% ± 8", rim*1e3, loss)
		}
		if loss <= prev {
			t.Errorf("rim lift %.2f mm: loss %.2f %% not above the smaller lift's %.2f %%", rim*1e3, loss, prev)
		}
		prev = loss
	}
}

// flatScene builds the plate problem of job for an ideally flat base of
// diameter 200 mm centred on the zone, on cells of cellM, and its flat
// interface (the whole base in contact).
func flatScene(t *testing.T, job Job, cellM float64) (*thermal.Problem, *contact.Field) {
	t.Helper()
	lib := contact.Materials()
	const rM = 0.1
	fixedScenario(&job)
	gr := glassRadiusM(&job, 0, rM)
	n := 2*int(math.Ceil(gr/cellM)) + 1
	x0 := -float64(n-1) / 2 * cellM
	s := scan.NewSurface(n, n, cellM, x0, x0)
	in := make([]bool, n*n)
	gap := make([]float64, n*n)
	var a float64
	for k := range in {
		x, y := s.X(k%n), s.Y(k/n)
		gap[k] = math.NaN()
		if math.Hypot(x, y) <= rM {
			in[k], gap[k] = true, 0
			a += cellM * cellM
		}
	}
	p, err := plateProblem(job, lib, s, in, [2]float64{}, gr)
	if err != nil {
		t.Fatal(err)
	}
	ip, err := interfaceParams(job, lib)
	if err != nil {
		t.Fatal(err)
	}
	f, err := contact.NewField(ip, gap, in, (job.Pan.MassKg+job.Water.MassKg)*gravityMS2/a)
	if err != nil {
		t.Fatal(err)
	}
	p.Interface, p.TWaterK = f, job.Water.SteadyC+kelvin
	return p, f
}

// TestSolidPlate: the cast-iron solid-plate preset is a heated plate of
// its own thickness and conductivity (the library's grey cast iron,
// 46 W/(m·K)) whose regulator holds the set temperature along its rod
// while the rated power allows: a flat base on a 250 °C plate takes the
// full 1800 W with the plate below its setting; a base with a poor
// interface everywhere makes the regulator cycle and hold the rod at
// 250 °C. Both balance to 1e-6.
func TestSolidPlate(t *testing.T) {
	job := DefaultJob()
	job.Hob.Mode = "solid-plate"
	if err := job.Validate(); err != nil {
		t.Fatal(err)
	}
	p, _ := flatScene(t, job, 0.004)
	h := p.Heater
	if h == nil || h.Coil != nil || h.Glass.ConductivityWMK != 46 || h.Glass.ThicknessM != 0.008 || h.LimiterK != 250+kelvin || h.Rod == nil {
		t.Fatalf("solid plate built as %+v", h)
	}
	s, err := thermal.Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	balance := func(name string, s *thermal.Solution) {
		out := s.PowerW + s.DownLossW + s.UncoveredLossW + s.TransmittedLostW
		if d := math.Abs(out-s.HeaterW) / s.HeaterW; d > 1e-6 {
			t.Errorf("%s: heater %.9g W, out %.9g W", name, s.HeaterW, out)
		}
	}
	balance("flat", s)
	if s.DutyPct != 100 || s.HeaterW != 1800 || !(s.RodK < 250+kelvin) {
		t.Errorf("flat base: duty %g %%, heater %g W, rod %.2f K", s.DutyPct, s.HeaterW, s.RodK)
	}
	q := *p
	q.Interface = constH(5)
	s, err = thermal.Solve(&q)
	if err != nil {
		t.Fatal(err)
	}
	balance("lifted", s)
	if !(s.DutyPct < 100) || math.Abs(s.RodK-(250+kelvin)) > 1e-4 {
		t.Errorf("lifted base: duty %g %%, rod %.6f K", s.DutyPct, s.RodK)
	}
}

type constH float64

func (c constH) H(int, float64, float64) (float64, float64, float64) { return 0, float64(c), 0 }

// TestTemperatureModeRating: the temperature mode's rated power is
// heater_power_w, or the rated density over the base when set, and none
// with the limit off.
func TestTemperatureModeRating(t *testing.T) {
	for _, tc := range []struct {
		limited bool
		density float64
		want    float64
	}{{true, 0, 1800}, {true, 50, 50e3 * math.Pi * 0.01}, {false, 0, 0}} {
		job := DefaultJob()
		job.Hob.Mode, job.Hob.PowerLimited, job.Hob.RatedPowerDensityKW = "temperature", tc.limited, tc.density
		p, _ := flatScene(t, job, 0.004)
		if d := math.Abs(p.Temperature.RatedPowerW - tc.want); d > 0.01*tc.want+1e-9 {
			t.Errorf("limited %v, density %g: rated %g W, want %g", tc.limited, tc.density, p.Temperature.RatedPowerW, tc.want)
		}
		s, err := thermal.Solve(p)
		if err != nil {
			t.Fatal(err)
		}
		if tc.limited && (s.PowerW > p.Temperature.RatedPowerW*(1+1e-6) || !s.PowerLimited) {
			t.Errorf("flat twin draws %g W against a rating of %g W (limited %v)", s.PowerW, p.Temperature.RatedPowerW, s.PowerLimited)
		}
	}
}

// TestDefaultFlatHeatup: the heat-up of the default scenario's flat twin
// against the hand estimate t ≈ (m_w·c̄_w + m_p·c_p)·ΔT / (P̄ − L̄), with
// the heat into the pan P and the losses L (thermal.Load.LossesW) averaged
// by hand over 16 equal steps of the water temperature, within 1 %.
func TestDefaultFlatHeatup(t *testing.T) {
	if testing.Short() {
		t.Skip("plate solves on the default glass grid")
	}
	job := DefaultJob()
	fixedScenario(&job)
	p, f := flatScene(t, job, 0.002)
	var sv thermal.Solver
	solveAt := func(tK float64) *thermal.Solution {
		q := *p
		q.TWaterK = tK
		s, err := sv.Solve(&q)
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	fromK, toK := job.Water.FromC+kelvin, job.Water.ToC+kelvin
	s0, s1 := solveAt(fromK), solveAt(toK)
	pan := func(tK float64) float64 { return s0.PowerW + (tK-fromK)/(toK-fromK)*(s1.PowerW-s0.PowerW) }
	power := func(thermal.Interface) thermal.PowerFunc {
		return func(tK float64) (float64, float64, error) { return pan(tK), pan(tK), nil }
	}
	lib := contact.Materials()
	hu, err := heatupReport(t.Context(), job, lib, 0.1, power, f, f, 0)
	if err != nil {
		t.Fatal(err)
	}
	load := thermal.Load{WaterKg: job.Water.MassKg, FromK: fromK, ToK: toK, PanKg: job.Pan.MassKg, PanCpJKgK: 920,
		WaterSurfaceDiameterM: 0.2, WallHeightM: job.Water.MassKg / 998.2 / (math.Pi * 0.01), WallDiameterM: 0.2,
		WallEmissivity: job.Pan.WallEmissivity, WaterEmissivity: job.Water.Emissivity, RoomK: job.Hob.RoomC + kelvin, RoomHumidity: 0.5}
	const steps = 16
	var cw, pw, lw float64
	for i := range steps {
		tK := fromK + (float64(i)+0.5)*(toK-fromK)/steps
		w, err := fluid.WaterAt(tK)
		if err != nil {
			t.Fatal(err)
		}
		l, err := load.LossesW(tK)
		if err != nil {
			t.Fatal(err)
		}
		cw += w.CpJKgK / steps
		pw += pan(tK) / steps
		lw += l.TotalW() / steps
	}
	hand := (job.Water.MassKg*cw + job.Pan.MassKg*920) * (toK - fromK) / (pw - lw)
	t.Logf("flat twin heat-up %.2f s, hand %.2f s (P̄ %.1f W, L̄ %.1f W)", hu.report.FlatTimeS, hand, pw, lw)
	if d := math.Abs(hu.report.FlatTimeS-hand) / hand; d > 0.01 {
		t.Errorf("flat twin heat-up %.2f s, hand estimate %.2f s (%.2f %% apart)", hu.report.FlatTimeS, hand, 100*d)
	}
}

// TestSensitivity: the sensitivity table lists the settings of each mode,
// and on a base with a poor interface (the limiter cycles) raising the
// limiter or lowering the rated power lowers the loss, and lowering the
// limiter raises it.
func TestSensitivity(t *testing.T) {
	for _, tc := range []struct {
		mode    string
		limited bool
		want    []string
	}{
		{"heater", true, []string{"hob.limiter_c -40 K", "hob.limiter_c +40 K", "hob.glass_tau -0.1", "hob.glass_tau +0.1", "hob.heater_power_w -10 %", "hob.heater_power_w +10 %"}},
		{"solid-plate", true, []string{"hob.temperature_c -40 K", "hob.temperature_c +40 K", "hob.heater_power_w -10 %", "hob.heater_power_w +10 %"}},
		{"temperature", true, []string{"rated power -10 %", "rated power +10 %"}},
		{"temperature", false, nil},
	} {
		job := DefaultJob()
		job.Hob.Mode, job.Hob.PowerLimited = tc.mode, tc.limited
		var got []string
		for _, c := range sensitivityCases(job) {
			got = append(got, c.setting+" "+c.change)
		}
		if fmt.Sprint(got) != fmt.Sprint(tc.want) {
			t.Errorf("%s (limited %v): cases %q, want %q", tc.mode, tc.limited, got, tc.want)
		}
	}
	job := DefaultJob()
	p, flat := flatScene(t, job, 0.004)
	var sv thermal.Solver
	solve := func(ctx context.Context, p *thermal.Problem) (*thermal.Solution, error) {
		return sv.SolveContext(ctx, p)
	}
	poor := constH(60)
	ps, pf := *p, *p
	ps.Interface, pf.Interface = poor, flat
	s, err := solve(t.Context(), &ps)
	if err != nil {
		t.Fatal(err)
	}
	f, err := solve(t.Context(), &pf)
	if err != nil {
		t.Fatal(err)
	}
	if !(s.DutyPct < 100) {
		t.Fatalf("poor interface: duty %g %%, want the limiter cycling", s.DutyPct)
	}
	var sides [2]sidePowers
	if sides[0], err = sensitivityInOrder(t.Context(), job, p, poor, s, new(thermal.Solver)); err != nil {
		t.Fatal(err)
	}
	if sides[1], err = sensitivityInOrder(t.Context(), job, p, flat, f, &sv); err != nil {
		t.Fatal(err)
	}
	rows := sensitivityRows(job, s, f, sides)
	if len(rows) != 6 {
		t.Fatalf("%d rows", len(rows))
	}
	base := 100 * (1 - s.PowerW/f.PowerW)
	for _, r := range rows {
		if math.Abs(r.LossPct-r.DeltaLossPct-base) > 2e-3 {
			t.Errorf("%s %s: loss %g, delta %g, base %g", r.Setting, r.Change, r.LossPct, r.DeltaLossPct, base)
		}
	}
	if !(rows[0].DeltaLossPct > 0 && rows[1].DeltaLossPct < 0 && rows[4].DeltaLossPct < 0) {
		t.Errorf("rows %+v", rows)
	}
}

// TestCoarsen: the coarse grid keeps every f-th cell with its centre.
func TestCoarsen(t *testing.T) {
	g := thermal.Grid{Nx: 7, Ny: 5, CellM: 0.001, X0M: -0.003, Y0M: -0.002}
	in := make([]bool, g.Len())
	top := make([]float64, g.Len())
	for k := range in {
		in[k] = k%2 == 0
		top[k] = float64(400 + k)
	}
	p := &thermal.Problem{Grid: g, InBase: in, Temperature: &thermal.TemperatureHob{TopK: top}}
	q := coarsen(p, 2, constH(1), nil)
	want := thermal.Grid{Nx: 3, Ny: 2, CellM: 0.002, X0M: -0.002, Y0M: -0.001}
	if q.Grid != want {
		t.Fatalf("grid %+v, want %+v", q.Grid, want)
	}
	for k := range q.InBase {
		x, y := q.Grid.CentreM(k)
		i, j := int(math.Round((x-g.X0M)/g.CellM)), int(math.Round((y-g.Y0M)/g.CellM))
		fk := j*g.Nx + i
		if q.InBase[k] != in[fk] || q.Temperature.TopK[k] != top[fk] {
			t.Errorf("coarse cell %d at (%g, %g): base %v top %g, fine cell %d: %v %g", k, x, y, q.InBase[k], q.Temperature.TopK[k], fk, in[fk], top[fk])
		}
	}
	if p.Grid != g || len(p.InBase) != g.Len() {
		t.Error("coarsen changed its input")
	}
}
