package pipeline

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"gapflux/contact"
	"gapflux/scan"
)

// SchemaDesign names the version of the design table's contract.
const SchemaDesign = "gapflux.design/1"

// Design sweep bounds and defaults (our choices).
const (
	// MaxDesignRows bounds the cold concavities of one sweep.
	MaxDesignRows = 201
	// DefaultDesignDiameterMM is the base diameter when neither the flag
	// nor grid.diameter_mm gives one.
	DefaultDesignDiameterMM = 200
	// DefaultDesignCellMM is the grid cell of the synthetic bases when
	// grid.cell_mm is automatic: 2 mm resolves a paraboloid base's pose,
	// gap and bow (the hot dome of a flat base changes by under 2 % from
	// 2 mm to 1 mm cells in TestDesignChecks' stainless case) at a
	// quarter of the cost of 1 mm.
	DefaultDesignCellMM = 2
)

// DesignOptions sets a design sweep: synthetic paraboloid bases of the
// job's construction, cold concavity from FromMM to ToMM in steps of
// StepMM (mm, positive dished), each run through the coupled hot state.
type DesignOptions struct {
	Job                  Job
	DiameterMM           float64 // 0: grid.diameter_mm, else DefaultDesignDiameterMM
	FromMM, ToMM, StepMM float64
}

// DesignRow is one cold concavity of the sweep and its hot state.
type DesignRow struct {
	ColdConcavityMM   float64  `json:"cold_concavity_mm"`
	ColdConcavityPct  float64  `json:"cold_concavity_pct_of_diameter"`
	ColdLossPct       float64  `json:"cold_loss_pct"`
	HotConcavityMM    float64  `json:"hot_concavity_mm"`
	HotConcavityPct   float64  `json:"hot_concavity_pct_of_diameter"`
	HotFlatnessMZMM   float64  `json:"hot_flatness_mz_mm"`
	HotRockMM         float64  `json:"hot_rock_mm"`
	HotRocks          bool     `json:"hot_rocks"`
	HotTipForceN      *float64 `json:"hot_tip_force_n"`
	HotContactAreaPct float64  `json:"hot_contact_area_pct"`
	HotLossPct        float64  `json:"hot_loss_pct"`
	HeatupTimeS       float64  `json:"heatup_time_s"`
	ExtraTimePct      float64  `json:"extra_time_pct"`
	Iterations        int      `json:"iterations"`
	Converged         bool     `json:"converged"`
	PassHot           bool     `json:"pass_hot"`
	HotReasons        []string `json:"hot_reasons"`
}

// DesignBand is a run of cold concavities, mm, whose hot state meets the
// job's tolerances (the sweep's points; the true edges lie within a step).
type DesignBand struct {
	FromMM float64 `json:"from_mm"`
	ToMM   float64 `json:"to_mm"`
}

// DesignTable is the design aid's result.
type DesignTable struct {
	Schema       string  `json:"schema"`
	Construction string  `json:"construction"` // layers from the hob side up
	Edge         string  `json:"edge"`
	Mode         string  `json:"mode"`
	DiameterMM   float64 `json:"diameter_mm"`
	CellMM       float64 `json:"cell_mm"`
	ScanC        float64 `json:"scan_c"`
	WaterC       float64 `json:"water_c"`
	FlatPowerW   float64 `json:"flat_power_w"`
	// FlatHeatupTimeS is the flat twin's heat-up (flat cold and hot).
	FlatHeatupTimeS float64      `json:"flat_heatup_time_s"`
	Rows            []DesignRow  `json:"rows"`
	Bands           []DesignBand `json:"hot_pass_bands"`
	// LeastLossColdMM is the cold concavity of the smallest hot loss.
	LeastLossColdMM float64 `json:"least_hot_loss_cold_concavity_mm"`
	Statement       string  `json:"statement"`
}

