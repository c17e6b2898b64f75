package pipeline

import (
	"fmt"
	"math"
	"reflect"
	"strconv"
	"strings"

	"gapflux/contact"
	"gapflux/thermal"
)

// keySpec documents and bounds one job key. Every leaf of Job has one
// (a test walks the struct by reflection); Validate checks the values
// against it and JobDoc prints it.
type keySpec struct {
	key  string // dotted TOML key; keys of arrays of tables without index ("pan.layers.thickness_mm")
	doc  string // what the key sets
	unit string // unit of a number ("" = unit-free)

	// A number must lie in [lo, hi] (an open end when loOpen or hiOpen),
	// or be 0 when zero says what 0 means.
	lo, hi         float64
	loOpen, hiOpen bool
	zero           string
	// why states the reason for the range: "physical: …" (a physical
	// range), "cookware: …" or "hob: …" (the range of real products) or
	// "our bound: …" (a limit we chose, mostly to bound memory and time).
	why string

	oneOf []string // allowed values of a string key; nil = any
	path  bool     // a file relative to the job file's folder

	// src says where a modelling choice's default comes from: a source
	// (author, year, table) or "ours" (our invented scenario, DESIGN 5.3a).
	src string
}

// Size caps of the text files a job reads (our bounds: a job file of every
// key with comments is under 10 kB, and a radial profile at 0.01 mm steps
// over a 300 mm radius is under 1 MB).
const (
	maxJobFileBytes = 4 << 20
	maxProfileBytes = 4 << 20
)

// filterTapsPerCell bounds the form filter's work: grid cells times kernel
// width at most filterTapsPerCell·limits.max_cells (our bound: about 10 s
// on one core at the measured ~40 ns per cell and tap).
const filterTapsPerCell = 64

// jobKeys returns the specification of every job key, in file order: the
// tables in the order JobDoc prints them.
func jobKeys() []keySpec {
	var keys []keySpec
	for _, table := range [][]keySpec{
		gridKeys(), panKeys(), hobKeys(), interfaceKeys(),
		waterKeys(), toleranceKeys(), limitKeys(), qualityKeys(),
		outputKeys(), hotKeys(), uncertaintyKeys(), materialKeys(),
	} {
		keys = append(keys, table...)
	}
	return keys
}

// Reasons shared by the ranges of several tables' keys.
const (
	whyFraction    = "physical: a fraction"
	whyLiquidWater = "our bound: liquid water at 1 atm, away from freezing"
)

// gridKeys returns the specification of the keys of the [grid] table: the
// grid, the form filter and the base segmentation, in file order.
func gridKeys() []keySpec {
	return []keySpec{
		{key: "grid.cell_mm", doc: "grid cell edge (0 = automatic: the median point spacing rounded up to 0.05 mm, kept within 0.5 to 2 mm and at most a quarter of the cut-off)", unit: "mm", lo: 0.01, hi: 10, zero: "automatic",
			why: "our bound: finer than any pan scanner's point spacing, coarser leaves a small base under 10 cells across; limits.max_cells bounds the grid as well"},
		{key: "grid.cutoff_mm", doc: "form-filter cut-off (grid.filter names the filter)", unit: "mm", lo: 0.1, hi: 80, zero: "no filter",
			why: "our bound: 80 mm, the largest cut-off of the 8/25/80 mm series below a pan base's diameter (series from memory); it must also span 4 cells"},
		{key: "grid.filter", doc: "form filter: robust Gaussian regression (ISO 16610-71) or the linear areal Gaussian (ISO 16610-61)", oneOf: []string{"robust", "gaussian"}},
		{key: "grid.ring_mm", doc: "ring width of the ring table", unit: "mm", lo: 0.1, hi: 200,
			why: "our bound: from a tenth of a millimetre to one ring over the largest base"},
		{key: "grid.rock_mm", doc: "the pan rocks when the pressed rim drops more than this", unit: "mm", lo: 0, hi: 10,
			why: "our bound: a 10 mm drop is a broken pan, not a rocking one"},
		{key: "grid.rock_force_n", doc: "and a rim press lighter than this tips it (a fingertip press)", unit: "N", lo: 0, hi: 1000, loOpen: true,
			why: "our bound: 5 N is a light fingertip press (our choice); 1000 N would crush a pan"},
		{key: "grid.outlier_k", doc: "robust sigmas of the local outlier test", lo: 2, hi: 1000,
			why: "our bound: under 2 the test removes good points; 1000 turns it practically off"},
		{key: "grid.units", doc: "unit of the scan's numbers (\"\" = the file's header hint, else mm)", oneOf: []string{"", "mm", "m", "um", "in"}},
		{key: "grid.face", doc: "outer face toward scanner +z (\"up\") or -z (\"down\"); \"\" = detect", oneOf: []string{"", "up", "down"}},
		{key: "grid.diameter_mm", doc: "base diameter", unit: "mm", lo: 10, hi: 1000, zero: "circle fit to the base boundary",
			why: "cookware: pan and pot bases are about 80 to 400 mm across; 10 to 1000 mm leaves room"},
		{key: "grid.max_slope_deg", doc: "base segmentation slope limit", unit: "°", lo: 0.1, hi: 45, zero: "the built-in 3°",
			why: "our bound: a base ends where its wall starts, well under 45°"},
	}
}

