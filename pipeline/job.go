package pipeline

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"

	"gapflux/contact"
	"gapflux/thermal"

	"github.com/pelletier/go-toml/v2"
	"github.com/pelletier/go-toml/v2/unstable"
)

// Job holds every setting of an analysis. Each key carries its unit in its
// name; DefaultJob gives the defaults, which are our own invented scenario
// (DESIGN 5.3a), not any standard's values.
type Job struct {
	Grid        GridJob        `toml:"grid"`
	Pan         PanJob         `toml:"pan"`
	Hob         HobJob         `toml:"hob"`
	Interface   InterfaceJob   `toml:"interface"`
	Water       WaterJob       `toml:"water"`
	Tolerances  ToleranceJob   `toml:"tolerances"`
	Limits      LimitsJob      `toml:"limits"`
	Quality     QualityJob     `toml:"quality"`
	Outputs     OutputsJob     `toml:"outputs"`
	Hot         HotJob         `toml:"hot"`
	Uncertainty UncertaintyJob `toml:"uncertainty"`
	Materials   []MaterialJob  `toml:"material"`
}

// HotJob sets the hot state: the base as it is when cooking, bowed by its
// own heat (DESIGN 5.5, issue 11).
type HotJob struct {
	Enabled         bool    `toml:"enabled"`           // run the coupled hot state (analyze --hot)
	ScanC           float64 `toml:"scan_c"`            // temperature at which the base was scanned
	Edge            string  `toml:"edge"`              // "free", "clamped" or "wall"
	WallThicknessMM float64 `toml:"wall_thickness_mm"` // edge "wall": 0 = the base's layers continue up the wall
	WallMaterial    string  `toml:"wall_material"`     // edge "wall" with a thickness: "" = the first base layer's material
	BendCellMM      float64 `toml:"bend_cell_mm"`      // bending grid cell; 0 = automatic (40 cells across)
	ToleranceUM     float64 `toml:"tolerance_um"`      // the iteration ends when the bow changes less than this
	MaxIterations   int     `toml:"max_iterations"`
	Verdict         string  `toml:"verdict"` // judge the "cold", the "hot" or "both" states
}

// GridJob sets the gridding, filtering and ring geometry.
type GridJob struct {
	CellMM      float64 `toml:"cell_mm"`       // grid cell edge; 0 = automatic (scan.AutoCellM of the point spacing)
	CutoffMM    float64 `toml:"cutoff_mm"`     // form filter cut-off; 0 = no filter
	Filter      string  `toml:"filter"`        // "robust" (ISO 16610-71) or "gaussian" (ISO 16610-61)
	RingMM      float64 `toml:"ring_mm"`       // ring width of the ring table
	RockMM      float64 `toml:"rock_mm"`       // the pan rocks when the rim drops more than this
	RockForceN  float64 `toml:"rock_force_n"`  // ... and a rim press below this force tips it (DESIGN 5.1)
	OutlierK    float64 `toml:"outlier_k"`     // robust sigmas for the local outlier test
	Units       string  `toml:"units"`         // unit of the scan files: mm, m, um, in ("" = header hint, else mm)
	Face        string  `toml:"face"`          // "", "up" or "down"
	DiameterMM  float64 `toml:"diameter_mm"`   // 0 = from the circle fit
	MaxSlopeDeg float64 `toml:"max_slope_deg"` // base segmentation slope limit; 0 = the scan package's default
}

// LayerJob is one layer of the pan base, listed from the hob side up.
type LayerJob struct {
	Material    string  `toml:"material"`
	ThicknessMM float64 `toml:"thickness_mm"`
}

// PanJob describes the pan.
type PanJob struct {
	MassKg          float64    `toml:"mass_kg"`
	CpJKgK          float64    `toml:"cp_j_kgk"` // 0 = from the first base layer's material
	Layers          []LayerJob `toml:"layers"`
	Emissivity      float64    `toml:"emissivity"`        // outer face of the base; 0 = from the first layer's material
	InnerDiameterMM float64    `toml:"inner_diameter_mm"` // water surface and wetted wall; 0 = base diameter
	WallEmissivity  float64    `toml:"wall_emissivity"`
	CentreOfMassMM  [2]float64 `toml:"centre_of_mass_mm"` // in the base frame
	OffsetMM        [2]float64 `toml:"offset_mm"`         // pan centre relative to the hob (zone) centre
}

