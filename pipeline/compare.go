package pipeline

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"

	"gapflux/scan"
	"gapflux/scan/align"
)

// SchemaCompare names the layout of compare.json.
const SchemaCompare = "gapflux.compare/1"

// DefaultDiameterTolMM is the largest difference of the two bases'
// diameters, mm, for which Compare takes them for the same base (our
// choice: the footprint circle fit repeats to a few tenths of a millimetre
// on one base; 2 mm apart is another base or another scale).
const DefaultDiameterTolMM = 2.0

// CompareInput names the two scans of one base to compare. Both are
// analysed with Job (and HobPath).
type CompareInput struct {
	A, B    string // scan files: A the reference (before), B the later scan
	HobPath string
	Job     Job
	// DiameterTolMM bounds |diameter B − diameter A|, mm; 0 means
	// DefaultDiameterTolMM.
	DiameterTolMM float64
	// Align tunes the alignment; the zero value uses align's defaults.
	Align align.Options
}

// Comparison is compare.json: B against A in A's base frame.
type Comparison struct {
	Schema    string         `json:"schema"`
	A         FileReport     `json:"a"`
	B         FileReport     `json:"b"`
	Alignment AlignmentFacts `json:"alignment"`
	// PermanentSetMM is concavity_mm of B minus that of A, mm: positive
	// when B is more dished than A.
	PermanentSetMM  float64        `json:"permanent_set_mm"`
	PermanentSetUMM *float64       `json:"permanent_set_u_mm"` // null unless both reports carry an uncertainty
	HeightDiff      DiffFacts      `json:"height_change"`
	Figures         []FigureChange `json:"figures"`
	Rings           []RingChange   `json:"rings"`
	Warnings        []string       `json:"warnings"`
}

// AlignmentFacts is the fitted transform: the place at p in A's frame is at
// R(angle)·p + shift in B's frame.
type AlignmentFacts struct {
	AngleDeg     *float64 `json:"angle_deg"` // null when the base's form does not fix it
	AngleDefined bool     `json:"angle_defined"`
	AngleNote    string   `json:"angle_note"`
	// AnglePeriodDeg is 360° over the form's rotational symmetry: the
	// turn is known modulo this (180° for a saddle or a one-way bend).
	AnglePeriodDeg *float64   `json:"angle_period_deg"`
	ShiftMM        [2]float64 `json:"shift_mm"`
	// SwingUM is the range of the height RMS over a full turn, µm: how
	// strongly the form fixes the angle.
	SwingUM     float64 `json:"swing_um"`
	CommonCells int     `json:"common_cells"`
}

// DiffFacts sums up the height difference map (B − A, filtered form).
type DiffFacts struct {
	RMSUM  float64 `json:"rms_um"`  // about the mean
	MeanUM float64 `json:"mean_um"` // a piston between the two levellings
	MinUM  float64 `json:"min_um"`  // after the mean is removed
	MaxUM  float64 `json:"max_um"`
}

// FigureChange is one headline figure of both reports and its change
// B − A, in the figure's own unit (the suffix of its name). UChange is the
// standard uncertainty of the change, √(u_A² + u_B²) for independent scans
// (JCGM 100:2008, eq. 10), when both reports carry an uncertainty.
type FigureChange struct {
	Figure  string   `json:"figure"`
	A       *float64 `json:"a"`
	B       *float64 `json:"b"`
	Change  *float64 `json:"change"`
	UChange *float64 `json:"u_change"`
}

// RingChange is one ring of both reports (rings are about the base axis,
// so they need no alignment).
type RingChange struct {
	RInMM            float64 `json:"r_in_mm"`
	ROutMM           float64 `json:"r_out_mm"`
	MeanGapAMM       float64 `json:"mean_gap_a_mm"`
	MeanGapBMM       float64 `json:"mean_gap_b_mm"`
	MeanGapChangeMM  float64 `json:"mean_gap_change_mm"`
	ContactChangePct float64 `json:"contact_change_pct"`
	FluxAKWM2        float64 `json:"flux_a_kw_m2"`
	FluxBKWM2        float64 `json:"flux_b_kw_m2"`
	FluxChangeKWM2   float64 `json:"flux_change_kw_m2"`
	PowerChangeW     float64 `json:"power_change_w"`
	FluxChangeOfAPct float64 `json:"flux_change_pct"`
}

