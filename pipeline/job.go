package pipeline

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/pelletier/go-toml/v2"

	"gapflux/thermal"
)

// Job holds every setting of an analysis. Each key carries its unit in its
// name; DefaultJob gives the defaults, which are our own invented scenario
// (DESIGN 5.3a), not any standard's values.
type Job struct {
	Grid       GridJob       `toml:"grid"`
	Pan        PanJob        `toml:"pan"`
	Hob        HobJob        `toml:"hob"`
	Interface  InterfaceJob  `toml:"interface"`
	Water      WaterJob      `toml:"water"`
	Tolerances ToleranceJob  `toml:"tolerances"`
	Limits     LimitsJob     `toml:"limits"`
	Materials  []MaterialJob `toml:"material"`
}

// GridJob sets the gridding, filtering and ring geometry.
type GridJob struct {
	CellMM      float64 `toml:"cell_mm"`       // grid cell edge; 0 = automatic (scan.AutoCellM of the point spacing)
	CutoffMM    float64 `toml:"cutoff_mm"`     // form filter cut-off; 0 = no filter
	Filter      string  `toml:"filter"`        // "robust" (ISO 16610-71) or "gaussian" (ISO 16610-61)
	RingMM      float64 `toml:"ring_mm"`       // ring width of the ring table
	RockMM      float64 `toml:"rock_mm"`       // the pan rocks when the rim drops more than this
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
	Emissivity      float64    `toml:"emissivity"`
	InnerDiameterMM float64    `toml:"inner_diameter_mm"` // water surface and wetted wall; 0 = base diameter
	WallEmissivity  float64    `toml:"wall_emissivity"`
	CentreOfMassMM  [2]float64 `toml:"centre_of_mass_mm"` // in the base frame
	OffsetMM        [2]float64 `toml:"offset_mm"`         // pan centre relative to the hob (zone) centre
}

// HobJob describes the hob.
type HobJob struct {
	Mode                string  `toml:"mode"` // "heater" or "temperature"
	Material            string  `toml:"material"`
	ThicknessMM         float64 `toml:"thickness_mm"`
	Emissivity          float64 `toml:"emissivity"`
	TemperatureC        float64 `toml:"temperature_c"`             // temperature mode, uniform top temperature
	TemperatureProfile  string  `toml:"temperature_profile"`       // temperature mode: CSV r_mm,t_c (overrides temperature_c)
	HeaterPowerW        float64 `toml:"heater_power_w"`            // heater mode, rated zone power
	ZoneDiameterMM      float64 `toml:"zone_diameter_mm"`          // heater mode
	PowerProfile        string  `toml:"power_profile"`             // heater mode: CSV r_mm,relative (uniform if empty)
	DownLossWM2K        float64 `toml:"down_loss_w_m2k"`           // heater mode, glass to room below
	TransmittedFraction float64 `toml:"transmitted_fraction"`      // heater mode, sent straight through the glass
	LimiterC            float64 `toml:"limiter_c"`                 // heater mode, glass temperature limit
	MarginMM            float64 `toml:"margin_mm"`                 // heater mode, glass modelled beyond zone and base
	RoomC               float64 `toml:"room_c"`                    // room air temperature
	Profile             string  `toml:"profile"`                   // hob top height profile CSV r_mm,z_mm (when no hob scan)
	RatedPowerDensityKW float64 `toml:"rated_power_density_kw_m2"` // temperature mode warning threshold; 0 = heater_power_w over the zone
}