// HobJob describes the hob.
type HobJob struct {
	Mode                string  `toml:"mode"` // "heater", "temperature" or "solid-plate"
	Material            string  `toml:"material"`
	ThicknessMM         float64 `toml:"thickness_mm"`
	Emissivity          float64 `toml:"emissivity"`                // top surface; 0 = from hob.material
	TemperatureC        float64 `toml:"temperature_c"`             // temperature mode, uniform top temperature
	TemperatureProfile  string  `toml:"temperature_profile"`       // temperature mode: CSV r_mm,t_c (overrides temperature_c)
	HeaterPowerW        float64 `toml:"heater_power_w"`            // heater mode, rated zone power
	ZoneDiameterMM      float64 `toml:"zone_diameter_mm"`          // heater mode
	PowerProfile        string  `toml:"power_profile"`             // heater mode: CSV r_mm,relative (uniform if empty)
	DownLossWM2K        float64 `toml:"down_loss_w_m2k"`           // heater mode, glass to room below
	CoilEmissivity      float64 `toml:"coil_emissivity"`           // heater mode: the glowing element
	GlassTau            float64 `toml:"glass_tau"`                 // heater mode: glass transmittance in its near-infrared window
	GlassWindowLoUM     float64 `toml:"glass_window_lo_um"`        // heater mode: window's lower edge
	GlassWindowHiUM     float64 `toml:"glass_window_hi_um"`        // heater mode: window's upper edge
	LimiterC            float64 `toml:"limiter_c"`                 // heater mode: rod limiter setting (mean glass underside along the rod)
	RodOffsetMM         float64 `toml:"rod_offset_mm"`             // heater and solid-plate modes: rod's distance from the zone centre in y
	RodLengthMM         float64 `toml:"rod_length_mm"`             // 0 = the zone diameter
	PlateMaterial       string  `toml:"plate_material"`            // solid-plate mode: the heated plate
	PlateThicknessMM    float64 `toml:"plate_thickness_mm"`        // solid-plate mode
	MarginMM            float64 `toml:"margin_mm"`                 // heater mode, glass modelled beyond zone and base
	RoomC               float64 `toml:"room_c"`                    // room air temperature
	Profile             string  `toml:"profile"`                   // hob top height profile CSV r_mm,z_mm (when no hob scan)
	RatedPowerDensityKW float64 `toml:"rated_power_density_kw_m2"` // temperature mode: rated power over the base area; 0 = heater_power_w
	PowerLimited        bool    `toml:"power_limited"`             // temperature mode: the top holds its set point only while the rated power allows
}

// InterfaceJob sets the pan–hob contact and gas-gap models.
type InterfaceJob struct {
	Model            string  `toml:"model"`             // "cmy-plastic" (old name "mikic-plastic" accepted) or "mikic-elastic"
	PanSqUM          float64 `toml:"pan_sq_um"`         // RMS roughness of the pan's outer face
	HobSqUM          float64 `toml:"hob_sq_um"`         // RMS roughness of the hob top
	PanSlope         float64 `toml:"pan_slope"`         // mean absolute asperity slope; 0 = from the correlation
	HobSlope         float64 `toml:"hob_slope"`         // 0 = from the correlation
	SlopeCorrelation string  `toml:"slope_correlation"` // "antonetti", "lambert-fletcher" or "tanner-fahoum"
	MicrohardnessMPa float64 `toml:"microhardness_mpa"` // contact microhardness of the softer surface
	PanAccommodation float64 `toml:"pan_accommodation"` // thermal accommodation coefficient of air on the pan
	HobAccommodation float64 `toml:"hob_accommodation"` // and on the hob
	GasPressureKPa   float64 `toml:"gas_pressure_kpa"`  // pressure of the air in the gap
}

