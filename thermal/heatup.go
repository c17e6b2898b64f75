package thermal

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/interp"

	"gapflux/fluid"
)

// Load is a water load heated in a pan, and what it loses to the room.
type Load struct {
	WaterKg    float64 // mass of water, kg
	FromK, ToK float64 // start and end bulk water temperature, K (within 273.15–373.15 K)

	PanKg     float64 // mass of the pan, kg, heated with the water
	PanCpJKgK float64 // specific heat of the pan, J/(kg·K)

	WaterSurfaceDiameterM float64 // diameter of the open water surface, m; 0 means no surface losses

	// The wetted pan wall, a vertical cylinder at the water temperature;
	// both zero means no wall losses.
	WallHeightM   float64 // m
	WallDiameterM float64 // m

	WallEmissivity  float64 // outer wall; 0 means no wall radiation
	WaterEmissivity float64 // water surface; 0 means 0.95 (a common value for water, from memory [M])

	RoomK float64 // room air and surroundings temperature, K

	// Evaporation adds the latent heat carried off the open surface,
	// estimated by the heat–mass transfer analogy (see Load.LossesW).
	Evaporation bool
	// RoomHumidity is the relative humidity of the room air, 0–1, for the
	// evaporation estimate; 0 is dry air (the largest evaporation).
	RoomHumidity float64
}

// PowerFunc returns the heat into the pan and the power drawn from the
// source (heater) at bulk water temperature tWaterK, W.
type PowerFunc func(tWaterK float64) (panW, sourceW float64, err error)

// HeatupResult is the outcome of Heatup.
type HeatupResult struct {
	TimeS         float64 // time from FromK to ToK, s
	SourceEnergyJ float64 // ∫ source power dt, J
	PanEnergyJ    float64 // ∫ heat into the pan dt, J
	LossEnergyJ   float64 // ∫ losses dt, J (PanEnergyJ − LossEnergyJ is the heat stored)
	Steps         int     // accepted integration steps
	Curve         []HeatupPoint
	Warnings      []string
}

// HeatupPoint is one point of the heat-up curve.
type HeatupPoint struct {
	TimeS   float64 // s
	TWaterK float64 // bulk water temperature, K
	PanW    float64 // heat into the pan, W
	LossW   float64 // losses to the room, W
}

// HeatupOptions tune Heatup; the zero value is the default.
type HeatupOptions struct {
	// MaxStepS caps the time step, s; 0 means no cap (the temperature step
	// is still at most 1/64 of the range).
	MaxStepS float64
	// NoLosses turns the losses to the room off.
	NoLosses bool
	// PowerSamples is the number of water temperatures, evenly spaced from
	// FromK to ToK, at which the PowerFunc is called; 0 means 7. One sample
	// is taken at the mid temperature and held constant.
	PowerSamples int
}

// StallError is returned by Heatup when the heat into the pan falls to the
// losses before the load reaches its end temperature.
type StallError struct {
	StallK float64 // water temperature at which heat in equals losses, K
	ToK    float64 // the end temperature asked for, K
	PanW   float64 // heat into the pan there, W
}

func (e *StallError) Error() string {
	return fmt.Sprintf("thermal: heat-up: the load never reaches %.2f K: heat in (%.4g W) equals the losses at %.2f K",
		e.ToK, e.PanW, e.StallK)
}

