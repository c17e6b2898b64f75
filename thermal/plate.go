package thermal

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gapflux/fluid"

	"gonum.org/v1/gonum/floats"
)

// Tolerances and limits of Solve.
const (
	defaultRelTol    = 1e-10 // linear relative residual when Problem.RelTol is 0
	defaultOuterTolK = 1e-6  // outer max |ΔT|, K, when Problem.OuterTolK is 0
	maxOuter         = 200   // outer iterations before Solve gives up

	// outerForcing is the largest factor by which a linear solve reduces
	// its initial residual (the nonlinear residual) while the outer
	// iterations are far from converged; outerTightFactor·OuterTolK is the
	// change below which solves go to RelTol. dutyForcing is the factor of the
	// loose solve for the limiter's heater response.
	outerForcing     = 0.1
	outerTightFactor = 100
	dutyForcing      = 0.1
	dutyResolve      = 1e-2 // T₁ is solved again while the duty moves more than this

	// transmittedWarnShare is the share of the heater's power that heater
	// radiation passing the glass beside the pan must reach before Solve
	// warns about it (our own choice: a tenth of the default power-loss
	// limit of 10 %); any amount is in Solution.TransmittedLostW.
	transmittedWarnShare = 0.01

	// maxRho is the largest contraction factor from which run estimates the
	// remaining error.
	maxRho = 0.5

	// newtonFreshK: glassSideLink takes a fresh derivative in the first two
	// outer iterations and while the last outer change exceeds this, K.
	newtonFreshK = 50.0

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
// In TemperatureMode (p.Temperature set) the hob top is held at TopK, or,
// with a RatedPowerW, lowered uniformly until the heat into the pan is
// the rated power when the set point would draw more (solvePowerLimited).
// In HeaterMode (p.Heater set) every cell within GlassRadiusM of the zone
// centre also carries a glass node (mid-thickness) with lateral
// conductance k_g·t_g. The heater's power (profile normalised to
// PowerW·duty over the cells whose centre lies in the zone) is split per
// cell: the transmitted share (TransmittedFraction, or with a Coil the
// outcome of the element's radiative balance and the glass window,
// updated every outer iteration) passes the glass to the pan node above,
// which absorbs PanEmissivity of it (the rest returns to the glass node),
// or, with no pan above, leaves upward; the rest enters the glass
// underside, which loses DownHWM2K·(T_u − RoomK) downward and passes the
// remainder through t_g/(2k_g) to the node (an exact series elimination
// of the underside). Upward the node links either through t_g/(2k_g) +
// 1/h_int + R_b/2 to the pan node, or, where no pan covers the glass,
// t_g/(2k_g) in series with natural convection and grey radiation to the
// room. The convection coefficient is the McAdams plate average for a
// hot plate facing up (AirPlateUpHWM2K, L = A/P = GlassRadiusM/2 of the
// modelled glass disc), evaluated at the area-mean surface temperature of
// the uncovered glass as the correlation intends; radiation is per cell.
// When the sensed temperature would pass LimiterK, the duty is lowered so
// that it sits at LimiterK: the mean underside temperature along the Rod,
// or without a Rod the hottest glass node.
//
// Nonlinear terms are handled by outer iterations: the interface h by
// fixed-point (Picard) updates, in heater mode with the glass-side
// derivative of the interface flux as the link conductance (glassSideLink);
// the water side and the uncovered-glass loss by Newton linearisation with a
// line search along the step (with the interface frozen the problem is the
// minimisation of a convex functional, so the search stops a step from
// overshooting a steep boiling onset); the limiter on each linearised
// system, which is linear in the duty (T = T₀ + duty·T₁, duty = min over
// glass nodes of (LimiterK − T₀)/T₁). They stop when the largest temperature
// change is below OuterTolK, or, for a change below 10·OuterTolK, when the
// distance to the converged state estimated from it and the observed
// contraction (change·ρ/(1 − ρ), ρ < 0.5 the ratio of the last two changes)
// is; or they fail after 200 iterations with the last change. Each linear
// system is symmetric positive definite and is solved matrix-free by
// conjugate gradients preconditioned with a geometric multigrid V-cycle,
// loosely while the outer iterations are far from converged (inexact
// Newton) and to RelTol at the end.
//
// The iterations start from p.InitialTPanK, p.InitialTGlassK and
// p.InitialDutyPct when set (for example the Solution at a neighbouring
// water temperature), else from a built-in guess; the start changes the
// path, not the converged result beyond OuterTolK. Solve allocates its work
// buffers afresh; a Solver keeps them for the next solve on a grid of the
// same size.
//
// Solve returns an error for inconsistent input, for non-finite or negative
// conductances from Interface or Water, and when the iterations do not
// converge.
func Solve(p *Problem) (*Solution, error) {
	var sv Solver
	return sv.Solve(p)
}

// Solver solves plate problems one after another, keeping the large work
// buffers of its solves (~100 MB on a fine heater grid) for the next one on
// a grid of the same size and layer count, so that a scan, its flat twin
// and the water temperatures of a heat-up do not allocate each time. It
// keeps the buffers of the last solverCache grid shapes, so that a few
// solves on a coarser grid between two on the fine one (the pipeline's
// sensitivity table between the steady solve and the heat-up) do not drop
// the fine grid's buffers; a solve on a grid drops those kept for grids of
// fewer nodes. The zero value is ready to use. A Solver must
// not be used concurrently.
type Solver struct {
	ws [solverCache]cachedPlate // most recently used first
}

// solverCache is the number of grid shapes whose work buffers a Solver
// keeps.
const solverCache = 2

// cachedPlate is the work buffers of one grid shape.
type cachedPlate struct {
	s   *plate
	key [3]int // grid Nx, Ny and layer count of s
}

// take removes and returns the buffers kept for key (nil if none).
func (sv *Solver) take(key [3]int) *plate {
	for i, c := range sv.ws {
		if c.s != nil && c.key == key {
			copy(sv.ws[i:], sv.ws[i+1:])
			sv.ws[len(sv.ws)-1] = cachedPlate{}
			return c.s
		}
	}
	return nil
}

// dropSmaller drops the buffers kept for grid shapes of fewer nodes than
// key. A solve on a finer grid after some on a coarser one (the pipeline's
// heat-up after its sensitivity table) ends the coarse solves, whose
// buffers would otherwise stay live beside the fine ones; a coarse solve
// after it allocates afresh, which costs little next to a fine solve.
func (sv *Solver) dropSmaller(key [3]int) {
	nodes := func(k [3]int) int { return k[0] * k[1] * k[2] }
	j := 0
	for _, c := range sv.ws {
		if c.s != nil && nodes(c.key) >= nodes(key) {
			sv.ws[j] = c
			j++
		}
	}
	clear(sv.ws[j:])
}

// keep puts s, the buffers of grid shape key, first, dropping the least
// recently used shape when the cache is full.
func (sv *Solver) keep(s *plate, key [3]int) {
	copy(sv.ws[1:], sv.ws[:len(sv.ws)-1])
	sv.ws[0] = cachedPlate{s: s, key: key}
}

// Solve is like the package-level Solve, reusing sv's work buffers; the
// result does not depend on what they held.
func (sv *Solver) Solve(p *Problem) (*Solution, error) {
	return sv.SolveContext(context.Background(), p)
}

// SolveContext is Solve that stops when ctx is done: it checks ctx once per
// outer iteration and once per conjugate-gradient iteration (each a sweep
// over the grid) and returns an error wrapping ctx.Err(), so that
// errors.Is(err, context.Canceled) holds.
func (sv *Solver) SolveContext(ctx context.Context, p *Problem) (*Solution, error) {
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("thermal: plate solve not started: %w", err)
	}
	if err := validate(p); err != nil {
		return nil, err
	}
	if p.Temperature != nil && p.Temperature.RatedPowerW > 0 {
		return sv.solvePowerLimited(ctx, p)
	}
	return sv.solveOnce(ctx, p)
}

