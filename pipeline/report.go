package pipeline

// SchemaReport names the version of the report contract (DESIGN 7).
const SchemaReport = "gapflux.report/1"

// Report is the per-scan report written to report.json. Units are in every
// key; lengths in mm, temperatures in °C, powers in W.
type Report struct {
	Schema   string          `json:"schema"`
	Input    ReportInput     `json:"input"`
	Quality  *QualityReport  `json:"quality,omitempty"`
	Geometry *GeometryReport `json:"geometry,omitempty"`
	Pose     *PoseReport     `json:"pose,omitempty"`
	Gap      *GapReport      `json:"gap,omitempty"`
	Heat     *HeatReport     `json:"heat,omitempty"`
	Heatup   *HeatupReport   `json:"heatup,omitempty"`
	Hot      *HotReport      `json:"hot,omitempty"` // the base when cooking (hot.enabled)
	Verdict  *VerdictReport  `json:"verdict,omitempty"`
	// Uncertainty is the Monte Carlo evaluation (uncertainty.mode not "off").
	Uncertainty *UncertaintyReport `json:"uncertainty,omitempty"`
	Rings       []RingReport       `json:"rings,omitempty"`
	Warnings    []string           `json:"warnings"`

	// Audit trail (issue 12 part 1; audit.go): the tool, the input files,
	// the whole effective job and the materials used, enough for
	// "gapflux analyze --from-report" to run the analysis again.
	Audit *AuditReport `json:"audit,omitempty"`
}

// ReportInput identifies what was analysed.
type ReportInput struct {
	Pan FileReport  `json:"pan"`
	Hob *FileReport `json:"hob,omitempty"`
	// JobSHA256 is the hash of the effective settings (job file and flags).
	JobSHA256 string `json:"job_sha256"`
	// FittedToBase gives the job values left at 0 (water load, zone, zone
	// power) and fitted to the measured base diameter, with the rule.
	FittedToBase *FittedDefaults `json:"fitted_to_base,omitempty"`
}

// FileReport describes one input file.
type FileReport struct {
	Path      string `json:"path"`
	Format    string `json:"format"`
	SHA256    string `json:"sha256"`
	Points    int    `json:"points"`    // points or vertices as stored (an STL stores 3 per facet)
	Triangles int    `json:"triangles"` // facets of a mesh, 0 for a point cloud
	// DistinctPoints counts the points (a mesh's vertices) left when exact
	// repeats count once: an STL's vertices shared by its facets; 0 when
	// the scan was not read that far.
	DistinctPoints int    `json:"distinct_points"`
	Unit           string `json:"unit"`
	UnitSource     string `json:"unit_source"`
}

// QualityReport is the data-quality gate's outcome (DESIGN 5.0): the worst
// status of its checks. A rejected scan stops before pose and heat.
type QualityReport struct {
	Status string         `json:"status"` // "ok", "warn" or "reject"
	Checks []QualityCheck `json:"checks"`
}

// QualityCheck is one check of the gate. Its figure and limits are in the
// unit its name ends in (diameter_mm, coverage_pct, rim_largest_gap_deg);
// a figure beyond a limit warns or rejects, one equal to it passes.
type QualityCheck struct {
	Name        string   `json:"name"`
	Status      string   `json:"status"` // "ok", "warn", "reject" or "not-measured"
	Figure      *float64 `json:"figure"` // null when not measured (or not a number)
	Detail      string   `json:"detail,omitempty"`
	WarnBelow   *float64 `json:"warn_below,omitempty"`
	WarnAbove   *float64 `json:"warn_above,omitempty"`
	RejectBelow *float64 `json:"reject_below,omitempty"`
	RejectAbove *float64 `json:"reject_above,omitempty"`
	Message     string   `json:"message"` // what was found and what to do
}

// GeometryReport is the base's form, on the form-filtered surface.
type GeometryReport struct {
	DiameterMM             float64       `json:"diameter_mm"`
	FlatnessMZMM           float64       `json:"flatness_mz_mm"`
	FlatnessLSMM           float64       `json:"flatness_ls_mm"`
	ConcavityMM            float64       `json:"concavity_mm"`
	ConcavityPctOfDiameter float64       `json:"concavity_pct_of_diameter"`
	Shape                  string        `json:"shape"`        // flat, tilted, dished, domed, saddle or bent
	ShapeDetail            string        `json:"shape_detail"` // the principal rim sags and axes, in words
	ShapeQuadric           *QuadricShape `json:"shape_quadric,omitempty"`
	CoveragePct            float64       `json:"coverage_pct"`
	OutliersRemoved        int           `json:"outliers_removed"`
	CutoffMM               float64       `json:"cutoff_mm"`
	NoiseUM                float64       `json:"noise_um"`
	CellMM                 float64       `json:"cell_mm"`
	PointSpacingMM         float64       `json:"point_spacing_mm"`     // median nearest-neighbour spacing of the base's points
	MeasuredCellsPct       float64       `json:"measured_cells_pct"`   // cells holding data; the rest is interpolated
	LargestHoleMM          float64       `json:"largest_hole_mm"`      // largest empty circle inside the base
	RimCompletenessPct     float64       `json:"rim_completeness_pct"` // share of 72 rim sectors holding points
	Filter                 string        `json:"filter"`
	FaceSource             string        `json:"face_source"`
	PointsUsed             int           `json:"points_used"`
	PointsDropped          int           `json:"points_dropped"`
	Zernike                ZernikeReport `json:"zernike"`
}

