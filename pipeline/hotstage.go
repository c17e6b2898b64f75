package pipeline

import (
	"context"
	"fmt"
	"math"
	"strings"
	"sync"

	"gapflux/bow"
	"gapflux/contact"
	"gapflux/scan"
	"gapflux/thermal"
)

// HotReport is the report's hot section: the base as it is when cooking
// (DESIGN 5.5, issue 11), bowed by its own heat and posed, gapped and
// solved again until its shape settled. Lengths in mm, temperatures in °C.
// The loss and the heat-up are against the same flat twin as the cold
// figures (flat cold and hot: see the README).
type HotReport struct {
	// Edge is how the rim was held: "free", "clamped" or "wall";
	// WallRotStiffnessN the wall's rotational stiffness, N·m/(m·rad),
	// for "wall".
	Edge              string   `json:"edge"`
	WallRotStiffnessN *float64 `json:"wall_rot_stiffness_n,omitempty"`
	ScanC             float64  `json:"scan_c"`
	BendCellMM        float64  `json:"bend_cell_mm"`
	Iterations        int      `json:"iterations"`
	Converged         bool     `json:"converged"`
	LastChangeUM      float64  `json:"last_change_um"` // largest bow change of the last round
	ToleranceUM       float64  `json:"tolerance_um"`
	Relaxation        float64  `json:"relaxation"` // under-relaxation factor of the last round

	// The hot shape, on the same measures as the geometry section.
	ConcavityMM            float64 `json:"concavity_mm"`
	ConcavityPctOfDiameter float64 `json:"concavity_pct_of_diameter"`
	ConcavityChangeMM      float64 `json:"concavity_change_mm"` // hot − cold; negative: bowed toward a dome
	FlatnessMZMM           float64 `json:"flatness_mz_mm"`
	// FlatHotColdMM is where this base sits against the design band: the
	// cold concavity that would make it flat hot, cold − hot concavity, to
	// first order (the heat's bow taken as independent of the cold
	// concavity, as it is within about 5 % in the design table of a
	// stainless base from −0.2 to +0.6 mm; "gapflux design" gives the
	// band itself).
	FlatHotColdMM float64 `json:"flat_hot_cold_concavity_mm"`
	// MaxBowMM is the largest |w| over the base, w the thermal deflection
	// about the plane of the rim (+ into the pan); CentreBowMM is w at the
	// base centre.
	MaxBowMM    float64 `json:"max_bow_mm"`
	CentreBowMM float64 `json:"centre_bow_mm"`

	Pose *PoseReport `json:"pose"`
	Gap  *GapReport  `json:"gap"`

	PowerW       float64 `json:"power_w"`
	LossPct      float64 `json:"loss_pct"`
	MeanFluxKWM2 float64 `json:"mean_flux_kw_m2"`
	BaseMeanC    float64 `json:"base_mean_c"`
	BaseMaxC     float64 `json:"base_max_c"`
	// Heat-up of the water load on the hot shape (held through the whole
	// heat-up), against the flat twin.
	HeatupTimeS     float64 `json:"heatup_time_s"`
	FlatHeatupTimeS float64 `json:"flat_heatup_time_s"`
	ExtraTimePct    float64 `json:"extra_time_pct"`
}

// HotResult is the hot stage's outcome: its report section and the fields
// its maps are drawn from (indexed like Result.Form's cells).
type HotResult struct {
	Report   *HotReport
	State    *HotState
	Pose     *contact.Pose
	GapM     []float64
	Contact  []bool
	Scan     *thermal.Solution
	Warnings []string
	// ColdScan is the first round's solution: the cold base (the design
	// table's cold loss).
	ColdScan *thermal.Solution
}