// CompareResult holds compare.json and the per-cell difference maps on A's
// grid (NaN outside the common base).
type CompareResult struct {
	Comparison  *Comparison
	Grid        *scan.Surface // A's form grid
	RadiusM     float64
	Names       [2]string // how the maps name A and B
	Inputs      [2]string // A and B as given (scan files or report folders)
	HeightDiffM []float64 // B − A − mean, m
	GapDiffM    []float64 // gap B − gap A, m
}

// headlineFigures are the report figures whose change Compare lists, as
// section and key of report.json.
var headlineFigures = [][2]string{
	{"geometry", "diameter_mm"}, {"geometry", "concavity_mm"}, {"geometry", "flatness_mz_mm"},
	{"geometry", "flatness_ls_mm"}, {"pose", "tilt_deg"}, {"pose", "rock_mm"}, {"pose", "tip_force_n"},
	{"gap", "contact_area_pct"}, {"gap", "mean_gap_mm"}, {"gap", "max_gap_mm"},
	{"heat", "power_w"}, {"heat", "mean_flux_kw_m2"}, {"heat", "loss_pct"},
	{"heatup", "time_s"}, {"heatup", "extra_time_pct"}, {"heatup", "extra_energy_kj"},
}

// Compare analyses both scans with the same job (or reads a report folder
// of an earlier analysis: report.json and fields.vti), aligns B onto A
// (rotation about the base axis and a small shift, package align), and
// returns the differences.
func Compare(ctx context.Context, in CompareInput) (*CompareResult, error) {
	tol := in.DiameterTolMM
	if tol == 0 {
		tol = DefaultDiameterTolMM
	}
	if !(tol > 0 && tol <= 50) {
		return nil, fmt.Errorf("compare: diameter tolerance %g mm out of range (0, 50]", tol)
	}
	for _, p := range []string{in.A, in.B} {
		if _, err := os.Stat(p); err != nil {
			return nil, fmt.Errorf("%s: not a readable scan file or report folder; check the path", p)
		}
	}
	var sides [2]*compareSide
	for i, p := range []string{in.A, in.B} {
		s, err := loadSide(ctx, p, in)
		if err != nil {
			return nil, err
		}
		sides[i] = s
	}
	a, b := sides[0], sides[1]
	dA, dB := a.rep.Geometry.DiameterMM, b.rep.Geometry.DiameterMM
	if math.Abs(dA-dB) > tol {
		return nil, fmt.Errorf("%s is %.1f mm across and %s %.1f mm: more than %.1f mm apart, so not two scans of one base; check the files, or their units (--units)",
			in.A, dA, in.B, dB, tol)
	}
	radius := math.Min(a.radiusM, b.radiusM)
	fit, err := align.Fit(ctx, a.form, b.form, radius, in.Align)
	if err != nil {
		return nil, fmt.Errorf("compare %s with %s: %w", in.A, in.B, err)
	}
	c := &Comparison{Schema: SchemaCompare, A: a.rep.Input.Pan, B: b.rep.Input.Pan, Warnings: []string{}}
	c.Alignment = alignmentFacts(fit)
	if !fit.Defined {
		c.Warnings = append(c.Warnings, c.Alignment.AngleNote)
	}
	if ja, jb := a.rep.Input.JobSHA256, b.rep.Input.JobSHA256; ja != jb && (a.folder || b.folder) {
		c.Warnings = append(c.Warnings, "the two analyses used different jobs (their job hashes differ): a change of a heat figure may come from the job, not the base; analyse both scans with one job")
	}
	out := &CompareResult{Comparison: c, Grid: a.form, RadiusM: radius}
	out.Names = [2]string{filepath.Base(in.A), filepath.Base(in.B)}
	out.Inputs = [2]string{in.A, in.B}
	out.HeightDiffM, c.HeightDiff = heightDiff(a.form, b.form, fit, radius)
	bGap := align.Resample(b.form, b.gapM, a.form, fit)
	out.GapDiffM = make([]float64, len(bGap))
	for k := range bGap {
		out.GapDiffM[k] = bGap[k] - a.gapM[k] // NaN propagates outside the common base
		if math.IsNaN(out.HeightDiffM[k]) {
			out.GapDiffM[k] = math.NaN()
		}
	}
	compareReports(c, [2]map[string]any{a.repMap, b.repMap}, a.rep, b.rep)
	return out, nil
}