// solveOnce solves the validated problem p as it stands.
func (sv *Solver) solveOnce(ctx context.Context, p *Problem) (*Solution, error) {
	key := [3]int{p.Grid.Nx, p.Grid.Ny, 1}
	if p.Heater != nil {
		key[2] = 2
	}
	s := reusePlate(p, sv.take(key))
	sv.dropSmaller(key)
	s.ctx, s.cg.ctx = ctx, ctx
	defer func() {
		// Keep the buffers, drop the references to the caller's data.
		s.p, s.pan, s.water, s.warnings = nil, nil, waterLaw{}, nil
		s.ctx, s.cg.ctx = nil, nil
		sv.keep(s, key)
	}()
	if err := s.warmStart(); err != nil {
		return nil, err
	}
	if err := s.run(); err != nil {
		return nil, err
	}
	return s.solution()
}

// validate checks a problem before its solve: the grid and base mask, the
// models and tolerances, and the hob of the problem's mode.
func validate(p *Problem) error {
	if p == nil {
		return errors.New("thermal: nil problem")
	}
	if err := validateGrid(p); err != nil {
		return err
	}
	if err := validateModels(p); err != nil {
		return err
	}
	switch {
	case (p.Temperature == nil) == (p.Heater == nil):
		return errors.New("thermal: exactly one of Temperature and Heater must be set")
	case p.Temperature != nil:
		return validateTemperature(p)
	}
	return validateHeater(p)
}

// validateGrid checks the grid (size, cell, origin) and that the base mask
// fits it and holds at least one cell.
func validateGrid(p *Problem) error {
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
	for _, b := range p.InBase {
		if b {
			return nil
		}
	}
	return errors.New("thermal: no base cells")
}

// validateModels checks the base layers, the interface and water-side
// models, the water temperature, the tolerances and the warm start.
func validateModels(p *Problem) error {
	n := p.Grid.Nx * p.Grid.Ny
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
	if err := checkStart("InitialTPanK", p.InitialTPanK, n); err != nil {
		return err
	}
	if err := checkStart("InitialTGlassK", p.InitialTGlassK, n); err != nil {
		return err
	}
	if !(p.InitialDutyPct >= 0 && p.InitialDutyPct <= 100) {
		return fmt.Errorf("thermal: initial duty %g %% outside [0, 100]", p.InitialDutyPct)
	}
	return nil
}

// validateTemperature checks a temperature-mode hob: a finite, positive
// top temperature on every base cell and a rated power ≥ 0.
func validateTemperature(p *Problem) error {
	n := p.Grid.Nx * p.Grid.Ny
	t := p.Temperature.TopK
	if len(t) != n {
		return fmt.Errorf("thermal: TopK has %d cells, grid has %d", len(t), n)
	}
	for k, v := range t {
		if p.InBase[k] && !(v > 0 && !math.IsInf(v, 0)) {
			return fmt.Errorf("thermal: hob top temperature %g K at cell %d", v, k)
		}
	}
	if r := p.Temperature.RatedPowerW; !(r >= 0) || math.IsInf(r, 0) {
		return fmt.Errorf("thermal: rated power %g W is negative or not finite", r)
	}
	return nil
}

// validateHeater checks a heater-mode hob: power, zone, glass, losses,
// limiter, and the radiant coil and limiter rod when given.
func validateHeater(p *Problem) error {
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
	if h.Coil != nil {
		if err := h.Coil.validate(); err != nil {
			return fmt.Errorf("thermal: %w", err)
		}
		if !(p.PanEmissivity > 0 && p.PanEmissivity <= 1) {
			return fmt.Errorf("thermal: pan emissivity %g outside (0, 1] (it absorbs the radiation passing the glass)", p.PanEmissivity)
		}
	}
	if r := h.Rod; r != nil {
		if !(r.LengthM > 0) || math.IsInf(r.LengthM, 0) || !finite(r.OffsetM) {
			return fmt.Errorf("thermal: limiter rod length %g m, offset %g m", r.LengthM, r.OffsetM)
		}
		if len(rodCells(p)) == 0 {
			return fmt.Errorf("thermal: the limiter rod (offset %g m, length %g m) crosses no glass cell", r.OffsetM, r.LengthM)
		}
	}
	return nil
}