// WaterJob describes the water load and the water side of the base.
type WaterJob struct {
	MassKg          float64 `toml:"mass_kg"`
	FromC           float64 `toml:"from_c"`
	ToC             float64 `toml:"to_c"`
	SteadyC         float64 `toml:"steady_c"`         // water temperature of the steady heat figures
	Side            string  `toml:"side"`             // "fixed", "natural" or "boiling"
	HWM2K           float64 `toml:"h_w_m2k"`          // water-side coefficient when side = "fixed"
	RohsenowSurface string  `toml:"rohsenow_surface"` // a named surface sets C_sf and n (thermal.RohsenowSurfaces); "" = both from the keys below
	RohsenowCsf     float64 `toml:"rohsenow_csf"`     // 0 = from rohsenow_surface
	RohsenowN       float64 `toml:"rohsenow_n"`       // 0 = from rohsenow_surface
	Emissivity      float64 `toml:"emissivity"`
	Evaporation     bool    `toml:"evaporation"`
}

// ToleranceJob holds the pass/fail limits. The defaults are ours; a lab must
// use the limits of the cookware and hob standards it works to.
type ToleranceJob struct {
	ConcavityMinPct float64 `toml:"concavity_min_pct"` // of diameter; below it fails (0 forbids convex)
	ConcavityMaxPct float64 `toml:"concavity_max_pct"`
	FlatnessMZMaxMM float64 `toml:"flatness_mz_max_mm"`
	LossMaxPct      float64 `toml:"loss_max_pct"`
	RockingAllowed  bool    `toml:"rocking_allowed"`
}

// LimitsJob bounds the resources one scan may take.
type LimitsJob struct {
	MaxPoints int     `toml:"max_points"`
	MaxFileMB float64 `toml:"max_file_mb"`
	MaxCells  int     `toml:"max_cells"` // largest grid of any stage, cells
}

// MaterialJob adds a material to the built-in library or overrides one.
type MaterialJob struct {
	Name            string  `toml:"name"`
	ConductivityWMK float64 `toml:"conductivity_w_mk"`
	DensityKgM3     float64 `toml:"density_kg_m3"`
	CpJKgK          float64 `toml:"cp_j_kgk"`
	YoungGPa        float64 `toml:"young_gpa"`
	Poisson         float64 `toml:"poisson"`
	ExpansionUMMK   float64 `toml:"expansion_um_mk"`
	HardnessMPa     float64 `toml:"hardness_mpa"`
	Emissivity      float64 `toml:"emissivity"`
	Source          string  `toml:"source"`
}

// DefaultJob returns the default scenario (DESIGN 5.3a; our own numbers).
func DefaultJob() Job {
	return Job{
		Grid: GridJob{CellMM: 0, CutoffMM: 8, Filter: "robust", RingMM: 5, RockMM: 0.1, RockForceN: 5, OutlierK: 5},
		Pan: PanJob{
			MassKg:         1.0,
			Layers:         []LayerJob{{Material: "alu-1050", ThicknessMM: 4}},
			Emissivity:     0, // from the base's material
			WallEmissivity: 0.3,
		},
		Hob: HobJob{
			Mode: "heater", Material: "glass-ceramic", ThicknessMM: 4, Emissivity: 0, // 0: from the material
			TemperatureC: 250, HeaterPowerW: 0, ZoneDiameterMM: 0, DownLossWM2K: 10, // 0: fitted to the base (fitbase.go)
			LimiterC: 560, MarginMM: 30, RoomC: 23, PowerLimited: true,
			CoilEmissivity: 0.85, GlassTau: 0.65, GlassWindowLoUM: 0.7, GlassWindowHiUM: 2.7,
			PlateMaterial: "cast-iron", PlateThicknessMM: 8,
		},
		Interface: InterfaceJob{
			Model: contact.ModelPlastic, PanSqUM: 1.2, HobSqUM: 0.9, SlopeCorrelation: "antonetti",
			MicrohardnessMPa: 600, PanAccommodation: 0.8, HobAccommodation: 0.8, GasPressureKPa: 101.325,
		},
		Water: WaterJob{
			MassKg: 0, FromC: 15, // water 0: fitted to the base (fitbase.go)
			ToC: 90, SteadyC: 60, Side: "fixed", HWM2K: 1000,
			RohsenowSurface: thermal.DefaultRohsenowSurface, Emissivity: 0.95, Evaporation: false,
		},
		Tolerances: ToleranceJob{ConcavityMinPct: 0, ConcavityMaxPct: 0.5, FlatnessMZMaxMM: 1.0, LossMaxPct: 10},
		Limits:     LimitsJob{MaxPoints: 20_000_000, MaxFileMB: 2048, MaxCells: 4_000_000},
		Quality:    defaultQualityJob(),
		Outputs:    OutputsJob{Fields: FieldsCompressed},
		Hot:        HotJob{ScanC: 20, Edge: "free", ToleranceUM: 1, MaxIterations: DefaultHotMaxIter, Verdict: "both"},
		Uncertainty: UncertaintyJob{Mode: "off", Decision: "guarded", Seed: 1, NoiseFactor: 1, RadiusMM: 0.03,
			PanSqPct: 30, HobSqPct: 30, SlopePct: 40, MicrohardnessPct: 20, Accommodation: 0.1,
			ConductivityPct: 5, ThicknessMM: 0.05, PanEmissivity: 0.05, HobEmissivity: 0.05,
			GridPlacement: true}, // hob settings and placement: the reference condition (0); see jobdoc
	}
}