// panKeys returns the specification of the keys of the [pan] table and its
// [[pan.layers]]: the pan's mass, emissivities, position and base layers, in
// file order.
func panKeys() []keySpec {
	return []keySpec{
		{key: "pan.mass_kg", doc: "mass of the empty pan", unit: "kg", lo: 0.01, hi: 50,
			why: "cookware: from a small aluminium pan (0.3 kg) to a large cast-iron pot (under 20 kg)"},
		{key: "pan.cp_j_kgk", doc: "specific heat of the pan", unit: "J/(kg·K)", lo: 100, hi: 2500, zero: "from the first base layer's material",
			why: "physical: solid metals and ceramics lie between about 130 (lead) and 1900 (beryllium) J/(kg·K)"},
		{key: "pan.emissivity", doc: "outer face of the base, toward the hob", lo: 0, hi: 1, loOpen: true, zero: "from the first layer's material (gapflux materials)", why: whyFraction,
			src: "the material library (alu-1050: 0.09, commercial aluminium sheet, Omega emissivity table)"},
		{key: "pan.wall_emissivity", doc: "outer wall, for heat-up losses", lo: 0, hi: 1, loOpen: true, why: whyFraction, src: "ours (a dulled aluminium wall)"},
		{key: "pan.inner_diameter_mm", doc: "open water surface and wetted wall", unit: "mm", lo: 10, hi: 1000, zero: "the base diameter",
			why: "cookware: as grid.diameter_mm"},
		{key: "pan.centre_of_mass_mm", doc: "centre of mass in the base frame, x and y", unit: "mm", lo: -500, hi: 500,
			why: "our bound: within the largest base"},
		{key: "pan.offset_mm", doc: "pan centre relative to the hob zone centre, x and y", unit: "mm", lo: -500, hi: 500,
			why: "hob: a pan stays on a hob top, under 1 m across"},
		{key: "pan.layers.material", doc: "a name from \"gapflux materials\" or a [[material]] below"},
		{key: "pan.layers.thickness_mm", doc: "layer thickness", unit: "mm", lo: 0.01, hi: 30,
			why: "cookware: clad and impact-bonded layers are 0.3 to 10 mm; cast bases up to about 20 mm"},
	}
}

// hobKeys returns the specification of the keys of the [hob] table: the
// hob's mode, plate, heater, limiter and room, in file order.
func hobKeys() []keySpec {
	return []keySpec{
		{key: "hob.mode", doc: "\"heater\" (radiant zone under glass-ceramic), \"temperature\" (a top held at temperature_c, see power_limited) or \"solid-plate\" (a heated plate of plate_material and plate_thickness_mm whose regulator holds temperature_c along the rod, at most heater_power_w)",
			oneOf: []string{"heater", "temperature", "solid-plate"},
			src:   "ours (the common radiant glass-ceramic zone, DESIGN 5.3a)"},
		{key: "hob.material", doc: "hob plate material (heater mode: the glass)", src: "ours (black LAS glass-ceramic)"},
		{key: "hob.thickness_mm", doc: "hob plate thickness", unit: "mm", lo: 0.5, hi: 30,
			why: "hob: glass-ceramic tops are 3 to 6 mm, cast-iron plates up to about 20 mm", src: "ours (a common 4 mm top)"},
		{key: "hob.emissivity", doc: "top surface", lo: 0, hi: 1, loOpen: true, zero: "from hob.material (gapflux materials)", why: whyFraction,
			src: "the material library (glass-ceramic: 0.90 ± 0.05, estimate from glass tables)"},
		{key: "hob.temperature_c", doc: "temperature mode: uniform top temperature (the set point); solid-plate mode: the regulator setting", unit: "°C", lo: 1, hi: 800,
			why: "hob: glass-ceramic tops are rated to about 700 °C; must be above water.steady_c", src: "ours"},
		{key: "hob.temperature_profile", doc: "temperature mode: CSV r_mm,t_c (overrides temperature_c); relative to the job file's folder", path: true},
		{key: "hob.heater_power_w", doc: "rated zone power: heater and solid-plate modes, and temperature mode's limit (see power_limited)", unit: "W", lo: 10, hi: 10000,
			zero: "the zone's area at 70.7 kW/m² (1800 W on a 180 mm zone), to 10 W",
			why:  "hob: household zones are 1 to 4 kW", src: "ours (a common 180 mm zone's rating, scaled by area)"},
		{key: "hob.zone_diameter_mm", doc: "heater and solid-plate modes: heated zone diameter", unit: "mm", lo: 20, hi: 600,
			zero: "the base diameter to the nearest 5 mm, kept within 120 to 300 mm",
			why:  "hob: zones are about 120 to 300 mm across", src: "ours (the pan on the zone of its size)"},
		{key: "hob.power_profile", doc: "heater mode: CSV r_mm,relative power density (\"\" = uniform); relative to the job file's folder", path: true},
		{key: "hob.down_loss_w_m2k", doc: "heater mode: glass to the room below", unit: "W/(m²·K)", lo: 0, hi: 1000,
			why: "our bound: 1000 W/(m²·K) is forced liquid cooling, not a hob", src: "ours (an insulated heater dish)"},
		{key: "hob.coil_emissivity", doc: "heater mode: total emissivity of the glowing element; its temperature follows from its radiative balance with the glass underside", lo: 0, hi: 1, loOpen: true, why: whyFraction,
			src: "ours (oxidised Fe-Cr-Al and Ni-Cr resistance alloys are about 0.7 to 0.9, from memory)"},
		{key: "hob.glass_tau", doc: "heater mode: transmittance of the glass in its near-infrared window (the element's radiation in the window passes to the pan; the glass is opaque beyond)", lo: 0, hi: 1, hiOpen: true, why: whyFraction,
			src: "US patent 10562807 B2 (SCHOTT, priority 2008), claim 1: a dyed 4 mm glass-ceramic cooktop transmits 50 to 80 % at 1600 nm; 0.65 is the midpoint (ours)"},
		{key: "hob.glass_window_lo_um", doc: "heater mode: lower edge of the glass's near-infrared window", unit: "µm", lo: 0.2, hi: 20,
			why: "physical: from the ultraviolet to the far infrared",
			src: "US patent 4057670 (Schott, 1977): the glass-ceramic transmits from 0.7 µm; a dyed top passes under 2.5 % of visible light (US 10562807 B2)"},
		{key: "hob.glass_window_hi_um", doc: "heater mode: upper edge of the glass's near-infrared window", unit: "µm", lo: 0.2, hi: 20,
			why: "physical: as glass_window_lo_um; above it",
			src: "ours: the hydroxyl absorption band of silicate glasses near 2.7 µm (from memory); US 4057670 states transmission up to 5 µm, set 5 for that reading"},
		{key: "hob.limiter_c", doc: "heater mode: the rod limiter cycles the heater to hold the mean glass-underside temperature along its rod at this", unit: "°C", lo: 50, hi: 900,
			why: "hob: limiters hold glass-ceramic near 500 to 600 °C; must be above room_c", src: "ours"},
		{key: "hob.rod_offset_mm", doc: "heater and solid-plate modes: the limiter's (regulator's) rod runs parallel to x at this distance in y from the zone centre", unit: "mm", lo: -300, hi: 300,
			why: "hob: the rod lies in the zone", src: "ours (across the zone centre)"},
		{key: "hob.rod_length_mm", doc: "heater and solid-plate modes: rod length, centred on the zone centre in x", unit: "mm", lo: 1, hi: 1000, zero: "the zone diameter",
			why: "hob: a rod spans the zone", src: "ours (a rod across the whole zone)"},
		{key: "hob.plate_material", doc: "solid-plate mode: the heated plate's material", src: "cast iron: the material library's grey cast iron (k = 46 W/(m·K), ρ = 7200 kg/m³, c_p = 450 J/(kg·K), ε = 0.64; MakeItFrom.com, EN-GJL-150 / ASTM A48 class 20)"},
		{key: "hob.plate_thickness_mm", doc: "solid-plate mode: the heated plate's thickness", unit: "mm", lo: 1, hi: 50,
			why: "hob: solid plates are cast about 5 to 15 mm thick over their heating spiral", src: "ours"},
		{key: "hob.margin_mm", doc: "heater mode: glass modelled beyond the zone and the base", unit: "mm", lo: 0, hi: 300,
			why: "hob: a hob top is under 1 m across; limits.max_cells bounds the glass grid as well", src: "ours"},
		{key: "hob.room_c", doc: "room air temperature", unit: "°C", lo: -20, hi: 60,
			why: "our bound: a kitchen or a lab", src: "ours"},
		{key: "hob.profile", doc: "hob top height profile CSV r_mm,z_mm when there is no hob scan; relative to the job file's folder", path: true},
		{key: "hob.rated_power_density_kw_m2", doc: "temperature mode: the hob's rated power as a density over the base area", unit: "kW/m²", lo: 1, hi: 1000,
			zero: "the rated power is heater_power_w, whatever the base's size",
			why:  "hob: a 1.8 kW, 180 mm zone gives 71 kW/m²"},
		{key: "hob.power_limited", doc: "temperature mode: the top holds temperature_c only while the rated power allows, and beyond it the hob delivers its rated power and the top follows (a thermostat-controlled plate at full power), for scan and flat twin alike; false holds temperature_c whatever it costs (a bench fixture)",
			src: "ours (DESIGN 5.3: a real zone cannot deliver more than its rating)"},
	}
}