// ParseColdRange parses a "FROM:TO:STEP" range of cold concavities, mm:
// FROM ≤ TO, STEP > 0, every number finite and within ±50 mm, at most
// MaxDesignRows values.
func ParseColdRange(s string) (from, to, step float64, err error) {
	parts := strings.Split(s, ":")
	if len(parts) != 3 {
		return 0, 0, 0, fmt.Errorf("cold range %q: want FROM:TO:STEP in mm, for example -0.2:0.6:0.05", s)
	}
	var v [3]float64
	for i, p := range parts {
		if v[i], err = strconv.ParseFloat(strings.TrimSpace(p), 64); err != nil || math.IsNaN(v[i]) || math.Abs(v[i]) > 50 {
			return 0, 0, 0, fmt.Errorf("cold range %q: %q is not a number within ±50 mm", s, p)
		}
	}
	from, to, step = v[0], v[1], v[2]
	switch {
	case to < from:
		return 0, 0, 0, fmt.Errorf("cold range %q: TO is below FROM", s)
	case !(step > 0):
		return 0, 0, 0, fmt.Errorf("cold range %q: STEP must be above 0", s)
	case (to-from)/step+1 > MaxDesignRows+1e-9:
		return 0, 0, 0, fmt.Errorf("cold range %q: %.0f values, at most %d; take a larger STEP", s, math.Floor((to-from)/step+1e-9)+1, MaxDesignRows)
	}
	return from, to, step, nil
}

// coldValues lists the sweep's cold concavities, mm (rounded to 1e-9 mm
// so that FROM + i·STEP prints as typed).
func (o DesignOptions) coldValues() []float64 {
	n := int(math.Floor((o.ToMM-o.FromMM)/o.StepMM+1e-9)) + 1
	out := make([]float64, n)
	for i := range out {
		out[i] = roundTo(o.FromMM+float64(i)*o.StepMM, 9)
	}
	return out
}

// designBase is the synthetic base of a sweep: its (padded) grid, hob,
// plate problem and flat twin, shared by every cold concavity.
type designBase struct {
	in    hotInput
	surf  *scan.Surface
	rM    float64
	cellM float64
}

// Design runs the sweep: for each cold concavity c a paraboloid base
// z = c (1 − r²/R²) of the job's construction (every cell measured, no
// noise), posed on the job's hob and run through the coupled hot state
// (hotStage) against one flat twin. Rows are in the order of the range;
// the sweep is deterministic.
func Design(ctx context.Context, opt DesignOptions) (*DesignTable, error) {
	job := opt.Job
	if _, _, _, err := ParseColdRange(fmt.Sprintf("%g:%g:%g", opt.FromMM, opt.ToMM, opt.StepMM)); err != nil {
		return nil, err
	}
	if opt.DiameterMM == 0 {
		opt.DiameterMM = job.Grid.DiameterMM
	}
	if opt.DiameterMM == 0 {
		opt.DiameterMM = DefaultDesignDiameterMM
	}
	job.Grid.DiameterMM = opt.DiameterMM
	if err := job.Validate(); err != nil {
		return nil, fmt.Errorf("job: %w", err)
	}
	job.Hot.Enabled = true
	// Water, zone and power left at 0 are fitted to the base, as for a scan.
	if _, err := job.fitToBase(opt.DiameterMM); err != nil {
		return nil, fmt.Errorf("job: %w", err)
	}
	base, err := newDesignBase(ctx, job, opt.DiameterMM/2e3)
	if err != nil {
		return nil, err
	}
	t := &DesignTable{Schema: SchemaDesign, Construction: construction(job), Edge: job.Hot.Edge, Mode: job.Hob.Mode,
		DiameterMM: opt.DiameterMM, CellMM: roundTo(base.cellM*1e3, 3), ScanC: job.Hot.ScanC, WaterC: job.Water.SteadyC,
		FlatPowerW: roundTo(base.in.flat.PowerW, 3)}
	for _, c := range opt.coldValues() {
		row, hu, err := base.row(ctx, c)
		if err != nil {
			return nil, fmt.Errorf("cold concavity %g mm: %w", c, err)
		}
		t.Rows = append(t.Rows, row)
		t.FlatHeatupTimeS = hu
	}
	t.summarise(job)
	return t, nil
}