// compareSide is one side of a comparison: the filtered form and the gap
// on its grid, the base radius and the report.
type compareSide struct {
	form    *scan.Surface
	gapM    []float64
	radiusM float64
	rep     *Report
	repMap  map[string]any
	folder  bool // read from a report folder
}

// loadSide analyses the scan at path, or reads the report folder at path.
func loadSide(ctx context.Context, path string, in CompareInput) (*compareSide, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("%s: not a readable scan file or report folder; check the path", path)
	}
	if st.IsDir() {
		return loadReportFolder(path, in.Job.Limits.MaxCells)
	}
	r, err := Analyze(ctx, ScanInput{PanPath: path, Name: path, HobPath: in.HobPath, Job: in.Job})
	if err != nil {
		return nil, err
	}
	if r.Report.Rejected() || r.Form == nil || r.GapM == nil || r.Report.Geometry == nil {
		return nil, fmt.Errorf("%s: the scan was rejected by the data-quality checks (see its report: gapflux analyze %s); compare needs two complete analyses", path, path)
	}
	m, err := reportMap(r.Report)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return &compareSide{form: r.Form, gapM: r.GapM, radiusM: r.RadiusM, rep: r.Report, repMap: m}, nil
}

func reportMap(r *Report) (map[string]any, error) {
	raw, err := json.Marshal(r)
	if err != nil {
		return nil, err
	}
	var m map[string]any
	return m, json.Unmarshal(raw, &m)
}

// loadReportFolder reads report.json and fields.vti (height_um,
// cell_state, gap_mm) of an earlier analysis.
func loadReportFolder(dir string, maxCells int) (*compareSide, error) {
	rp := filepath.Join(dir, "report.json")
	raw, err := readBounded(rp, maxReportBytes)
	if err != nil {
		return nil, fmt.Errorf("%s: %w; a report folder holds the report.json and fields.vti of gapflux analyze --out", dir, err)
	}
	s := &compareSide{rep: &Report{}, folder: true}
	if err := json.Unmarshal(raw, s.rep); err != nil {
		return nil, fmt.Errorf("%s: not a gapflux report: %v", rp, err)
	}
	if err := json.Unmarshal(raw, &s.repMap); err != nil {
		return nil, fmt.Errorf("%s: not a gapflux report: %v", rp, err)
	}
	if g := s.rep.Geometry; g == nil || s.rep.Rejected() || !(g.DiameterMM > 0 && g.DiameterMM < 1e4) {
		return nil, fmt.Errorf("%s: the report holds no complete analysis (rejected, or no geometry); compare needs two", rp)
	}
	s.radiusM = s.rep.Geometry.DiameterMM / 2e3
	v, err := ReadVTI(filepath.Join(dir, "fields.vti"), maxCells, "height_um", "cell_state", "gap_mm")
	if err != nil {
		return nil, fmt.Errorf("%w (a report folder written with --fields off cannot be compared: analyse again with --fields compressed)", err)
	}
	g := v.Grid
	s.form = scan.NewSurface(g.Nx, g.Ny, g.SpacingMM/1e3, g.X0MM/1e3, g.Y0MM/1e3)
	s.gapM = make([]float64, g.Nx*g.Ny)
	h, st, gap := v.Fields["height_um"], v.Fields["cell_state"], v.Fields["gap_mm"]
	for k := range s.gapM {
		s.gapM[k] = math.NaN()
		if st[k] == 0 || math.IsNaN(h[k]) || math.IsInf(h[k], 0) {
			continue
		}
		s.form.State[k] = scan.CellState(min(st[k], float64(scan.Filled)))
		s.form.ZM[k] = h[k] / 1e6
		if !math.IsInf(gap[k], 0) {
			s.gapM[k] = gap[k] / 1e3
		}
	}
	return s, nil
}