// interfaceKeys returns the specification of the keys of the [interface]
// table: the contact conductance model and its surface properties, in file
// order.
func interfaceKeys() []keySpec {
	return []keySpec{
		{key: "interface.model", doc: "solid-spot conductance correlation: \"cmy-plastic\" is Cooper–Mikic–Yovanovich with Yovanovich's (1982) fit 1.25·(P/H_c)^0.95; \"mikic-elastic\" is Mikic (1974) elastic, 1.54·(√2·P/(m·E′))^0.94; \"mikic-plastic\" is the old name of \"cmy-plastic\", still accepted",
			oneOf: []string{contact.ModelPlastic, contact.ModelElastic, contact.ModelPlasticOld},
			src:   "Yovanovich (2005), IEEE Trans. CPT 28(2), recommends the CMY plastic model for first loading of rough metal contacts"},
		{key: "interface.pan_sq_um", doc: "RMS roughness Sq of the pan's outer face", unit: "µm", lo: 0, hi: 50,
			why: "cookware: turned, ground and blasted bases are about 0.1 to 25 µm; pan_sq_um and hob_sq_um cannot both be 0", src: "ours (a turned base)"},
		{key: "interface.hob_sq_um", doc: "RMS roughness Sq of the hob top", unit: "µm", lo: 0, hi: 50,
			why: "hob: glass-ceramic tops are under 1 µm, cast-iron plates a few µm", src: "ours"},
		{key: "interface.pan_slope", doc: "mean absolute asperity slope of the pan", lo: 0.001, hi: 1, zero: "from the correlation",
			why: "physical: machined metal surfaces lie between about 0.01 and 0.4"},
		{key: "interface.hob_slope", doc: "mean absolute asperity slope of the hob", lo: 0.001, hi: 1, zero: "from the correlation",
			why: "physical: as pan_slope"},
		{key: "interface.slope_correlation", doc: "σ–slope correlation when a slope is 0", oneOf: []string{"antonetti", "lambert-fletcher", "tanner-fahoum"},
			src: "Antonetti, Whittle & Simons (1991), m = 0.125·(σ/µm)^0.402"},
		{key: "interface.microhardness_mpa", doc: "contact microhardness of the softer surface", unit: "MPa", lo: 10, hi: 20000,
			why: "physical: from soft lead (about 50 MPa) to hardened steel and ceramics (about 10 GPa)", src: "ours (a soft aluminium alloy's order of magnitude)"},
		{key: "interface.pan_accommodation", doc: "thermal accommodation coefficient of air on the pan", lo: 0, hi: 1, loOpen: true, why: whyFraction,
			src: "ours (air on engineering metal surfaces is about 0.8 to 0.9, from memory)"},
		{key: "interface.hob_accommodation", doc: "and on the hob", lo: 0, hi: 1, loOpen: true, why: whyFraction, src: "ours, as pan_accommodation"},
		{key: "interface.gas_pressure_kpa", doc: "pressure of the air in the gap", unit: "kPa", lo: 1, hi: 1000,
			why: "our bound: from a vacuum test chamber to ten atmospheres", src: "standard atmosphere, 101.325 kPa"},
	}
}