// InterfaceJob sets the pan–hob contact and gas-gap models.
type InterfaceJob struct {
	Model            string  `toml:"model"`             // "mikic-plastic" or "mikic-elastic"
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
	RohsenowSurface string  `toml:"rohsenow_surface"` // a named surface sets C_sf and n (thermal.RohsenowSurfaces)
	RohsenowCsf     float64 `toml:"rohsenow_csf"`
	RohsenowN       float64 `toml:"rohsenow_n"`
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
		Grid: GridJob{CellMM: 0, CutoffMM: 8, Filter: "robust", RingMM: 5, RockMM: 0.1, OutlierK: 5},
		Pan: PanJob{
			MassKg:         1.0,
			Layers:         []LayerJob{{Material: "alu-1050", ThicknessMM: 4}},
			Emissivity:     0.3,
			WallEmissivity: 0.3,
		},
		Hob: HobJob{
			Mode: "heater", Material: "glass-ceramic", ThicknessMM: 4, Emissivity: 0.9,
			TemperatureC: 250, HeaterPowerW: 1800, ZoneDiameterMM: 180, DownLossWM2K: 10,
			LimiterC: 560, MarginMM: 30, RoomC: 23,
		},
		Interface: InterfaceJob{
			Model: "mikic-plastic", PanSqUM: 1.2, HobSqUM: 0.9, SlopeCorrelation: "antonetti",
			MicrohardnessMPa: 600, PanAccommodation: 0.8, HobAccommodation: 0.8, GasPressureKPa: 101.325,
		},
		Water: WaterJob{
			MassKg: 1.5, FromC: 15, ToC: 90, SteadyC: 60, Side: "fixed", HWM2K: 1000,
			RohsenowCsf: 0.011, RohsenowN: 1.26, Emissivity: 0.95, Evaporation: false,
		},
		Tolerances: ToleranceJob{ConcavityMinPct: 0, ConcavityMaxPct: 0.5, FlatnessMZMaxMM: 1.0, LossMaxPct: 10},
		Limits:     LimitsJob{MaxPoints: 20_000_000, MaxFileMB: 2048},
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

// ReadJob decodes a job file over the defaults. An unknown key is an error
// that names it; so is a value out of its range.
func ReadJob(r io.Reader, name string) (Job, error) {
	job := DefaultJob()
	data, err := io.ReadAll(io.LimitReader(r, 4<<20))
	if err != nil {
		return job, &JobError{Name: name, Msg: err.Error()}
	}
	// go-toml replaces slices, so a job's layer list replaces the default one.
	dec := toml.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&job); err != nil {
		var strict *toml.StrictMissingError
		if errors.As(err, &strict) && len(strict.Errors) > 0 {
			e := strict.Errors[0]
			row, col := e.Position()
			return job, &JobError{Name: name, Line: row, Col: col,
				Msg: fmt.Sprintf("unknown key %q", strings.Join(e.Key(), "."))}
		}
		var de *toml.DecodeError
		if errors.As(err, &de) {
			row, col := de.Position()
			return job, &JobError{Name: name, Line: row, Col: col, Msg: de.Error()}
		}
		return job, &JobError{Name: name, Msg: err.Error()}
	}
	if err := job.Validate(); err != nil {
		return job, &JobError{Name: name, Msg: err.Error()}
	}
	return job, nil
}

// ReadJobFile reads a job file from disk.
// The profile files a job names (hob.profile, hob.temperature_profile,
// hob.power_profile) are taken relative to the job file's folder.
func ReadJobFile(path string) (Job, error) {
	f, err := os.Open(path)
	if err != nil {
		return DefaultJob(), &JobError{Name: path, Msg: err.Error()}
	}
	defer f.Close()
	job, err := ReadJob(f, path)
	if err != nil {
		return job, err
	}
	dir := filepath.Dir(path)
	for _, p := range job.files() {
		if *p != "" && !filepath.IsAbs(*p) {
			*p = filepath.Join(dir, *p)
		}
	}
	return job, nil
}

// files returns pointers to the job's file-name keys.
func (j *Job) files() []*string {
	return []*string{&j.Hob.Profile, &j.Hob.TemperatureProfile, &j.Hob.PowerProfile}
}