// JobError is an error in a job file, with the position when known.
type JobError struct {
	Name      string
	Line, Col int
	Msg       string
}

func (e *JobError) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%s:%d:%d: %s", e.Name, e.Line, e.Col, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.Name, e.Msg)
}

// KeyError is one job value that is not allowed.
type KeyError struct {
	Key  string   // the key at fault, with indices ("pan.layers[1].thickness_mm")
	Also []string // other keys the problem involves, for its position in a file
	Msg  string   // the message; it names the key
}

func (e *KeyError) Error() string { return e.Msg }

// choiceText lists the allowed strings for a message: "mm", "m" or "in";
// an empty choice is said in words ("or left empty for the default"), not
// listed as a blank.
func choiceText(oneOf []string) string {
	var q []string
	empty := false
	for _, o := range oneOf {
		if o == "" {
			empty = true
			continue
		}
		q = append(q, strconv.Quote(o))
	}
	text := q[len(q)-1]
	if len(q) > 1 {
		text = strings.Join(q[:len(q)-1], ", ") + " or " + text
	}
	if len(q) > 1 {
		text = "one of " + text
	}
	if empty {
		text += ", or left empty for the default"
	}
	return text
}

// InvalidJobError lists every value of a job that Validate refused.
type InvalidJobError struct {
	Problems []*KeyError
}

func (e *InvalidJobError) Error() string {
	msgs := make([]string, len(e.Problems))
	for i, p := range e.Problems {
		msgs[i] = p.Msg
	}
	return strings.Join(msgs, "; ")
}

// ReadJob decodes a job file over the defaults. An unknown key is an error
// that names it; so is a value out of its range, a fixed-size array of the
// wrong length, and a file over the 4 MiB cap. Errors carry the key's line
// when the file sets it.
func ReadJob(r io.Reader, name string) (Job, error) {
	job, _, err := readJob(r, name)
	return job, err
}

// readJob is ReadJob that also returns where each key is set.
func readJob(r io.Reader, name string) (Job, map[string]keyPos, error) {
	job := DefaultJob()
	data, err := io.ReadAll(io.LimitReader(r, maxJobFileBytes+1))
	if err != nil {
		return job, nil, &JobError{Name: name, Msg: err.Error()}
	}
	if len(data) > maxJobFileBytes {
		return job, nil, &JobError{Name: name, Msg: fmt.Sprintf(
			"the file is larger than the %d MiB cap for job files (a job file with every key is under 20 kB); is it the right file?",
			maxJobFileBytes>>20)}
	}
	// go-toml replaces slices, so a job's layer list replaces the default one.
	dec := toml.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&job); err != nil {
		var strict *toml.StrictMissingError
		if errors.As(err, &strict) && len(strict.Errors) > 0 {
			e := strict.Errors[0]
			row, col := e.Position()
			return job, nil, &JobError{Name: name, Line: row, Col: col,
				Msg: unknownKeyText(strings.Join(e.Key(), "."))}
		}
		var de *toml.DecodeError
		if errors.As(err, &de) {
			row, col := de.Position()
			return job, nil, &JobError{Name: name, Line: row, Col: col, Msg: de.Error()}
		}
		return job, nil, &JobError{Name: name, Msg: err.Error()}
	}
	pos := keyPositions(data)
	probs := arrayLengthProblems(job, pos)
	var inv *InvalidJobError
	if err := job.Validate(); errors.As(err, &inv) {
		probs = append(probs, inv.Problems...)
	} else if err != nil {
		return job, pos, &JobError{Name: name, Msg: err.Error()}
	}
	if len(probs) > 0 {
		return job, pos, positioned(name, &InvalidJobError{Problems: probs}, pos)
	}
	return job, pos, nil
}