// waterKeys returns the specification of the keys of the [water] table: the
// water load, its heat-up and its boiling and surface losses, in file order.
func waterKeys() []keySpec {
	var surfaces []string
	for _, sf := range thermal.RohsenowSurfaces() {
		surfaces = append(surfaces, sf.Name)
	}
	return []keySpec{
		{key: "water.mass_kg", doc: "water load", unit: "kg", lo: 0.01, hi: 50,
			zero: "filled a third of the base diameter deep over pan.inner_diameter_mm (1.52 kg on a 180 mm base, 0.06 kg on 60 mm, 5.7 kg on 280 mm), to 10 g",
			why:  "cookware: up to a large stockpot's fill", src: "ours (no standard's table could be checked)"},
		{key: "water.from_c", doc: "heat-up start", unit: "°C", lo: 0.5, hi: 100, why: whyLiquidWater + "; below to_c", src: "ours"},
		{key: "water.to_c", doc: "heat-up end", unit: "°C", lo: 0.5, hi: 100, why: whyLiquidWater, src: "ours"},
		{key: "water.steady_c", doc: "water temperature of the steady heat figures", unit: "°C", lo: 0.5, hi: 100, why: whyLiquidWater, src: "ours"},
		{key: "water.side", doc: "\"fixed\" (h_w_m2k), \"natural\" (natural convection) or \"boiling\" (Rohsenow above 100 °C)", oneOf: []string{"fixed", "natural", "boiling"},
			src: "ours (a fixed h makes the loss figure independent of a boiling correlation's ±100 % scatter)"},
		{key: "water.h_w_m2k", doc: "water-side coefficient when side = \"fixed\"", unit: "W/(m²·K)", lo: 1, hi: 100000,
			why: "physical: free convection of liquids is 50 to 1000, boiling up to 100000 W/(m²·K) (Incropera, Table 1.1)",
			src: "ours (the top of Incropera Table 1.1's free-convection range for liquids)"},
		{key: "water.rohsenow_surface", doc: "water side \"boiling\": a named surface sets C_sf and n; \"\" = both from rohsenow_csf and rohsenow_n",
			oneOf: append([]string{""}, surfaces...),
			src:   "Incropera, 6th ed., Table 10.1 (after Vachon, Nix & Tanger 1968), polished copper, C_sf = 0.0128, n = 1.0; the table has no aluminium row, the choice of row is ours; \"aluminium-oxidised\" (0.011, n = 1.26) is Cao (2009), not Incropera"},
		{key: "water.rohsenow_csf", doc: "Rohsenow surface-fluid coefficient C_sf", lo: 0.001, hi: 0.1, zero: "from rohsenow_surface",
			why: "physical: published water-surface values are 0.0027 to 0.013 (Incropera Table 10.1)"},
		{key: "water.rohsenow_n", doc: "Rohsenow Prandtl exponent n", lo: 0.5, hi: 3, zero: "from rohsenow_surface (1.0 for water on the Incropera rows)",
			why: "physical: 1.0 for water, 1.7 for other liquids (Incropera eq. 10.5)"},
		{key: "water.emissivity", doc: "open water surface", lo: 0, hi: 1, loOpen: true, why: whyFraction, src: "ours (water is 0.95 to 0.96 in the infrared, from memory)"},
		{key: "water.evaporation", doc: "latent heat lost from the open surface (heat-mass analogy; overstates near 90 °C)", src: "ours (off: the analogy overstates near 90 °C)"},
	}
}

// toleranceKeys returns the specification of the keys of the [tolerances]
// table: the limits the verdict judges, in file order.
func toleranceKeys() []keySpec {
	return []keySpec{
		{key: "tolerances.concavity_min_pct", doc: "concavity below this share of the diameter fails (0 forbids a convex base)", unit: "%", lo: -5, hi: 5,
			why: "our bound: 5 % is 10 mm on a 200 mm base"},
		{key: "tolerances.concavity_max_pct", doc: "concavity above this share of the diameter fails", unit: "%", lo: -5, hi: 5,
			why: "our bound: as concavity_min_pct, and not below it"},
		{key: "tolerances.flatness_mz_max_mm", doc: "largest minimum-zone flatness", unit: "mm", lo: 0, hi: 50, loOpen: true,
			why: "our bound"},
		{key: "tolerances.loss_max_pct", doc: "largest heating power lost against the flat twin", unit: "%", lo: 0, hi: 100, loOpen: true,
			why: "physical: a share of the power"},
		{key: "tolerances.rocking_allowed", doc: "a rocking pan passes"},
	}
}

// limitKeys returns the specification of the keys of the [limits] table: the
// size caps on scans and grids, in file order.
func limitKeys() []keySpec {
	return []keySpec{
		{key: "limits.max_points", doc: "refuse scans with more points than this", lo: 1000, hi: 200_000_000,
			why: "our bound: about 25 GB at the ~125 bytes per point of the 250 MB per 2 M points budget"},
		{key: "limits.max_file_mb", doc: "refuse scan files larger than this", unit: "MB", lo: 0.001, hi: 100_000,
			why: "our bound"},
		{key: "limits.max_cells", doc: "largest grid, in cells, of any grid the analysis builds (the base grid, the glass grid around it, a hob scan's grid)", lo: 10_000, hi: 50_000_000,
			why: "our bound: about 540 bytes a cell at the peak of an analysis (measured), so the default 4 M cells is about 2.2 GB and a 1000×1000 grid about 0.6 GB; the form filter may take at most 64 × max_cells cell-kernel products"},
	}
}

