package thermal

import (
	"errors"
	"fmt"
	"math"

	"gapflux/fluid"
)

// Tolerances and limits of Solve.
const (
	defaultRelTol    = 1e-10 // linear relative residual when Problem.RelTol is 0
	defaultOuterTolK = 1e-6  // outer max |ΔT|, K, when Problem.OuterTolK is 0
	maxOuter         = 200   // outer iterations before Solve gives up

	// minLinkHWM2K floors the linearised water-side and glass-loss
	// conductances, W/(m²·K), so that every linear system stays positive
	// definite where a correlation gives h → 0 as ΔT → 0. It only changes
	// the path of the iteration, not its converged result.
	minLinkHWM2K = 1e-3
)

// Solve computes the steady temperature field of a pan base on a hob and the
// heat flowing into the pan (DESIGN.md §5.3).
//
// Each base cell carries one pan node at the mid-plane of the base, obeying
// the plate equation
//
//	∇·(K∇T) + h_dn (T_hob − T) − h_up (T − T_water) = 0,
//
// with K = Σ k_i t_i (W/K), h_dn = 1/(1/h_int + R_b/2), h_up = 1/(1/h_water +
// R_b/2) and R_b = Σ t_i/k_i, discretised by finite volumes on the 5-point
// stencil (face conductance K between neighbouring base cells, adiabatic
// rim). The interface conductance h_int = solid + gas + rad comes from
// p.Interface, evaluated with the hob surface and the pan's outer face
// temperatures extrapolated from the nodes with the previous iterate's flux
// (T_face = T + q·R_b/2, and likewise through half the glass in heater
// mode); the water side from p.Water at the inner-face temperature, solved
// exactly in series with R_b/2.
//
// In TemperatureMode (p.Temperature set) the hob top is held at TopK. In
// HeaterMode (p.Heater set) every cell within GlassRadiusM of the zone centre
// also carries a glass node (mid-thickness) with lateral conductance k_g·t_g,
// the heater's power (profile normalised to PowerW·duty·(1 − transmitted
// fraction) over the cells whose centre lies in the zone), a downward loss
// DownHWM2K·(T_g − RoomK) taken from the node, and upward either the series
// t_g/(2k_g) + 1/h_int + R_b/2 to the pan node, or, where no pan covers the
// glass, t_g/(2k_g) in series with natural convection (McAdams hot plate
// facing up, AirPlateUpHWM2K, L = A/P = GlassRadiusM/2 of the modelled glass
// disc) and grey radiation to the room. The transmitted fraction of each
// zone cell's power goes straight into the pan node above it; over cells with
// no pan it is lost and counted nowhere but in a warning. When the glass
// would pass LimiterK, the duty is lowered so that the hottest glass node sits
// at LimiterK.
//
// Nonlinear terms are handled by outer iterations: the interface h by
// fixed-point (Picard) updates; the water side and the uncovered-glass loss
// by Newton linearisation with a line search along the step (with the
// interface frozen the problem is the minimisation of a convex functional,
// so the search stops a step from overshooting a steep boiling onset); the
// limiter exactly on each linearised system, which is linear in the duty
// (T = T₀ + duty·T₁, duty = min over glass nodes of (LimiterK − T₀)/T₁).
// They stop when the largest temperature change is below OuterTolK, or fail
// after 200 iterations with the last change. Each linear system is
// symmetric positive definite and is solved matrix-free by conjugate
// gradients preconditioned with a geometric multigrid V-cycle to RelTol.
//
// Solve returns an error for inconsistent input, for non-finite or negative
// conductances from Interface or Water, and when the iterations do not
// converge.
func Solve(p *Problem) (*Solution, error) {
	if err := validate(p); err != nil {
		return nil, err
	}
	s := newPlate(p)
	if err := s.run(); err != nil {
		return nil, err
	}
	return s.solution()
}

