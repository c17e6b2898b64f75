package pipeline

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strings"

	"gapflux/contact"
	"gapflux/scan"
	"gapflux/thermal"
)

const (
	kelvin     = 273.15
	gravityMS2 = 9.80665 // standard gravity (CODATA; PHYSICS-REFERENCES 0)
	restSeed   = 0x9e3779b97f4a7c15
)

// ScanInput names one analysis.
type ScanInput struct {
	PanPath string // scan file on disk
	Name    string // how the scan is named in reports and errors (relative path in a batch)
	HobPath string // hob scan, or radial hob profile CSV (.csv with r_mm,z_mm); "" = job's hob
	Job     Job
	// InputSHA and JobSHA are the hashes to record; empty means compute.
	InputSHA, JobSHA string
	// Root is the folder the audit's paths are relative to (a batch's
	// folder; "" = as given); ReportDir is where report.json goes ("" =
	// unknown). See AuditReport.
	Root, ReportDir string

	heatupSamples int // see SurfaceInput.heatupSamples
}

// Result holds a scan's report and the per-cell fields its maps and field
// file are drawn from. All slices are indexed like Surface.ZM.
type Result struct {
	Report   *Report
	Name     string
	Raw      *scan.Surface // gridded heights before the form filter
	Form     *scan.Surface // form-filtered heights (padded grid)
	Hob      *scan.Surface // hob top on the same grid
	Pose     *contact.Pose
	GapM     []float64
	Contact  []bool
	Scan     *thermal.Solution
	Flat     *thermal.Solution
	Rings    []thermal.Ring
	RadiusM  float64
	HeaterOn bool
	// ZoneDiameterM and ZoneCentreM place the hob's heating zone in the
	// pan's frame, m (for the pictures); PartNumber and Lot come from the
	// batch manifest.
	ZoneDiameterM   float64
	ZoneCentreM     [2]float64
	PartNumber, Lot string
	// Job is the effective job the scan was analysed with.
	Job Job
	Hot *HotResult // the hot state (hot.enabled), else nil
}

// AnalyzeScan is the batch's AnalyzeFunc: it analyses task's scan and
// writes every output into task.OutDir.
func AnalyzeScan(ctx context.Context, task ScanTask, inputSHA, jobSHA string) (*Report, error) {
	res, err := Analyze(ctx, ScanInput{PanPath: task.Path, Name: task.Rel, HobPath: task.HobPath,
		Job: task.Job, InputSHA: inputSHA, JobSHA: jobSHA, Root: taskRoot(task), ReportDir: task.OutDir})
	if err != nil {
		return nil, err
	}
	setAuditManifest(res, task.Meta)
	if err := WriteOutputs(res, task.OutDir); err != nil {
		return nil, err
	}
	return res.Report, nil
}

// Analyze runs the whole chain on one scan: read and level, the quality
// gate and the base grid, the hob on that grid, then analyzeSurface and
// judge. A scan the quality gate rejects returns its result with the
// reason in its report and no error.
func Analyze(ctx context.Context, in ScanInput) (*Result, error) {
	job := in.Job
	if err := job.Validate(); err != nil {
		return nil, fmt.Errorf("job: %w", err)
	}
	if in.Name == "" {
		in.Name = in.PanPath
	}
	lib, err := job.MaterialLibrary()
	if err != nil {
		return nil, err
	}
	rep := &Report{Schema: SchemaReport, Warnings: []string{}}
	a := &analysis{in: in, job: job, lib: lib, rep: rep, res: &Result{Report: rep, Name: in.Name, Job: job}}
	if stop, err := a.readAndLevel(ctx); err != nil || stop {
		return a.stopped(err)
	}
	if stop, err := a.gateAndGrid(ctx); err != nil || stop {
		return a.stopped(err)
	}
	sin, err := a.padAndHob()
	if err != nil {
		return nil, err
	}
	if _, err := analyzeSurface(ctx, sin, rep, a.res); err != nil {
		return nil, err
	}
	if err := judge(ctx, sin, a.grid.Raw, a.filt, a.res); err != nil {
		return nil, err
	}
	return a.res, nil
}

// analysis is the state Analyze's stages hand on, in the order they fill
// it. job is the effective job: fitting to the base and the grid's
// automatic cell change it.
type analysis struct {
	in  ScanInput
	job Job
	lib []contact.Material
	rep *Report
	res *Result

	qg   *gate              // the data-quality gate (DESIGN 5.0)
	lev  *scan.Levelled     // levelled points and base radius
	grid *scan.Gridded      // gridded heights
	filt *scan.FilterResult // form-filtered heights
}