// qualityKeys returns the specification of the keys of the [quality] table:
// the scan quality gates that warn or reject, in file order.
func qualityKeys() []keySpec {
	return []keySpec{
		{key: "quality.diameter_warn_min_mm", doc: "a base narrower than this warns (check the units)", unit: "mm", lo: 1, hi: 2000,
			why: "our bound; default 100 mm, below a small milk pan's base"},
		{key: "quality.diameter_warn_max_mm", doc: "a base wider than this warns", unit: "mm", lo: 1, hi: 2000,
			why: "our bound; default 350 mm, above a large stock pot's or paella pan's base"},
		{key: "quality.diameter_reject_min_mm", doc: "a base narrower than this is rejected", unit: "mm", lo: 1, hi: 2000,
			why: "our bound; default 20 mm: a base of up to 500 mm written in inches reads below it as mm"},
		{key: "quality.diameter_reject_max_mm", doc: "a base wider than this is rejected", unit: "mm", lo: 1, hi: 10000,
			why: "our bound; default 600 mm: no hob zone takes a larger pan"},
		{key: "quality.coverage_warn_min_pct", doc: "share of the base near a measured point below which the scan warns", unit: "%", lo: 0, hi: 100,
			why: "our bound; default 95 %"},
		{key: "quality.coverage_reject_min_pct", doc: "and below which it is rejected", unit: "%", lo: 0, hi: 100,
			why: "our bound; default 60 %: pose and gap would be more interpolation than measurement"},
		{key: "quality.hole_warn_max_pct", doc: "largest unmeasured hole, share of the base diameter, above which the scan warns", unit: "%", lo: 0, hi: 100,
			why: "our bound; default 10 %"},
		{key: "quality.hole_reject_max_pct", doc: "and above which it is rejected", unit: "%", lo: 0, hi: 100,
			why: "our bound; default 40 %: such a hole can hide a support point or a dome"},
		{key: "quality.rim_gap_warn_max_deg", doc: "an arc of the rim without measured points wider than this warns", unit: "°", lo: 0, hi: 360,
			why: "our bound; default 30°"},
		{key: "quality.rim_missing_reject_max_pct", doc: "share of the rim missing above which the scan is rejected", unit: "%", lo: 0, hi: 100,
			why: "our bound; default 25 %: the circle fit and the rest pose are unsound"},
		{key: "quality.dropped_warn_max_pct", doc: "share of the points near the base left out by segmentation above which the scan warns", unit: "%", lo: 0, hi: 100,
			why: "our bound; default 10 %: the foot of a corner radius lies in the base's height band beyond the rim and counts too, 4 to 7 % on the demo's pans with a corner"},
		{key: "quality.dropped_reject_max_pct", doc: "and above which it is rejected", unit: "%", lo: 0, hi: 100,
			why: "our bound; default 50 %: the base found is not the base scanned"},
		{key: "quality.footprint_warn_min_pct", doc: "base circle against the footprint of the near-plane points below which the scan warns", unit: "%", lo: 0, hi: 100,
			why: "our bound; default 80 %"},
		{key: "quality.footprint_band_mm", doc: "points within this of the base plane make the footprint", unit: "mm", lo: 0.01, hi: 100,
			why: "our bound; default 15 mm: a base may lift up to 15 mm at the rim"},
		{key: "quality.noise_gap_warn_max_pct", doc: "scanner noise against the mean gap above which the scan warns", unit: "%", lo: 0, hi: 1000,
			why: "a fifth of the mean gap by default (DESIGN 5.0)"},
	}
}

// outputKeys returns the specification of the keys of the [outputs] table:
// the optional output files, in file order.
func outputKeys() []keySpec {
	return []keySpec{
		{key: "outputs.fields", doc: "fields.vti: zlib-compressed (VTK's own compression), plain (uncompressed, base64) or off (not written)",
			oneOf: []string{FieldsCompressed, FieldsPlain, FieldsOff}},
	}
}

// hotKeys returns the specification of the keys of the [hot] table: the
// coupled hot state (the base bowed by its own heat), in file order.
func hotKeys() []keySpec {
	return []keySpec{
		{key: "hot.enabled", doc: "run the coupled hot state: the base bowed by its own heat, posed, gapped and solved again until its shape settles (analyze --hot); off by default because it repeats the plate solve several times",
			src: "ours (its cost: see the README)"},
		{key: "hot.scan_c", doc: "temperature of the base when it was scanned: the layers' thermal expansion counts from it", unit: "°C", lo: -20, hi: 60,
			why: "our bound: a workshop or a lab", src: "ours (a metrology room's 20 °C, ISO 1's reference temperature)"},
		{key: "hot.edge", doc: "how the base's rim is held when it bends: \"free\" (no moment; the default), \"clamped\" (an infinitely stiff wall, the upper bound) or \"wall\" (restrained in rotation by the wall, a long cylindrical shell: Timoshenko & Woinowsky-Krieger 1959 §114)",
			oneOf: []string{"free", "clamped", "wall"}, src: "ours (free: the smallest restraint, the largest bow)"},
		{key: "hot.wall_thickness_mm", doc: "edge \"wall\": wall thickness", unit: "mm", lo: 0.1, hi: 20, zero: "the wall is the base's layers continued (a clad pan)",
			why: "cookware: drawn and clad walls are about 0.4 to 5 mm, cast walls up to about 10 mm"},
		{key: "hot.wall_material", doc: "edge \"wall\" with wall_thickness_mm set: the wall's material (\"\" = the first base layer's material)"},
		{key: "hot.bend_cell_mm", doc: "cell of the bending grid (a whole number of base cells)", unit: "mm", lo: 0.5, hi: 50, zero: "automatic: 40 bending cells across the base",
			why: "our bound: finer than the base grid gains nothing; the banded solver allows about 70 cells across (64 MB)"},
		{key: "hot.tolerance_um", doc: "the hot iteration ends when the bow changes by less than this anywhere on the base", unit: "µm", lo: 0.01, hi: 100,
			why: "our bound: below 0.01 µm the plate solve's own tolerance shows; above 100 µm the hot shape is not settled"},
		{key: "hot.max_iterations", doc: "most pose-gap-heat-bow rounds of the hot iteration (not settling is a warning, not an error)", lo: 1, hi: 200,
			why: "our bound: the under-relaxed iteration settles in 3 to 10 rounds on the demo's bases"},
		{key: "hot.verdict", doc: "which state the verdict judges when the hot state runs: \"cold\" (as scanned), \"hot\" (as when cooking) or \"both\" (each must pass)",
			oneOf: []string{"cold", "hot", "both"}, src: "ours (both: a base must be right on the scanner and on the hob)"},
	}
}

