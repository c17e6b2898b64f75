package thermal

// Grid is the computation grid: square cells, cell (i, j) centred at
// (X0M + i·CellM, Y0M + j·CellM), index j·Nx + i. It has the same geometry as
// scan.Surface; the pipeline copies it.
type Grid struct {
	Nx, Ny int
	CellM  float64 // cell side, m
	X0M    float64 // x of the centre of cell (0, 0), m
	Y0M    float64 // y of the centre of cell (0, 0), m
}

// Len returns the number of cells, Nx·Ny.
func (g Grid) Len() int { return g.Nx * g.Ny }

// CentreM returns the centre of cell k, m.
func (g Grid) CentreM(k int) (xM, yM float64) {
	i, j := k%g.Nx, k/g.Nx
	return g.X0M + float64(i)*g.CellM, g.Y0M + float64(j)*g.CellM
}

// Layer is one layer of a pan base or a hob plate.
type Layer struct {
	ThicknessM      float64 // m
	ConductivityWMK float64 // W/(m·K)
}

// Interface gives the pan–hob interface conductance of base cell k, W/(m²·K),
// split into its parts, with the hob surface at tHobK and the pan's outer face
// at tPanK (K).
type Interface interface {
	H(k int, tHobK, tPanK float64) (solid, gas, rad float64)
}

// WaterSide gives the heat transfer coefficient from the pan's inner face to
// the load, W/(m²·K), with the inner face at tBaseK and the bulk water at
// tWaterK.
type WaterSide interface {
	H(tBaseK, tWaterK float64) float64
}

// HobMode says how the hob side of the plate problem is modelled.
type HobMode int

const (
	// TemperatureMode holds the hob top at a given temperature field.
	TemperatureMode HobMode = iota
	// HeaterMode models a heater under a glass plate; the glass temperature is
	// an outcome.
	HeaterMode
)

// String returns "temperature" or "heater".
func (m HobMode) String() string {
	switch m {
	case TemperatureMode:
		return "temperature"
	case HeaterMode:
		return "heater"
	}
	return "HobMode(?)"
}

// TemperatureHob is a hob whose top surface is held at a fixed temperature.
type TemperatureHob struct {
	TopK []float64 // hob top temperature per grid cell, K (the set point)

	// RatedPowerW, when positive, is the most the hob can deliver, W: the
	// top holds TopK while the heat into the pan stays within it, and
	// beyond it the whole top field is lowered by one uniform amount until
	// the heat into the pan equals RatedPowerW (a thermostat-controlled
	// plate at full power). 0 holds TopK whatever it costs (a bench
	// fixture).
	RatedPowerW float64
}

// HeaterHob is a radiant heater zone under a glass(-ceramic) plate.
type HeaterHob struct {
	PowerW        float64    // rated heater power, W
	ZoneDiameterM float64    // heated zone diameter, m
	ZoneCentreM   [2]float64 // zone centre (x, y), m

	// PowerProfile is the relative power density against the radius from the
	// zone centre, m. Nil means uniform. It is normalised internally so the
	// zone receives PowerW.
	PowerProfile func(rM float64) float64

	Glass           Layer   // glass plate thickness and conductivity
	GlassEmissivity float64 // of the glass top, for its loss where not covered by the pan

	// GlassRadiusM is the extent of the glass plate modelled, from the zone
	// centre, m (zone and base plus a margin). Cells beyond it are not glass.
	GlassRadiusM float64

	DownHWM2K float64 // downward loss conductance from the glass to the room, W/(m²·K)
	RoomK     float64 // room temperature, K

	// TransmittedFraction of the heater power goes straight to the pan base
	// by radiation, fully absorbed (a fixed share; default 0). Ignored when
	// Coil is set.
	TransmittedFraction float64

	// Coil, when set, makes the transmitted share an outcome: the element
	// temperature from its radiative balance with the glass underside
	// (Coil.Balance at the zone's rated power density and the zone-mean
	// underside temperature, updated every outer iteration) and the
	// glass window's share of its emission. Over the base the pan absorbs
	// Problem.PanEmissivity of it and the rest returns to the glass; beside
	// the base it leaves upward (Solution.TransmittedLostW).
	Coil *Coil

	// LimiterK is the temperature, K, at which the heater duty drops to
	// hold the sensed glass temperature: the mean glass-underside
	// temperature along Rod when set, else the hottest glass node. Zero or
	// negative disables the limiter.
	LimiterK float64
	Rod      *Rod
}