// keyPos is where a key is set in a job file; arrayLen is the number of
// elements of an array value, -1 for other values.
type keyPos struct{ line, col, arrayLen int }

// keyPositions indexes the keys of a valid TOML document by their full
// dotted name, with array-of-table indices ("pan.layers[1].thickness_mm").
func keyPositions(data []byte) map[string]keyPos {
	var p unstable.Parser
	p.Reset(data)
	out := map[string]keyPos{}
	seen := map[string]int{} // array tables so far
	prefix := ""
	for p.NextExpression() {
		e := p.Expression()
		switch e.Kind {
		case unstable.Table:
			prefix = joinKey(e.Key())
		case unstable.ArrayTable:
			k := joinKey(e.Key())
			prefix = fmt.Sprintf("%s[%d]", k, seen[k])
			seen[k]++
		case unstable.KeyValue:
			indexKeyValue(&p, out, prefix, e)
		}
	}
	return out
}

// indexKeyValue adds a key-value node, and the keys of inline tables in its
// value, to out.
func indexKeyValue(p *unstable.Parser, out map[string]keyPos, prefix string, kv *unstable.Node) {
	at := keyPos{arrayLen: -1}
	var parts []string
	for k := kv.Key(); k.Next(); {
		if len(parts) == 0 && k.Node().Raw.Length > 0 {
			s := p.Shape(k.Node().Raw)
			at.line, at.col = s.Start.Line, s.Start.Column
		}
		parts = append(parts, string(k.Node().Data))
	}
	name := strings.Join(parts, ".")
	if prefix != "" {
		name = prefix + "." + name
	}
	v := kv.Value()
	switch v.Kind {
	case unstable.Array:
		at.arrayLen = 0
		for c := v.Children(); c.Next(); at.arrayLen++ {
			if c.Node().Kind == unstable.InlineTable {
				indexInline(p, out, fmt.Sprintf("%s[%d]", name, at.arrayLen), c.Node())
			}
		}
	case unstable.InlineTable:
		indexInline(p, out, name, v)
	}
	out[name] = at
}

func indexInline(p *unstable.Parser, out map[string]keyPos, prefix string, t *unstable.Node) {
	for c := t.Children(); c.Next(); {
		if c.Node().Kind == unstable.KeyValue {
			indexKeyValue(p, out, prefix, c.Node())
		}
	}
}

func joinKey(it unstable.Iterator) string {
	var parts []string
	for it.Next() {
		parts = append(parts, string(it.Node().Data))
	}
	return strings.Join(parts, ".")
}

// arrayLengthProblems refuses a fixed-size array key (offset_mm, x and y)
// set with another number of elements: the decoder would drop the extra
// ones or leave the missing ones at 0.
func arrayLengthProblems(job Job, pos map[string]keyPos) []*KeyError {
	var probs []*KeyError
	walkJob(reflect.ValueOf(job), "", "", func(key, _ string, v reflect.Value) {
		if v.Kind() != reflect.Array {
			return
		}
		if at, ok := pos[key]; ok && at.arrayLen >= 0 && at.arrayLen != v.Len() {
			probs = append(probs, &KeyError{Key: key, Msg: fmt.Sprintf(
				"%s must hold exactly %d numbers (x, y), got %d", key, v.Len(), at.arrayLen)})
		}
	})
	return probs
}

// positioned turns Validate's error into a *JobError at the line of the
// first key at fault; the other problems follow with their lines.
func positioned(name string, err error, pos map[string]keyPos) error {
	var inv *InvalidJobError
	if !errors.As(err, &inv) || len(inv.Problems) == 0 {
		return &JobError{Name: name, Msg: err.Error()}
	}
	find := func(p *KeyError) (keyPos, bool) {
		for _, k := range append([]string{p.Key}, p.Also...) {
			for {
				if at, ok := pos[k]; ok {
					return at, true
				}
				base, _, cut := strings.Cut(k, "[")
				if !cut || !strings.HasSuffix(k, "]") || strings.Contains(k[len(base):], ".") {
					break
				}
				k = base // "pan.offset_mm[0]" is set by "pan.offset_mm"
			}
		}
		return keyPos{}, false
	}
	je := &JobError{Name: name, Msg: inv.Problems[0].Msg}
	if at, ok := find(inv.Problems[0]); ok {
		je.Line, je.Col = at.line, at.col
	}
	for _, p := range inv.Problems[1:] {
		if at, ok := find(p); ok {
			je.Msg += fmt.Sprintf("; line %d: %s", at.line, p.Msg)
		} else {
			je.Msg += "; " + p.Msg
		}
	}
	return je
}