// stopped is what Analyze returns when a stage ends the analysis: the
// error, or the result a rejecting quality gate left.
func (a *analysis) stopped(err error) (*Result, error) {
	if err != nil {
		return nil, err
	}
	return a.res, nil
}

// readAndLevel reads and hashes the pan scan, records the job's hash and
// the audit, levels the points and asks the quality gate about the
// levelled base. stop is true when the gate rejects the scan.
func (a *analysis) readAndLevel(ctx context.Context) (stop bool, err error) {
	in, job, rep := a.in, a.job, a.rep
	cloud, fileRep, err := readScan(in.PanPath, in.Name, job, in.InputSHA)
	if err != nil {
		return false, err
	}
	rep.Input.Pan = fileRep
	rep.Warnings = append(rep.Warnings, cloud.Warnings...)
	if rep.Input.JobSHA256, err = inputJobSHA(in, job); err != nil {
		return false, err
	}
	if rep.Audit, err = buildAudit(in, job, a.lib, fileRep.SHA256); err != nil {
		return false, fmt.Errorf("%s: audit: %w", in.Name, err)
	}
	if err := ctx.Err(); err != nil {
		return false, err
	}
	footprint := sampleFootprint(cloud.Points) // Level reuses the cloud's storage
	lev, err := scan.Level(cloud, scan.LevelOptions{
		Face: job.Grid.Face, DiameterM: job.Grid.DiameterMM / 1e3, MaxSlopeDeg: job.Grid.MaxSlopeDeg, Reuse: true, DropNormals: true})
	a.qg = newGate(job, fileRep.Unit)
	var sizeErr *scan.SizeError
	if errors.As(err, &sizeErr) {
		// A base implausible for cookware in the unit it was read in,
		// which another unit would make plausible: the gate rejects it
		// with the units hint instead of failing the scan.
		a.qg.in.DiameterM = sizeErr.DiameterM
		if a.qg.judge(rep, false) {
			return true, nil
		}
	}
	if err != nil {
		return false, stageErr(in.Name, "levelling", err)
	}
	rep.Warnings = append(rep.Warnings, lev.Warnings...)
	rep.Input.Pan.DistinctPoints = rep.Input.Pan.Points - lev.PointsMerged
	cloud = nil
	a.lev = lev
	// The data-quality gate (DESIGN 5.0): a rejected scan stops here or
	// after gridding, before pose and heat, with the reason in its report.
	a.qg.levelled(lev, footprint, job.Quality.FootprintBandMM/1e3)
	return a.qg.judge(rep, false), nil
}

// inputJobSHA is the job hash to record: the one given, else the hash of
// the job and of the hob file it names.
func inputJobSHA(in ScanInput, job Job) (string, error) {
	if in.JobSHA != "" {
		return in.JobSHA, nil
	}
	hobSHA := ""
	if in.HobPath != "" {
		var err error
		if hobSHA, err = FileSHA256(in.HobPath); err != nil {
			return "", fmt.Errorf("hob: %w", err)
		}
	}
	return JobHash(job, hobSHA)
}

// gateAndGrid fits the job's base-sized defaults, bounds every grid,
// grids and form-filters the levelled base, measures its form and asks
// the quality gate about the grid. stop is true when the gate rejects
// the scan.
func (a *analysis) gateAndGrid(ctx context.Context) (stop bool, err error) {
	name, job, rep, lev := a.in.Name, &a.job, a.rep, a.lev
	// Water load, zone and zone power left at 0 follow the base's size.
	if rep.Input.FittedToBase, err = job.fitToBase(2 * lev.RadiusM * 1e3); err != nil {
		return false, fmt.Errorf("%s: %w", name, err)
	}
	// Every grid of the analysis is bounded before the first is allocated.
	if err := job.planGrids(lev.RadiusM).check(job); err != nil {
		return false, fmt.Errorf("%s: %w", name, err)
	}
	if err := ctx.Err(); err != nil {
		return false, err
	}
	grid, err := scan.Grid(lev, scan.GridOptions{CellM: job.Grid.CellMM / 1e3, OutlierK: job.Grid.OutlierK,
		MaxCells: job.Limits.MaxCells, MaxCellM: job.Grid.CutoffMM / 1e3 / 4})
	if err != nil {
		return false, stageErr(name, "gridding", err)
	}
	job.Grid.CellMM = grid.Raw.CellM * 1e3 // the cell used (grid.cell_mm = 0 asks for an automatic one)
	if err := checkFilter(job, "the base grid", grid.Raw.Nx, grid.Raw.Ny); err != nil {
		return false, fmt.Errorf("%s: %w", name, err)
	}
	filt, err := scan.Filter(grid.Raw, scan.FilterOptions{CutoffM: job.Grid.CutoffMM / 1e3, Method: scan.FilterMethod(job.Grid.Filter)})
	if err != nil {
		return false, stageErr(name, "form filter", err)
	}
	if err := ctx.Err(); err != nil {
		return false, err
	}
	form, err := scan.MeasureForm(filt.Form, lev.RadiusM)
	if err != nil {
		return false, stageErr(name, "form", err)
	}
	a.grid, a.filt = grid, filt
	a.res.Raw, a.res.RadiusM = grid.Raw, lev.RadiusM
	rep.Geometry = geometryReport(form, grid, filt, lev, *job)
	a.qg.gridded(grid, lev, filt)
	if a.qg.judge(rep, false) {
		return true, nil
	}
	// The levelled points (the scan's storage, some 100 MB for 2 M points
	// with normals) are not needed past here: let them go before the
	// plate solves allocate theirs.
	lev.Cloud = nil
	return false, ctx.Err()
}