// Heatup integrates the heat-up of a water load in a pan from load.FromK to
// load.ToK:
//
//	(m_w·c_p,w(T) + m_pan·c_pan)·dT/dt = P_pan(T) − P_loss(T)
//
// with c_p,w from Incropera Table A.6 (fluid.WaterAt) and the losses of
// Load.LossesW. The PowerFunc is called at opt.PowerSamples water
// temperatures (a plate solve is expensive) and interpolated between them
// by the monotone piecewise cubic of Fritsch & Butland (1984), so a power
// linear in T is reproduced exactly; the pan power and the source power are
// interpolated separately.
//
// Because the right-hand side depends on T alone, the time is the integral
// t = ∫ C(T)/(P_pan − P_loss) dT, taken in temperature steps by adaptive
// Simpson quadrature: each step is compared with its two halves, the
// Richardson error estimate |S₂ − S₁|/15 of the time is held below 1e-9 of
// the step's time (steps shorter than 1e-7 of the range are accepted as
// they are), steps are at most 1/64 of the range and, when opt.MaxStepS is
// set, at most that long. The last step ends exactly at ToK.
// The energies are ∫ P dt = ∫ P·C/(P_pan − P_loss) dT over the same steps.
//
// If the heat into the pan falls to the losses at some temperature below
// ToK, Heatup returns a *StallError with that temperature.
//
// The heat-up is quasi-steady on the hob side: the heat capacity of the hob
// (in heater mode the glass-ceramic plate, which stores on the order of
// 100 kJ at working temperature for a 4 mm zone) is not modelled, so the
// time counts from a hob already at its working state.
func Heatup(load Load, power PowerFunc, opt HeatupOptions) (*HeatupResult, error) {
	return HeatupContext(context.Background(), load, power, opt)
}

// HeatupContext is Heatup that stops when ctx is done: it checks ctx before
// each call of the PowerFunc and once per integration step, and returns an
// error wrapping ctx.Err(). The PowerFunc should honour ctx itself (a plate
// solve: Solver.SolveContext).
func HeatupContext(ctx context.Context, load Load, power PowerFunc, opt HeatupOptions) (*HeatupResult, error) {
	if power == nil {
		return nil, errors.New("thermal: heat-up: no power function")
	}
	if err := load.validate(!opt.NoLosses); err != nil {
		return nil, err
	}
	if !(opt.MaxStepS >= 0) || math.IsInf(opt.MaxStepS, 0) {
		return nil, fmt.Errorf("thermal: heat-up: maximum step %g s is negative or not finite", opt.MaxStepS)
	}
	ns := opt.PowerSamples
	if ns == 0 {
		ns = 7
	}
	if ns < 0 || ns > 10000 {
		return nil, fmt.Errorf("thermal: heat-up: %d power samples (want 1 to 10000)", opt.PowerSamples)
	}
	pw, err := samplePower(ctx, load.FromK, load.ToK, ns, power)
	if err != nil {
		return nil, err
	}
	h := &heatupRun{ctx: ctx, load: load, pw: pw, noLoss: opt.NoLosses}
	res := &HeatupResult{}
	if !opt.NoLosses {
		res.Warnings = load.lossWarnings()
	}
	if err := h.checkStall(); err != nil {
		return nil, err
	}
	if err := h.integrate(res, opt.MaxStepS); err != nil {
		return nil, err
	}
	return res, nil
}

func (l *Load) validate(losses bool) error {
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	switch {
	case !(l.WaterKg > 0) || !finite(l.WaterKg):
		return fmt.Errorf("thermal: heat-up: water mass %g kg is not positive and finite", l.WaterKg)
	case !(l.FromK >= fluid.WaterMinK) || !(l.ToK <= fluid.WaterMaxK):
		return fmt.Errorf("thermal: heat-up: water temperatures %g K to %g K are outside %g–%g K",
			l.FromK, l.ToK, fluid.WaterMinK, fluid.WaterMaxK)
	case !(l.ToK > l.FromK):
		return fmt.Errorf("thermal: heat-up: end temperature %g K is not above the start %g K", l.ToK, l.FromK)
	case !(l.PanKg >= 0) || !finite(l.PanKg) || !(l.PanCpJKgK >= 0) || !finite(l.PanCpJKgK):
		return fmt.Errorf("thermal: heat-up: pan mass %g kg or specific heat %g J/(kg·K) is negative or not finite",
			l.PanKg, l.PanCpJKgK)
	}
	if !losses {
		return nil
	}
	switch {
	case !(l.RoomK > 0) || !finite(l.RoomK):
		return fmt.Errorf("thermal: heat-up: room temperature %g K is not positive and finite", l.RoomK)
	case !(l.WaterSurfaceDiameterM >= 0) || !finite(l.WaterSurfaceDiameterM):
		return fmt.Errorf("thermal: heat-up: water surface diameter %g m is negative or not finite", l.WaterSurfaceDiameterM)
	case !(l.WallHeightM >= 0) || !finite(l.WallHeightM) || !(l.WallDiameterM >= 0) || !finite(l.WallDiameterM):
		return fmt.Errorf("thermal: heat-up: wall height %g m or diameter %g m is negative or not finite",
			l.WallHeightM, l.WallDiameterM)
	case (l.WallHeightM > 0) != (l.WallDiameterM > 0):
		return fmt.Errorf("thermal: heat-up: wall height %g m and diameter %g m must both be set or both zero",
			l.WallHeightM, l.WallDiameterM)
	case !(l.WallEmissivity >= 0 && l.WallEmissivity <= 1) || !(l.WaterEmissivity >= 0 && l.WaterEmissivity <= 1):
		return fmt.Errorf("thermal: heat-up: emissivities %g (wall), %g (water) are outside 0–1",
			l.WallEmissivity, l.WaterEmissivity)
	case !(l.RoomHumidity >= 0 && l.RoomHumidity <= 1):
		return fmt.Errorf("thermal: heat-up: room humidity %g is outside 0–1", l.RoomHumidity)
	}
	// The air table must cover every film temperature.
	for _, t := range [...]float64{l.FromK, l.ToK} {
		if _, err := l.LossesW(t); err != nil {
			return err
		}
	}
	return nil
}