// uncertaintyKeys returns the specification of the keys of the [uncertainty]
// table: the Monte Carlo evaluation (JCGM 101) and the verdict's decision
// rule, in file order.
func uncertaintyKeys() []keySpec {
	return []keySpec{
		{key: "uncertainty.mode", doc: "Monte Carlo evaluation of the headline figures' uncertainty (JCGM 101): \"off\", \"fast\" (at most 40 trials) or \"full\" (at most 200 trials); each trial draws every input, filters the noisy scan again and re-runs the chain from the pose on, on a grid of trial_coarsen analysis cells",
			oneOf: []string{"off", "fast", "full"}, src: "ours: off by default; fast costs several analyses per scan (the README gives the measured cost)"},
		{key: "uncertainty.decision", doc: "decision rule of the verdict when the uncertainty is evaluated: \"guarded\" acceptance (pass only when the 95 % interval lies inside the limits, fail only when it lies outside, else inconclusive; ISO 14253-1, ILAC-G8) or \"simple\" acceptance (the measured value against the limits)",
			oneOf: []string{"guarded", "simple"}, src: "ours: guarded acceptance, the conservative reading of ISO 14253-1"},
		{key: "uncertainty.seed", doc: "seed of the trials' random numbers (PCG), so that reports stay byte-identical", lo: 0, hi: 1 << 53,
			why: "our bound: any integer a float64 holds exactly"},
		{key: "uncertainty.max_trials", doc: "cap on the Monte Carlo trials", lo: 20, hi: 10000, zero: "by the mode: 40 (fast), 200 (full)",
			why: "our bound: two batches of 10 at least; 10 000 trials is hours per scan"},
		{key: "uncertainty.noise_factor", doc: "scanner noise of a trial, as a multiple of the form filter's residual RMS (geometry.noise_um): each trial draws Gaussian noise of that RMS onto the form-filtered heights of the measured cells (a parametric bootstrap) and filters again", lo: 0, hi: 10, zero: "no noise draws",
			why: "our bound", src: "ours: 1, the residual RMS is the re-scan scatter of a cell (it also holds real fine texture, so it errs high)"},
		{key: "uncertainty.radius_mm", doc: "standard deviation of the normal distribution of the base radius from the rim circle fit (concavity goes as the radius squared); a trial measures the form on the drawn disc", unit: "mm", lo: 0, hi: 5, zero: "the input is exact",
			why: "our bound", src: "ours: 0.03 mm, the scatter of the fitted radius over eight synthetic re-scans of a 160 mm base at 1 mm spacing (±0.04 mm, uncertainty_rescan_test.go)"},
		{key: "uncertainty.pan_sq_pct", doc: "half-width of the rectangular distribution of interface.pan_sq_um, % of its value", unit: "%", lo: 0, hi: 90, zero: "the input is exact",
			why: "our bound: Sq stays positive", src: "ours: ±30 %, a roughness nobody measured on the part (a profilometer reading would allow about ±10 %)"},
		{key: "uncertainty.hob_sq_pct", doc: "half-width of the rectangular distribution of interface.hob_sq_um, % of its value", unit: "%", lo: 0, hi: 90, zero: "the input is exact",
			why: "our bound: Sq stays positive", src: "ours, as pan_sq_pct"},
		{key: "uncertainty.slope_pct", doc: "half-width of the rectangular distribution of the combined asperity slope (given or from interface.slope_correlation), % of its value", unit: "%", lo: 0, hi: 90, zero: "the input is exact",
			why: "our bound: the slope stays positive", src: "ours: ±40 %, the scatter of measured slopes about the σ–slope correlations is of that order (from memory)"},
		{key: "uncertainty.microhardness_pct", doc: "half-width of the rectangular distribution of interface.microhardness_mpa, % of its value", unit: "%", lo: 0, hi: 90, zero: "the input is exact",
			why: "our bound", src: "ours: ±20 %, a handbook value for an untested temper"},
		{key: "uncertainty.accommodation", doc: "half-width of the rectangular distribution of the accommodation coefficients (one draw moves pan and hob alike, kept in (0, 1])", lo: 0, hi: 0.5, zero: "the input is exact",
			why: "physical: a fraction", src: "ours: ±0.1 about 0.8; air on engineering metal surfaces is commonly quoted near 0.7 to 0.95 (from memory)"},
		{key: "uncertainty.conductivity_pct", doc: "standard deviation of a normal factor on the conductivity of the pan's base layer materials, %", unit: "%", lo: 0, hi: 50, zero: "the input is exact",
			why: "our bound", src: "ours: 5 %, alloy and temper within a grade"},
		{key: "uncertainty.thickness_mm", doc: "standard deviation of the normal distribution of pan.layers[0].thickness_mm (the hob-side layer)", unit: "mm", lo: 0, hi: 5, zero: "the input is exact",
			why: "our bound", src: "ours: 0.05 mm, a caliper reading of the base"},
		{key: "uncertainty.pan_emissivity", doc: "half-width of the rectangular distribution of the base's emissivity (pan.emissivity or its material's), kept in (0, 1]", lo: 0, hi: 0.5, zero: "the input is exact",
			why: "physical: a fraction", src: "ours: ±0.05, bare aluminium runs 0.05 to 0.3 as it oxidises (from memory)"},
		{key: "uncertainty.hob_emissivity", doc: "half-width of the rectangular distribution of the hob top's emissivity, kept in (0, 1]", lo: 0, hi: 0.5, zero: "the input is exact",
			why: "physical: a fraction", src: "the material library's glass-ceramic entry, 0.90 ± 0.05 (estimate from glass tables), taken as a rectangular half-width"},
		{key: "uncertainty.limiter_k", doc: "standard deviation of the normal distribution of the limiter (regulator) setting: hob.limiter_c in heater mode, hob.temperature_c in solid-plate mode", unit: "K", lo: 0, hi: 100, zero: "the input is exact",
			why: "our bound", src: "ours: 0, the job's hob is the reference condition of the figures (set it, e.g. 15 K, to see how the loss varies from hob to hob; a rod limiter's switching point scatters by some tens of kelvin from unit to unit, from memory)"},
		{key: "uncertainty.glass_tau", doc: "half-width of the rectangular distribution of hob.glass_tau (heater mode), kept in [0, 0.99]", lo: 0, hi: 0.5, zero: "the input is exact",
			why: "physical: a fraction", src: "ours: 0, the reference condition (tint and make of glass-ceramic tops differ in their near-infrared window by some ±0.05, our estimate)"},
		{key: "uncertainty.power_pct", doc: "half-width of the rectangular distribution of the rated power (hob.heater_power_w, and rated_power_density_kw_m2 in temperature mode with power_limited), % of its value", unit: "%", lo: 0, hi: 50, zero: "the input is exact",
			why: "our bound", src: "ours: 0, the reference condition (IEC 60335-1 §10.1 lets a heating appliance's power input deviate from its rating by +5 % / −10 %, from memory)"},
		{key: "uncertainty.placement_mm", doc: "radius of the disc on which the pan's centre is drawn (uniformly) about pan.offset_mm, the pan set down on the zone by hand; drawn only on a flat hob top (a hob scan or profile would have to be placed again)", unit: "mm", lo: 0, hi: 50, zero: "the input is exact",
			why: "our bound: beyond it the pan leaves the zone", src: "ours: 0, the figures are for a centred pan (a pan centred by eye on a marked zone sits within some 5 mm; an off-centre pan always loses more, so this draw widens the interval upwards only)"},
		{key: "uncertainty.grid_placement", doc: "draw the trials' grid placement: each trial's coarse grid is one of the trial_coarsen² placements of its blocks on the analysis grid (a shift of whole analysis cells); nothing with trials on the analysis grid",
			src: "ours: on; the spread it adds is the coarse grid's, which errs high"},
		{key: "uncertainty.trial_coarsen", doc: "cell of the trials' grid from the pose on, in analysis cells (a coarse cell takes the lowest height of its block); each chain figure of a trial is shifted by the analysis's value less the coarse nominal runs' mean, or scaled by their ratio (contact area, rock, tip force); the form figures stay on the analysis grid", lo: 1, hi: 4, zero: "2",
			why: "our bound: at 4 a 1 mm cell becomes 4 mm, the contact patches' scale", src: "ours: 2 cuts the cells 4-fold; TestCoarseTrialsUnbiased bounds the bias left"},
	}
}