func validate(p *Problem) error {
	if p == nil {
		return errors.New("thermal: nil problem")
	}
	g := p.Grid
	if g.Nx <= 0 || g.Ny <= 0 || !(g.CellM > 0) || math.IsInf(g.CellM, 0) {
		return fmt.Errorf("thermal: bad grid %d×%d, cell %g m", g.Nx, g.Ny, g.CellM)
	}
	if !finite(g.X0M) || !finite(g.Y0M) {
		return fmt.Errorf("thermal: grid origin (%g, %g) m is not finite", g.X0M, g.Y0M)
	}
	n := g.Nx * g.Ny
	if len(p.InBase) != n {
		return fmt.Errorf("thermal: InBase has %d cells, grid has %d", len(p.InBase), n)
	}
	nb := 0
	for _, b := range p.InBase {
		if b {
			nb++
		}
	}
	if nb == 0 {
		return errors.New("thermal: no base cells")
	}
	if len(p.BaseLayers) == 0 {
		return errors.New("thermal: no base layers")
	}
	for i, l := range p.BaseLayers {
		if err := checkLayer(l); err != nil {
			return fmt.Errorf("thermal: base layer %d: %w", i, err)
		}
	}
	if p.Interface == nil {
		return errors.New("thermal: no interface model")
	}
	if p.Water == nil {
		return errors.New("thermal: no water-side model")
	}
	if !(p.TWaterK > 0) || math.IsInf(p.TWaterK, 0) {
		return fmt.Errorf("thermal: water temperature %g K is not positive", p.TWaterK)
	}
	if p.RelTol < 0 || p.RelTol >= 1 || math.IsNaN(p.RelTol) {
		return fmt.Errorf("thermal: relative tolerance %g outside [0, 1)", p.RelTol)
	}
	if p.OuterTolK < 0 || math.IsNaN(p.OuterTolK) || math.IsInf(p.OuterTolK, 0) {
		return fmt.Errorf("thermal: outer tolerance %g K is negative", p.OuterTolK)
	}
	switch {
	case (p.Temperature == nil) == (p.Heater == nil):
		return errors.New("thermal: exactly one of Temperature and Heater must be set")
	case p.Temperature != nil:
		t := p.Temperature.TopK
		if len(t) != n {
			return fmt.Errorf("thermal: TopK has %d cells, grid has %d", len(t), n)
		}
		for k, v := range t {
			if p.InBase[k] && !(v > 0 && !math.IsInf(v, 0)) {
				return fmt.Errorf("thermal: hob top temperature %g K at cell %d", v, k)
			}
		}
	default:
		h := p.Heater
		switch {
		case !(h.PowerW >= 0) || math.IsInf(h.PowerW, 0):
			return fmt.Errorf("thermal: heater power %g W", h.PowerW)
		case !(h.ZoneDiameterM > 0) || math.IsInf(h.ZoneDiameterM, 0):
			return fmt.Errorf("thermal: zone diameter %g m", h.ZoneDiameterM)
		case !finite(h.ZoneCentreM[0]) || !finite(h.ZoneCentreM[1]):
			return fmt.Errorf("thermal: zone centre %v m is not finite", h.ZoneCentreM)
		case !(h.GlassRadiusM >= h.ZoneDiameterM/2) || math.IsInf(h.GlassRadiusM, 0):
			return fmt.Errorf("thermal: glass radius %g m is smaller than the zone radius %g m", h.GlassRadiusM, h.ZoneDiameterM/2)
		case !(h.GlassEmissivity >= 0 && h.GlassEmissivity <= 1):
			return fmt.Errorf("thermal: glass emissivity %g outside [0, 1]", h.GlassEmissivity)
		case !(h.DownHWM2K >= 0) || math.IsInf(h.DownHWM2K, 0):
			return fmt.Errorf("thermal: downward loss %g W/(m²·K)", h.DownHWM2K)
		case !(h.RoomK >= fluid.AirMinK && h.RoomK <= 400):
			return fmt.Errorf("thermal: room temperature %g K outside %g to 400 K", h.RoomK, fluid.AirMinK)
		case !(h.TransmittedFraction >= 0 && h.TransmittedFraction < 1):
			return fmt.Errorf("thermal: transmitted fraction %g outside [0, 1)", h.TransmittedFraction)
		case math.IsNaN(h.LimiterK) || math.IsInf(h.LimiterK, 0):
			return fmt.Errorf("thermal: limiter temperature %g K", h.LimiterK)
		case h.LimiterK > 0 && h.LimiterK <= math.Max(h.RoomK, p.TWaterK):
			return fmt.Errorf("thermal: limiter temperature %g K is not above the room and water temperatures", h.LimiterK)
		}
		if err := checkLayer(h.Glass); err != nil {
			return fmt.Errorf("thermal: glass: %w", err)
		}
	}
	return nil
}