// readBounded reads a whole file of at most maxBytes.
func readBounded(path string, maxBytes int64) ([]byte, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	raw, err := readAtMost(f, maxBytes)
	if errors.Is(err, errTooLarge) {
		return nil, fmt.Errorf("%s: larger than %d bytes", path, maxBytes)
	}
	return raw, err
}

// errTooLarge is readAtMost's error for a reader holding more than asked.
var errTooLarge = errors.New("larger than the limit")

// readAtMost reads all of r when it holds at most maxBytes; with more it
// stops after maxBytes+1 bytes and fails with errTooLarge.
func readAtMost(r io.Reader, maxBytes int64) ([]byte, error) {
	b, err := io.ReadAll(io.LimitReader(r, maxBytes+1))
	if err != nil {
		return nil, err
	}
	if int64(len(b)) > maxBytes {
		return nil, errTooLarge
	}
	return b, nil
}

func alignmentFacts(fit *align.Result) AlignmentFacts {
	f := AlignmentFacts{AngleDefined: fit.Defined, SwingUM: roundTo(fit.SwingM*1e6, 3), CommonCells: fit.CommonCells,
		ShiftMM: [2]float64{roundTo(fit.ShiftM[0]*1e3, 4), roundTo(fit.ShiftM[1]*1e3, 4)}}
	if fit.Defined {
		deg := roundTo(fit.AngleRad*180/math.Pi, 3)
		period := 360 / float64(fit.Fold)
		f.AngleDeg, f.AnglePeriodDeg = &deg, &period
		f.AngleNote = "fitted: the height difference over the common base is least at this turn of B about the base axis (counter-clockwise seen from inside the pan)"
		if fit.Fold > 1 {
			f.AngleNote += fmt.Sprintf("; the form looks the same turned by %.0f°, so the turn is known only modulo %.0f°", period, period)
		}
	} else {
		f.AngleNote = fmt.Sprintf("undefined: the base is rotationally symmetric to within %.1f µm (the height difference changes by %.2f µm over a full turn), so the turn between the scans cannot be told; compared as scanned (0°)",
			align.DefaultFlatTolM*1e6, fit.SwingM*1e6)
	}
	return f
}

// heightDiff returns B − A of the filtered forms on A's grid, with the
// mean (a piston between the two levellings) removed, and its summary.
func heightDiff(a, b *scan.Surface, fit *align.Result, radiusM float64) ([]float64, DiffFacts) {
	d := align.Resample(b, b.ZM, a, fit)
	var sum, n float64
	for k := range d {
		x, y := a.X(k%a.Nx), a.Y(k/a.Nx)
		if d[k] = d[k] - a.ZM[k]; math.Hypot(x, y) > radiusM {
			d[k] = math.NaN()
		}
		if !math.IsNaN(d[k]) {
			sum += d[k]
			n++
		}
	}
	mean := sum / math.Max(n, 1)
	lo, hi, ss := math.Inf(1), math.Inf(-1), 0.0
	for k := range d {
		if math.IsNaN(d[k]) {
			continue
		}
		d[k] -= mean
		lo, hi, ss = math.Min(lo, d[k]), math.Max(hi, d[k]), ss+d[k]*d[k]
	}
	if n == 0 {
		return d, DiffFacts{}
	}
	return d, DiffFacts{RMSUM: roundTo(math.Sqrt(ss/n)*1e6, 3), MeanUM: roundTo(mean*1e6, 3),
		MinUM: roundTo(lo*1e6, 3), MaxUM: roundTo(hi*1e6, 3)}
}