// checkStart checks the length of a warm-start field; its values are
// checked where nodes exist, by warmStart.
func checkStart(name string, v []float64, n int) error {
	if v != nil && len(v) != n {
		return fmt.Errorf("thermal: %s has %d cells, grid has %d", name, len(v), n)
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
	ctx    context.Context // nil = never cancelled
	p      *Problem
	n, nl  int
	areaM2 float64
	halfRb float64 // half the base's through-thickness resistance, m²·K/W
	halfRg float64 // half the glass's, m²·K/W
	pan    []bool
	glass  []bool // heater mode only

	qZone  []float64 // heater power per unit duty over each zone cell, W
	qHeat  []float64 // heater power per unit duty into each glass node, W
	qTrans []float64 // transmitted power per unit duty absorbed by each pan node, W
	qLost  float64   // transmitted power per unit duty passing the glass beside the pan, W
	qDown  float64   // heater power per unit duty lost downward from the underside directly, W
	gIn    float64   // share of the underside's net power that enters the glass, 1/(1 + h_d·t_g/(2k_g))
	hdEff  float64   // the node's downward conductance through half the glass, W/(m²·K)
	share  float64   // transmitted share of the heater power
	coil   CoilState // element state (Coil set)
	rod    []int     // limiter rod cells (Rod set)

	water    waterLaw
	uncover  glassLaw
	limiterK float64

	lv   *level
	mg   *multigrid
	cg   *pcg
	tol  float64
	oTol float64

	t            []float64 // state: pan nodes, then glass nodes
	next, rhs    []float64 // run: the solution and right-hand side of the linear solves
	t1           []float64 // heater with limiter: response T₁ to the heater at full duty
	bRest, bHeat []float64 // bRest: right-hand side without the heater, set by assemble (rhs shares it)
	hInt         []float64 // interface h per cell at the last evaluation (NaN before)
	qLink, gLink []float64 // per node: A·q and A·g of the nonlinear link (water, uncovered glass) at assembly, W and W/K
	dir, work    []float64 // line-search work vectors (dir shares next's storage, work cg.q's)
	tsWater      []float64 // inner-face temperature per pan cell (warm start)
	tsGlass      []float64 // glass top temperature per uncovered glass cell (warm start)
	duty         float64
	nUncovered   int       // glass cells not under the pan
	gnRatio      []float64 // per cell: the ratio c̃/c of glassSideLink
	lastChange   float64   // max |ΔT| of the last outer iteration, K (+Inf before the first)

	linIter, outer int
	relRes         float64
	warnings       []string
}

func newPlate(p *Problem) *plate { return reusePlate(p, nil) }

// reusePlate sets up the solve of p in the storage of old (which may be
// nil), every buffer zeroed or refilled, so that the result does not depend
// on what old held.
func reusePlate(p *Problem, old *plate) *plate {
	g := p.Grid
	n := g.Nx * g.Ny
	if old == nil {
		old = &plate{}
	}
	prev := *old
	s := old
	*s = plate{p: p, n: n, nl: 1, areaM2: g.CellM * g.CellM, pan: p.InBase, duty: 1, lastChange: math.Inf(1)}
	kBase := s.setScalars()
	s.lv = s.setupLevel(prev.lv, kBase)
	s.mg = reuseMultigrid(s.lv, prev.mg)
	s.cg = reusePCG(prev.cg, s.nl*n)
	s.setupVectors(&prev)
	if p.Heater == nil {
		tw := p.TWaterK
		for k := 0; k < n; k++ {
			if s.pan[k] {
				s.t[k] = 0.5 * (p.Temperature.TopK[k] + tw)
			}
		}
		return s
	}
	s.setupHeater(&prev)
	return s
}

// setScalars sets the plate's scalar constants from its problem: half the
// base's through-thickness resistance, the tolerances, the water law and,
// in heater mode, the glass layer's. It returns the base's in-plane
// conductance Σ k·t, W/K.
func (s *plate) setScalars() (kBase float64) {
	p := s.p
	var rb float64
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
	s.water = newWaterLaw(p, s.halfRb)
	if h := p.Heater; h != nil {
		s.nl = 2
		s.halfRg = h.Glass.ThicknessM / h.Glass.ConductivityWMK / 2
		s.uncover = glassLaw{eps: h.GlassEmissivity, roomK: h.RoomK, lM: h.GlassRadiusM / 2}
		s.limiterK = h.LimiterK
	}
	return kBase
}

// setupLevel returns the finest level in the storage of old: the active
// cells of each layer (the base disc; the glass disc about the zone in
// heater mode) and the in-plane conductances between active neighbours,
// kBase for the base and k·t of the glass, W/K.
func (s *plate) setupLevel(old *level, kBase float64) *level {
	p, g := s.p, s.p.Grid
	h := p.Heater
	lv := reuseLevel(old, g.Nx, g.Ny, s.nl, false)
	copy(lv.act[0], s.pan)
	kg := 0.0
	if h != nil {
		s.glass = lv.act[1]
		r2 := h.GlassRadiusM * h.GlassRadiusM
		for j, k := 0, 0; j < g.Ny; j++ {
			// The cell centres as Grid.CentreM gives them.
			dy := g.Y0M + float64(j)*g.CellM - h.ZoneCentreM[1]
			for i := 0; i < g.Nx; i, k = i+1, k+1 {
				dx := g.X0M + float64(i)*g.CellM - h.ZoneCentreM[0]
				s.glass[k] = dx*dx+dy*dy <= r2
			}
		}
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
	return lv
}

// setupVectors sizes the solve's vectors in the storage of prev and marks
// the interface and water-side caches unset (NaN).
func (s *plate) setupVectors(prev *plate) {
	n, m := s.n, s.nl*s.n
	// Three vectors share storage whose lifetimes do not overlap (some 4 MB
	// each on a 2 M-point scan's heater grid): the V-cycle's fine residual
	// and the line search's work vector use the conjugate-gradient product
	// q, which is dead while the preconditioner runs and between linear
	// solves; the step direction overwrites the linear solution it is made
	// from, which is not read again before the next solve refills it.
	s.lv.r = s.cg.q
	s.work = s.cg.q
	s.t = grow(prev.t, m)
	s.next = grow(prev.next, m)
	s.dir = s.next
	s.bRest = grow(prev.bRest, m)
	// The right-hand side is made from bRest in place: assemble sets every
	// entry of bRest before each linear solve, and nothing else reads it.
	s.rhs = s.bRest
	s.hInt = grow(prev.hInt, n)
	s.qLink = grow(prev.qLink, m)
	s.gLink = grow(prev.gLink, m)
	s.tsWater = grow(prev.tsWater, n)
	for k := range s.hInt {
		s.hInt[k] = math.NaN()
		s.tsWater[k] = math.NaN()
	}
}

// setupHeater prepares heater mode in the storage of prev: the heat
// buffers, the starting temperatures, the zone's power per cell, the
// glass-underside split and the limiter's rod cells.
func (s *plate) setupHeater(prev *plate) {
	p, n := s.p, s.n
	h, tw := p.Heater, p.TWaterK
	s.bHeat = grow(prev.bHeat, 2*n)
	s.qHeat = s.bHeat[n:]
	s.qTrans = s.bHeat[:n]
	s.qZone = grow(prev.qZone, n)
	s.tsGlass = grow(prev.tsGlass, n)
	s.gnRatio = grow(prev.gnRatio, n)
	// Initial glass temperature: 150 K above the room and water, or half-way
	// to the limiter if that is lower.
	t0Glass := math.Max(tw, h.RoomK) + 150
	if s.limiterK > 0 {
		t0Glass = math.Min(t0Glass, 0.5*(s.limiterK+math.Max(tw, h.RoomK)))
	}
	for k := 0; k < n; k++ {
		s.tsGlass[k] = math.NaN()
		if s.pan[k] {
			s.t[k] = tw + 10
		}
		if s.glass[k] {
			s.t[n+k] = t0Glass
		}
		if s.glass[k] && !s.pan[k] {
			s.nUncovered++
		}
	}
	s.spreadZonePower()
	s.gIn = 1 / (1 + h.DownHWM2K*s.halfRg)
	s.hdEff = h.DownHWM2K * s.gIn
	s.share = h.TransmittedFraction
	if h.Coil != nil {
		s.share = 0 // set by updateCoil before the first assembly
	}
	s.fillHeat()
	if h.Rod != nil {
		s.rod = rodCells(p)
	}
	if s.limiterK > 0 {
		s.t1 = grow(prev.t1, 2*n)
	}
}

// spreadZonePower sets qZone, the heater power of each cell of the zone
// disc per unit duty, W: the rated power shared by the zone's cells in
// proportion to the power profile (uniform without one). A profile value
// that is negative or not finite leaves NaN in its cell (run reports it).
func (s *plate) spreadZonePower() {
	p, g, n := s.p, s.p.Grid, s.n
	h := p.Heater
	rz := h.ZoneDiameterM / 2
	var wsum float64
	for k := 0; k < n; k++ {
		// The cell centre as Grid.CentreM gives it; beyond rz in x or y
		// the distance (math.Hypot's is never below either) is too.
		i, j := k%g.Nx, k/g.Nx
		dx := g.X0M + float64(i)*g.CellM - h.ZoneCentreM[0]
		dy := g.Y0M + float64(j)*g.CellM - h.ZoneCentreM[1]
		if math.Abs(dx) > rz || math.Abs(dy) > rz {
			continue
		}
		r := math.Hypot(dx, dy)
		if r > rz {
			continue
		}
		w := 1.0
		if h.PowerProfile != nil {
			w = h.PowerProfile(r)
		}
		if !(w >= 0) || math.IsInf(w, 0) {
			s.qZone[k] = math.NaN()
			continue
		}
		s.qZone[k] = w
		wsum += w
	}
	for k := 0; k < n; k++ {
		if s.qZone[k] != 0 && wsum > 0 {
			s.qZone[k] *= h.PowerW / wsum
		}
	}
}

// fillHeat splits each zone cell's heater power (per unit duty) at the
// current transmitted share: the share passing the glass goes to the pan
// node above (its absorbed part; with a Coil the rest returns to the glass
// node) or, beside the pan, is lost upward; the rest enters the glass
// underside, where gIn of it goes into the glass and the remainder down.
func (s *plate) fillHeat() {
	h := s.p.Heater
	eps := 1.0
	if h.Coil != nil {
		eps = s.p.PanEmissivity
	}
	s.qLost, s.qDown = 0, 0
	for k := 0; k < s.n; k++ {
		q := s.qZone[k]
		s.qTrans[k], s.qHeat[k] = 0, 0
		if q == 0 || math.IsNaN(q) {
			s.qHeat[k] = q
			continue
		}
		tr := q * s.share
		under := q - tr
		s.qHeat[k] = under * s.gIn
		s.qDown += under * (1 - s.gIn)
		if s.pan[k] {
			s.qTrans[k] = tr * eps
			s.qHeat[k] += tr * (1 - eps)
		} else {
			s.qLost += tr
		}
	}
}

// undersideK returns the underside temperature, K, of glass cell k with its
// node at tg and the heater at duty d: the underside takes the heater
// power not transmitted, q_u, and loses h_d(T_u − T_room) downward, so
// T_u = T_g + R·(q_u − h_d(T_g − T_room))/(1 + h_d R) with R = t_g/(2k_g).
func (s *plate) undersideK(k int, tg, d float64) float64 {
	h := s.p.Heater
	qu := d * s.qZone[k] * (1 - s.share) / s.areaM2
	return tg + s.halfRg*s.gIn*(qu-h.DownHWM2K*(tg-h.RoomK))
}

// rodMeanK returns the mean underside temperature along the limiter rod of
// the state t at duty d, K.
func (s *plate) rodMeanK(t []float64, d float64) float64 {
	var sum float64
	for _, k := range s.rod {
		sum += s.undersideK(k, t[s.n+k], d)
	}
	return sum / float64(len(s.rod))
}

// sensedK returns the limiter's sensed temperature of the state t at the
// current duty: the rod's mean underside temperature, or the hottest glass
// node without a rod.
func (s *plate) sensedK(t []float64) float64 {
	if s.rod != nil {
		return s.rodMeanK(t, s.duty)
	}
	return s.glassMax(t)
}

// updateCoil sets the element state and the transmitted share from the
// zone-mean underside temperature of the current state (Coil.Balance at
// the zone's rated power density: the element's state while on) and
// refills the heater sources when the share moved.
func (s *plate) updateCoil() error {
	h := s.p.Heater
	var sum float64
	nz := 0
	for k, q := range s.qZone {
		if q > 0 {
			sum += s.undersideK(k, s.t[s.n+k], s.duty)
			nz++
		}
	}
	if nz == 0 {
		return nil
	}
	st, err := h.Coil.Balance(h.PowerW/(float64(nz)*s.areaM2), sum/float64(nz), h.GlassEmissivity)
	if err != nil {
		return err
	}
	s.coil = st
	if st.Share != s.share {
		s.share = st.Share
		s.fillHeat()
	}
	return nil
}

// rodCells returns the glass cells a heater's limiter rod senses: those of
// the grid row nearest to the rod whose centres lie within half its length
// of the zone centre in x.
func rodCells(p *Problem) []int {
	h, g := p.Heater, p.Grid
	if h == nil || h.Rod == nil {
		return nil
	}
	j := int(math.Round((h.ZoneCentreM[1] + h.Rod.OffsetM - g.Y0M) / g.CellM))
	if j < 0 || j >= g.Ny {
		return nil
	}
	var out []int
	r2 := h.GlassRadiusM * h.GlassRadiusM
	for i := 0; i < g.Nx; i++ {
		k := j*g.Nx + i
		x, y := g.CentreM(k)
		dx, dy := x-h.ZoneCentreM[0], y-h.ZoneCentreM[1]
		if math.Abs(dx) <= h.Rod.LengthM/2 && dx*dx+dy*dy <= r2 {
			out = append(out, k)
		}
	}
	return out
}

// warmStart replaces the first guess by the Problem's initial fields.
func (s *plate) warmStart() error {
	p, n := s.p, s.n
	set := func(name string, v []float64, off int, act []bool) error {
		if v == nil {
			return nil
		}
		for k, b := range act {
			if !b {
				continue
			}
			if !(v[k] > 0) || math.IsInf(v[k], 0) {
				return fmt.Errorf("thermal: %s is %g K at cell %d", name, v[k], k)
			}
			s.t[off+k] = v[k]
		}
		return nil
	}
	if err := set("InitialTPanK", p.InitialTPanK, 0, s.pan); err != nil {
		return err
	}
	if s.nl == 2 {
		if err := set("InitialTGlassK", p.InitialTGlassK, n, s.glass); err != nil {
			return err
		}
		if p.InitialDutyPct > 0 && s.limiterK > 0 {
			s.duty = p.InitialDutyPct / 100
		}
	}
	if p.InitialTPanK == nil && p.InitialTGlassK == nil {
		return nil
	}
	// Bring the lagged surface estimates in line with the start, as the
	// outer iterations would have left them: the interface h, with which
	// the surface temperatures are extrapolated from the nodes, and the
	// uncovered glass surfaces with their mean convection coefficient.
	for range 2 {
		for k, b := range s.pan {
			if !b {
				continue
			}
			var err error
			switch {
			case s.nl == 1:
				_, _, _, err = s.interfaceH(k, p.Temperature.TopK[k], 0, s.t[k])
			case s.glass[k]:
				_, _, _, err = s.interfaceH(k, s.t[n+k], s.halfRg, s.t[k])
			}
			if err != nil {
				return err
			}
		}
		if s.nl == 2 {
			if err := s.updateGlassLaw(); err != nil {
				return err
			}
			for k, g := range s.glass {
				if g && !s.pan[k] {
					s.tsGlass[k], _, _ = s.uncover.surface(s.t[n+k], s.halfRg, s.tsGlass[k])
				}
			}
		}
	}
	return nil
}

// run does the outer iterations.
//
// They are inexact Newton iterations: each linear solve starts from the
// current state and stops once its residual, which starts as the nonlinear
// residual, has dropped by a forcing factor (Eisenstat–Walker, at most
// outerForcing), or at the RelTol floor. Once the change falls below outerTightFactor·OuterTolK the
// solves go to RelTol, and convergence is only declared after such a solve.
// With a limiter the state is solved at the previous duty, and the duty is
// then corrected with the response T₁ to the heater. T₁ only steers the
// duty and does not move its fixed point, so it is solved loosely, and only
// while the duty still moves by more than dutyResolve.
func (s *plate) run() error {
	if s.nl == 2 {
		if err := s.checkHeater(); err != nil {
			return err
		}
	}
	next, b := s.next, s.rhs
	state := forcing{adaptive: true, maxEta: outerForcing}
	change := math.Inf(1)
	prevChange, prevAlpha := math.Inf(1), 0.0
	dutyStep := math.Inf(1) // last duty change; T₁ is solved first while +Inf
	for s.outer = 1; s.outer <= maxOuter; s.outer++ {
		if s.ctx != nil {
			if err := s.ctx.Err(); err != nil {
				return fmt.Errorf("thermal: plate solve stopped in outer iteration %d: %w", s.outer, err)
			}
		}
		if s.nl == 2 && s.p.Heater.Coil != nil {
			if err := s.updateCoil(); err != nil {
				return err
			}
		}
		if err := s.assemble(); err != nil {
			return err
		}
		if err := s.mg.update(); err != nil {
			return err
		}
		if s.bHeat != nil { // b is s.bRest, set afresh by assemble
			for i, h := range s.bHeat {
				b[i] += s.duty * h
			}
		}
		copy(next, s.t)
		state.tight = change < outerTightFactor*s.oTol
		rel, err := s.linear(next, b, &state)
		if err != nil {
			return err
		}
		s.relRes = rel
		tight := rel <= s.tol
		if s.t1 != nil && (s.duty < 1 || s.sensedK(next) > s.limiterK) {
			if dutyStep, err = s.correctDuty(next, dutyStep); err != nil {
				return err
			}
		}
		if err := s.direction(next); err != nil {
			return err
		}
		alpha, err := s.lineSearch()
		if err != nil {
			return err
		}
		change = s.takeStep(alpha)
		s.lastChange = change
		// Converged when the step, or the distance to the fixed point
		// estimated from the contraction ρ of the last two full steps,
		// change·ρ/(1 − ρ), is below the tolerance (the latter only for
		// steps within 10 tolerances).
		est := change
		if rho := change / prevChange; alpha == 1 && prevAlpha == 1 && rho < maxRho && change < 10*s.oTol {
			est = change * rho / (1 - rho)
		}
		if tight && est < s.oTol {
			return nil
		}
		prevChange, prevAlpha = change, alpha
	}
	s.outer = maxOuter
	return fmt.Errorf("thermal: plate solve did not converge in %d outer iterations (last max |ΔT| = %.3g K, tolerance %.3g K)", maxOuter, change, s.oTol)
}

// correctDuty moves the heater's duty so that the limiter's sensed
// temperature of the state next sits at its set point, and next with it
// along the response T₁ to the heater (s.t1), solved again, loosely,
// while the last duty change dutyStep exceeds dutyResolve. It returns
// the duty change.
func (s *plate) correctDuty(next []float64, dutyStep float64) (float64, error) {
	if !(dutyStep <= dutyResolve) {
		if _, err := s.linear(s.t1, s.bHeat, &forcing{fixed: dutyForcing}); err != nil {
			return dutyStep, err
		}
	}
	d := s.setDuty(next)
	dutyStep = math.Abs(d - s.duty)
	if d != s.duty {
		floats.AddScaled(next, d-s.duty, s.t1)
		s.duty = d
	}
	return dutyStep, nil
}

// direction checks that every node of the linear solution next is finite
// and turns next into the search direction d = next − T in place (s.dir
// shares next's storage), in one pass; on a non-finite node it returns an
// error naming the first such node, with next partly overwritten.
func (s *plate) direction(next []float64) error {
	t := s.t[:len(next)]
	for i, v := range next {
		if !finite(v) {
			return fmt.Errorf("thermal: temperature at node %d became %g in outer iteration %d", i, v, s.outer)
		}
		next[i] = v - t[i]
	}
	return nil
}

// takeStep scales the search direction s.dir by alpha, adds it to the
// state s.t and returns the largest |ΔT| of the step, K.
func (s *plate) takeStep(alpha float64) float64 {
	change := 0.0
	f, t := s.dir, s.t
	for i, d := range f {
		f[i] = alpha * d
		if v := math.Abs(f[i]); v > change {
			change = v
		}
		t[i] += f[i]
	}
	return change
}

// glassMax returns the highest glass node temperature of the state t.
func (s *plate) glassMax(t []float64) float64 {
	m := math.Inf(-1)
	for k, g := range s.glass {
		if g && t[s.n+k] > m {
			m = t[s.n+k]
		}
	}
	return m
}

// lineSearch returns the step α ∈ (0, 1] to take along d = next − T (set in
// s.dir by direction). With the interface frozen, the linearised system is
// a Newton-like step for the gradient F(T) = L T − b + A·q(T) of a convex functional (L
// symmetric positive definite, the link fluxes q non-decreasing), so φ'(α) =
// d·F(T + α d) is non-decreasing. The full step is taken unless φ'(1) >
// 0.1·|φ'(0)| (the step overshoots, as when a base cell jumps across the
// onset of boiling); then α is found by regula falsi (Illinois) where
// |φ'(α)| ≤ 0.1·|φ'(0)|. With G the link linearisation (s.gLink),
// φ'(0) = −d·(L+G)d and φ'(α) = φ'(0)·(1 − α) + c(α), where
// c(α) = Σ d_i (A q_i(T + α d) − A q_i(T) − α G_i d_i) vanishes for linear
// links. The full step is accepted without computing d·(L+G)d when c(1) is
// below 0.1 times its lower bound from the sinks and layer couplings alone
// (the lateral faces only add to it).
func (s *plate) lineSearch() (float64, error) {
	d := s.dir
	const eta = 0.1
	f1, err := s.linkCurvature(1)
	if err != nil || f1 <= 0 || f1 <= eta*s.lv.localEnergy(d) {
		return 1, err
	}
	s.lv.apply(s.work, d)
	sd := floats.Dot(d, s.work)
	if !(sd > 0) || f1 <= eta*sd {
		return 1, nil
	}
	phi := func(alpha float64) (float64, error) {
		c, err := s.linkCurvature(alpha)
		return -sd*(1-alpha) + c, err
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

// linkCurvature returns c(α) = Σ d_i (A q_i(T + α d) − A q_i(T) − α G_i d_i)
// over the nodes with a nonlinear link (d = s.dir), evaluating the links at
// T + α d.
func (s *plate) linkCurvature(alpha float64) (float64, error) {
	n, a := s.n, s.areaM2
	t, d := s.t, s.dir
	var c float64
	if !s.water.linear {
		for k := 0; k < n; k++ {
			if !s.pan[k] {
				continue
			}
			ts, q, _, err := s.water.link(t[k]+alpha*d[k], s.halfRb, s.tsWater[k])
			if err != nil {
				return 0, fmt.Errorf("thermal: water side at cell %d: %w", k, err)
			}
			s.tsWater[k] = ts
			c += d[k] * (a*q - s.qLink[k] - alpha*s.gLink[k]*d[k])
		}
	}
	if s.nl == 1 {
		return c, nil
	}
	for k := 0; k < n; k++ {
		if !s.glass[k] || s.pan[k] {
			continue
		}
		i := n + k
		ts, q, _ := s.uncover.surface(t[i]+alpha*d[i], s.halfRg, s.tsGlass[k])
		s.tsGlass[k] = ts
		c += d[i] * (a*q - s.qLink[i] - alpha*s.gLink[i]*d[i])
	}
	return c, nil
}

func (s *plate) checkHeater() error {
	var sum float64
	for k := 0; k < s.n; k++ {
		if math.IsNaN(s.qZone[k]) {
			return fmt.Errorf("thermal: heater power profile is negative or not finite at cell %d", k)
		}
		sum += s.qZone[k]
	}
	if s.p.Heater.PowerW > 0 && !(sum > 0) {
		return errors.New("thermal: no glass cell lies in the heater zone with a positive power profile")
	}
	return nil
}

// linear solves lv·x = b by multigrid-preconditioned CG from the guess in x,
// until the residual is below the factor of f times its initial value or
// RelTol·‖b‖.
func (s *plate) linear(x, b []float64, f *forcing) (relRes float64, err error) {
	it, rel, err := s.cg.solveForced(s.lv, s.mg, x, b, s.tol, f)
	s.linIter += it
	if err != nil {
		return rel, fmt.Errorf("%w (outer iteration %d)", err, s.outer)
	}
	return rel, nil
}

// setDuty returns the duty at which the hottest glass node of T₀ + duty·T₁
// is at the limiter temperature, or 1 when it stays below, where y is the
// state solved at the current duty d and T₀ = y − d·T₁. The split is exact
// for the current linearisation because the system is linear in the heater
// power (T₁ is solved loosely, which only slows the duty's convergence).
// The duty is 0 if T₀ alone passes the limiter, which only an early
// linearisation can do: validate keeps the room and water below it.
func (s *plate) setDuty(y []float64) float64 {
	if s.rod != nil {
		return s.setDutyRod(y)
	}
	d, dp := 1.0, s.duty
	n := s.n
	for k, g := range s.glass {
		if !g {
			continue
		}
		t1 := s.t1[n+k]
		t0 := y[n+k] - dp*t1
		if t0+d*t1 > s.limiterK {
			d = 0
			if t1 > 0 && t0 < s.limiterK {
				d = (s.limiterK - t0) / t1
			}
		}
	}
	return d
}

// setDutyRod is setDuty for a rod limiter: the duty at which the rod's mean
// underside temperature of T₀ + duty·T₁ (linear in the duty, the direct
// heater term included) is at the limiter temperature, within [0, 1].
func (s *plate) setDutyRod(y []float64) float64 {
	n, dp := s.n, s.duty
	var m0, m1 float64
	for _, k := range s.rod {
		t1 := s.t1[n+k]
		t0 := y[n+k] - dp*t1
		m0 += s.undersideK(k, t0, 0)
		m1 += s.undersideK(k, t0+t1, 1)
	}
	m0 /= float64(len(s.rod))
	m1 /= float64(len(s.rod))
	switch {
	case m1 <= s.limiterK:
		return 1
	case m0 >= s.limiterK:
		return 0
	}
	return (s.limiterK - m0) / (m1 - m0)
}

// interfaceH evaluates the interface at cell k between a hob node at tHobK
// (resistance halfR to its surface) and the pan node at tPanK, and keeps its
// total in s.hInt.
func (s *plate) interfaceH(k int, tHobK, halfR, tPanK float64) (solid, gas, rad float64, err error) {
	solid, gas, rad, err = s.interfaceAt(k, tHobK, halfR, tPanK, s.hInt[k])
	if err == nil {
		s.hInt[k] = solid + gas + rad
	}
	return solid, gas, rad, err
}

// interfaceAt evaluates the interface at cell k between a hob node at tHobK
// (resistance halfR to its surface) and the pan node at tPanK, with the
// surface temperatures extrapolated from the nodes with the flux through a
// total interface conductance hPrev (none when hPrev is not positive).
func (s *plate) interfaceAt(k int, tHobK, halfR, tPanK, hPrev float64) (solid, gas, rad float64, err error) {
	ts, tf := tHobK, tPanK
	if hPrev > 0 {
		q := (tHobK - tPanK) / (halfR + 1/hPrev + s.halfRb)
		ts -= q * halfR
		tf += q * s.halfRb
	}
	solid, gas, rad = s.p.Interface.H(k, ts, tf)
	// Each part non-negative and finite (a value ≥ 0 is infinite when
	// above the largest float).
	const big = math.MaxFloat64
	if !(solid >= 0 && gas >= 0 && rad >= 0) || solid > big || gas > big || rad > big {
		return 0, 0, 0, fmt.Errorf("thermal: interface conductance at cell %d is %g, %g, %g W/(m²·K) (solid, gas, radiation) at hob %.6g K, pan %.6g K", k, solid, gas, rad, ts, tf)
	}
	return solid, gas, rad, nil
}

// glassSideLink returns the conductance, W/(m²·K), and the flux offset, W/m²,
// of the linearised interface link of cell k from the glass node at tg to
// the pan node at tp: q ≈ c̃·(T_g − T_p) + s. The secant conductance c =
// q/(T_g − T_p) at the current temperatures would be the plain fixed-point
// (Picard) choice; c̃ = ∂q/∂T_g makes the step a Newton step for changes of
// the glass temperature, which carry the temperature dependence of a gas or
// radiation gap (the pan, cooled by the water, moves much less); on the
// pipeline's dished 200 mm base it cut the outer iterations from 14 to 10.
// s = (c − c̃)·(T_g − T_p) keeps q exact at the current temperatures, so the
// converged state is the same whatever c̃ is. The derivative is taken by a
// forward difference while fresh is set, and otherwise as the last ratio
// c̃/c times the current c (it only steers the iteration); the plain c is
// kept when c̃ is not positive and finite. (The pan-side derivative differs,
// and a link with both would not be symmetric, which conjugate gradients
// needs.)
func (s *plate) glassSideLink(k int, tg, tp float64, fresh bool) (ct, off float64, err error) {
	const dT = 0.01 // K
	hPrev := s.hInt[k]
	sol, gas, rad, err := s.interfaceAt(k, tg, s.halfRg, tp, hPrev)
	if err != nil {
		return 0, 0, err
	}
	s.hInt[k] = sol + gas + rad
	r := s.halfRg + s.halfRb
	c := series(sol+gas+rad, r)
	d := tg - tp
	if fresh {
		sol, gas, rad, err = s.interfaceAt(k, tg+dT, s.halfRg, tp, hPrev)
		if err != nil {
			return 0, 0, err
		}
		s.gnRatio[k] = 1
		if c > 0 {
			s.gnRatio[k] = (series(sol+gas+rad, r)*(d+dT) - c*d) / dT / c
		}
	}
	ct = c * s.gnRatio[k]
	if !(ct > 0) || math.IsInf(ct, 0) {
		return c, 0, nil
	}
	return ct, (c - ct) * d, nil
}

// assemble sets sinks, couplings and right-hand sides from the current state.
func (s *plate) assemble() error {
	n, a, lv := s.n, s.areaM2, s.lv
	// Only the line search reads the water link's surface temperature and
	// A·q, A·g, and only for a link that is not linear (a fixed link
	// ignores its guess).
	keep := !s.water.linear
	for k := 0; k < n; k++ {
		if !s.pan[k] {
			s.bRest[k] = 0
			continue
		}
		tp := s.t[k]
		ts, q, g, err := s.water.link(tp, s.halfRb, s.tsWater[k])
		if err != nil {
			return fmt.Errorf("thermal: water side at cell %d: %w", k, err)
		}
		if keep {
			s.tsWater[k] = ts
			s.qLink[k], s.gLink[k] = a*q, a*g
		}
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
		fresh := s.outer <= 2 || s.lastChange > newtonFreshK
		if err := s.updateGlassLaw(); err != nil {
			return err
		}
		// The downward loss's sink, W/K, and source, W, the same in every
		// glass cell.
		down := a * s.hdEff
		downRoom := down * h.RoomK
		for k := 0; k < n; k++ {
			lv.cpl[k] = 0
			if !s.glass[k] {
				s.bRest[n+k] = 0
				continue
			}
			tg := s.t[n+k]
			lv.sink[1][k] = down
			s.bRest[n+k] = downRoom
			if s.pan[k] {
				ct, off, err := s.glassSideLink(k, tg, s.t[k], fresh)
				if err != nil {
					return err
				}
				lv.cpl[k] = a * ct
				s.bRest[n+k] -= a * off
				s.bRest[k] += a * off
				continue
			}
			ts, q, g := s.uncover.link(tg, s.halfRg, s.tsGlass[k])
			s.tsGlass[k] = ts
			s.qLink[n+k], s.gLink[n+k] = a*q, a*g
			lv.sink[1][k] += a * g
			s.bRest[n+k] += a * (g*tg - q)
		}
	}
	lv.setDiag()
	return nil
}

// updateGlassLaw sets the uncovered glass's convection coefficient at the
// area-mean surface temperature of the uncovered glass cells, those being
// the ones last found for each cell (by the line search, at the current
// state after a full step), or the node temperature before the first.
func (s *plate) updateGlassLaw() error {
	if s.nUncovered == 0 {
		return nil
	}
	n := s.n
	var sum float64
	for k, g := range s.glass {
		if !g || s.pan[k] {
			continue
		}
		if ts := s.tsGlass[k]; ts == ts {
			sum += ts
		} else {
			sum += s.t[n+k]
		}
	}
	if err := s.uncover.setMean(sum / float64(s.nUncovered)); err != nil {
		return fmt.Errorf("thermal: uncovered glass: %w", err)
	}
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

// surfaceLaw gives the flux, W/m², from a surface at tsK to its reservoir
// and its derivative dq/dts, W/(m²·K); the flux must be zero at the
// reservoir temperature and non-decreasing in tsK.
type surfaceLaw interface {
	flux(tsK float64) (q, dq float64, err error)
}

// waterLaw is the water side: q = h_water(T_s, T_w)·(T_s − T_w), its
// derivative by a forward difference (the model is a black box). A
// FixedWater side (fixed set, coefficient hWM2K) is linked in closed form;
// linear says its link conductance is exact (not floored), so that the link
// adds no curvature to the line search.
type waterLaw struct {
	w             WaterSide
	tWaterK       float64
	fixed, linear bool
	hWM2K         float64
	halfR, gWM2K  float64 // fixed: the link's resistance, m²·K/W, and series(hWM2K, halfR)
}

// newWaterLaw returns the water law of p, halfRb the resistance from the
// pan node to the inner face, m²·K/W.
func newWaterLaw(p *Problem, halfRb float64) waterLaw {
	l := waterLaw{w: p.Water, tWaterK: p.TWaterK}
	var h float64
	switch w := p.Water.(type) {
	case FixedWater:
		h, l.fixed = w.HWM2K, true
	case *FixedWater:
		h, l.fixed = w.HWM2K, w != nil
	}
	if !(h >= 0) || math.IsInf(h, 0) {
		l.fixed = false // the general path reports it
	}
	l.hWM2K = h
	l.halfR, l.gWM2K = halfRb, series(h, halfRb)
	l.linear = l.fixed && l.gWM2K >= minLinkHWM2K
	return l
}

// link is linkFlux for the water side from a pan node at tNode through
// halfR.
func (l *waterLaw) link(tNode, halfR, tsGuess float64) (ts, q, g float64, err error) {
	if !l.fixed {
		return linkFlux(l, tNode, l.tWaterK, halfR, tsGuess)
	}
	g = l.gWM2K // series(l.hWM2K, halfR), worked out once
	if halfR != l.halfR {
		g = series(l.hWM2K, halfR)
	}
	q = g * (tNode - l.tWaterK)
	return tNode - q*halfR, q, max(g, minLinkHWM2K), nil
}

func (l *waterLaw) fluxWM2(ts float64) (float64, error) {
	h := l.w.H(ts, l.tWaterK)
	if !(h >= 0) || math.IsInf(h, 0) {
		return 0, fmt.Errorf("heat transfer coefficient %g W/(m²·K) at %.6g K (water %.6g K)", h, ts, l.tWaterK)
	}
	return h * (ts - l.tWaterK), nil
}

func (l *waterLaw) flux(ts float64) (q, dq float64, err error) {
	const dT = 1e-3 // finite-difference step, K
	if q, err = l.fluxWM2(ts); err != nil {
		return 0, 0, err
	}
	q2, err := l.fluxWM2(ts + dT)
	if err != nil {
		return 0, 0, err
	}
	return q, (q2 - q) / dT, nil
}

// glassLaw is the loss of glass not covered by the pan: natural convection
// from a horizontal plate facing up and grey radiation to surroundings at
// the room temperature. The convection coefficient hWM2K is the McAdams
// plate average (AirPlateUpHWM2K, length lM), set by setMean at the
// area-mean temperature of the uncovered glass; radiation is per cell.
type glassLaw struct {
	eps, roomK, lM float64
	hWM2K          float64
	clamped        bool
}

// setMean sets the convection coefficient for an uncovered glass surface
// whose area-mean temperature is tsK. Beyond the air table the coefficient
// is held at its value at the table's end.
func (l *glassLaw) setMean(tsK float64) error {
	l.clamped = false
	if hi := 2*fluid.AirMaxK - l.roomK; tsK > hi {
		tsK = hi
		l.clamped = true
	}
	h, err := AirPlateUpHWM2K(tsK, l.roomK, l.lM)
	if err != nil {
		return err
	}
	l.hWM2K = h
	return nil
}

func (l *glassLaw) eval(ts float64) (q, dq float64) {
	r2 := l.roomK * l.roomK
	return l.evalWith(ts, l.eps*fluid.StefanBoltzmann, r2*r2)
}

// evalWith is eval with es = ε·σ, W/(m²·K⁴), and r4 = T_room⁴, K⁴, worked
// out by the caller once for many evaluations.
func (l *glassLaw) evalWith(ts, es, r4 float64) (q, dq float64) {
	t2 := ts * ts
	return l.hWM2K*(ts-l.roomK) + es*(t2*t2-r4), l.hWM2K + 4*es*t2*ts
}

// link is linkFlux for the glass law (the same iteration, with the law
// evaluated in line): surface, then linkConductance.
func (l *glassLaw) link(tNode, halfR, tsGuess float64) (ts, q, g float64) {
	ts, q, gs := l.surface(tNode, halfR, tsGuess)
	return ts, q, l.linkConductance(tNode, halfR, q, gs)
}

// surface returns the surface temperature ts, K, of the link from a glass
// node at tNode through halfR, the flux q, W/m², and the law's derivative
// dq/dts there, W/(m²·K), found from tsGuess as link does; the callers that
// need no link conductance (the line search, the warm start and the
// outputs) save its three divisions.
func (l *glassLaw) surface(tNode, halfR, tsGuess float64) (ts, q, gs float64) {
	tRes := l.roomK
	if halfR == 0 || tNode == tRes {
		ts = tNode
		q, gs = l.eval(ts)
		return ts, q, gs
	}
	lo, hi := min(tNode, tRes), max(tNode, tRes)
	ts = tsGuess
	if !(ts >= lo && ts <= hi) {
		ts = tNode - (tNode-tRes)*1e-3
	}
	// The loop's constants, once: ε·σ, T_room⁴ and 1/halfR.
	r2 := tRes * tRes
	es, r4, invR := l.eps*fluid.StefanBoltzmann, r2*r2, 1/halfR
	for range 100 {
		q, gs = l.evalWith(ts, es, r4)
		f := (tNode-ts)/halfR - q
		if f > 0 {
			lo = ts
		} else {
			hi = ts
		}
		step := f / (invR + max(gs, 0))
		if math.Abs(step) <= 1e-8*(1+math.Abs(ts)) {
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
	return ts, q, gs
}

// linkConductance returns link's linearisation conductance, W/(m²·K)
// (linkGain with the room as the reservoir).
func (l *glassLaw) linkConductance(tNode, halfR, q, gs float64) float64 {
	return linkGain(tNode, l.roomK, halfR, q, gs)
}

// linkGain returns the linearisation conductance, W/(m²·K), of a link
// from a node at tNode through halfR (m²·K/W) to a surface passing the
// flux q (W/m²) with the derivative gs = dq/dts (W/(m²·K)) toward a
// reservoir at tRes: the series of gs and halfR, floored at the secant
// q/(tNode − tRes) and at minLinkHWM2K.
func linkGain(tNode, tRes, halfR, q, gs float64) (g float64) {
	if gs > 0 {
		g = 1 / (halfR + 1/gs)
	}
	if d := tNode - tRes; d != 0 {
		g = max(g, q/d)
	}
	return max(g, minLinkHWM2K)
}

// linkFlux solves the link from a node at tNode through the resistance halfR
// (m²·K/W) to a surface obeying law: it finds the surface temperature ts
// where (tNode − ts)/halfR = q(ts), starting from tsGuess (NaN for none), by
// Newton iterations safeguarded by bisection. It returns ts, the flux q and a
// linearisation conductance g ≈ dq/dtNode (W/(m²·K)) for the next Newton
// step on the node, floored at the secant q/(tNode − tRes) and minLinkHWM2K.
func linkFlux(law surfaceLaw, tNode, tRes, halfR, tsGuess float64) (ts, q, g float64, err error) {
	var gs float64 // dq/dts
	eval := func(t float64) error {
		q, gs, err = law.flux(t)
		return err
	}
	if halfR == 0 || tNode == tRes {
		ts = tNode
		if err = eval(ts); err != nil {
			return
		}
	} else {
		lo, hi := min(tNode, tRes), max(tNode, tRes)
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
			step := f / (1/halfR + max(gs, 0))
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
	return ts, q, linkGain(tNode, tRes, halfR, q, gs), nil
}

// solution evaluates the outputs at the converged temperatures.
func (s *plate) solution() (*Solution, error) {
	n, a := s.n, s.areaM2
	v := s.handOver()
	defer s.dropHandedOver()
	sol := &Solution{
		TPanK:            v[0],
		FluxWM2:          v[1],
		SolidWM2K:        v[2],
		GasWM2K:          v[3],
		RadWM2K:          v[4],
		LinearIterations: s.linIter,
		OuterIterations:  s.outer,
		RelResidual:      s.relRes,
	}
	if s.nl == 2 {
		sol.TGlassK = v[5]
	}
	for k := 0; k < n; k++ {
		if !s.pan[k] {
			sol.TPanK[k] = math.NaN()
			sol.FluxWM2[k], sol.SolidWM2K[k], sol.GasWM2K[k], sol.RadWM2K[k] = 0, 0, 0, 0
			continue
		}
		tp := s.t[k]
		sol.TPanK[k] = tp
		_, qw, _, err := s.water.link(tp, s.halfRb, s.tsWater[k])
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

// handOver returns the six per-cell vectors of a Solution (TPanK, FluxWM2,
// SolidWM2K, GasWM2K, RadWM2K and, in heater mode, TGlassK), each of s.n
// cells, made of the work vectors a converged solve no longer needs: the
// state t (whose layers are TPanK and TGlassK, read in place by solution)
// and the linear solution and right-hand side next and bRest. The plate
// drops them, so that the Solver allocates them afresh for its next solve
// on this grid, and the solution does not copy some 13 MB on a 0.5 mm
// heater grid while the work buffers are live: the memory a scan and its
// flat twin solved at once hold at their peak. With one layer only t,
// next and bRest's single layers are there to take; the rest is allocated.
// Until dropHandedOver, the plate still reads t: solution fills the vectors
// in place, every cell once, after the last read of what they held.
func (s *plate) handOver() [6][]float64 {
	n := s.n
	var v [6][]float64
	free := [][]float64{s.next, s.bRest}
	v[0] = s.t[:n:n]
	if s.nl == 2 {
		v[5] = s.t[n : 2*n : 2*n]
	}
	k := 1
	for _, w := range free {
		for o := 0; o+n <= len(w) && k < 5; o += n {
			v[k] = w[o : o+n : o+n]
			k++
		}
	}
	for ; k < 5; k++ {
		v[k] = make([]float64, n)
	}
	return v
}

// dropHandedOver drops the vectors handOver gave a Solution, so that no
// later solve on the plate's storage overwrites them.
func (s *plate) dropHandedOver() {
	s.t, s.next, s.dir, s.bRest, s.rhs = nil, nil, nil, nil, nil
}

func (s *plate) heaterOutputs(sol *Solution) error {
	n, a, h := s.n, s.areaM2, s.p.Heater
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
		sol.DownLossW += a * s.hdEff * (tg - h.RoomK)
		if !s.pan[k] {
			_, q, _ := s.uncover.surface(tg, s.halfRg, s.tsGlass[k])
			sol.UncoveredLossW += q * a
		}
	}
	sol.DownLossW += s.duty * s.qDown
	sol.TransmittedLostW = s.duty * s.qLost
	sol.TransmittedShare = s.share
	sol.CoilK = s.coil.TempK
	if s.rod != nil {
		sol.RodK = s.rodMeanK(s.t, s.duty)
	}
	sol.HeaterW = s.duty * h.PowerW
	sol.DutyPct = 100 * s.duty
	if s.duty < 1 {
		what := "the hottest glass"
		if s.rod != nil {
			what = "the glass underside along its rod"
		}
		s.warnings = append(s.warnings, fmt.Sprintf("heater cycled: the limiter held %s at %.1f °C, duty %.1f %%", what, s.limiterK-273.15, sol.DutyPct))
	}
	if outside > 0 {
		s.warnings = append(s.warnings, fmt.Sprintf("%d base cells lie beyond the modelled glass (radius %.1f mm) and get no heat from the hob", outside, h.GlassRadiusM*1e3))
	}
	if lost := s.duty * s.qLost; lost > 0 && lost >= transmittedWarnShare*sol.HeaterW {
		s.warnings = append(s.warnings, fmt.Sprintf("%.4g W (%.1f %% of the heater's power) of heater radiation passes the glass beside the pan and misses it",
			lost, 100*lost/sol.HeaterW))
	}
	if s.uncover.clamped {
		s.warnings = append(s.warnings, fmt.Sprintf("uncovered glass beyond the air table: convection held at its value for a %.0f K film", fluid.AirMaxK))
	}
	return nil
}