// padAndHob pads the form surface to cover the glass of a heater zone
// (DESIGN 5.3), places the hob top on the pan grid and returns the input
// of analyzeSurface.
func (a *analysis) padAndHob() (SurfaceInput, error) {
	in, job, res := a.in, a.job, a.res
	offsetM := [2]float64{job.Pan.OffsetMM[0] / 1e3, job.Pan.OffsetMM[1] / 1e3}
	heater := job.heated()
	res.HeaterOn = heater
	res.ZoneDiameterM, res.ZoneCentreM = job.Hob.ZoneDiameterMM/1e3, [2]float64{-offsetM[0], -offsetM[1]}
	glassR := 0.0
	surf := a.filt.Form
	if heater {
		off := math.Hypot(offsetM[0], offsetM[1])
		glassR = glassRadiusM(&job, off, a.lev.RadiusM)
		var err error
		if surf, err = padSurface(surf, off+glassR, job.Limits.MaxCells); err != nil {
			return SurfaceInput{}, fmt.Errorf("%s: %w", in.Name, err)
		}
	}
	res.Form = surf

	// Hob top on the pan grid.
	hob, hobRep, err := hobSurface(in.HobPath, surf, offsetM, job)
	if err != nil {
		return SurfaceInput{}, err
	}
	a.rep.Input.Hob = hobRep
	res.Hob = hob
	return SurfaceInput{Name: in.Name, Job: job, Lib: a.lib, Surf: surf, Hob: hob, OffsetM: offsetM,
		GlassRM: glassR, Heater: heater, RadiusM: a.lev.RadiusM, gate: a.qg, heatupSamples: in.heatupSamples}, nil
}

// analyzeSurface runs the chain from the (padded) form surface on: rest
// pose, gap and contact, interface, plate solves of the scan and its flat
// twin, rings and heat-up, filling rep and res. It reads no file, so the
// uncertainty trials re-run it on perturbed inputs (stages.go).
func analyzeSurface(ctx context.Context, in SurfaceInput, rep *Report, res *Result) (*Result, error) {
	s := &surfaceRun{ctx: ctx, in: in, rep: rep, res: res}
	if err := s.poseAndGap(); err != nil {
		return nil, err
	}
	if err := s.interfaceFields(); err != nil {
		return nil, err
	}
	if err := s.solveBoth(); err != nil {
		return nil, err
	}
	if err := s.glassHeat(); err != nil {
		return nil, err
	}
	if err := s.heatChecks(); err != nil {
		return nil, err
	}
	if err := s.heatup(); err != nil {
		return nil, err
	}
	if err := s.hot(); err != nil {
		return nil, err
	}
	return res, nil
}

// surfaceRun is the state analyzeSurface's stages hand on, in the order
// they fill it.
type surfaceRun struct {
	ctx context.Context
	in  SurfaceInput
	rep *Report
	res *Result

	// poseAndGap
	ip         contact.InterfaceParams
	loadN      float64   // pan and water weight, N
	inBase     []bool    // cells of the base
	cellA      float64   // cell area, m²
	gap        []float64 // gap to the hob, m
	mask       []bool    // cells in contact
	pressurePa float64   // mean contact pressure, Pa

	// interfaceFields
	scanField, flatField *contact.Field
	baseArea             float64 // base area, m²
	prob                 *thermal.Problem

	// solveBoth
	chains           map[thermal.Interface]*solveChain
	steadyK          float64 // steady water temperature, K
	solScan, solFlat *thermal.Solution
	sides            [2]sidePowers        // the sensitivity table's coarse powers, scan and flat twin
	sideJobs         [2][]*sensitivityJob // their moved-setting re-solves
	sideErr          [2]error             // their errors
}