// QuadricShape holds the figures behind the shape word: the principal
// curvatures of the least-squares quadric over the base disc as rim sags
// (positive: concave that way, like concavity_mm), their axes in degrees
// from +x towards +y, and the threshold below which a sag counts as zero.
type QuadricShape struct {
	RimSagMM      [2]float64 `json:"rim_sag_mm"`
	AxisDeg       [2]float64 `json:"axis_deg"`
	BendAxisDeg   float64    `json:"bend_axis_deg"`
	TiltRiseMM    float64    `json:"tilt_rise_mm"`
	ThresholdMM   float64    `json:"threshold_mm"`
	ResidualRMSUM float64    `json:"residual_rms_um"`
}

// ZernikeReport lists the form terms.
type ZernikeReport struct {
	Ordering      string        `json:"ordering"`
	Normalisation string        `json:"normalisation"`
	RadiusMM      float64       `json:"radius_mm"`
	Terms         []ZernikeTerm `json:"terms"`
}

// ZernikeTerm is one Zernike coefficient, µm.
type ZernikeTerm struct {
	J      int     `json:"j"`
	N      int     `json:"n"`
	M      int     `json:"m"`
	Name   string  `json:"name"`       // the optics name (Thibos et al. 2002)
	Plain  string  `json:"plain_name"` // what the term does to a base, in plain words
	CoefUM float64 `json:"coef_um"`
}

// PoseReport is how the pan rests on the hob. TipForceN is the smallest
// vertical force at the rim that tips the loaded pan (weight WeightN) off
// its support polygon (DESIGN 5.1); null when no press on the rim can tip
// it (the support reaches the rim all round).
type PoseReport struct {
	TiltDeg         float64      `json:"tilt_deg"`
	Rocks           bool         `json:"rocks"`
	RockMM          float64      `json:"rock_mm"`
	TipMM           float64      `json:"tip_mm"`
	Support         string       `json:"support"`
	SupportWidthMM  float64      `json:"support_width_mm"` // least width of the support polygon
	TipForceN       *float64     `json:"tip_force_n"`
	TipForceLimitN  float64      `json:"tip_force_limit_n"` // grid.rock_force_n
	WeightN         float64      `json:"weight_n"`          // pan and water
	ContactPointsMM [][2]float64 `json:"contact_points_mm"`
	CentreOfMassMM  [2]float64   `json:"centre_of_mass_mm"`
	RockLimitMM     float64      `json:"rock_limit_mm"`
}

// GapReport summarises the gap field over the base.
type GapReport struct {
	ContactAreaPct    float64 `json:"contact_area_pct"`
	MeanGapMM         float64 `json:"mean_gap_mm"`
	MaxGapMM          float64 `json:"max_gap_mm"`
	ContactBandUM     float64 `json:"contact_band_um"`
	ContactPressurePa float64 `json:"contact_pressure_pa"`
	PressureRatio     float64 `json:"pressure_over_microhardness"`
	MeanHSolidWM2K    float64 `json:"mean_h_solid_w_m2k"`
	MeanHGasWM2K      float64 `json:"mean_h_gas_w_m2k"`
	MeanHRadWM2K      float64 `json:"mean_h_rad_w_m2k"`
	// GasOverSolid is how many times the gas term exceeds the solid-spot
	// term over the base: at cooking loads, orders of magnitude.
	GasOverSolid float64 `json:"gas_over_solid"`
}