// compareReports fills the figure and ring changes and the permanent set
// from the two reports, read through their JSON (m) so that a section
// added later (an uncertainty section) is picked up by name.
func compareReports(c *Comparison, m [2]map[string]any, a, b *Report) {
	for _, f := range headlineFigures {
		fc := FigureChange{Figure: f[1], A: figure(m[0], f[0], f[1]), B: figure(m[1], f[0], f[1])}
		if fc.A != nil && fc.B != nil {
			d := roundTo(*fc.B-*fc.A, 6)
			fc.Change = &d
			ua, ub := uncertainty(m[0], f[1]), uncertainty(m[1], f[1])
			if ua != nil && ub != nil {
				u := roundTo(math.Hypot(*ua, *ub), 6)
				fc.UChange = &u
			}
		}
		if f[1] == "concavity_mm" && fc.Change != nil {
			c.PermanentSetMM, c.PermanentSetUMM = *fc.Change, fc.UChange
		}
		c.Figures = append(c.Figures, fc)
	}
	c.Rings = ringChanges(a.Rings, b.Rings)
	if len(a.Rings) != len(b.Rings) {
		c.Warnings = append(c.Warnings, fmt.Sprintf("the scans have %d and %d rings; only the %d common rings are compared", len(a.Rings), len(b.Rings), len(c.Rings)))
	}
}

// figure returns m[section][key] when it is a number.
func figure(m map[string]any, section, key string) *float64 {
	s, _ := m[section].(map[string]any)
	v, ok := s[key].(float64)
	if !ok || math.IsNaN(v) {
		return nil
	}
	return &v
}

// uncertainty returns the standard uncertainty of figure key from the
// report's "uncertainty" section when there is one: a number under the
// figure's name, or an object holding "u" (standard) or "expanded" and "k".
func uncertainty(m map[string]any, key string) *float64 {
	s, _ := m["uncertainty"].(map[string]any)
	switch v := s[key].(type) {
	case float64:
		return &v
	case map[string]any:
		if u, ok := v["u"].(float64); ok {
			return &u
		}
		if e, ok := v["expanded"].(float64); ok {
			if k, ok := v["k"].(float64); ok && k > 0 {
				u := e / k
				return &u
			}
		}
	}
	return nil
}

// ringChanges pairs the rings of A and B by index (both use the job's ring
// width from the centre).
func ringChanges(a, b []RingReport) []RingChange {
	n := min(len(a), len(b))
	out := make([]RingChange, 0, n)
	for i := range n {
		ra, rb := a[i], b[i]
		rc := RingChange{RInMM: ra.RInMM, ROutMM: math.Min(ra.ROutMM, rb.ROutMM),
			MeanGapAMM: ra.MeanGapMM, MeanGapBMM: rb.MeanGapMM, MeanGapChangeMM: roundTo(rb.MeanGapMM-ra.MeanGapMM, 6),
			ContactChangePct: roundTo(rb.ContactPct-ra.ContactPct, 3),
			FluxAKWM2:        ra.FluxKWM2, FluxBKWM2: rb.FluxKWM2, FluxChangeKWM2: roundTo(rb.FluxKWM2-ra.FluxKWM2, 6),
			PowerChangeW: roundTo(rb.PowerW-ra.PowerW, 4)}
		if ra.FluxKWM2 != 0 {
			rc.FluxChangeOfAPct = roundTo(100*(rb.FluxKWM2-ra.FluxKWM2)/ra.FluxKWM2, 3)
		}
		out = append(out, rc)
	}
	return out
}

// WriteCompareOutputs writes compare.json, compare.csv (the figures),
// compare_rings.csv, the difference maps height_change and gap_change
// (PNG and SVG) and compare.html (the page of them all) into dir, each
// atomically.
func WriteCompareOutputs(r *CompareResult, dir string) error {
	c := r.Comparison
	raw, err := json.MarshalIndent(c, "", "  ")
	if err != nil {
		return err
	}
	raw = append(raw, '\n')
	if err := WriteFileAtomic(filepath.Join(dir, "compare.json"), func(w io.Writer) error {
		_, err := w.Write(raw)
		return err
	}); err != nil {
		return err
	}
	if err := WriteFileAtomic(filepath.Join(dir, "compare.csv"), func(w io.Writer) error {
		return writeFigureCSV(w, c)
	}); err != nil {
		return err
	}
	if err := WriteFileAtomic(filepath.Join(dir, "compare_rings.csv"), func(w io.Writer) error {
		return writeRingChangeCSV(w, c.Rings)
	}); err != nil {
		return err
	}
	return writeChangeMaps(dir, r)
}