// materialKeys returns the specification of the keys of the [[material]]
// tables: a lab's own or overridden materials, in file order.
func materialKeys() []keySpec {
	return []keySpec{
		{key: "material.name", doc: "material name (a new one, or a built-in one to override)"},
		{key: "material.conductivity_w_mk", doc: "thermal conductivity", unit: "W/(m·K)", lo: 0.01, hi: 2500, zero: "keep the built-in value",
			why: "physical: from insulating ceramics to diamond"},
		{key: "material.density_kg_m3", doc: "density", unit: "kg/m³", lo: 100, hi: 25000, zero: "keep the built-in value",
			why: "physical: solids up to osmium (22 590 kg/m³)"},
		{key: "material.cp_j_kgk", doc: "specific heat", unit: "J/(kg·K)", lo: 100, hi: 2500, zero: "keep the built-in value",
			why: "physical: as pan.cp_j_kgk"},
		{key: "material.young_gpa", doc: "Young's modulus", unit: "GPa", lo: 0.1, hi: 1200, zero: "keep the built-in value",
			why: "physical: up to diamond (about 1100 GPa)"},
		{key: "material.poisson", doc: "Poisson's ratio", lo: 0, hi: 0.5, loOpen: true, hiOpen: true, zero: "keep the built-in value",
			why: "physical: isotropic solids lie below 0.5"},
		{key: "material.expansion_um_mk", doc: "linear thermal expansion", unit: "µm/(m·K)", lo: 0.01, hi: 200, zero: "keep the built-in value",
			why: "physical: from glass-ceramic (near 0) to polymers"},
		{key: "material.hardness_mpa", doc: "hardness", unit: "MPa", lo: 10, hi: 100000, zero: "keep the built-in value",
			why: "physical: up to diamond (about 100 GPa)"},
		{key: "material.emissivity", doc: "emissivity", lo: 0, hi: 1, loOpen: true, zero: "keep the built-in value", why: whyFraction},
		{key: "material.source", doc: "where the values come from"},
	}
}

// rangeText states the allowed values of a numeric key, with its unit.
func (s keySpec) rangeText() string {
	l, r := "[", "]"
	if s.loOpen {
		l = "("
	}
	if s.hiOpen {
		r = ")"
	}
	t := fmt.Sprintf("%s%s, %s%s", l, fmtNum(s.lo), fmtNum(s.hi), r)
	if s.unit != "" {
		t += " " + s.unit
	}
	if s.zero != "" {
		t = "0 (" + s.zero + ") or " + t
	}
	return t
}

// allowedText is rangeText for a message: "in [0.01, 10] mm", or "0 (no
// filter) or in [0.1, 80] mm".
func (s keySpec) allowedText() string {
	if s.zero == "" {
		return "in " + s.rangeText()
	}
	z := s
	z.zero = ""
	return "0 (" + s.zero + ") or in " + z.rangeText()
}

// inRange reports whether v is an allowed value of the numeric key s.
func (s keySpec) inRange(v float64) bool {
	if s.zero != "" && v == 0 {
		return true
	}
	okLo := v >= s.lo && !(s.loOpen && v == s.lo)
	okHi := v <= s.hi && !(s.hiOpen && v == s.hi)
	return okLo && okHi // false for NaN and ±Inf outside every range
}