// powerTable interpolates the sampled PowerFunc.
type powerTable struct {
	pan, src             interp.FritschButland
	temps                []float64 // sample temperatures, K
	constPanW, constSrcW float64
	constant             bool
}

func (p *powerTable) at(tK float64) (panW, srcW float64) {
	if p.constant {
		return p.constPanW, p.constSrcW
	}
	return p.pan.Predict(tK), p.src.Predict(tK)
}

func samplePower(ctx context.Context, fromK, toK float64, n int, power PowerFunc) (*powerTable, error) {
	call := func(t float64) (float64, float64, error) {
		if err := ctx.Err(); err != nil {
			return 0, 0, fmt.Errorf("thermal: heat-up stopped before the power at %.6g K: %w", t, err)
		}
		pan, src, err := power(t)
		if err != nil {
			return 0, 0, fmt.Errorf("thermal: heat-up: power at %.6g K: %w", t, err)
		}
		if math.IsNaN(pan) || math.IsInf(pan, 0) || math.IsNaN(src) || math.IsInf(src, 0) {
			return 0, 0, fmt.Errorf("thermal: heat-up: power at %.6g K is not finite (pan %g W, source %g W)", t, pan, src)
		}
		return pan, src, nil
	}
	p := &powerTable{}
	if n == 1 {
		pan, src, err := call(0.5 * (fromK + toK))
		if err != nil {
			return nil, err
		}
		p.constant, p.constPanW, p.constSrcW = true, pan, src
		return p, nil
	}
	ts := make([]float64, n)
	pans := make([]float64, n)
	srcs := make([]float64, n)
	for i := range ts {
		t := fromK + (toK-fromK)*float64(i)/float64(n-1)
		if i == n-1 {
			t = toK
		}
		pan, src, err := call(t)
		if err != nil {
			return nil, err
		}
		ts[i], pans[i], srcs[i] = t, pan, src
	}
	p.pan.Fit(ts, pans)
	p.src.Fit(ts, srcs)
	p.temps = ts
	return p, nil
}

// heatupRun evaluates the heat-up integrand.
type heatupRun struct {
	ctx    context.Context
	load   Load
	pw     *powerTable
	noLoss bool
}

// heatupState is the integrand at one temperature.
type heatupState struct {
	panW, srcW, lossW float64
	capJK             float64 // heat capacity of water and pan, J/K
}

func (h *heatupRun) eval(tK float64) (heatupState, error) {
	var s heatupState
	s.panW, s.srcW = h.pw.at(tK)
	w, err := fluid.WaterAt(tK)
	if err != nil {
		return s, fmt.Errorf("thermal: heat-up: %w", err)
	}
	s.capJK = h.load.WaterKg*w.CpJKgK + h.load.PanKg*h.load.PanCpJKgK
	if !h.noLoss {
		l, err := h.load.LossesW(tK)
		if err != nil {
			return s, err
		}
		s.lossW = l.TotalW()
	}
	return s, nil
}