func fmtOpt(v *float64) string {
	if v == nil {
		return ""
	}
	return strconv.FormatFloat(*v, 'g', 10, 64)
}

func writeFigureCSV(w io.Writer, c *Comparison) error {
	cw := csv.NewWriter(w)
	cw.Write([]string{"figure", "a", "b", "change", "u_change"})
	for _, f := range c.Figures {
		cw.Write([]string{f.Figure, fmtOpt(f.A), fmtOpt(f.B), fmtOpt(f.Change), fmtOpt(f.UChange)})
	}
	ps := c.PermanentSetMM
	cw.Write([]string{"permanent_set_mm", "", "", fmtOpt(&ps), fmtOpt(c.PermanentSetUMM)})
	hd := c.HeightDiff.RMSUM
	cw.Write([]string{"height_change_rms_um", "", "", fmtOpt(&hd), ""})
	cw.Flush()
	return cw.Error()
}

func writeRingChangeCSV(w io.Writer, rings []RingChange) error {
	cw := csv.NewWriter(w)
	cw.Write([]string{"r_in_mm", "r_out_mm", "mean_gap_a_mm", "mean_gap_b_mm", "mean_gap_change_mm", "contact_change_pct",
		"flux_a_kw_m2", "flux_b_kw_m2", "flux_change_kw_m2", "flux_change_pct", "power_change_w"})
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', 10, 64) }
	for _, r := range rings {
		cw.Write([]string{f(r.RInMM), f(r.ROutMM), f(r.MeanGapAMM), f(r.MeanGapBMM), f(r.MeanGapChangeMM), f(r.ContactChangePct),
			f(r.FluxAKWM2), f(r.FluxBKWM2), f(r.FluxChangeKWM2), f(r.FluxChangeOfAPct), f(r.PowerChangeW)})
	}
	cw.Flush()
	return cw.Error()
}

// changeMap is one difference map of a comparison.
type changeMap struct {
	name string // file stem
	spec *MapSpec
}

// changeMaps lays out the height and gap change maps on a colour range
// symmetric about zero, so zero sits mid-scale.
func changeMaps(r *CompareResult) []changeMap {
	s := r.Grid
	maps := []struct {
		name, title, unit string
		v                 []float64
		scale             float64
	}{
		{"height_change", fmt.Sprintf("height change %s − %s (mean removed)", r.Names[1], r.Names[0]), "height change (µm)", r.HeightDiffM, 1e6},
		{"gap_change", fmt.Sprintf("gap change %s − %s", r.Names[1], r.Names[0]), "gap change (mm)", r.GapDiffM, 1e3},
	}
	var out []changeMap
	for _, m := range maps {
		vals := make([]float64, len(m.v))
		lim := 0.0
		for k, v := range m.v {
			vals[k] = v * m.scale
			if !math.IsNaN(v) {
				lim = math.Max(lim, math.Abs(vals[k]))
			}
		}
		if lim == 0 {
			lim = 1
		}
		out = append(out, changeMap{m.name, &MapSpec{Title: m.title, Unit: m.unit, Nx: s.Nx, Ny: s.Ny, X0MM: s.X0M * 1e3, Y0MM: s.Y0M * 1e3,
			CellMM: s.CellM * 1e3, Values: vals, Controls: gapControls, Lo: -lim, Hi: lim, BaseRadiusMM: r.RadiusM * 1e3}})
	}
	return out
}

// writeChangeMaps writes the change maps as PNG and SVG, and compare.html
// with the SVGs inline.
func writeChangeMaps(dir string, r *CompareResult) error {
	svgs := map[string][]byte{}
	for _, m := range changeMaps(r) {
		if err := writeMapFiles(dir, m.name, m.spec); err != nil {
			return fmt.Errorf("%s: %w", m.name, err)
		}
		var b bytes.Buffer
		if err := WriteMap(&b, m.spec, "svg"); err != nil {
			return fmt.Errorf("%s: %w", m.name, err)
		}
		svgs[m.name] = b.Bytes()
	}
	return writeCompareHTML(dir, r, svgs)
}