// Validate checks every value against its physical range.
func (j *Job) Validate() error {
	var errs []string
	pos := func(key string, v float64) {
		if !(v > 0) {
			errs = append(errs, fmt.Sprintf("%s must be > 0 (got %g)", key, v))
		}
	}
	nonneg := func(key string, v float64) {
		if !(v >= 0) {
			errs = append(errs, fmt.Sprintf("%s must be >= 0 (got %g)", key, v))
		}
	}
	frac := func(key string, v float64, lo float64) {
		if !(v > lo && v <= 1) {
			errs = append(errs, fmt.Sprintf("%s must be in (%g, 1] (got %g)", key, lo, v))
		}
	}
	oneOf := func(key, v string, allowed ...string) {
		for _, a := range allowed {
			if v == a {
				return
			}
		}
		errs = append(errs, fmt.Sprintf("%s must be one of %s (got %q)", key, strings.Join(allowed, ", "), v))
	}
	nonneg("grid.cell_mm", j.Grid.CellMM)
	nonneg("grid.cutoff_mm", j.Grid.CutoffMM)
	oneOf("grid.filter", j.Grid.Filter, "robust", "gaussian")
	pos("grid.ring_mm", j.Grid.RingMM)
	nonneg("grid.rock_mm", j.Grid.RockMM)
	pos("grid.outlier_k", j.Grid.OutlierK)
	oneOf("grid.units", j.Grid.Units, "", "mm", "m", "um", "in")
	oneOf("grid.face", j.Grid.Face, "", "up", "down")
	nonneg("grid.diameter_mm", j.Grid.DiameterMM)
	nonneg("grid.max_slope_deg", j.Grid.MaxSlopeDeg)
	pos("pan.mass_kg", j.Pan.MassKg)
	nonneg("pan.cp_j_kgk", j.Pan.CpJKgK)
	if len(j.Pan.Layers) == 0 {
		errs = append(errs, "pan.layers must list at least one layer")
	}
	for i, l := range j.Pan.Layers {
		pos(fmt.Sprintf("pan.layers[%d].thickness_mm", i), l.ThicknessMM)
		if l.Material == "" {
			errs = append(errs, fmt.Sprintf("pan.layers[%d].material is empty", i))
		}
	}
	frac("pan.emissivity", j.Pan.Emissivity, 0)
	frac("pan.wall_emissivity", j.Pan.WallEmissivity, 0)
	nonneg("pan.inner_diameter_mm", j.Pan.InnerDiameterMM)
	oneOf("hob.mode", j.Hob.Mode, "heater", "temperature")
	pos("hob.thickness_mm", j.Hob.ThicknessMM)
	frac("hob.emissivity", j.Hob.Emissivity, 0)
	pos("hob.heater_power_w", j.Hob.HeaterPowerW)
	pos("hob.zone_diameter_mm", j.Hob.ZoneDiameterMM)
	nonneg("hob.down_loss_w_m2k", j.Hob.DownLossWM2K)
	if !(j.Hob.TransmittedFraction >= 0 && j.Hob.TransmittedFraction < 1) {
		errs = append(errs, fmt.Sprintf("hob.transmitted_fraction must be in [0, 1) (got %g)", j.Hob.TransmittedFraction))
	}
	if !(j.Hob.LimiterC > j.Hob.RoomC) {
		errs = append(errs, "hob.limiter_c must be above hob.room_c")
	}
	if j.Hob.Mode == "temperature" && !(j.Hob.TemperatureC > j.Water.SteadyC) && j.Hob.TemperatureProfile == "" {
		errs = append(errs, "hob.temperature_c must be above water.steady_c")
	}
	nonneg("hob.margin_mm", j.Hob.MarginMM)
	nonneg("hob.rated_power_density_kw_m2", j.Hob.RatedPowerDensityKW)
	oneOf("interface.model", j.Interface.Model, "mikic-plastic", "mikic-elastic")
	oneOf("interface.slope_correlation", j.Interface.SlopeCorrelation, "antonetti", "lambert-fletcher", "tanner-fahoum")
	nonneg("interface.pan_sq_um", j.Interface.PanSqUM)
	nonneg("interface.hob_sq_um", j.Interface.HobSqUM)
	if !(j.Interface.PanSqUM > 0 || j.Interface.HobSqUM > 0) {
		errs = append(errs, "interface.pan_sq_um and interface.hob_sq_um cannot both be 0")
	}
	nonneg("interface.pan_slope", j.Interface.PanSlope)
	nonneg("interface.hob_slope", j.Interface.HobSlope)
	pos("interface.microhardness_mpa", j.Interface.MicrohardnessMPa)
	frac("interface.pan_accommodation", j.Interface.PanAccommodation, 0)
	frac("interface.hob_accommodation", j.Interface.HobAccommodation, 0)
	pos("interface.gas_pressure_kpa", j.Interface.GasPressureKPa)
	pos("water.mass_kg", j.Water.MassKg)
	if !(j.Water.FromC >= 0.5 && j.Water.ToC > j.Water.FromC && j.Water.ToC <= 100) {
		errs = append(errs, fmt.Sprintf("water.from_c and water.to_c must satisfy 0.5 <= from_c < to_c <= 100 (got %g, %g)", j.Water.FromC, j.Water.ToC))
	}
	if !(j.Water.SteadyC >= 0.5 && j.Water.SteadyC <= 100) {
		errs = append(errs, fmt.Sprintf("water.steady_c must be in [0.5, 100] (got %g)", j.Water.SteadyC))
	}
	oneOf("water.side", j.Water.Side, "fixed", "natural", "boiling")
	pos("water.h_w_m2k", j.Water.HWM2K)
	if j.Water.RohsenowSurface != "" {
		var names []string
		for _, sf := range thermal.RohsenowSurfaces() {
			names = append(names, sf.Name)
		}
		oneOf("water.rohsenow_surface", j.Water.RohsenowSurface, names...)
	}
	pos("water.rohsenow_csf", j.Water.RohsenowCsf)
	pos("water.rohsenow_n", j.Water.RohsenowN)
	frac("water.emissivity", j.Water.Emissivity, 0)
	if j.Tolerances.ConcavityMaxPct < j.Tolerances.ConcavityMinPct {
		errs = append(errs, "tolerances.concavity_max_pct is below tolerances.concavity_min_pct")
	}
	pos("tolerances.flatness_mz_max_mm", j.Tolerances.FlatnessMZMaxMM)
	pos("tolerances.loss_max_pct", j.Tolerances.LossMaxPct)
	if j.Limits.MaxPoints <= 0 {
		errs = append(errs, "limits.max_points must be > 0")
	}
	pos("limits.max_file_mb", j.Limits.MaxFileMB)
	for i, m := range j.Materials {
		if m.Name == "" {
			errs = append(errs, fmt.Sprintf("material[%d].name is empty", i))
		}
	}
	if len(errs) > 0 {
		return errors.New(strings.Join(errs, "; "))
	}
	return nil
}