// ReadJobFile reads a job file from disk.
// The profile files a job names (hob.profile, hob.temperature_profile,
// hob.power_profile) are taken relative to the job file's folder and must
// stay inside it (see localFile).
func ReadJobFile(path string) (Job, error) {
	f, err := os.Open(path)
	if err != nil {
		return DefaultJob(), &JobError{Name: path, Msg: err.Error()}
	}
	defer f.Close()
	job, pos, err := readJob(f, path)
	if err != nil {
		return job, err
	}
	dir := filepath.Dir(path)
	for _, fk := range job.fileKeys() {
		if *fk.p == "" {
			continue
		}
		full, err := localFile(dir, *fk.p)
		if err != nil {
			je := &JobError{Name: path, Msg: fmt.Sprintf("%s: %v; put the file beside the job file or in a folder under it", fk.key, err)}
			if at, ok := pos[fk.key]; ok {
				je.Line, je.Col = at.line, at.col
			}
			return job, je
		}
		*fk.p = full
	}
	return job, nil
}

// localFile resolves the file name rel against dir and checks that it stays
// inside dir: rel must be a local path (filepath.IsLocal: not absolute, no
// "..", not empty) and the file, with symbolic links resolved, must lie in
// dir with its links resolved. It returns dir joined with rel. Errors name
// the path, never the file's content.
func localFile(dir, rel string) (string, error) {
	if !filepath.IsLocal(rel) {
		return "", fmt.Errorf("%q is not inside the job file's folder (absolute paths and \"..\" are refused)", rel)
	}
	full := filepath.Join(dir, rel)
	realDir, err := filepath.EvalSymlinks(dir)
	if err != nil {
		return "", fmt.Errorf("the job file's folder: %w", err)
	}
	real, err := filepath.EvalSymlinks(full)
	if errors.Is(err, fs.ErrNotExist) {
		return "", fmt.Errorf("%q does not exist in the job file's folder", rel)
	}
	if err != nil {
		return "", fmt.Errorf("%q: %w", rel, errors.Unwrap(err))
	}
	if r, err := filepath.Rel(realDir, real); err != nil || !filepath.IsLocal(r) {
		return "", fmt.Errorf("%q leads outside the job file's folder through a symbolic link", rel)
	}
	return full, nil
}

// fileKey is a job key that names a file.
type fileKey struct {
	key string
	p   *string
}

// fileKeys returns the job's file-name keys.
func (j *Job) fileKeys() []fileKey {
	return []fileKey{{"hob.profile", &j.Hob.Profile}, {"hob.temperature_profile", &j.Hob.TemperatureProfile},
		{"hob.power_profile", &j.Hob.PowerProfile}}
}

// FilePaths returns the files the job names (hob and power or temperature
// profiles), as they stand in the job: absolute after ReadJobFile. Empty
// keys are left out.
func (j *Job) FilePaths() []string {
	var out []string
	for _, fk := range j.fileKeys() {
		if *fk.p != "" {
			out = append(out, *fk.p)
		}
	}
	return out
}

// files returns pointers to the job's file-name keys.
func (j *Job) files() []*string {
	var out []*string
	for _, fk := range j.fileKeys() {
		out = append(out, fk.p)
	}
	return out
}