// hotInput is what the hot stage takes from the cold analysis.
type hotInput struct {
	job     Job
	lib     []contact.Material
	surf    *scan.Surface // cold form surface (padded grid in heater mode)
	hob     *scan.Surface
	inBase  []bool
	radiusM float64
	ip      contact.InterfaceParams
	prob    *thermal.Problem // the plate problem without interface and water temperature
	flat    *thermal.Solution
	flatIf  thermal.Interface
	cold    *thermal.Solution // warm start of the first round (nil: none)
	// coldSolved says cold is the steady solution of this very cold base,
	// so the first round takes it instead of solving again.
	coldSolved bool
	coldMM     float64     // cold concavity, mm
	solves     *solveCache // shared between calls (design); nil: a new one
}

// solveCache runs the plate solves of the hot stage, warm-started, and
// keeps the solutions of fixed interfaces (the flat twin) by water
// temperature, so a design sweep solves the flat twin once. Its solves
// are serialised (the heat-ups of the hot base and the flat twin call it
// from two goroutines; one solver's work buffers serve one solve at a time).
type solveCache struct {
	mu     sync.Mutex
	solver thermal.Solver
	memo   map[solveKey]*thermal.Solution
}

type solveKey struct {
	iface thermal.Interface
	tK    float64
}

func newSolveCache() *solveCache { return &solveCache{memo: map[solveKey]*thermal.Solution{}} }

// solve solves prob with iface at water temperature tK, from start when
// given; the solution is kept when keep is set.
func (c *solveCache) solve(ctx context.Context, prob *thermal.Problem, iface thermal.Interface, tK float64, start *thermal.Solution, keep bool) (*thermal.Solution, error) {
	c.mu.Lock()
	defer c.mu.Unlock()
	if s := c.memo[solveKey{iface, tK}]; s != nil {
		return s, nil
	}
	p := *prob
	p.Interface, p.TWaterK = iface, tK
	if start != nil {
		p.InitialTPanK, p.InitialTGlassK, p.InitialDutyPct = start.TPanK, start.TGlassK, start.DutyPct
	}
	s, err := c.solver.SolveContext(ctx, &p)
	if err == nil && keep {
		c.memo[solveKey{iface, tK}] = s
	}
	return s, err
}

// restOptions are the rest-pose options of the job (as the cold analysis).
func restOptions(job Job, ip contact.InterfaceParams) contact.RestOptions {
	return contact.RestOptions{
		CentreOfMassM: [2]float64{job.Pan.CentreOfMassMM[0] / 1e3, job.Pan.CentreOfMassMM[1] / 1e3},
		RockLimitM:    job.Grid.RockMM / 1e3, Seed: restSeed,
		BandM: contact.ContactBandSigmas * ip.SigmaM, WeightN: loadWeightN(job), TipForceLimitN: job.Grid.RockForceN}
}

// loadWeightN is the weight of the pan and its water, N.
func loadWeightN(job Job) float64 { return (job.Pan.MassKg + job.Water.MassKg) * gravityMS2 }

// hotEdge returns the bending edge condition of the job; for a wall it
// derives the wall's rotational stiffness (bow.WallStiffnessN for a wall
// of one material, bow.WallLayersStiffnessN for the base's layers carried
// up the wall).
func hotEdge(job Job, lib []contact.Material, layers []bow.Layer, radiusM float64) (bow.Edge, error) {
	switch job.Hot.Edge {
	case "clamped":
		return bow.Edge{Kind: bow.EdgeClamped}, nil
	case "wall":
		var k float64
		var err error
		if t := job.Hot.WallThicknessMM; t > 0 {
			name := job.Hot.WallMaterial
			if name == "" {
				name = job.Pan.Layers[0].Material
			}
			m, lerr := contact.LookupMaterial(lib, name)
			if lerr != nil {
				return bow.Edge{}, fmt.Errorf("job: hot.wall_material: %w", lerr)
			}
			k, err = bow.WallStiffnessN(t/1e3, radiusM, m.YoungPa, m.Poisson)
		} else {
			k, err = bow.WallLayersStiffnessN(layers, radiusM)
		}
		if err != nil {
			return bow.Edge{}, fmt.Errorf("hot.edge = \"wall\": %w", err)
		}
		return bow.Edge{Kind: bow.EdgeWall, RotStiffnessN: k}, nil
	}
	return bow.Edge{Kind: bow.EdgeFree}, nil
}