// Rod is a rod limiter's sensor: a straight rod parallel to the grid's x
// axis through the zone at y = ZoneCentreM[1] + OffsetM, LengthM long and
// centred on ZoneCentreM[0]. It senses the mean glass-underside
// temperature of the glass cells of the grid row nearest to it whose
// centres lie within its length.
type Rod struct {
	OffsetM float64 // m
	LengthM float64 // m
}

// Problem is a steady plate problem: a pan base on a hob, heated from below
// and cooled by its load.
type Problem struct {
	Grid   Grid
	InBase []bool // cells of the pan base (pan nodes exist only there)

	// BaseLayers give the through-thickness resistance Σ t/k and the in-plane
	// conductance Σ k·t of the base.
	BaseLayers []Layer

	Interface Interface // only called for InBase cells
	Water     WaterSide
	TWaterK   float64 // bulk water temperature, K

	// Exactly one of Temperature and Heater is set.
	Temperature *TemperatureHob
	Heater      *HeaterHob

	// PanEmissivity is the pan base's absorptance for the heater radiation
	// passing the glass when Heater.Coil is set (in (0, 1]); otherwise it
	// is not used: the interface radiation comes from Interface.
	PanEmissivity float64

	RelTol    float64 // linear solver relative residual tolerance (default 1e-10)
	OuterTolK float64 // nonlinear convergence, max |ΔT| in K (default 1e-6)

	// Optional warm start, typically a Solution of a neighbouring problem on
	// the same grid (another water temperature, a similar interface). When
	// set, InitialTPanK (per cell, K) replaces the built-in first guess of
	// the pan nodes and InitialTGlassK that of the glass nodes; only the
	// values at cells carrying such a node are read, and they must be
	// positive and finite. InitialDutyPct (heater mode, 0 < duty ≤ 100; 0
	// means 100) is the first duty the limiter starts from. A warm start
	// changes the path of the iterations, not their converged result.
	InitialTPanK   []float64
	InitialTGlassK []float64
	InitialDutyPct float64
}

// Mode returns HeaterMode when p.Heater is set, TemperatureMode otherwise.
func (p *Problem) Mode() HobMode {
	if p.Heater != nil {
		return HeaterMode
	}
	return TemperatureMode
}

// Solution is the result of Solve.
type Solution struct {
	TPanK   []float64 // base node temperature per cell, K (NaN outside the base)
	TGlassK []float64 // heater mode: glass temperature per cell, K (NaN beyond the glass); nil in temperature mode

	// FluxWM2 is the heat flux into the pan per base cell through the
	// interface, plus any transmitted radiation, W/m² (0 outside the base).
	FluxWM2 []float64

	// Interface parts per base cell at the converged temperatures, W/(m²·K)
	// (0 outside the base, and in heater mode over base cells beyond the
	// glass).
	SolidWM2K, GasWM2K, RadWM2K []float64

	PowerW float64 // Σ flux·A into the pan, W

	// SolidW, GasW and RadW split PowerW (excluding transmitted power) by
	// interface part, each cell's flux shared in proportion h_part/h_total.
	SolidW, GasW, RadW float64

	TransmittedW float64 // transmitted heater power reaching the pan, W

	HeaterW float64 // heater mode: delivered heater power (duty × rated), W
	DutyPct float64 // heater mode: 100 unless the limiter cut it (0 in temperature mode)

	// Heater mode: TransmittedLostW is the heater radiation passing the
	// glass beside the pan, W; TransmittedShare the share of the heater's
	// power passing the glass (first pass), CoilK the element temperature
	// while on (0 without a Coil), RodK the mean underside temperature
	// along the limiter's rod (0 without a Rod).
	TransmittedLostW float64
	TransmittedShare float64
	CoilK, RodK      float64

	DownLossW      float64 // heater mode: downward loss from the glass underside, W
	UncoveredLossW float64 // heater mode: loss from glass not under the pan, W
	GlassMaxK      float64 // heater mode: highest glass temperature, K

	WaterW float64 // heat into the water, W (equals PowerW at steady state)

	// Temperature mode: PowerLimited says the rated power capped the heat
	// and the top ran TopShiftK (K) below its set point everywhere.
	PowerLimited bool
	TopShiftK    float64

	LinearIterations int     // total linear (PCG) iterations over all outer iterations
	OuterIterations  int     // nonlinear outer iterations
	RelResidual      float64 // relative residual of the last linear solve

	Warnings []string
}