// solve solves the plate problem with iface at water temperature tWaterK
// (K), from iface's previous solution. Each interface's solves start from
// its previous solution (the heat-up samples neighbouring water
// temperatures in a fixed order, so this stays deterministic).
func (s *surfaceRun) solve(iface thermal.Interface, tWaterK float64) (*thermal.Solution, error) {
	if iface == s.flatField && s.in.Flat != nil { // a trial whose flat twin is unchanged
		return s.in.Flat.solve(tWaterK, func() (*thermal.Solution, error) {
			return s.chains[iface].solve(s.ctx, s.prob, iface, tWaterK)
		})
	}
	return s.chains[iface].solve(s.ctx, s.prob, iface, tWaterK)
}

// poseAndGap finds the rest pose on the hob, the gap and contact map and
// the contact pressure, and lets the quality gate warn about noise.
func (s *surfaceRun) poseAndGap() error {
	job, surf, hob, rep, res := s.in.Job, s.in.Surf, s.in.Hob, s.rep, s.res
	ip, err := interfaceParams(job, s.in.Lib)
	if err != nil {
		return err
	}
	s.ip = ip
	s.loadN = (job.Pan.MassKg + job.Water.MassKg) * gravityMS2
	comM := [2]float64{job.Pan.CentreOfMassMM[0] / 1e3, job.Pan.CentreOfMassMM[1] / 1e3}
	pose, err := contact.Rest(surf, hob, contact.RestOptions{
		CentreOfMassM: comM, RockLimitM: job.Grid.RockMM / 1e3, Seed: restSeed,
		BandM: contact.ContactBandSigmas * ip.SigmaM, WeightN: s.loadN, TipForceLimitN: job.Grid.RockForceN})
	if err != nil {
		return stageErr(s.in.Name, "rest pose", err)
	}
	res.Pose = pose
	rep.Pose = poseReport(pose, comM, job)
	s.gap = contact.Gap(surf, hob, pose)
	res.GapM = s.gap

	s.inBase = make([]bool, len(surf.State))
	for k := range s.inBase {
		s.inBase[k] = surf.InBase(k)
	}
	s.cellA = surf.CellM * surf.CellM
	var areaM2 float64
	s.mask, s.pressurePa, areaM2 = contact.ContactPressure(s.gap, s.inBase, s.cellA, s.loadN, ip.SigmaM)
	res.Contact = s.mask
	rep.Gap = gapReport(s.gap, s.mask, s.inBase, s.pressurePa, areaM2, ip)
	if qg := s.in.gate; qg != nil {
		qg.in.MeanGapM = rep.Gap.MeanGapMM / 1e3
		qg.judge(rep, true) // the noise check only warns
	}
	return s.ctx.Err()
}

// interfaceFields builds the interface of the scan and of its flat twin
// (full contact over the base at the mean pressure) and the plate problem
// both are solved on.
func (s *surfaceRun) interfaceFields() error {
	flatMask := append([]bool(nil), s.inBase...)
	flatGap := make([]float64, len(s.gap))
	s.baseArea = 0.0
	for k := range flatGap {
		if !s.inBase[k] {
			flatGap[k] = math.NaN()
		} else {
			s.baseArea += s.cellA
		}
	}
	s.scanField = &contact.Field{Params: s.ip, GapM: s.gap, Contact: s.mask, PressurePa: s.pressurePa}
	s.flatField = &contact.Field{Params: s.ip, GapM: flatGap, Contact: flatMask, PressurePa: s.loadN / s.baseArea}
	in := s.in
	prob, err := plateProblem(in.Job, in.Lib, in.Surf, s.inBase, in.OffsetM, in.GlassRM)
	if err != nil {
		return err
	}
	if in.Trial && prob.Heater != nil { // the sensitivity table's tolerances: loss_pct to about 1e-3 points
		prob.RelTol, prob.OuterTolK = sensitivityRelTol, sensitivityOuterTol
	}
	s.prob = prob
	return nil
}