// hotStage runs the coupled hot state of the cold base in: bending solver
// (factorised once), then rounds of rest pose, gap, interface and plate
// solve at the steady water temperature and bow, under-relaxed
// (SolveHotState), and reports the settled hot base against the flat twin.
func hotStage(ctx context.Context, in hotInput) (*HotResult, error) {
	job := in.job
	if in.solves == nil {
		in.solves = newSolveCache()
	}
	layers, err := bendLayers(job, in.lib)
	if err != nil {
		return nil, err
	}
	edge, err := hotEdge(job, in.lib, layers, in.radiusM)
	if err != nil {
		return nil, err
	}
	s := in.surf
	bend, err := bow.NewSolver(ctx, bow.Problem{
		Grid:   bow.Grid{Nx: s.Nx, Ny: s.Ny, CellM: s.CellM, X0M: s.X0M, Y0M: s.Y0M},
		InBase: in.inBase, Layers: layers, Edge: edge, BendCellM: job.Hot.BendCellMM / 1e3})
	if err != nil {
		return nil, fmt.Errorf("bending: %w", err)
	}
	out := &HotResult{}
	steadyK := job.Water.SteadyC + kelvin
	cellA := s.CellM * s.CellM
	loadN := loadWeightN(job)
	ropt := restOptions(job, in.ip)
	var field *contact.Field
	var pressurePa, areaM2 float64
	last := in.cold
	chain := func(ctx context.Context, z []float64) ([]float64, []float64, error) {
		hot := s.Clone()
		copy(hot.ZM, z)
		pose, err := contact.Rest(hot, in.hob, ropt)
		if err != nil {
			return nil, nil, fmt.Errorf("rest pose: %w", err)
		}
		gap := contact.Gap(hot, in.hob, pose)
		mask, p, a := contact.ContactPressure(gap, in.inBase, cellA, loadN, in.ip.SigmaM)
		f := &contact.Field{Params: in.ip, GapM: gap, Contact: mask, PressurePa: p}
		sol := in.cold // a first round on a cold base solved already
		if out.ColdScan != nil || !in.coldSolved || sol == nil {
			if sol, err = in.solves.solve(ctx, in.prob, f, steadyK, last, false); err != nil {
				return nil, nil, fmt.Errorf("plate solve: %w", err)
			}
		}
		if out.ColdScan == nil {
			out.ColdScan = sol
		}
		last, field, pressurePa, areaM2 = sol, f, p, a
		out.Pose, out.GapM, out.Contact, out.Scan = pose, gap, mask, sol
		return sol.FluxWM2, sol.TPanK, nil
	}
	st, err := SolveHotState(ctx, s.ZM, in.inBase, bend, chain, HotOptions{
		ScanTempK: job.Hot.ScanC + kelvin, TolM: job.Hot.ToleranceUM / 1e6, MaxIter: job.Hot.MaxIterations})
	if err != nil {
		return nil, err
	}
	out.State = st
	if !st.Converged {
		out.Warnings = append(out.Warnings, fmt.Sprintf(
			"hot state: the bow still changed by %.2f µm after %d rounds (hot.tolerance_um = %s); the hot figures are those of the last round",
			st.ChangeM*1e6, st.Iterations, fmtNum(job.Hot.ToleranceUM)))
	}
	rep, err := hotReport(in, st, out, bend.Info(), edge)
	if err != nil {
		return nil, err
	}
	out.Report = rep
	rep.Gap = gapReport(out.GapM, out.Contact, in.inBase, pressurePa, areaM2, in.ip)
	fillGapConductance(rep.Gap, out.Scan, in.inBase)
	ws, err := hotHeatup(ctx, in, field, out.Scan, rep)
	if err != nil {
		return nil, fmt.Errorf("heat-up: %w", err)
	}
	out.Warnings = append(out.Warnings, prefixed("hot: ", ws)...)
	return out, nil
}