// walkJob calls fn for every value of the job struct v: key is the value's
// TOML key with indices ("pan.layers[1].thickness_mm", "pan.offset_mm[0]"
// for an array element; the array itself is visited first under
// "pan.offset_mm"), spec its keySpec key ("pan.layers.thickness_mm").
func walkJob(v reflect.Value, key, spec string, fn func(key, spec string, v reflect.Value)) {
	join := func(a, b string) string {
		if a == "" {
			return b
		}
		return a + "." + b
	}
	switch v.Kind() {
	case reflect.Struct:
		for i := range v.NumField() {
			name := tomlName(v.Type().Field(i))
			walkJob(v.Field(i), join(key, name), join(spec, name), fn)
		}
	case reflect.Slice:
		for i := range v.Len() {
			walkJob(v.Index(i), fmt.Sprintf("%s[%d]", key, i), spec, fn)
		}
	case reflect.Array:
		fn(key, spec, v)
		for i := range v.Len() {
			fn(fmt.Sprintf("%s[%d]", key, i), spec, v.Index(i))
		}
	default:
		fn(key, spec, v)
	}
}

// Validate checks every value against its allowed range (jobKeys: a
// physical range, the range of real cookware and hobs, or our bound), the
// keys that depend on each other, and that the grid the job asks for at
// least fits limits.max_cells. The error is an *InvalidJobError listing
// every problem, each naming its key.
func (j *Job) Validate() error {
	probs, bad := j.rangeProblems()
	probs = append(probs, j.crossProblems(bad)...)
	if len(probs) > 0 {
		return &InvalidJobError{Problems: probs}
	}
	return nil
}

// rangeProblems checks each value against its keySpec; bad holds the spec
// keys refused.
func (j *Job) rangeProblems() (probs []*KeyError, bad map[string]bool) {
	add := func(key string, format string, a ...any) {
		probs = append(probs, &KeyError{Key: key, Msg: fmt.Sprintf(format, a...)})
	}
	specs := map[string]keySpec{}
	for _, s := range jobKeys() {
		specs[s.key] = s
	}
	bad = map[string]bool{}
	walkJob(reflect.ValueOf(*j), "", "", func(key, spec string, v reflect.Value) {
		s, ok := specs[spec]
		if !ok {
			add(key, "%s has no documented range (a gapflux bug: please report it)", key)
			return
		}
		switch v.Kind() {
		case reflect.Float64, reflect.Int:
			x := float64(0)
			if v.Kind() == reflect.Int {
				x = float64(v.Int())
			} else {
				x = v.Float()
			}
			if s.inRange(x) {
				return
			}
			bad[spec] = true
			if math.IsNaN(x) || math.IsInf(x, 0) {
				add(key, "%s must be a finite number, %s (got %s)", key, s.allowedText(), fmtNum(x))
				return
			}
			add(key, "%s must be %s (got %s; %s)", key, s.allowedText(), fmtNum(x), s.why)
		case reflect.String:
			if s.oneOf != nil && !slices.Contains(s.oneOf, v.String()) {
				bad[spec] = true
				add(key, "%s must be %s (got %q)", key, choiceText(s.oneOf), v.String())
			}
		}
	})
	return probs, bad
}