// newDesignBase builds the sweep's grid, hob, plate problem and flat twin
// for a base of radius rM.
func newDesignBase(ctx context.Context, job Job, rM float64) (*designBase, error) {
	lib, err := job.MaterialLibrary()
	if err != nil {
		return nil, err
	}
	cell := job.Grid.CellMM / 1e3
	if cell == 0 {
		cell = DefaultDesignCellMM / 1e3
	}
	half := int(math.Ceil(rM/cell)) + 1
	n := 2*half + 1
	if n*n > job.Limits.MaxCells {
		return nil, fmt.Errorf("the design grid would be %d×%d cells, above limits.max_cells = %d; set a larger grid.cell_mm", n, n, job.Limits.MaxCells)
	}
	surf := scan.NewSurface(n, n, cell, -float64(half)*cell, -float64(half)*cell)
	for k := range surf.ZM {
		if x, y := surf.X(k%n), surf.Y(k/n); x*x+y*y <= rM*rM {
			surf.State[k], surf.ZM[k] = scan.Measured, 0
		}
	}
	offsetM := [2]float64{job.Pan.OffsetMM[0] / 1e3, job.Pan.OffsetMM[1] / 1e3}
	glassR := 0.0
	if job.heated() {
		off := math.Hypot(offsetM[0], offsetM[1])
		glassR = glassRadiusM(&job, off, rM)
		if surf, err = padSurface(surf, off+glassR, job.Limits.MaxCells); err != nil {
			return nil, err
		}
	}
	hob, _, err := hobSurface("", surf, offsetM, job)
	if err != nil {
		return nil, err
	}
	inBase := make([]bool, len(surf.State))
	baseArea := 0.0
	for k := range inBase {
		inBase[k] = surf.InBase(k)
		if inBase[k] {
			baseArea += cell * cell
		}
	}
	ip, err := interfaceParams(job, lib)
	if err != nil {
		return nil, err
	}
	prob, err := plateProblem(job, lib, surf, inBase, offsetM, glassR)
	if err != nil {
		return nil, err
	}
	flatGap := make([]float64, len(inBase))
	for k, in := range inBase {
		if !in {
			flatGap[k] = math.NaN()
		}
	}
	flatIf := &contact.Field{Params: ip, GapM: flatGap, Contact: append([]bool(nil), inBase...), PressurePa: loadWeightN(job) / baseArea}
	solves := newSolveCache()
	flat, err := solves.solve(ctx, prob, flatIf, job.Water.SteadyC+kelvin, nil, true)
	if err != nil {
		return nil, fmt.Errorf("plate solve (flat twin): %w", err)
	}
	return &designBase{surf: surf, rM: rM, cellM: cell, in: hotInput{job: job, lib: lib, surf: surf, hob: hob, inBase: inBase,
		radiusM: rM, ip: ip, prob: prob, flat: flat, flatIf: flatIf, solves: solves}}, nil
}

// row runs cold concavity cMM through the hot state; it also returns the
// flat twin's heat-up time, s.
func (b *designBase) row(ctx context.Context, cMM float64) (DesignRow, float64, error) {
	s, c := b.surf, cMM/1e3
	for k, in := range b.in.inBase {
		if in {
			x, y := s.X(k%s.Nx), s.Y(k/s.Nx)
			s.ZM[k] = c * (1 - (x*x+y*y)/(b.rM*b.rM))
		}
	}
	in := b.in
	in.coldMM = cMM
	res, err := hotStage(ctx, in)
	if err != nil {
		return DesignRow{}, 0, err
	}
	b.in.cold = res.Scan // the next concavity starts from this one's solution
	h := res.Report
	d := 2 * b.rM * 1e3
	row := DesignRow{
		ColdConcavityMM: cMM, ColdConcavityPct: roundTo(100*cMM/d, 4),
		HotConcavityMM: h.ConcavityMM, HotConcavityPct: h.ConcavityPctOfDiameter, HotFlatnessMZMM: h.FlatnessMZMM,
		HotRockMM: h.Pose.RockMM, HotRocks: h.Pose.Rocks, HotTipForceN: h.Pose.TipForceN,
		HotContactAreaPct: h.Gap.ContactAreaPct, HotLossPct: h.LossPct,
		HeatupTimeS: h.HeatupTimeS, ExtraTimePct: h.ExtraTimePct, Iterations: h.Iterations, Converged: h.Converged,
	}
	if b.in.flat.PowerW > 0 {
		row.ColdLossPct = roundTo(100*(1-res.ColdScan.PowerW/b.in.flat.PowerW), 3)
	}
	v := verdict(b.in.job, hotOnlyReport(h))
	row.PassHot, row.HotReasons = v.Pass, v.Reasons
	return row, h.FlatHeatupTimeS, nil
}

