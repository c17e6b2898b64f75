package pipeline

// DefaultJobTOML is the default job written out with every key, its unit
// and its meaning. Decoding it gives DefaultJob (a test checks this). The
// scenario is our own invention (DESIGN 5.3a), not a standard's; a lab must
// set the tolerances of the cookware and hob standards it works to.
const DefaultJobTOML = `# gapflux job file: every key carries its unit in its name; every key is
# optional and defaults to the value shown. Unknown keys are an error.
# The default scenario (an aluminium pan on a radiant glass-ceramic zone) is
# invented for gapflux; it is not any standard's test setup.

[grid]
cell_mm = 0.0          # grid cell size (0 = automatic: the median point spacing, 0.5 ... 2 mm)
cutoff_mm = 8.0        # form filter cut-off (0 = off)
filter = "robust"      # robust Gaussian regression (ISO 16610-71) or "gaussian" (linear, ISO 16610-61)
ring_mm = 5.0          # ring width of the ring table
rock_mm = 0.1          # the pan "rocks" when the pressed rim drops more than this
outlier_k = 5.0        # robust sigmas of the local outlier test
units = ""             # unit of the scan's numbers: mm, m, um, in ("" = header hint, else mm)
face = ""              # outer face toward scanner +z ("up") or -z ("down"); "" = detect
diameter_mm = 0.0      # base diameter (0 = circle fit to the base boundary)
max_slope_deg = 0.0    # base segmentation slope limit (0 = the built-in default)

[pan]
mass_kg = 1.0
cp_j_kgk = 0.0         # specific heat of the pan (0 = from the first base layer's material)
emissivity = 0.3       # outer face of the base, toward the hob
wall_emissivity = 0.3  # outer wall, for heat-up losses
inner_diameter_mm = 0.0  # open water surface and wetted wall (0 = base diameter)
centre_of_mass_mm = [0.0, 0.0]  # in the base frame
offset_mm = [0.0, 0.0]          # pan centre relative to the hob zone centre

[[pan.layers]]         # base layers from the hob side up; repeat for clad bases
material = "alu-1050"  # a name from "gapflux materials" or a [[material]] below
thickness_mm = 4.0

[hob]
mode = "heater"              # "heater" (radiant zone under glass) or "temperature" (fixed top)
material = "glass-ceramic"
thickness_mm = 4.0
emissivity = 0.9             # glass top
temperature_c = 250.0        # temperature mode: uniform top temperature
temperature_profile = ""     # temperature mode: CSV r_mm,t_c (overrides temperature_c)
heater_power_w = 1800.0      # heater mode: rated zone power
zone_diameter_mm = 180.0
power_profile = ""           # heater mode: CSV r_mm,relative power density ("" = uniform)
down_loss_w_m2k = 10.0       # heater mode: glass to the room below
transmitted_fraction = 0.0   # heater mode: share of heater power radiated straight to the pan
limiter_c = 560.0            # heater mode: the heater cycles to hold the glass at this
margin_mm = 30.0             # heater mode: glass modelled beyond the zone and the base
room_c = 23.0
profile = ""                 # hob top height profile CSV r_mm,z_mm when there is no hob scan
rated_power_density_kw_m2 = 0.0  # temperature mode warning threshold (0 = heater power / zone area)

[interface]
model = "mikic-plastic"          # or "mikic-elastic"
pan_sq_um = 1.2                  # RMS roughness Sq of the pan's outer face
hob_sq_um = 0.9                  # and of the hob top (combined: 1.5 um)
pan_slope = 0.0                  # mean absolute asperity slope (0 = from the correlation)
hob_slope = 0.0
slope_correlation = "antonetti"  # "antonetti", "lambert-fletcher" or "tanner-fahoum"
microhardness_mpa = 600.0        # contact microhardness of the softer surface
pan_accommodation = 0.8          # thermal accommodation coefficient of air
hob_accommodation = 0.8
gas_pressure_kpa = 101.325

[water]
mass_kg = 1.5
from_c = 15.0          # heat-up start
to_c = 90.0            # heat-up end
steady_c = 60.0        # water temperature of the steady heat figures
side = "fixed"         # "fixed" (h_w_m2k), "natural" (natural convection) or "boiling" (Rohsenow above 100 C)
h_w_m2k = 1000.0
rohsenow_surface = ""  # a named surface sets C_sf and n: copper-scored, copper-polished, stainless-etched,
                       # stainless-mech-polished, stainless-ground-polished, brass, nickel, platinum,
                       # aluminium-oxidised (Incropera Table 10.1; Cao 2009)
rohsenow_csf = 0.011   # else these: Rohsenow surface-fluid coefficient and exponent (oxidised aluminium)
rohsenow_n = 1.26
emissivity = 0.95      # open water surface
evaporation = false    # latent heat lost from the open surface (heat-mass analogy; overstates near 90 C)

[tolerances]           # our own defaults: use the limits of the standards you work to
concavity_min_pct = 0.0    # of diameter; 0 forbids a convex base
concavity_max_pct = 0.5
flatness_mz_max_mm = 1.0
loss_max_pct = 10.0
rocking_allowed = false

[limits]
max_points = 20000000
max_file_mb = 2048.0

# Add or override materials (SI-with-units keys; unset values keep the
# built-in ones):
# [[material]]
# name = "alu-3004"
# conductivity_w_mk = 162.0
# density_kg_m3 = 2720.0
# cp_j_kgk = 893.0
# young_gpa = 69.0
# poisson = 0.33
# expansion_um_mk = 23.9
# hardness_mpa = 450.0
# emissivity = 0.2
# source = "supplier data sheet, 2026"
`