// solveBoth solves the scan and its flat twin at the steady water
// temperature and records their warnings and the heat report. The scan
// and the flat twin are independent: each has its own solver (work
// buffers) and warm start, so their solves may run at once, each followed
// by its side's coarse solve of the sensitivity table
// (surfaceRun.sensitivitySide); then both goroutines share the
// moved-setting re-solves of both sides (sensitivityPool).
func (s *surfaceRun) solveBoth() error {
	sv := s.in.solvers
	if sv == nil {
		sv = new([2]thermal.Solver)
	}
	s.chains = map[thermal.Interface]*solveChain{s.scanField: {solver: &sv[0]}, s.flatField: {solver: &sv[1]}}
	if s.in.Warm != nil { // a trial starts from the nominal solutions
		s.chains[s.scanField].last, s.chains[s.flatField].last = s.in.Warm.Scan, s.in.Warm.Flat
	}
	s.steadyK = s.in.Job.Water.SteadyC + kelvin
	var solScan, solFlat *thermal.Solution
	steady := func(iface thermal.Interface) (*thermal.Solution, error) {
		if !s.in.Trial {
			if err := s.chains[iface].startCoarse(s.ctx, s.prob, iface, s.steadyK); err != nil {
				return nil, err
			}
		}
		return s.solve(iface, s.steadyK)
	}
	var pool *sensitivityPool
	if !s.in.Trial && hasSensitivity(s.in.Job) {
		pool = newSensitivityPool(2)
	}
	side := func(i int, iface thermal.Interface, sol **thermal.Solution) func() error {
		return func() (err error) {
			func() {
				defer pool.done() // also when the solve panics, so that the other side does not wait for ever
				*sol, err = steady(iface)
				s.sensitivitySide(pool, i, *sol, err)
			}()
			pool.work(s.ctx, s.chains[iface].solver)
			return err
		}
	}
	errScan, errFlat := both(side(0, s.scanField, &solScan), side(1, s.flatField, &solFlat))
	s.sensitivityErrors()
	if errScan != nil {
		return stageErr(s.in.Name, "plate solve", errScan)
	}
	if errFlat != nil {
		return stageErr(s.in.Name, "plate solve (flat twin)", errFlat)
	}
	s.solScan, s.solFlat = solScan, solFlat
	rep := s.rep
	s.res.Scan, s.res.Flat = solScan, solFlat
	rep.Warnings = append(rep.Warnings, prefixed("scan: ", solScan.Warnings)...)
	rep.Warnings = append(rep.Warnings, prefixed("flat twin: ", solFlat.Warnings)...)
	rep.Heat = heatReport(s.in.Job, solScan, solFlat, s.baseArea)
	return nil
}

// sensitivitySide solves side i's (0 the scan, 1 the flat twin) coarse
// problem of the sensitivity table right after its steady solve sol, which
// ended with err, in the same goroutine, and adds the side's
// moved-setting re-solves to pool, which both sides' goroutines then share
// (sensitivityPool): the side whose steady solve ends first goes on with
// re-solves while the other is still solving, instead of waiting for it
// (the two steady solves of a 2 M-point scan ended 0.06 to 0.46 s apart in
// three runs on a busy host). The powers and errors wait in s.sides,
// s.sideJobs and s.sideErr for heatChecks. Trials make no table.
func (s *surfaceRun) sensitivitySide(pool *sensitivityPool, i int, sol *thermal.Solution, err error) {
	if err != nil || s.in.Trial || !hasSensitivity(s.in.Job) {
		return
	}
	iface := s.scanField
	if i == 1 {
		iface = s.flatField
	}
	s.sides[i], s.sideJobs[i], s.sideErr[i] = sensitivityBase(s.ctx, s.in.Job, s.prob, iface, sol, s.chains[iface].solver)
	pool.add(s.sideJobs[i])
}

// sensitivityErrors sets each side's error, once all re-solves are done,
// to its coarse solve's or else to its first failed re-solve's in the
// order of the cases, as solving them one after another would report.
func (s *surfaceRun) sensitivityErrors() {
	for i, jobs := range s.sideJobs {
		for _, j := range jobs {
			if s.sideErr[i] == nil && j.err != nil {
				s.sideErr[i] = j.err
			}
		}
	}
}

// glassHeat records, in heater mode, the heat stored in the glass above
// room temperature under the scan and under its flat twin, kJ.
func (s *surfaceRun) glassHeat() error {
	if !s.in.Heater {
		return nil
	}
	job := s.in.Job
	_, name, thickMM := hobPlate(job)
	glass, err := contact.LookupMaterial(s.in.Lib, name)
	if err != nil {
		return err
	}
	perK := glass.DensityKgM3 * glass.CpJKgK * thickMM / 1e3 * s.cellA // J/K per glass cell
	stored := func(sol *thermal.Solution) *float64 {
		e := 0.0
		for _, t := range sol.TGlassK {
			if !math.IsNaN(t) {
				e += perK * (t - (job.Hob.RoomC + kelvin))
			}
		}
		e = roundTo(e/1e3, 2)
		return &e
	}
	s.rep.Heat.GlassHeatKJ, s.rep.Heat.FlatGlassHeatKJ = stored(s.solScan), stored(s.solFlat)
	return nil
}