// hotReport fills the hot section's shape, pose and heat figures.
func hotReport(in hotInput, st *HotState, out *HotResult, info bow.Info, edge bow.Edge) (*HotReport, error) {
	job := in.job
	hot := in.surf.Clone()
	copy(hot.ZM, st.SurfaceZM)
	form, err := scan.MeasureForm(hot, in.radiusM)
	if err != nil {
		return nil, fmt.Errorf("hot form: %w", err)
	}
	rep := &HotReport{
		Edge: edge.Kind.String(), ScanC: job.Hot.ScanC, BendCellMM: roundTo(info.BendCellM*1e3, 3),
		Iterations: st.Iterations, Converged: st.Converged, LastChangeUM: roundTo(st.ChangeM*1e6, 3),
		ToleranceUM: job.Hot.ToleranceUM, Relaxation: roundTo(st.Relax, 3),
		ConcavityMM:            roundTo(form.ConcavityM*1e3, 4),
		ConcavityPctOfDiameter: roundTo(form.ConcavityPctOfDiameter, 4),
		ConcavityChangeMM:      roundTo(form.ConcavityM*1e3-in.coldMM, 4),
		FlatnessMZMM:           roundTo(form.FlatnessMZM*1e3, 4),
		FlatHotColdMM:          roundTo(in.coldMM-form.ConcavityM*1e3, 4),
		Pose:                   poseReport(out.Pose, restOptions(job, in.ip).CentreOfMassM, job),
	}
	if edge.Kind == bow.EdgeWall {
		k := roundSig(edge.RotStiffnessN, 4)
		rep.WallRotStiffnessN = &k
	}
	// Bow figures; the centre is the base cell nearest the bending
	// solver's centroid.
	s := in.surf
	best := math.Inf(1)
	var maxBow, sumT, maxT float64
	n := 0
	for k, ok := range in.inBase {
		if !ok {
			continue
		}
		w := st.BowM[k]
		maxBow = math.Max(maxBow, math.Abs(w))
		if d := math.Hypot(s.X(k%s.Nx)-info.CentreXM, s.Y(k/s.Nx)-info.CentreYM); d < best {
			best, rep.CentreBowMM = d, roundTo(w*1e3, 4)
		}
		t := out.Scan.TPanK[k]
		sumT += t
		maxT = math.Max(maxT, t)
		n++
	}
	rep.MaxBowMM = roundTo(maxBow*1e3, 4)
	baseArea := float64(n) * s.CellM * s.CellM
	rep.PowerW = roundTo(out.Scan.PowerW, 3)
	rep.MeanFluxKWM2 = roundTo(out.Scan.PowerW/baseArea/1e3, 4)
	if in.flat.PowerW > 0 {
		rep.LossPct = roundTo(100*(1-out.Scan.PowerW/in.flat.PowerW), 3)
	}
	if n > 0 {
		rep.BaseMeanC, rep.BaseMaxC = roundTo(sumT/float64(n)-kelvin, 3), roundTo(maxT-kelvin, 3)
	}
	return rep, nil
}