func (s heatupState) netW() float64 { return s.panW - s.lossW }

// stallSamples is the number of evenly spaced temperatures at which the
// net power is checked before integrating, besides the power samples.
const stallSamples = 512

// checkStall looks for a temperature below ToK where the net power into the
// load is not positive, at stallSamples + 1 even temperatures and at every
// power sample, and returns a *StallError at the first crossing.
func (h *heatupRun) checkStall() error {
	a, b := h.load.FromK, h.load.ToK
	ts := make([]float64, 0, stallSamples+1+len(h.pw.temps))
	for i := 0; i <= stallSamples; i++ {
		ts = append(ts, a+(b-a)*float64(i)/stallSamples)
	}
	ts = append(ts, h.pw.temps...)
	slices.Sort(ts)
	prevT := a
	for _, t := range ts {
		s, err := h.eval(t)
		if err != nil {
			return err
		}
		if s.netW() > 0 {
			prevT = t
			continue
		}
		return h.stallBetween(prevT, t)
	}
	return nil
}

// stallBetween bisects for the temperature where the net power reaches zero,
// with net > 0 at lo (unless lo == hi) and net ≤ 0 at hi.
func (h *heatupRun) stallBetween(lo, hi float64) error {
	for range 100 {
		if hi-lo <= 1e-9 {
			break
		}
		m := 0.5 * (lo + hi)
		s, err := h.eval(m)
		if err != nil {
			return err
		}
		if s.netW() > 0 {
			lo = m
		} else {
			hi = m
		}
	}
	s, err := h.eval(hi)
	if err != nil {
		return err
	}
	return &StallError{StallK: hi, ToK: h.load.ToK, PanW: s.panW}
}

// heatupTol is the relative local error allowed on each step's time.
const heatupTol = 1e-9

// integrand returns C/(P_pan − P_loss)·[1, P_pan, P_src, P_loss] at tK.
func (h *heatupRun) integrand(tK float64) ([4]float64, heatupState, error) {
	s, err := h.eval(tK)
	if err != nil {
		return [4]float64{}, s, err
	}
	net := s.netW()
	if !(net > 0) {
		return [4]float64{}, s, h.stallBetween(h.load.FromK, tK)
	}
	d := s.capJK / net
	return [4]float64{d, d * s.panW, d * s.srcW, d * s.lossW}, s, nil
}