// hotOnlyReport is a report holding only the hot state's figures that the
// verdict judges.
func hotOnlyReport(h *HotReport) *Report {
	return &Report{
		Geometry: &GeometryReport{ConcavityMM: h.ConcavityMM, ConcavityPctOfDiameter: h.ConcavityPctOfDiameter, FlatnessMZMM: h.FlatnessMZMM},
		Pose:     h.Pose,
		Heat:     &HeatReport{LossPct: h.LossPct},
	}
}

// construction names the job's base layers: "ss-304 3 mm" or
// "ss-304 0.5 mm + alu-1050 3 mm + ss-430 0.6 mm" (hob side first).
func construction(job Job) string {
	parts := make([]string, len(job.Pan.Layers))
	for i, l := range job.Pan.Layers {
		parts[i] = fmt.Sprintf("%s %s mm", l.Material, fmtNum(l.ThicknessMM))
	}
	return strings.Join(parts, " + ")
}

// summarise finds the pass bands and the least-loss row and states them.
func (t *DesignTable) summarise(job Job) {
	t.Bands = []DesignBand{}
	for i, r := range t.Rows {
		if !r.PassHot {
			continue
		}
		if i > 0 && t.Rows[i-1].PassHot {
			t.Bands[len(t.Bands)-1].ToMM = r.ColdConcavityMM
		} else {
			t.Bands = append(t.Bands, DesignBand{FromMM: r.ColdConcavityMM, ToMM: r.ColdConcavityMM})
		}
	}
	best := 0
	for i, r := range t.Rows {
		if r.HotLossPct < t.Rows[best].HotLossPct {
			best = i
		}
	}
	t.LeastLossColdMM = t.Rows[best].ColdConcavityMM
	var b strings.Builder
	fmt.Fprintf(&b, "%s, %.0f mm base, edge %s, %s mode, water at %.0f °C: ", t.Construction, t.DiameterMM, t.Edge, t.Mode, t.WaterC)
	first, last := t.Rows[0].ColdConcavityMM, t.Rows[len(t.Rows)-1].ColdConcavityMM
	switch len(t.Bands) {
	case 0:
		fmt.Fprintf(&b, "no cold concavity from %s to %s mm meets the tolerances hot", fmtNum(first), fmtNum(last))
	default:
		var bands []string
		for _, bd := range t.Bands {
			bands = append(bands, fmt.Sprintf("%s to %s mm", fmtNum(bd.FromMM), fmtNum(bd.ToMM)))
		}
		fmt.Fprintf(&b, "a cold concavity of %s meets the tolerances hot", strings.Join(bands, " or "))
		if t.Bands[0].FromMM == first || t.Bands[len(t.Bands)-1].ToMM == last {
			b.WriteString(" (the band reaches the end of the range swept: widen it to find its edge)")
		}
	}
	fmt.Fprintf(&b, "; the hot loss is least (%.2f %%) at a cold concavity of %s mm", t.Rows[best].HotLossPct, fmtNum(t.LeastLossColdMM))
	t.Statement = b.String()
}

// designColumns are the columns of design.csv, in DesignRow's order.
var designColumns = []string{"cold_concavity_mm", "cold_concavity_pct_of_diameter", "cold_loss_pct", "hot_concavity_mm",
	"hot_concavity_pct_of_diameter", "hot_flatness_mz_mm", "hot_rock_mm", "hot_rocks", "hot_tip_force_n", "hot_contact_area_pct",
	"hot_loss_pct", "heatup_time_s", "extra_time_pct", "iterations", "converged", "pass_hot"}