// hotHeatup heats the water load on the hot shape and on the flat twin
// (the cold analysis's heat-up model, heatupReport) and fills rep's
// heat-up figures. The hot shape is the steady one (water at
// water.steady_c), held through the heat-up: quasi-steady in shape as in
// heat.
func hotHeatup(ctx context.Context, in hotInput, hotIf *contact.Field, hotSteady *thermal.Solution, rep *HotReport) ([]string, error) {
	job := in.job
	steadyK, fromK := job.Water.SteadyC+kelvin, job.Water.FromC+kelvin
	steady := map[thermal.Interface]*thermal.Solution{in.flatIf: in.flat, hotIf: hotSteady}
	solve := func(iface thermal.Interface, tK float64) (*thermal.Solution, error) {
		if tK == steadyK {
			return steady[iface], nil
		}
		return in.solves.solve(ctx, in.prob, iface, tK, steady[iface], true)
	}
	linear := job.Water.Side == "fixed" && math.Abs(steadyK-fromK) >= 5
	power := func(iface thermal.Interface) thermal.PowerFunc {
		return func(tK float64) (float64, float64, error) {
			if !linear {
				s, err := solve(iface, tK)
				if err != nil {
					return 0, 0, err
				}
				return s.PowerW, sourceW(s), nil
			}
			// Linear in the water temperature with a fixed water side, as
			// in the cold analysis.
			s0, err := solve(iface, fromK)
			if err != nil {
				return 0, 0, err
			}
			s1 := steady[iface]
			return alongLine(tK, fromK, steadyK, s0.PowerW, s1.PowerW), alongLine(tK, fromK, steadyK, sourceW(s0), sourceW(s1)), nil
		}
	}
	hu, err := heatupReport(ctx, job, in.lib, in.radiusM, power, hotIf, in.flatIf, 0)
	if err != nil {
		return nil, err
	}
	rep.HeatupTimeS, rep.FlatHeatupTimeS, rep.ExtraTimePct = hu.report.TimeS, hu.report.FlatTimeS, hu.report.ExtraTimePct
	return hu.warnings, nil
}

// hotSummary is the plain-words line of the hot state: "hot, the base
// domes by 0.21 mm and rocks".
func hotSummary(h *HotReport, diameterMM float64) string {
	thr := shapeTolPct / 100 * diameterMM
	var shape string
	switch c := h.ConcavityMM; {
	case c < -thr:
		shape = fmt.Sprintf("domes by %.2f mm", -c)
	case c > thr:
		shape = fmt.Sprintf("stays dished by %.2f mm", c)
	default:
		shape = fmt.Sprintf("is flat (concavity %+.3f mm)", c)
	}
	rock := "stands firm"
	if h.Pose != nil && h.Pose.Rocks {
		rock = "rocks"
	}
	toward := "a dome"
	if h.ConcavityChangeMM > 0 {
		toward = "a dish"
	}
	var b strings.Builder
	fmt.Fprintf(&b, "  hot, the base %s and %s (its heat bows it %.2f mm toward %s; edge %s, %d rounds)\n",
		shape, rock, math.Abs(h.ConcavityChangeMM), toward, h.Edge, h.Iterations)
	fmt.Fprintf(&b, "  hot: %.1f %% of the base in contact, %.1f %% of the heating power lost, heat-up %+.1f %% against the flat twin\n",
		h.Gap.ContactAreaPct, h.LossPct, h.ExtraTimePct)
	fmt.Fprintf(&b, "  hot: a cold concavity of about %+.2f mm would make this base flat hot (first order; \"gapflux design\" gives the band)\n",
		h.FlatHotColdMM)
	return b.String()
}

// stateVerdict judges the states hot.verdict names: the cold base as
// scanned, the hot base (its concavity, flatness, rocking and loss against
// the same tolerances), or both, each failure saying which state failed.
func stateVerdict(job Job, rep *Report) *VerdictReport {
	cold := *rep
	cold.Hot = nil
	hot := hotOnlyReport(rep.Hot)
	v := &VerdictReport{Pass: true, Reasons: []string{}}
	add := func(state string, r *Report) {
		sv := verdict(job, r)
		v.Pass = v.Pass && sv.Pass
		for _, s := range sv.Reasons {
			v.Reasons = append(v.Reasons, state+": "+s)
		}
	}
	switch job.Hot.Verdict {
	case "cold":
		add("cold", &cold)
	case "hot":
		add("hot", hot)
	default:
		add("cold", &cold)
		add("hot", hot)
	}
	return v
}