func (h *heatupRun) integrate(res *HeatupResult, maxStepS float64) error {
	a, end := h.load.FromK, h.load.ToK
	span := end - a
	hMax := span / 64
	// Steps down to hFloor are accepted whatever their error estimate: a
	// loss term with a kink (at room temperature, or where the moist-air
	// buoyancy changes sign) would otherwise stall the step control. Their
	// share of the time is negligible.
	hFloor := span * 1e-7
	hMin := hFloor / 16
	step := hMax

	fa, sa, err := h.integrand(a)
	if err != nil {
		return err
	}
	var total [4]float64
	res.Curve = append(res.Curve, HeatupPoint{TWaterK: a, PanW: sa.panW, LossW: sa.lossW})
	for a < end {
		if err := h.ctx.Err(); err != nil {
			return fmt.Errorf("thermal: heat-up stopped at %.6g K: %w", a, err)
		}
		last := false
		if a+step >= end {
			step, last = end-a, true
		}
		b := end
		if !last {
			b = a + step
		}
		var f [4][4]float64 // at a+h/4, a+h/2, a+3h/4, b
		var sb heatupState
		for i := range 4 {
			t := a + step*float64(i+1)/4
			if i == 3 {
				t = b
			}
			var s heatupState
			f[i], s, err = h.integrand(t)
			if err != nil {
				return err
			}
			if i == 3 {
				sb = s
			}
		}
		var s1, s2 [4]float64
		for c := range 4 {
			s1[c] = step / 6 * (fa[c] + 4*f[1][c] + f[3][c])
			s2[c] = step / 12 * (fa[c] + 4*f[0][c] + 2*f[1][c] + 4*f[2][c] + f[3][c])
		}
		errT := math.Abs(s2[0]-s1[0]) / 15
		okErr := errT <= heatupTol*s2[0] || step <= hFloor
		okLen := maxStepS == 0 || s2[0] <= maxStepS
		if !okErr || !okLen {
			shrink := 0.5
			if !okErr {
				shrink = min(shrink, max(0.1, 0.9*math.Pow(heatupTol*s2[0]/errT, 0.2)))
			}
			if !okLen {
				shrink = min(shrink, 0.9*maxStepS/s2[0])
			}
			step *= shrink
			if step < hMin {
				return fmt.Errorf("thermal: heat-up: step control failed at %.6g K (step %.3g K)", a, step)
			}
			continue
		}
		for c := range 4 {
			total[c] += s2[c] + (s2[c]-s1[c])/15
		}
		res.Steps++
		res.Curve = append(res.Curve, HeatupPoint{TimeS: total[0], TWaterK: b, PanW: sb.panW, LossW: sb.lossW})
		a, fa = b, f[3]
		if last {
			break
		}
		grow := 2.0
		if errT > 0 {
			grow = min(grow, 0.9*math.Pow(heatupTol*s2[0]/errT, 0.2))
		}
		step = min(step*max(grow, 0.5), hMax)
	}
	res.TimeS, res.PanEnergyJ, res.SourceEnergyJ, res.LossEnergyJ = total[0], total[1], total[2], total[3]
	return nil
}

// Losses are the heat losses of a load to the room at one water
// temperature, W; see Load.LossesW.
type Losses struct {
	SurfaceConvW float64 // open water surface, natural convection
	SurfaceRadW  float64 // open water surface, radiation
	EvaporationW float64 // open water surface, latent heat of evaporation
	WallConvW    float64 // wetted wall, natural convection
	WallRadW     float64 // wetted wall, radiation
}

// TotalW returns the sum of the losses, W.
func (l Losses) TotalW() float64 {
	return l.SurfaceConvW + l.SurfaceRadW + l.EvaporationW + l.WallConvW + l.WallRadW
}

// Vapour-side constants for the evaporation estimate.
const (
	waterMolarMassKgMol = 18.015e-3 // kg/mol, from memory [M]
	vapourDiffRefM2S    = 0.26e-4   // D_AB of water vapour in air at 298 K, 1 atm, m²/s: Incropera Table A.8 [M]
	vapourDiffRefK      = 298.0
	latentHeat0CJKg     = 2502e3 // h_fg at 273.15 K, J/kg: Incropera Table A.6 [M]
)