func checkLayer(l Layer) error {
	if !(l.ThicknessM > 0) || math.IsInf(l.ThicknessM, 0) {
		return fmt.Errorf("thickness %g m is not positive", l.ThicknessM)
	}
	if !(l.ConductivityWMK > 0) || math.IsInf(l.ConductivityWMK, 0) {
		return fmt.Errorf("conductivity %g W/(m·K) is not positive", l.ConductivityWMK)
	}
	return nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// plate is the state of one Solve.
type plate struct {
	p      *Problem
	n, nl  int
	areaM2 float64
	halfRb float64 // half the base's through-thickness resistance, m²·K/W
	halfRg float64 // half the glass's, m²·K/W
	pan    []bool
	glass  []bool // heater mode only

	qHeat  []float64 // heater power per unit duty into each glass node, W
	qTrans []float64 // transmitted power per unit duty into each pan node, W
	qLost  float64   // transmitted power per unit duty missing the pan, W

	water    waterLaw
	uncover  glassLaw
	limiterK float64

	lv   *level
	mg   *multigrid
	cg   *pcg
	tol  float64
	oTol float64

	t, t0, t1    []float64 // state; split parts T₀, T₁ (heater with limiter)
	bRest, bHeat []float64
	hInt         []float64 // interface h per cell at the last evaluation (NaN before)
	qLink, gLink []float64 // per node: A·q and A·g of the nonlinear link (water, uncovered glass) at assembly, W and W/K
	dir, work    []float64 // line-search work vectors
	tsWater      []float64 // inner-face temperature per pan cell (warm start)
	tsGlass      []float64 // glass top temperature per uncovered glass cell (warm start)
	duty         float64

	linIter, outer int
	relRes         float64
	warnings       []string
}

func newPlate(p *Problem) *plate {
	g := p.Grid
	n := g.Nx * g.Ny
	s := &plate{p: p, n: n, nl: 1, areaM2: g.CellM * g.CellM, pan: p.InBase, duty: 1}
	var kBase, rb float64
	for _, l := range p.BaseLayers {
		kBase += l.ConductivityWMK * l.ThicknessM
		rb += l.ThicknessM / l.ConductivityWMK
	}
	s.halfRb = rb / 2
	s.tol, s.oTol = p.RelTol, p.OuterTolK
	if s.tol == 0 {
		s.tol = defaultRelTol
	}
	if s.oTol == 0 {
		s.oTol = defaultOuterTolK
	}
	s.water = waterLaw{w: p.Water, tWaterK: p.TWaterK}
	h := p.Heater
	if h != nil {
		s.nl = 2
		s.halfRg = h.Glass.ThicknessM / h.Glass.ConductivityWMK / 2
		s.uncover = glassLaw{eps: h.GlassEmissivity, roomK: h.RoomK, lM: h.GlassRadiusM / 2}
		s.limiterK = h.LimiterK
	}

	lv := newLevel(g.Nx, g.Ny, s.nl)
	copy(lv.act[0], s.pan)
	if h != nil {
		s.glass = lv.act[1]
		r2 := h.GlassRadiusM * h.GlassRadiusM
		for k := 0; k < n; k++ {
			x, y := g.CentreM(k)
			dx, dy := x-h.ZoneCentreM[0], y-h.ZoneCentreM[1]
			s.glass[k] = dx*dx+dy*dy <= r2
		}
	}
	kg := 0.0
	if h != nil {
		kg = h.Glass.ConductivityWMK * h.Glass.ThicknessM
	}
	// Square cells: the conductance between neighbouring centres is K·w/d = K
	// (the harmonic mean of two equal cell conductances).
	for l, kf := range []float64{kBase, kg}[:s.nl] {
		act := lv.act[l]
		for j := 0; j < g.Ny; j++ {
			for i := 0; i < g.Nx; i++ {
				k := j*g.Nx + i
				if !act[k] {
					continue
				}
				if i+1 < g.Nx && act[k+1] {
					lv.kx[l][k] = kf
				}
				if j+1 < g.Ny && act[k+g.Nx] {
					lv.ky[l][k] = kf
				}
			}
		}
	}
	s.lv = lv
	s.mg = newMultigrid(lv)
	s.cg = newPCG(s.nl * n)
	s.t = make([]float64, s.nl*n)
	s.bRest = make([]float64, s.nl*n)
	s.hInt = make([]float64, n)
	s.qLink = make([]float64, s.nl*n)
	s.gLink = make([]float64, s.nl*n)
	s.dir = make([]float64, s.nl*n)
	s.work = make([]float64, s.nl*n)
	s.tsWater = make([]float64, n)
	for k := range s.hInt {
		s.hInt[k] = math.NaN()
		s.tsWater[k] = math.NaN()
	}
	tw := p.TWaterK
	if h == nil {
		for k := 0; k < n; k++ {
			if s.pan[k] {
				s.t[k] = 0.5 * (p.Temperature.TopK[k] + tw)
			}
		}
		return s
	}

	// Heater mode.
	s.bHeat = make([]float64, 2*n)
	s.qHeat = s.bHeat[n:]
	s.qTrans = s.bHeat[:n]
	s.tsGlass = make([]float64, n)
	rz := h.ZoneDiameterM / 2
	// Initial glass temperature: 150 K above the room and water, or half-way
	// to the limiter if that is lower.
	t0Glass := math.Max(tw, h.RoomK) + 150
	if s.limiterK > 0 {
		t0Glass = math.Min(t0Glass, 0.5*(s.limiterK+math.Max(tw, h.RoomK)))
	}
	var wsum float64
	for k := 0; k < n; k++ {
		s.tsGlass[k] = math.NaN()
		if s.pan[k] {
			s.t[k] = tw + 10
		}
		if s.glass[k] {
			s.t[n+k] = t0Glass
		}
		x, y := g.CentreM(k)
		r := math.Hypot(x-h.ZoneCentreM[0], y-h.ZoneCentreM[1])
		if r > rz {
			continue
		}
		w := 1.0
		if h.PowerProfile != nil {
			w = h.PowerProfile(r)
		}
		if !(w >= 0) || math.IsInf(w, 0) {
			// Reported by run.
			s.qHeat[k] = math.NaN()
			continue
		}
		s.qHeat[k] = w
		wsum += w
	}
	tau := h.TransmittedFraction
	for k := 0; k < n; k++ {
		if s.qHeat[k] == 0 {
			continue
		}
		q := h.PowerW * s.qHeat[k] / wsum
		s.qHeat[k] = q * (1 - tau)
		if s.pan[k] {
			s.qTrans[k] = q * tau
		} else {
			s.qLost += q * tau
		}
	}
	if s.limiterK > 0 {
		s.t0 = make([]float64, 2*n)
		s.t1 = make([]float64, 2*n)
	}
	return s
}

// run does the outer iterations.
func (s *plate) run() error {
	if s.nl == 2 {
		if err := s.checkHeater(); err != nil {
			return err
		}
	}
	next := make([]float64, len(s.t))
	b := make([]float64, len(s.t))
	var change float64
	for s.outer = 1; s.outer <= maxOuter; s.outer++ {
		if err := s.assemble(); err != nil {
			return err
		}
		if err := s.mg.update(); err != nil {
			return err
		}
		copy(next, s.t)
		if s.t0 != nil {
			if err := s.linear(s.t0, s.bRest); err != nil {
				return err
			}
			if err := s.linear(s.t1, s.bHeat); err != nil {
				return err
			}
			s.setDuty()
			for i := range next {
				next[i] = s.t0[i] + s.duty*s.t1[i]
			}
		} else {
			copy(b, s.bRest)
			if s.bHeat != nil {
				for i := range b {
					b[i] += s.bHeat[i]
				}
			}
			if err := s.linear(next, b); err != nil {
				return err
			}
		}
		for i, v := range next {
			if !finite(v) {
				return fmt.Errorf("thermal: temperature at node %d became %g in outer iteration %d", i, v, s.outer)
			}
		}
		alpha, err := s.lineSearch(next)
		if err != nil {
			return err
		}
		change = 0
		for i, d := range s.dir {
			s.t[i] += alpha * d
			change = math.Max(change, math.Abs(alpha*d))
		}
		if change < s.oTol {
			return nil
		}
	}
	s.outer = maxOuter
	return fmt.Errorf("thermal: plate solve did not converge in %d outer iterations (last max |ΔT| = %.3g K, tolerance %.3g K)", maxOuter, change, s.oTol)
}

// lineSearch returns the step α ∈ (0, 1] to take along d = next − T (left in
// s.dir). With the interface frozen, the linearised system is a Newton-like
// step for the gradient F(T) = L T − b + A·q(T) of a convex functional (L
// symmetric positive definite, the link fluxes q non-decreasing), so φ'(α) =
// d·F(T + α d) is non-decreasing. The full step is taken unless φ'(1) >
// 0.1·|φ'(0)| (the step overshoots, as when a base cell jumps across the
// onset of boiling); then α is found by regula falsi (Illinois) where
// |φ'(α)| ≤ 0.1·|φ'(0)|. φ'(0) = −d·(L+G)d, and
// φ'(α) = φ'(0) + α·d·L d + Σ d_i (A q_i(T + α d) − A q_i(T)),
// with G the link linearisation (s.gLink).
func (s *plate) lineSearch(next []float64) (float64, error) {
	d := s.dir
	for i := range d {
		d[i] = next[i] - s.t[i]
	}
	s.lv.apply(s.work, d)
	var sd, gd float64
	for i, v := range d {
		sd += v * s.work[i]
		gd += s.gLink[i] * v * v
	}
	if !(sd > 0) {
		return 1, nil
	}
	phi := func(alpha float64) (float64, error) {
		for i, v := range d {
			s.work[i] = s.t[i] + alpha*v
		}
		f := -sd + alpha*(sd-gd)
		err := s.linkFluxes(s.work, func(i int, aq float64) { f += d[i] * (aq - s.qLink[i]) })
		return f, err
	}
	const eta = 0.1
	f1, err := phi(1)
	if err != nil || f1 <= eta*sd {
		return 1, err
	}
	a0, f0, a1 := 0.0, -sd, 1.0
	side := 0
	for range 60 {
		a := a0 - f0*(a1-a0)/(f1-f0)
		f, err := phi(a)
		if err != nil {
			return 0, err
		}
		if math.Abs(f) <= eta*sd {
			return a, nil
		}
		if f < 0 {
			a0, f0 = a, f
			if side == -1 {
				f1 /= 2
			}
			side = -1
		} else {
			a1, f1 = a, f
			if side == 1 {
				f0 /= 2
			}
			side = 1
		}
	}
	return 0.5 * (a0 + a1), nil
}

// linkFluxes evaluates the nonlinear links at the node temperatures t and
// calls use(i, A·q_i) for each node i that has one.
func (s *plate) linkFluxes(t []float64, use func(i int, aq float64)) error {
	n, a := s.n, s.areaM2
	tw := s.p.TWaterK
	for k := 0; k < n; k++ {
		if !s.pan[k] {
			continue
		}
		ts, q, _, err := linkFlux(&s.water, t[k], tw, s.halfRb, s.tsWater[k])
		if err != nil {
			return fmt.Errorf("thermal: water side at cell %d: %w", k, err)
		}
		s.tsWater[k] = ts
		use(k, a*q)
	}
	if s.nl == 1 {
		return nil
	}
	room := s.p.Heater.RoomK
	for k := 0; k < n; k++ {
		if !s.glass[k] || s.pan[k] {
			continue
		}
		ts, q, _, err := linkFlux(&s.uncover, t[n+k], room, s.halfRg, s.tsGlass[k])
		if err != nil {
			return fmt.Errorf("thermal: uncovered glass at cell %d: %w", k, err)
		}
		s.tsGlass[k] = ts
		use(n+k, a*q)
	}
	return nil
}

func (s *plate) checkHeater() error {
	var sum float64
	for k := 0; k < s.n; k++ {
		if math.IsNaN(s.qHeat[k]) {
			return fmt.Errorf("thermal: heater power profile is negative or not finite at cell %d", k)
		}
		sum += s.qHeat[k] + s.qTrans[k]
	}
	if s.p.Heater.PowerW > 0 && !(sum > 0) {
		return errors.New("thermal: no glass cell lies in the heater zone with a positive power profile")
	}
	return nil
}

// linear solves lv·x = b by multigrid-preconditioned CG from the guess in x.
func (s *plate) linear(x, b []float64) error {
	it, rel, err := s.cg.solve(s.lv, s.mg, x, b, s.tol)
	s.linIter += it
	s.relRes = rel
	if err != nil {
		return fmt.Errorf("%w (outer iteration %d)", err, s.outer)
	}
	return nil
}

// setDuty sets the duty so that the hottest glass node of T₀ + duty·T₁ is at
// the limiter temperature, or 1 when it stays below. The split is exact for
// the current linearisation because the system is linear in the heater
// power. (The duty is 0 if T₀ alone passes the limiter, which only an early
// linearisation can do: validate keeps the room and water below it.)
func (s *plate) setDuty() {
	d := 1.0
	n := s.n
	for k := 0; k < n; k++ {
		if !s.glass[k] {
			continue
		}
		t0, t1 := s.t0[n+k], s.t1[n+k]
		if t0+d*t1 > s.limiterK {
			d = 0
			if t1 > 0 && t0 < s.limiterK {
				d = (s.limiterK - t0) / t1
			}
		}
	}
	s.duty = d
}

// interfaceH evaluates the interface at cell k between a hob node at tHobK
// (resistance halfR to its surface) and the pan node at tPanK.
func (s *plate) interfaceH(k int, tHobK, halfR, tPanK float64) (solid, gas, rad float64, err error) {
	ts, tf := tHobK, tPanK
	if h := s.hInt[k]; h > 0 {
		q := (tHobK - tPanK) / (halfR + 1/h + s.halfRb)
		ts -= q * halfR
		tf += q * s.halfRb
	}
	solid, gas, rad = s.p.Interface.H(k, ts, tf)
	for _, v := range [3]float64{solid, gas, rad} {
		if !(v >= 0) || math.IsInf(v, 0) {
			return 0, 0, 0, fmt.Errorf("thermal: interface conductance at cell %d is %g, %g, %g W/(m²·K) (solid, gas, radiation) at hob %.6g K, pan %.6g K", k, solid, gas, rad, ts, tf)
		}
	}
	s.hInt[k] = solid + gas + rad
	return solid, gas, rad, nil
}

// assemble sets sinks, couplings and right-hand sides from the current state.
func (s *plate) assemble() error {
	n, a, lv := s.n, s.areaM2, s.lv
	tw := s.p.TWaterK
	for k := 0; k < n; k++ {
		if !s.pan[k] {
			continue
		}
		tp := s.t[k]
		ts, q, g, err := linkFlux(&s.water, tp, tw, s.halfRb, s.tsWater[k])
		if err != nil {
			return fmt.Errorf("thermal: water side at cell %d: %w", k, err)
		}
		s.tsWater[k] = ts
		s.qLink[k], s.gLink[k] = a*q, a*g
		lv.sink[0][k] = a * g
		s.bRest[k] = a * (g*tp - q)
		if s.nl == 1 {
			top := s.p.Temperature.TopK[k]
			sol, gas, rad, err := s.interfaceH(k, top, 0, tp)
			if err != nil {
				return err
			}
			hdn := series(sol+gas+rad, s.halfRb)
			lv.sink[0][k] += a * hdn
			s.bRest[k] += a * hdn * top
		}
	}
	if s.nl == 2 {
		h := s.p.Heater
		for k := 0; k < n; k++ {
			lv.cpl[k] = 0
			if !s.glass[k] {
				continue
			}
			tg := s.t[n+k]
			lv.sink[1][k] = a * h.DownHWM2K
			s.bRest[n+k] = a * h.DownHWM2K * h.RoomK
			if s.pan[k] {
				sol, gas, rad, err := s.interfaceH(k, tg, s.halfRg, s.t[k])
				if err != nil {
					return err
				}
				lv.cpl[k] = a * series(sol+gas+rad, s.halfRg+s.halfRb)
				continue
			}
			ts, q, g, err := linkFlux(&s.uncover, tg, h.RoomK, s.halfRg, s.tsGlass[k])
			if err != nil {
				return fmt.Errorf("thermal: uncovered glass at cell %d: %w", k, err)
			}
			s.tsGlass[k] = ts
			s.qLink[n+k], s.gLink[n+k] = a*q, a*g
			lv.sink[1][k] += a * g
			s.bRest[n+k] += a * (g*tg - q)
		}
	}
	lv.setDiag()
	return nil
}

// series returns the conductance 1/(1/h + r), W/(m²·K), of h in series with
// the resistance r (m²·K/W); 0 when h is 0.
func series(h, r float64) float64 {
	if h == 0 {
		return 0
	}
	return h / (1 + h*r)
}

// surfaceLaw gives the flux, W/m², from a surface at tsK to its reservoir;
// it must be zero at the reservoir temperature and non-decreasing in tsK.
type surfaceLaw interface {
	fluxWM2(tsK float64) (float64, error)
}

// waterLaw is the water side: q = h_water(T_s, T_w)·(T_s − T_w).
type waterLaw struct {
	w       WaterSide
	tWaterK float64
}

func (l *waterLaw) fluxWM2(ts float64) (float64, error) {
	h := l.w.H(ts, l.tWaterK)
	if !(h >= 0) || math.IsInf(h, 0) {
		return 0, fmt.Errorf("heat transfer coefficient %g W/(m²·K) at %.6g K (water %.6g K)", h, ts, l.tWaterK)
	}
	return h * (ts - l.tWaterK), nil
}

// glassLaw is the loss of glass not covered by the pan: natural convection
// from a horizontal plate facing up (AirPlateUpHWM2K, length lM) and grey
// radiation to surroundings at the room temperature. Beyond the air table the
// convection coefficient is held at its value at the table's end.
type glassLaw struct {
	eps, roomK, lM float64
	clamped        bool
}

func (l *glassLaw) fluxWM2(ts float64) (float64, error) {
	tc := ts
	if hi := 2*fluid.AirMaxK - l.roomK; tc > hi {
		tc = hi
		l.clamped = true
	}
	h, err := AirPlateUpHWM2K(tc, l.roomK, l.lM)
	if err != nil {
		return 0, err
	}
	t2, r2 := ts*ts, l.roomK*l.roomK
	return h*(ts-l.roomK) + l.eps*fluid.StefanBoltzmann*(t2*t2-r2*r2), nil
}

// linkFlux solves the link from a node at tNode through the resistance halfR
// (m²·K/W) to a surface obeying law: it finds the surface temperature ts
// where (tNode − ts)/halfR = q(ts), starting from tsGuess (NaN for none), by
// Newton iterations safeguarded by bisection. It returns ts, the flux q and a
// linearisation conductance g ≈ dq/dtNode (W/(m²·K)) for the next Newton
// step on the node, floored at the secant q/(tNode − tRes) and minLinkHWM2K.
func linkFlux(law surfaceLaw, tNode, tRes, halfR, tsGuess float64) (ts, q, g float64, err error) {
	const dT = 1e-3 // finite-difference step for dq/dts, K
	var gs float64  // dq/dts
	eval := func(t float64) error {
		var q2 float64
		if q, err = law.fluxWM2(t); err != nil {
			return err
		}
		if q2, err = law.fluxWM2(t + dT); err != nil {
			return err
		}
		gs = (q2 - q) / dT
		return nil
	}
	if halfR == 0 || tNode == tRes {
		ts = tNode
		if err = eval(ts); err != nil {
			return
		}
	} else {
		lo, hi := math.Min(tNode, tRes), math.Max(tNode, tRes)
		ts = tsGuess
		if !(ts >= lo && ts <= hi) {
			ts = tNode - (tNode-tRes)*1e-3
		}
		for range 100 {
			if err = eval(ts); err != nil {
				return
			}
			f := (tNode-ts)/halfR - q // decreasing in ts
			if f > 0 {
				lo = ts
			} else {
				hi = ts
			}
			step := f / (1/halfR + math.Max(gs, 0))
			if math.Abs(step) <= 1e-8*(1+math.Abs(ts)) {
				// Accept the last Newton step; q follows to second order.
				ts += step
				q += gs * step
				break
			}
			next := ts + step
			if !(next >= lo && next <= hi) {
				next = 0.5 * (lo + hi)
			}
			ts = next
		}
	}
	if gs > 0 {
		g = 1 / (halfR + 1/gs)
	}
	if d := tNode - tRes; d != 0 {
		g = math.Max(g, q/d)
	}
	g = math.Max(g, minLinkHWM2K)
	return ts, q, g, nil
}

// solution evaluates the outputs at the converged temperatures.
func (s *plate) solution() (*Solution, error) {
	n, a := s.n, s.areaM2
	sol := &Solution{
		TPanK:            make([]float64, n),
		FluxWM2:          make([]float64, n),
		SolidWM2K:        make([]float64, n),
		GasWM2K:          make([]float64, n),
		RadWM2K:          make([]float64, n),
		LinearIterations: s.linIter,
		OuterIterations:  s.outer,
		RelResidual:      s.relRes,
	}
	tw := s.p.TWaterK
	for k := 0; k < n; k++ {
		if !s.pan[k] {
			sol.TPanK[k] = math.NaN()
			continue
		}
		tp := s.t[k]
		sol.TPanK[k] = tp
		_, qw, _, err := linkFlux(&s.water, tp, tw, s.halfRb, s.tsWater[k])
		if err != nil {
			return nil, fmt.Errorf("thermal: water side at cell %d: %w", k, err)
		}
		sol.WaterW += qw * a
		var hs, hg, hr, q float64
		switch {
		case s.nl == 1:
			top := s.p.Temperature.TopK[k]
			hs, hg, hr, err = s.interfaceH(k, top, 0, tp)
			q = series(hs+hg+hr, s.halfRb) * (top - tp)
		case s.glass[k]:
			tg := s.t[n+k]
			hs, hg, hr, err = s.interfaceH(k, tg, s.halfRg, tp)
			q = series(hs+hg+hr, s.halfRg+s.halfRb) * (tg - tp)
		}
		if err != nil {
			return nil, err
		}
		sol.SolidWM2K[k], sol.GasWM2K[k], sol.RadWM2K[k] = hs, hg, hr
		if h := hs + hg + hr; h > 0 {
			sol.SolidW += q * a * hs / h
			sol.GasW += q * a * hg / h
			sol.RadW += q * a * hr / h
		}
		if s.nl == 2 {
			tr := s.duty * s.qTrans[k]
			sol.TransmittedW += tr
			q += tr / a
		}
		sol.FluxWM2[k] = q
		sol.PowerW += q * a
	}
	if s.nl == 2 {
		if err := s.heaterOutputs(sol); err != nil {
			return nil, err
		}
	}
	sol.Warnings = s.warnings
	return sol, nil
}

func (s *plate) heaterOutputs(sol *Solution) error {
	n, a, h := s.n, s.areaM2, s.p.Heater
	s.uncover.clamped = false
	sol.TGlassK = make([]float64, n)
	sol.GlassMaxK = math.Inf(-1)
	outside := 0
	for k := 0; k < n; k++ {
		if !s.glass[k] {
			sol.TGlassK[k] = math.NaN()
			if s.pan[k] {
				outside++
			}
			continue
		}
		tg := s.t[n+k]
		sol.TGlassK[k] = tg
		sol.GlassMaxK = math.Max(sol.GlassMaxK, tg)
		sol.DownLossW += a * h.DownHWM2K * (tg - h.RoomK)
		if !s.pan[k] {
			_, q, _, err := linkFlux(&s.uncover, tg, h.RoomK, s.halfRg, s.tsGlass[k])
			if err != nil {
				return fmt.Errorf("thermal: uncovered glass at cell %d: %w", k, err)
			}
			sol.UncoveredLossW += q * a
		}
	}
	sol.HeaterW = s.duty * h.PowerW
	sol.DutyPct = 100 * s.duty
	if s.duty < 1 {
		s.warnings = append(s.warnings, fmt.Sprintf("heater cycled: the limiter held the glass at %.1f K, duty %.1f %%", s.limiterK, sol.DutyPct))
	}
	if outside > 0 {
		s.warnings = append(s.warnings, fmt.Sprintf("%d base cells lie beyond the modelled glass (radius %.4g m) and get no heat from the hob", outside, h.GlassRadiusM))
	}
	if lost := s.duty * s.qLost; lost > 0 {
		s.warnings = append(s.warnings, fmt.Sprintf("%.4g W of transmitted heater radiation misses the pan and is not counted", lost))
	}
	if s.uncover.clamped {
		s.warnings = append(s.warnings, fmt.Sprintf("uncovered glass beyond the air table: convection held at its value for a %.0f K film", fluid.AirMaxK))
	}
	return nil
}