// writeHotPictures draws the hot state's maps: the gap under the hot base
// (hot_gap.png/.svg, its support points marked) and the thermal bow
// (bow.png/.svg, µm, + into the pan). Nothing without a hot state.
func writeHotPictures(dir string, res *Result) error {
	h, s := res.Hot, res.Form
	if h == nil || s == nil {
		return nil
	}
	labels := PictureLabels{PartNumber: res.PartNumber, Lot: res.Lot}
	if v := res.Report.Verdict; v != nil {
		labels.Verdict = map[bool]string{true: "PASS", false: "FAIL"}[v.Pass]
	}
	inBase := func(src []float64, scale float64) []float64 { return baseValues(s, src, scale) }
	spec := &MapSpec{Title: "hot gap under " + res.Name, Labels: labels, Unit: "gap when hot (mm)", Nx: s.Nx, Ny: s.Ny,
		X0MM: s.X0M * 1e3, Y0MM: s.Y0M * 1e3, CellMM: s.CellM * 1e3, Values: inBase(h.GapM, 1e3),
		Controls: gapControls, MarkLabel: "support points when hot", BaseRadiusMM: res.RadiusM * 1e3,
		ZoneDiameterMM: res.ZoneDiameterM * 1e3, ZoneCentreMM: [2]float64{res.ZoneCentreM[0] * 1e3, res.ZoneCentreM[1] * 1e3},
		Interpolated: unmeasured(s)}
	for _, c := range h.Pose.ContactPointsM {
		spec.MarksMM = append(spec.MarksMM, [2]float64{c[0] * 1e3, c[1] * 1e3})
	}
	if err := writeMapFiles(dir, "hot_gap", spec); err != nil {
		return err
	}
	bspec := *spec
	bspec.Title = "thermal bow of " + res.Name + " (edge " + h.Report.Edge + ")"
	bspec.Unit, bspec.Values, bspec.MarksMM, bspec.MarkLabel = "bow when hot, + into the pan (µm)", inBase(h.State.BowM, 1e6), nil, ""
	return writeMapFiles(dir, "bow", &bspec)
}

// hotFields are the hot state's per-cell fields of fields.vti: hot height
// (µm), thermal bow (µm, + into the pan), hot gap (mm), hot contact, hot
// base temperature (°C) and hot flux (kW/m²); none without a hot state.
func (res *Result) hotFields() []VTIField {
	h, s := res.Hot, res.Form
	if h == nil || s == nil {
		return nil
	}
	scaled := func(src []float64, f func(float64) float64) []float64 {
		out := make([]float64, len(s.ZM))
		for k := range out {
			out[k] = math.NaN()
			if s.InBase(k) && !math.IsNaN(src[k]) {
				out[k] = f(src[k])
			}
		}
		return out
	}
	contactMask := make([]float64, len(s.ZM))
	for k, in := range h.Contact {
		if in {
			contactMask[k] = 1
		}
	}
	return []VTIField{
		{Name: "hot_height_um", Values: scaled(h.State.SurfaceZM, func(v float64) float64 { return v * 1e6 })},
		{Name: "bow_um", Values: scaled(h.State.BowM, func(v float64) float64 { return v * 1e6 })},
		{Name: "hot_gap_mm", Values: scaled(h.GapM, func(v float64) float64 { return v * 1e3 })},
		{Name: "hot_contact", Values: contactMask, UInt8: true},
		{Name: "hot_base_c", Values: scaled(h.Scan.TPanK, func(v float64) float64 { return v - kelvin })},
		{Name: "hot_flux_kw_m2", Values: scaled(h.Scan.FluxWM2, func(v float64) float64 { return v / 1e3 })},
	}
}