// LossesW returns the heat losses to the room, W, with the bulk water (and
// the open surface and wetted wall, taken at the same temperature) at
// tWaterK:
//
//   - open surface, area πD²/4: natural convection from a horizontal surface
//     facing up (AirPlateUpHWM2K, McAdams, L = A/P = D/4) and grey
//     radiation to the room, ε_water·σ·(T⁴ − T_room⁴);
//   - wetted wall, area π·D·H: natural convection from a vertical surface
//     (AirVerticalHWM2K, Churchill–Chu, L = H; the cylinder is treated as a
//     vertical plate) and radiation ε_wall·σ·(T⁴ − T_room⁴);
//   - evaporation, when l.Evaporation is set: the open surface's
//     convection coefficient is then driven by the density difference of
//     moist air, saturated at the surface and at RoomHumidity in the room
//     (ideal-gas mixture, Ra = g·(Δρ/ρ̄)·L³/(ν·α) in place of g·β·ΔT·L³/(ν·α);
//     the light vapour keeps it buoyant even at room temperature), and
//     the mass transfer coefficient follows from it by the Chilton–Colburn
//     analogy,
//     h_m = h/(ρ·c_p·Le^(2/3)) (Incropera, 6th ed., eq. 6.92 [M]), with
//     Le = α/D_AB and D_AB = 0.26e-4 m²/s at 298 K scaled as T^1.5
//     (Incropera Table A.8 [M]), air properties at the film temperature;
//     the flux ṁ″ = ρ·h_m·ln(1 + B), B = (m_s − m_∞)/(1 − m_s), ρ the
//     mean of the moist-air densities at the surface and in the room, with
//     vapour mass fractions m from the saturation pressure (WaterVapourPa)
//     at the surface and RoomHumidity times it at room temperature (the
//     Spalding mass-transfer driving force, which tends to the low-rate
//     h_m·(ρ_v,s − ρ_v,∞) for small B; Mills, Mass Transfer, 2001 [M]);
//     times h_fg(T), linear between 2502 kJ/kg at 273.15 K [M] and
//     2257 kJ/kg at 373.15 K [C] (Incropera Table A.6). It is an
//     estimate: near 100 °C the surface is mostly vapour and evaporation is
//     driven by boiling, not diffusion.
//
// Losses are negative when the water is colder than the room.
func (l Load) LossesW(tWaterK float64) (Losses, error) {
	var out Losses
	tr := l.RoomK
	rad := fluid.StefanBoltzmann * (tWaterK*tWaterK*tWaterK*tWaterK - tr*tr*tr*tr)
	if d := l.WaterSurfaceDiameterM; d > 0 {
		area := math.Pi * d * d / 4
		var h float64
		var err error
		if l.Evaporation {
			h, err = moistPlateUpHWM2K(tWaterK, tr, l.RoomHumidity, d/4)
		} else {
			h, err = AirPlateUpHWM2K(tWaterK, tr, d/4)
		}
		if err != nil {
			return out, fmt.Errorf("thermal: heat-up losses: %w", err)
		}
		out.SurfaceConvW = h * area * (tWaterK - tr)
		eps := l.WaterEmissivity
		if eps == 0 {
			eps = 0.95
		}
		out.SurfaceRadW = eps * area * rad
		if l.Evaporation {
			mdot, err := evaporationKgM2S(tWaterK, tr, l.RoomHumidity, h)
			if err != nil {
				return out, err
			}
			out.EvaporationW = mdot * latentHeatJKg(tWaterK) * area
		}
	}
	if l.WallHeightM > 0 && l.WallDiameterM > 0 {
		area := math.Pi * l.WallDiameterM * l.WallHeightM
		h, err := AirVerticalHWM2K(tWaterK, tr, l.WallHeightM)
		if err != nil {
			return out, fmt.Errorf("thermal: heat-up losses: %w", err)
		}
		out.WallConvW = h * area * (tWaterK - tr)
		out.WallRadW = l.WallEmissivity * area * rad
	}
	return out, nil
}

// lossWarnings returns warnings about the loss model's validity for l.
func (l Load) lossWarnings() []string {
	var w []string
	if l.WallHeightM > 0 && l.WallDiameterM > 0 {
		// A vertical cylinder behaves as a vertical plate when
		// D/L ≥ 35/Gr_L^(1/4) (Incropera, 6th ed., eq. 9.33 [M]); checked at
		// the end temperature, where Gr is largest.
		t := l.ToK
		a, beta, err := airFilm(t, l.RoomK)
		if err == nil && t != l.RoomK {
			gr := fluid.StandardGravityMS2 * beta * math.Abs(t-l.RoomK) * math.Pow(l.WallHeightM, 3) /
				(a.KinViscosityM2S * a.KinViscosityM2S)
			if l.WallDiameterM/l.WallHeightM < 35/math.Pow(gr, 0.25) {
				w = append(w, fmt.Sprintf("pan wall %.3g m high, %.3g m across is too slender to treat as a vertical plate (Gr %.3g); wall convection is underestimated",
					l.WallHeightM, l.WallDiameterM, gr))
			}
		}
	}
	if l.Evaporation && l.WaterSurfaceDiameterM > 0 && l.ToK > 353.15 {
		w = append(w, fmt.Sprintf("evaporation above 80 °C (to %.2f K) is a rough estimate: the surface air is mostly vapour", l.ToK))
	}
	return w
}