// heatChecks adds the sensitivity table (not in a trial), the gap
// conductance, the interface and zone-power warnings and the per-ring
// flux to the report.
func (s *surfaceRun) heatChecks() error {
	job, rep, solScan, solFlat := s.in.Job, s.rep, s.solScan, s.solFlat
	// The trials need no sensitivity table, and loss_pct needs a flat twin
	// that draws power.
	if !s.in.Trial && hasSensitivity(job) && solFlat.PowerW > 0 {
		for _, err := range s.sideErr {
			if err != nil {
				return fmt.Errorf("%s: %w", s.in.Name, err)
			}
		}
		rep.Heat.Sensitivity = sensitivityRows(job, solScan, solFlat, s.sides)
	}
	fillGapConductance(rep.Gap, solScan, s.inBase)
	hobT := solScan.TGlassK
	if s.prob.Temperature != nil {
		hobT = s.prob.Temperature.TopK
	}
	rep.Warnings = append(rep.Warnings, interfaceWarnings(s.scanField, hobT, solScan.TPanK, rep.Heat.SolidPct)...)
	rep.Warnings = append(rep.Warnings, glassWarnings(job, rep.Heat)...)
	if job.Hob.Mode == "temperature" && !job.Hob.PowerLimited {
		rated := job.Hob.RatedPowerDensityKW
		if rated == 0 {
			rated = job.Hob.HeaterPowerW / (math.Pi * math.Pow(job.Hob.ZoneDiameterMM/2e3, 2)) / 1e3
		}
		if rep.Heat.FlatMeanFluxKWM2 > rated {
			rep.Warnings = append(rep.Warnings, fmt.Sprintf("temperature mode: the flat twin draws %.0f kW/m², beyond the rated %.0f kW/m² of a %.0f W, %.0f mm zone; a real zone could not hold the hob at %.0f °C, so losses are overstated",
				rep.Heat.FlatMeanFluxKWM2, rated, job.Hob.HeaterPowerW, job.Hob.ZoneDiameterMM, job.Hob.TemperatureC))
		}
	}

	rings, err := thermal.Rings(thermal.RingInput{Grid: s.prob.Grid, InBase: s.inBase, WidthM: job.Grid.RingMM / 1e3,
		GapM: s.gap, Contact: s.mask, Scan: solScan, Flat: solFlat})
	if err != nil {
		return stageErr(s.in.Name, "rings", err)
	}
	s.res.Rings = rings
	rep.Rings = ringReports(rings)
	return nil
}

// heatup times the heat-up of the water load under the scan and its flat
// twin. Heat into the pan and power drawn are functions of the water
// temperature. With a fixed water-side h the base power is nearly linear
// in the water temperature: a line through the steady solve and the power
// at the start temperature (startPower) is used; the curved natural and
// boiling water sides are solved at each sample. A test input may ask for
// a number of solved samples instead (heatupSamples).
func (s *surfaceRun) heatup() error {
	job, steadyK := s.in.Job, s.steadyK
	steady := map[thermal.Interface]*thermal.Solution{s.scanField: s.solScan, s.flatField: s.solFlat}
	fromK := job.Water.FromC + kelvin
	samples := s.in.heatupSamples
	power := func(iface thermal.Interface) thermal.PowerFunc {
		if samples == 0 && job.Water.Side == "fixed" && math.Abs(steadyK-fromK) >= 5 {
			return s.linePower(iface, steady[iface], fromK)
		}
		return func(tWaterK float64) (float64, float64, error) {
			sol, err := s.solve(iface, tWaterK)
			if err != nil {
				return 0, 0, err
			}
			return sol.PowerW, sourceW(sol), nil
		}
	}
	hu, err := heatupReport(s.ctx, job, s.in.Lib, s.in.RadiusM, power, s.scanField, s.flatField, samples)
	if err != nil {
		return stageErr(s.in.Name, "heat-up", err)
	}
	s.rep.Heatup = hu.report
	s.rep.Warnings = append(s.rep.Warnings, hu.warnings...)
	return nil
}