// WriteDesignCSV writes the table's rows, fixed decimals.
func WriteDesignCSV(w io.Writer, t *DesignTable) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(designColumns); err != nil {
		return err
	}
	f := num
	for _, r := range t.Rows {
		tip := ""
		if r.HotTipForceN != nil {
			tip = f(*r.HotTipForceN, 3)
		}
		rec := []string{f(r.ColdConcavityMM, 4), f(r.ColdConcavityPct, 4), f(r.ColdLossPct, 3), f(r.HotConcavityMM, 4),
			f(r.HotConcavityPct, 4), f(r.HotFlatnessMZMM, 4), f(r.HotRockMM, 4), strconv.FormatBool(r.HotRocks), tip,
			f(r.HotContactAreaPct, 3), f(r.HotLossPct, 3), f(r.HeatupTimeS, 2), f(r.ExtraTimePct, 3),
			strconv.Itoa(r.Iterations), strconv.FormatBool(r.Converged), strconv.FormatBool(r.PassHot)}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// WriteDesign writes design.csv, design.json, design.png and design.svg
// into dir (created if missing), each atomically.
func WriteDesign(dir string, t *DesignTable) error {
	if err := WriteFileAtomic(filepath.Join(dir, "design.csv"), func(w io.Writer) error { return WriteDesignCSV(w, t) }); err != nil {
		return err
	}
	for _, ext := range []string{"png", "svg"} {
		if err := WriteFileAtomic(filepath.Join(dir, "design."+ext), func(w io.Writer) error { return WriteDesignChart(w, t, ext) }); err != nil {
			return err
		}
	}
	b, err := json.MarshalIndent(t, "", "  ")
	if err != nil {
		return err
	}
	return WriteBytesAtomic(filepath.Join(dir, "design.json"), append(b, '\n'))
}

// WriteDesignChart renders the design chart as "png" or "svg": above, the
// hot concavity against the cold one, with the job's concavity limits;
// below, the hot and cold loss against the cold concavity, with the loss
// limit; the pass band's ends are marked in both.
func WriteDesignChart(w io.Writer, t *DesignTable, format string) error {
	if len(t.Rows) == 0 {
		return fmt.Errorf("design chart: no rows")
	}
	rc := &ringChart{}
	for k := range rc.legends {
		rc.legends[k] = plot.NewLegend()
		rc.legends[k].Top, rc.legends[k].Left = true, true
		rc.legends[k].TextStyle.Font.Size = vg.Points(11)
		rc.legends[k].Padding = vg.Points(3)
	}
	n := len(t.Rows)
	hotC, hotL, coldL := make(plotter.XYs, n), make(plotter.XYs, n), make(plotter.XYs, n)
	for i, r := range t.Rows {
		hotC[i] = plotter.XY{X: r.ColdConcavityMM, Y: r.HotConcavityMM}
		hotL[i] = plotter.XY{X: r.ColdConcavityMM, Y: r.HotLossPct}
		coldL[i] = plotter.XY{X: r.ColdConcavityMM, Y: r.ColdLossPct}
	}
	top, bottom := plot.New(), plot.New()
	top.Title.Text = "cold concavity to hot: " + t.Construction + ", edge " + t.Edge
	top.Y.Label.Text = "hot concavity (mm, + dished)"
	bottom.X.Label.Text = "cold concavity (mm, + dished)"
	bottom.Y.Label.Text = "heating power lost (%)"
	top.Add(plotter.NewGrid())
	bottom.Add(plotter.NewGrid())
	if err := addCurve(top, &rc.legends[0], hotC, curveRed, false, draw.BoxGlyph{}, "hot"); err != nil {
		return err
	}
	if err := addCurve(bottom, &rc.legends[1], coldL, curveGrey, true, draw.CircleGlyph{}, "cold"); err != nil {
		return err
	}
	if err := addCurve(bottom, &rc.legends[1], hotL, curveRed, false, draw.BoxGlyph{}, "hot"); err != nil {
		return err
	}
	for k, p := range []*plot.Plot{top, bottom} {
		for i, bd := range t.Bands {
			for _, x := range []float64{bd.FromMM, bd.ToMM} {
				l := newVLine(x)
				p.Add(l)
				if i == 0 && x == bd.FromMM {
					rc.legends[k].Add("hot pass band", l)
				}
			}
		}
		p.X.Tick.Marker, p.Y.Tick.Marker = shortTicks{}, shortTicks{}
	}
	rc.panels = [2]*plot.Plot{top, bottom}
	return rc.write(w, format)
}