// moistAirDensityKgM3 returns the density of moist air at 1 atm and tK
// with vapour partial pressure pv (Pa), as an ideal-gas mixture.
func moistAirDensityKgM3(tK, pv float64) float64 {
	p := fluid.StandardPressurePa
	return (pv*waterMolarMassKgMol + (p-pv)*fluid.AirMolarMassKgMol) / (fluid.GasConstantJMolK * tK)
}

// moistPlateUpHWM2K is AirPlateUpHWM2K for a water surface at tSurfK, the
// buoyancy taken from the density difference between air saturated at the
// surface and room air at tAirK and relative humidity rh.
func moistPlateUpHWM2K(tSurfK, tAirK, rh, lM float64) (float64, error) {
	a, _, err := airFilm(tSurfK, tAirK)
	if err != nil {
		return 0, err
	}
	rs := moistAirDensityKgM3(tSurfK, min(WaterVapourPa(tSurfK), fluid.StandardPressurePa))
	re := moistAirDensityKgM3(tAirK, rh*WaterVapourPa(tAirK))
	dr := re - rs
	ra := Rayleigh(fluid.StandardGravityMS2, 2/(rs+re), math.Abs(dr), lM, a.KinViscosityM2S, a.DiffusivityM2S)
	nu := HotPlateUpNuContinuous(ra)
	if dr < 0 {
		nu = HotPlateDownNu(ra)
	}
	return nu * a.ConductivityWMK / lM, nil
}

// WaterVapourPa returns the saturation vapour pressure of water over liquid
// water at tK (K), Pa, by the Buck equation as revised in 1996
// (Buck 1981, J. Appl. Meteorol. 20:1527; Buck Research CR-1A manual 1996):
//
//	p = 611.21·exp((18.678 − t/234.5)·t/(257.14 + t)),  t in °C
//
// fitted for −80 to 50 °C; from 50 to 100 °C it stays within about 0.1 % of
// the steam tables (101.30 kPa at 100 °C against 101.325).
func WaterVapourPa(tK float64) float64 {
	t := tK - fluid.CelsiusZeroK
	return 611.21 * math.Exp((18.678-t/234.5)*t/(257.14+t))
}

// vapourMassFraction returns the mass fraction of water vapour in moist air
// at 1 atm with vapour partial pressure pv (Pa).
func vapourMassFraction(pv float64) float64 {
	p := fluid.StandardPressurePa
	mv := pv * waterMolarMassKgMol
	return mv / (mv + (p-pv)*fluid.AirMolarMassKgMol)
}

// evaporationKgM2S returns the evaporation flux, kg/(m²·s), from a water
// surface at tsK into room air at trK of relative humidity rh, given the
// surface's convection coefficient hWM2K (see Load.LossesW).
func evaporationKgM2S(tsK, trK, rh, hWM2K float64) (float64, error) {
	a, _, err := airFilm(tsK, trK)
	if err != nil {
		return 0, fmt.Errorf("thermal: heat-up evaporation: %w", err)
	}
	tf := 0.5 * (tsK + trK)
	dab := vapourDiffRefM2S * math.Pow(tf/vapourDiffRefK, 1.5)
	le := a.DiffusivityM2S / dab
	hm := hWM2K / (a.DensityKgM3 * a.CpJKgK * math.Pow(le, 2.0/3))
	pvs := min(WaterVapourPa(tsK), fluid.StandardPressurePa*(1-1e-9))
	pve := rh * WaterVapourPa(trK)
	ms, me := vapourMassFraction(pvs), vapourMassFraction(pve)
	b := (ms - me) / (1 - ms)
	rho := 0.5 * (moistAirDensityKgM3(tsK, pvs) + moistAirDensityKgM3(trK, pve))
	return rho * hm * math.Log1p(b), nil
}

// latentHeatJKg returns the latent heat of evaporation of water at tK,
// J/kg, linear between Incropera Table A.6's 273.15 K and 373.15 K rows.
func latentHeatJKg(tK float64) float64 {
	f := (tK - fluid.WaterMinK) / (fluid.WaterMaxK - fluid.WaterMinK)
	return latentHeat0CJKg + f*(sat1Atm.LatentHeatJKg-latentHeat0CJKg)
}