// linePower returns the power into the pan and the power drawn, W, as
// linear functions of the water temperature through the steady solution
// and the start temperature fromK, K (startPower, found at the first call).
func (s *surfaceRun) linePower(iface thermal.Interface, steady *thermal.Solution, fromK float64) thermal.PowerFunc {
	var start *[2]float64 // power into the pan and drawn at fromK, W
	return func(tWaterK float64) (float64, float64, error) {
		if start == nil {
			panW, srcW, err := s.startPower(iface, steady, fromK)
			if err != nil {
				return 0, 0, err
			}
			start = &[2]float64{panW, srcW}
		}
		return alongLine(tWaterK, fromK, s.steadyK, start[0], steady.PowerW), alongLine(tWaterK, fromK, s.steadyK, start[1], sourceW(steady)), nil
	}
}

// alongLine returns, at the water temperature tK, the line through atFrom
// at fromK and atSteady at steadyK (K): the heat-up's power with a fixed
// water side, cold (linePower) and hot (hotHeatup).
func alongLine(tK, fromK, steadyK, atFrom, atSteady float64) float64 {
	f := (tK - fromK) / (steadyK - fromK)
	return atFrom + f*(atSteady-atFrom)
}

// sourceW is the power a solution draws from the hob, W: the heater's in
// heater mode, else the power into the pan.
func sourceW(sol *thermal.Solution) float64 {
	if sol.HeaterW > 0 {
		return sol.HeaterW
	}
	return sol.PowerW
}

// startPower returns the power into the pan and the power drawn, W, with
// the water at fromK, K, for the interface iface whose steady solution on
// the solve's grid is steady. On a grid finer than 2 mm it is the steady
// power plus the change from the steady to the start temperature on the
// grid coarsened to 2 mm (coarseFactor, coarseStartPower): the change, not
// the level, comes from the coarse grid; a Monte Carlo trial whose flat
// twin is unchanged finds the flat twin's once. On a grid no finer than
// 2 mm, or when a coarse solve fails, the start temperature is solved on
// the grid itself. The 2 mm grid is our choice, measured on the demo's
// bases on 1 mm and 0.5 mm analysis grids: heat-up times within 0.1 % of
// seven samples solved on the analysis grid (0.04 % with the start solved
// there too), at a sixteenth of the cells on a 0.5 mm grid.
func (s *surfaceRun) startPower(iface thermal.Interface, steady *thermal.Solution, fromK float64) (panW, srcW float64, err error) {
	if f := coarseFactor(s.prob.Grid); f >= 2 {
		coarse := func() (float64, float64, error) { return s.coarseStartPower(iface, steady, fromK, f) }
		if iface == s.flatField && s.in.Flat != nil {
			panW, srcW, err = s.in.Flat.startPower(fromK, coarse)
		} else {
			panW, srcW, err = coarse()
		}
		if err == nil || s.ctx.Err() != nil {
			return panW, srcW, err
		}
	}
	sol, err := s.solve(iface, fromK) // s.solve reuses an unchanged flat twin's solve itself
	if err != nil {
		return 0, 0, err
	}
	return sol.PowerW, sourceW(sol), nil
}

// coarseStartPower is startPower on the grid coarsened f-fold (coarsen):
// the steady powers plus the coarse grid's change between the steady and
// the start temperature, both coarse solves to the solve's tolerances.
func (s *surfaceRun) coarseStartPower(iface thermal.Interface, steady *thermal.Solution, fromK float64, f int) (panW, srcW float64, err error) {
	sv := s.chains[iface].solver
	c := coarsen(s.prob, f, iface, steady)
	c.TWaterK = s.steadyK
	atSteady, err := sv.SolveContext(s.ctx, c)
	if err != nil {
		return 0, 0, fmt.Errorf("coarse solve at the steady temperature: %w", err)
	}
	c.TWaterK = fromK
	c.InitialTPanK, c.InitialTGlassK, c.InitialDutyPct = atSteady.TPanK, atSteady.TGlassK, atSteady.DutyPct
	atStart, err := sv.SolveContext(s.ctx, c)
	if err != nil {
		return 0, 0, fmt.Errorf("coarse solve at the start temperature: %w", err)
	}
	return steady.PowerW + atStart.PowerW - atSteady.PowerW, sourceW(steady) + sourceW(atStart) - sourceW(atSteady), nil
}

// hot runs the hot stage when the job asks for it (not in a trial): the
// base as it is when cooking (issue 11).
func (s *surfaceRun) hot() error {
	in, rep, res := s.in, s.rep, s.res
	if !in.Job.Hot.Enabled || in.Trial {
		return nil
	}
	var err error
	if res.Hot, err = hotStage(s.ctx, hotInput{job: in.Job, lib: in.Lib, surf: in.Surf, hob: in.Hob, inBase: s.inBase, radiusM: in.RadiusM,
		ip: s.ip, prob: s.prob, flat: s.solFlat, flatIf: s.flatField, cold: s.solScan, coldSolved: true, coldMM: rep.Geometry.ConcavityMM}); err != nil {
		return fmt.Errorf("%s: hot state: %w", in.Name, err)
	}
	rep.Hot, rep.Warnings = res.Hot.Report, append(rep.Warnings, res.Hot.Warnings...)
	return nil
}