// fmtNum formats a bound or a default: plain digits, an exponent only for
// large or tiny numbers.
func fmtNum(v float64) string {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	if a := math.Abs(v); a != 0 && (a >= 1e9 || a < 1e-4) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

// JobDoc returns the default job written out as a job file, every key with
// its meaning, unit, default and allowed range (and the reason for that
// range); "gapflux job" prints it. Decoding it gives DefaultJob (a test
// checks this). It is built on each call, not at start-up, which it slowed
// by some 3.5 ms. The scenario is our own invention (DESIGN 5.3a), not a
// standard's; a lab must set the tolerances of the cookware and hob
// standards it works to.
func JobDoc() string {
	specs := map[string]keySpec{}
	for _, s := range jobKeys() {
		specs[s.key] = s
	}
	var b strings.Builder
	b.WriteString(`# gapflux job file: every key carries its unit in its name; every key is
# optional and defaults to the value shown. Unknown keys are an error, and so
# is a value outside its allowed range; each range says why it is so:
# "physical" (what the quantity can be), "cookware" or "hob" (what real
# products are), or "our bound" (ours, mostly to bound memory and time).
# The default scenario (an aluminium pan on a radiant glass-ceramic zone) is
# invented for gapflux; it is not any standard's test setup. The
# tolerances are ours too: use the limits of the standards you work to.
# Job files and the profiles they name may be at most 4 MiB; profile paths
# are relative to the job file's folder and may not leave it.
`)
	job := DefaultJob()
	v := reflect.ValueOf(job)
	for i := range v.NumField() {
		name := tomlName(v.Type().Field(i))
		f := v.Field(i)
		if f.Kind() == reflect.Slice { // [[material]]: an example, commented out
			b.WriteString("\n# Add or override materials (unset values keep the built-in ones):\n")
			ex := reflect.ValueOf(exampleMaterial())
			docTable(&b, "# ", "[["+name+"]]", name, ex, specs)
			continue
		}
		docTable(&b, "", "["+name+"]", name, f, specs)
	}
	return b.String()
}

// exampleMaterial is the commented [[material]] example of JobDoc.
func exampleMaterial() MaterialJob {
	return MaterialJob{Name: "alu-3004", ConductivityWMK: 162, DensityKgM3: 2720, CpJKgK: 893, YoungGPa: 69,
		Poisson: 0.33, ExpansionUMMK: 23.9, HardnessMPa: 450, Emissivity: 0.2, Source: "supplier data sheet, 2026"}
}

// docTable writes one table of JobDoc: its header, its plain keys, then its
// arrays of tables; every line starts with lead.
func docTable(b *strings.Builder, lead, header, path string, v reflect.Value, specs map[string]keySpec) {
	fmt.Fprintf(b, "\n%s%s\n", lead, header)
	var sub []int
	for k := range v.NumField() {
		f := v.Field(k)
		if f.Kind() == reflect.Slice && f.Type().Elem().Kind() == reflect.Struct {
			sub = append(sub, k)
			continue
		}
		name := tomlName(v.Type().Field(k))
		s := specs[path+"."+name]
		for _, line := range wrap(keyComment(s, f, lead != ""), 76) {
			fmt.Fprintf(b, "%s# %s\n", lead, line)
		}
		fmt.Fprintf(b, "%s%s = %s\n", lead, name, tomlValue(f))
	}
	for _, k := range sub {
		name := tomlName(v.Type().Field(k))
		for e := range v.Field(k).Len() {
			docTable(b, lead, "[["+path+"."+name+"]]", path+"."+name, v.Field(k).Index(e), specs)
		}
	}
}

// keyComment is the documentation of one key: meaning; unit, default (or,
// in a commented example, the example's value) and allowed values.
func keyComment(s keySpec, def reflect.Value, example bool) string {
	dflt := "; default "
	if example {
		dflt = "; example "
	}
	t := s.doc
	switch def.Kind() {
	case reflect.Float64, reflect.Int, reflect.Array:
		if s.unit != "" {
			t += "; unit " + s.unit
		}
		t += dflt + tomlValue(def) + "; allowed " + s.rangeText()
		if def.Kind() == reflect.Array {
			t += fmt.Sprintf(" each, exactly %d numbers", def.Len())
		}
		if s.why != "" {
			t += " (" + s.why + ")"
		}
		if s.src != "" {
			t += "; default from: " + s.src
		}
	case reflect.String:
		if s.oneOf != nil {
			q := make([]string, len(s.oneOf))
			for i, o := range s.oneOf {
				q[i] = strconv.Quote(o)
			}
			t += "; one of " + strings.Join(q, ", ")
		}
		if s.src != "" {
			t += "; default from: " + s.src
		}
	case reflect.Bool:
		t += "; true or false"
		if s.src != "" {
			t += "; default from: " + s.src
		}
	}
	return t
}

// tomlValue formats a default as TOML.
func tomlValue(v reflect.Value) string {
	switch v.Kind() {
	case reflect.Float64:
		s := fmtNum(v.Float())
		if !strings.ContainsAny(s, ".e") {
			s += ".0"
		}
		return s
	case reflect.Int:
		return strconv.FormatInt(v.Int(), 10)
	case reflect.String:
		return strconv.Quote(v.String())
	case reflect.Bool:
		return strconv.FormatBool(v.Bool())
	case reflect.Array:
		el := make([]string, v.Len())
		for i := range el {
			el[i] = tomlValue(v.Index(i))
		}
		return "[" + strings.Join(el, ", ") + "]"
	}
	return fmt.Sprint(v.Interface())
}

// tomlName is a struct field's TOML key.
func tomlName(f reflect.StructField) string {
	name, _, _ := strings.Cut(f.Tag.Get("toml"), ",")
	return name
}

// wrap breaks s into lines of at most width bytes at spaces.
func wrap(s string, width int) []string {
	var lines []string
	line := ""
	for _, w := range strings.Fields(s) {
		if line != "" && len(line)+1+len(w) > width {
			lines = append(lines, line)
			line = "  " + w
			continue
		}
		if line != "" {
			line += " "
		}
		line += w
	}
	return append(lines, line)
}