// crossProblems checks the keys that depend on each other, and the job's
// grids against limits.max_cells when the keys that set them are in range.
func (j *Job) crossProblems(bad map[string]bool) []*KeyError {
	var probs []*KeyError
	add := func(key string, also []string, format string, a ...any) {
		probs = append(probs, &KeyError{Key: key, Also: also, Msg: fmt.Sprintf(format, a...)})
	}
	if len(j.Pan.Layers) == 0 || len(j.Pan.Layers) > 20 {
		add("pan.layers", nil, "pan.layers must list at least one layer and at most 20 (got %d)", len(j.Pan.Layers))
	}
	for i, l := range j.Pan.Layers {
		if l.Material == "" {
			add(fmt.Sprintf("pan.layers[%d].material", i), []string{fmt.Sprintf("pan.layers[%d].thickness_mm", i)},
				"pan.layers[%d].material is empty", i)
		}
	}
	if len(j.Materials) > 100 {
		add("material", nil, "at most 100 [[material]] tables (got %d; our bound)", len(j.Materials))
	}
	for i, m := range j.Materials {
		if m.Name == "" {
			add(fmt.Sprintf("material[%d].name", i), nil, "material[%d].name is empty", i)
		}
	}
	if !(j.Hob.LimiterC > j.Hob.RoomC) {
		add("hob.limiter_c", []string{"hob.room_c"}, "hob.limiter_c must be above hob.room_c (got %s and %s °C)",
			fmtNum(j.Hob.LimiterC), fmtNum(j.Hob.RoomC))
	}
	if !(j.Hob.GlassWindowHiUM > j.Hob.GlassWindowLoUM) {
		add("hob.glass_window_hi_um", []string{"hob.glass_window_lo_um"}, "hob.glass_window_hi_um must be above hob.glass_window_lo_um (got %s and %s µm)",
			fmtNum(j.Hob.GlassWindowHiUM), fmtNum(j.Hob.GlassWindowLoUM))
	}
	// A zone of 0 is fitted to the base later (fitToBase checks the rod then).
	if j.Hob.ZoneDiameterMM != 0 && j.Hob.RodLengthMM != 0 && j.Hob.RodLengthMM > j.Hob.ZoneDiameterMM+2*j.Hob.MarginMM {
		add("hob.rod_length_mm", []string{"hob.zone_diameter_mm"}, "hob.rod_length_mm = %s mm is longer than the zone and its margin (%s mm)",
			fmtNum(j.Hob.RodLengthMM), fmtNum(j.Hob.ZoneDiameterMM+2*j.Hob.MarginMM))
	}
	if j.Hob.ZoneDiameterMM != 0 && math.Abs(j.Hob.RodOffsetMM) > j.Hob.ZoneDiameterMM/2 {
		add("hob.rod_offset_mm", []string{"hob.zone_diameter_mm"}, "hob.rod_offset_mm = %s mm puts the rod outside the zone (radius %s mm)",
			fmtNum(j.Hob.RodOffsetMM), fmtNum(j.Hob.ZoneDiameterMM/2))
	}
	if j.Hob.Mode == "solid-plate" && !(j.Hob.TemperatureC > j.Water.SteadyC) {
		add("hob.temperature_c", []string{"water.steady_c", "hob.mode"}, "hob.temperature_c (the solid plate's regulator setting) must be above water.steady_c")
	}
	if j.Hob.Mode == "temperature" && !(j.Hob.TemperatureC > j.Water.SteadyC) && j.Hob.TemperatureProfile == "" {
		add("hob.temperature_c", []string{"water.steady_c"}, "hob.temperature_c must be above water.steady_c")
	}
	if j.Water.RohsenowSurface == "" && (j.Water.RohsenowCsf == 0 || j.Water.RohsenowN == 0) {
		add("water.rohsenow_surface", []string{"water.rohsenow_csf", "water.rohsenow_n"},
			"water.rohsenow_surface = \"\" needs both water.rohsenow_csf and water.rohsenow_n set (or name a surface)")
	}
	if !(j.Interface.PanSqUM > 0 || j.Interface.HobSqUM > 0) {
		add("interface.pan_sq_um", []string{"interface.hob_sq_um"}, "interface.pan_sq_um and interface.hob_sq_um cannot both be 0")
	}
	if !(j.Water.ToC > j.Water.FromC) {
		add("water.from_c", []string{"water.to_c"}, "water.from_c and water.to_c must satisfy 0.5 <= from_c < to_c <= 100 (got %s, %s)",
			fmtNum(j.Water.FromC), fmtNum(j.Water.ToC))
	}
	if j.Tolerances.ConcavityMaxPct < j.Tolerances.ConcavityMinPct {
		add("tolerances.concavity_max_pct", []string{"tolerances.concavity_min_pct"},
			"tolerances.concavity_max_pct is below tolerances.concavity_min_pct")
	}
	g := j.Grid
	if !bad["grid.cell_mm"] && !bad["grid.cutoff_mm"] && g.CutoffMM > 0 && g.CutoffMM < 4*g.CellMM {
		add("grid.cutoff_mm", []string{"grid.cell_mm"},
			"grid.cutoff_mm = %s mm must span at least 4 cells of grid.cell_mm = %s mm (the sampled Gaussian aliases below); raise cutoff_mm or lower cell_mm",
			fmtNum(g.CutoffMM), fmtNum(g.CellMM))
	}
	if !bad["grid.cell_mm"] && !bad["grid.diameter_mm"] && !bad["hob.zone_diameter_mm"] && !bad["hob.margin_mm"] &&
		!bad["pan.offset_mm"] && !bad["limits.max_cells"] {
		if err := j.planGrids(g.DiameterMM / 2e3).check(j); err != nil {
			probs = append(probs, err)
		}
	}
	if err := j.Quality.validate(); err != nil {
		add("quality", nil, "%v", err)
	}
	return probs
}