func prefixed(p string, ws []string) []string {
	out := make([]string, len(ws))
	for i, w := range ws {
		out[i] = p + w
	}
	return out
}

// readScan opens, hashes and decodes a scan, bounded by the job's limits.
// A known SHA-256 (a batch hashed the file already) is taken as it is.
func readScan(path, name string, job Job, knownSHA string) (*scan.Cloud, FileReport, error) {
	var fr FileReport
	f, err := os.Open(path)
	if err != nil {
		return nil, fr, fmt.Errorf("%s: %w", name, errors.Unwrap(err))
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, fr, fmt.Errorf("%s: %w", name, err)
	}
	if mb := float64(st.Size()) / (1 << 20); mb > job.Limits.MaxFileMB {
		return nil, fr, fmt.Errorf("%s: file is %.0f MB, above limits.max_file_mb = %.0f", name, mb, job.Limits.MaxFileMB)
	}
	h := sha256.New()
	var r io.Reader = f
	if knownSHA == "" {
		r = io.TeeReader(f, h)
	}
	size := st.Size()
	if strings.HasSuffix(strings.ToLower(path), ".gz") {
		size = -1
	}
	cloud, err := scan.Read(r, scan.ReadOptions{Name: name, SizeBytes: size,
		Unit: job.Grid.Units, MaxPoints: job.Limits.MaxPoints})
	if errors.Is(err, scan.ErrTooManyPoints) {
		return nil, fr, fmt.Errorf("%w (the limit is limits.max_points = %d, or --max-points)", err, job.Limits.MaxPoints)
	}
	if err != nil {
		return nil, fr, err
	}
	sha := knownSHA
	if sha == "" {
		if _, err := io.Copy(h, f); err != nil {
			return nil, fr, fmt.Errorf("%s: %w", name, err)
		}
		sha = hex.EncodeToString(h.Sum(nil))
	}
	fr = FileReport{Path: name, Format: cloud.Format, SHA256: sha,
		Points: len(cloud.Points), Triangles: len(cloud.Triangles), Unit: cloud.Unit, UnitSource: cloud.UnitSource}
	return cloud, fr, nil
}

// padSurface embeds s in a larger grid, on the same cell lattice, covering
// at least [−halfM, halfM]² about the base centre; new cells are Outside. A
// grid of more than maxCells cells is an error, before it is allocated
// (the job's grid plan checks it first with the job's keys named).
func padSurface(s *scan.Surface, halfM float64, maxCells int) (*scan.Surface, error) {
	extra := func(lo, hi float64) (int, int, error) {
		a := math.Ceil((lo + halfM) / s.CellM)
		b := math.Ceil((halfM - hi) / s.CellM)
		if !(a < 1<<31 && b < 1<<31) { // also NaN
			return 0, 0, fmt.Errorf("padding of %.3g m on a %.3g m cell is out of range", halfM, s.CellM)
		}
		return max(int(a), 0), max(int(b), 0), nil
	}
	x0, x1, err := extra(s.X0M, s.X(s.Nx-1))
	if err != nil {
		return nil, err
	}
	y0, y1, err := extra(s.Y0M, s.Y(s.Ny-1))
	if err != nil {
		return nil, err
	}
	if x0+x1+y0+y1 == 0 {
		return s, nil
	}
	nx, ny := s.Nx+x0+x1, s.Ny+y0+y1
	if float64(nx)*float64(ny) > float64(maxCells) {
		return nil, fmt.Errorf("the heater-mode glass grid would be %d×%d cells (%s), above limits.max_cells = %d; use a larger grid.cell_mm or raise limits.max_cells",
			nx, ny, countText(float64(nx)*float64(ny)), maxCells)
	}
	p := scan.NewSurface(nx, ny, s.CellM, s.X0M-float64(x0)*s.CellM, s.Y0M-float64(y0)*s.CellM)
	for j := 0; j < s.Ny; j++ {
		for i := 0; i < s.Nx; i++ {
			k, q := s.Index(i, j), p.Index(i+x0, j+y0)
			p.ZM[q], p.State[q] = s.ZM[k], s.State[k]
		}
	}
	return p, nil
}