// HeatReport holds the steady heat figures against the flat twin.
type HeatReport struct {
	Mode             string  `json:"mode"`
	WaterC           float64 `json:"water_c"`
	PowerW           float64 `json:"power_w"`
	FlatPowerW       float64 `json:"flat_power_w"`
	LossPct          float64 `json:"loss_pct"`
	MeanFluxKWM2     float64 `json:"mean_flux_kw_m2"`
	FlatMeanFluxKWM2 float64 `json:"flat_mean_flux_kw_m2"`
	SolidPct         float64 `json:"solid_pct"`
	GasPct           float64 `json:"gas_pct"`
	RadiationPct     float64 `json:"radiation_pct"`
	// TransmittedPct is the share of the heater's power that passes the
	// glass (heater mode; its first pass through the near-infrared
	// window), TransmittedAbsorbedPct the share of the power into the pan
	// that arrived that way (absorbed by the base).
	TransmittedPct         float64 `json:"transmitted_pct"`
	TransmittedAbsorbedPct float64 `json:"transmitted_absorbed_pct"`
	// Temperature mode: PowerLimited says the rated power caps the hob
	// (hob.power_limited); PowerLimitApplied and FlatPowerLimitApplied say
	// it did, for the scan and the flat twin; TopC and FlatTopC are the top
	// temperatures that resulted (uniform set point only), TopShiftK and
	// FlatTopShiftK how far below the set point they ran.
	PowerLimited          *bool    `json:"power_limited,omitempty"`
	PowerLimitApplied     *bool    `json:"power_limit_applied,omitempty"`
	FlatPowerLimitApplied *bool    `json:"flat_power_limit_applied,omitempty"`
	RatedPowerW           *float64 `json:"rated_power_w,omitempty"`
	TopC                  *float64 `json:"top_c,omitempty"`
	FlatTopC              *float64 `json:"flat_top_c,omitempty"`
	TopShiftK             *float64 `json:"top_shift_k,omitempty"`
	FlatTopShiftK         *float64 `json:"flat_top_shift_k,omitempty"`
	// Heater mode: the element temperature while on (CoilC) and the share
	// passing the glass of the flat twin; the limiter's rod temperature
	// (mean glass underside along it) of scan and flat twin (also
	// solid-plate mode: the regulator's); radiation passing the glass
	// beside the base, W.
	CoilC              *float64 `json:"coil_c,omitempty"`
	FlatCoilC          *float64 `json:"flat_coil_c,omitempty"`
	FlatTransmittedPct *float64 `json:"flat_transmitted_pct,omitempty"`
	RodC               *float64 `json:"rod_c,omitempty"`
	FlatRodC           *float64 `json:"flat_rod_c,omitempty"`
	TransmittedLostW   *float64 `json:"transmitted_past_base_w,omitempty"`
	GlassMaxC          *float64 `json:"glass_max_c,omitempty"`
	FlatGlassMaxC      *float64 `json:"flat_glass_max_c,omitempty"`
	HeaterDutyPct      *float64 `json:"heater_duty_pct,omitempty"`
	FlatHeaterDutyPct  *float64 `json:"flat_heater_duty_pct,omitempty"`
	HeaterW            *float64 `json:"heater_w,omitempty"`
	DownLossW          *float64 `json:"down_loss_w,omitempty"`
	UncoveredLossW     *float64 `json:"uncovered_glass_loss_w,omitempty"`
	// GlassHeatKJ is the sensible heat the modelled glass holds at its
	// steady temperatures above the room, kJ (heater mode): energy the
	// quasi-steady heat-up does not charge to the heater.
	GlassHeatKJ     *float64 `json:"glass_heat_kj,omitempty"`
	FlatGlassHeatKJ *float64 `json:"flat_glass_heat_kj,omitempty"`
	BaseMaxC        float64  `json:"base_max_c"`
	BaseMinC        float64  `json:"base_min_c"`
	// Sensitivity gives loss_pct with each hob setting that drives it
	// moved (issue 9 part 6).
	Sensitivity      []SensitivityRow `json:"sensitivity,omitempty"`
	SolverIterations int              `json:"solver_iterations"`
	OuterIterations  int              `json:"outer_iterations"`
	SolverResidual   float64          `json:"solver_rel_residual"`
}

// HeatupReport holds the heat-up of the water load.
type HeatupReport struct {
	WaterKg       float64 `json:"water_kg"`
	FromC         float64 `json:"from_c"`
	ToC           float64 `json:"to_c"`
	TimeS         float64 `json:"time_s"`
	FlatTimeS     float64 `json:"flat_time_s"`
	ExtraTimePct  float64 `json:"extra_time_pct"`
	EnergyKJ      float64 `json:"energy_kj"`
	FlatEnergyKJ  float64 `json:"flat_energy_kj"`
	ExtraEnergyKJ float64 `json:"extra_energy_kj"`
	WhPerKg       float64 `json:"wh_per_kg"`
	FlatWhPerKg   float64 `json:"flat_wh_per_kg"`
	QuasiSteady   bool    `json:"quasi_steady"`
}

// VerdictReport is pass/fail against the job's tolerances.
type VerdictReport struct {
	Pass    bool     `json:"pass"`
	Reasons []string `json:"reasons"`
	// Result is "pass", "fail" or "inconclusive" under Rule, the decision
	// rule applied (decision.go); Limits gives each limit's outcome.
	Result string         `json:"result"`
	Rule   string         `json:"rule"`
	Limits []LimitVerdict `json:"limits"`
}

// RingReport is one row of the ring table.
type RingReport struct {
	RInMM        float64 `json:"r_in_mm"`
	ROutMM       float64 `json:"r_out_mm"`
	AreaMM2      float64 `json:"area_mm2"`
	ContactPct   float64 `json:"contact_pct"`
	MeanGapMM    float64 `json:"mean_gap_mm"`
	MaxGapMM     float64 `json:"max_gap_mm"`
	HWM2K        float64 `json:"h_w_m2k"`
	HSolidWM2K   float64 `json:"h_solid_w_m2k"`
	HGasWM2K     float64 `json:"h_gas_w_m2k"`
	HRadWM2K     float64 `json:"h_rad_w_m2k"`
	FluxKWM2     float64 `json:"flux_kw_m2"`
	FlatFluxKWM2 float64 `json:"flat_flux_kw_m2"`
	PowerW       float64 `json:"power_w"`
	FlatPowerW   float64 `json:"flat_power_w"`
	PowerLostW   float64 `json:"power_lost_w"`
}
