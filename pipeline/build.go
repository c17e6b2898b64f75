package pipeline

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"gapflux/contact"
	"gapflux/scan"
	"gapflux/thermal"
)

// MaterialLibrary returns the built-in materials with the job's additions
// and overrides. An override changes only the values it sets.
func (j *Job) MaterialLibrary() ([]contact.Material, error) {
	lib := contact.Materials()
	for _, m := range j.Materials {
		i := -1
		for k := range lib {
			if lib[k].Name == m.Name {
				i = k
			}
		}
		if i < 0 {
			lib = append(lib, contact.Material{Name: m.Name, Source: "job file"})
			i = len(lib) - 1
		}
		mat := &lib[i]
		cite := m.Source
		if cite == "" {
			cite = "job file"
		}
		set := func(dst *float64, src *string, v, scale float64) {
			if v != 0 {
				*dst, *src = v*scale, cite
			}
		}
		srcs := &mat.Sources
		set(&mat.ConductivityWMK, &srcs.ConductivityWMK, m.ConductivityWMK, 1)
		set(&mat.DensityKgM3, &srcs.DensityKgM3, m.DensityKgM3, 1)
		set(&mat.CpJKgK, &srcs.CpJKgK, m.CpJKgK, 1)
		set(&mat.YoungPa, &srcs.YoungPa, m.YoungGPa, 1e9)
		set(&mat.Poisson, &srcs.Poisson, m.Poisson, 1)
		set(&mat.ExpansionPerK, &srcs.ExpansionPerK, m.ExpansionUMMK, 1e-6)
		set(&mat.HardnessPa, &srcs.HardnessPa, m.HardnessMPa, 1e6)
		set(&mat.Emissivity, &srcs.Emissivity, m.Emissivity, 1)
		if m.Source != "" {
			mat.Source = m.Source
		} else if mat.Source != "job file" {
			mat.Source += "; overridden by the job file"
		}
		if err := mat.Validate(); err != nil {
			return nil, fmt.Errorf("job: material %s: %w", m.Name, err)
		}
	}
	return lib, nil
}

// interfaceParams builds the pan–hob interface from the job (DESIGN 5.2).
func interfaceParams(job Job, lib []contact.Material) (contact.InterfaceParams, error) {
	var p contact.InterfaceParams
	panMat, err := contact.LookupMaterial(lib, job.Pan.Layers[0].Material)
	if err != nil {
		return p, fmt.Errorf("job: pan.layers[0]: %w", err)
	}
	hobKey, hobName, _ := hobPlate(job)
	hobMat, err := contact.LookupMaterial(lib, hobName)
	if err != nil {
		return p, fmt.Errorf("job: %s: %w", hobKey, err)
	}
	ij := job.Interface
	if ij.Model == contact.ModelPlasticOld {
		ij.Model = contact.ModelPlastic // the old name, an alias
	}
	corr, err := contact.ParseSlopeCorrelation(ij.SlopeCorrelation)
	if err != nil {
		return p, fmt.Errorf("job: interface.slope_correlation: %w", err)
	}
	sigmaM := contact.CombinedRoughnessM(ij.PanSqUM*1e-6, ij.HobSqUM*1e-6)
	// The slope correlations are for the combined (sum) surface: use them
	// on the combined σ unless both slopes are given.
	slope := contact.CombinedSlope(ij.PanSlope, ij.HobSlope)
	if ij.PanSlope == 0 || ij.HobSlope == 0 {
		slope, _ = corr.Slope(sigmaM)
	}
	p = contact.InterfaceParams{
		SigmaM:         sigmaM,
		Slope:          slope,
		KSolidWMK:      contact.HarmonicConductivityWMK(panMat.ConductivityWMK, hobMat.ConductivityWMK),
		HardnessPa:     ij.MicrohardnessMPa * 1e6,
		EPrimePa:       contact.EffectiveModulusPa(panMat.YoungPa, panMat.Poisson, hobMat.YoungPa, hobMat.Poisson),
		Model:          ij.Model,
		Accommodation1: ij.HobAccommodation,
		Accommodation2: ij.PanAccommodation,
		GasPressurePa:  ij.GasPressureKPa * 1e3,
		Gamma:          1.4,
		Emissivity1:    orMaterial(job.Hob.Emissivity, hobMat.Emissivity),
		Emissivity2:    orMaterial(job.Pan.Emissivity, panMat.Emissivity),
	}
	if err := p.Validate(); err != nil {
		return p, fmt.Errorf("job: %w", err)
	}
	return p, nil
}

// hobPlate returns the job key, material name and thickness (mm) of the
// hob's top plate: the glass in heater and temperature modes, the heated
// plate in solid-plate mode.
func hobPlate(job Job) (key, material string, thicknessMM float64) {
	if job.Hob.Mode == "solid-plate" {
		return "hob.plate_material", job.Hob.PlateMaterial, job.Hob.PlateThicknessMM
	}
	return "hob.material", job.Hob.Material, job.Hob.ThicknessMM
}

// heated reports whether the job's hob is a heated plate solved with its
// own nodes (heater and solid-plate modes).
func (j *Job) heated() bool { return j.Hob.Mode != "temperature" }

// orMaterial returns the job's value v, or the material's m when v is 0
// (the job keys pan.emissivity and hob.emissivity: 0 = from the material).
func orMaterial(v, m float64) float64 {
	if v == 0 {
		return m
	}
	return v
}

// baseLayers converts the job's pan layers.
func baseLayers(job Job, lib []contact.Material) ([]thermal.Layer, error) {
	var out []thermal.Layer
	for i, l := range job.Pan.Layers {
		m, err := contact.LookupMaterial(lib, l.Material)
		if err != nil {
			return nil, fmt.Errorf("job: pan.layers[%d]: %w", i, err)
		}
		out = append(out, thermal.Layer{ThicknessM: l.ThicknessMM / 1e3, ConductivityWMK: m.ConductivityWMK})
	}
	return out, nil
}

// waterSide builds the water-side model of the job.
func waterSide(job Job, diameterM float64) thermal.WaterSide {
	switch job.Water.Side {
	case "natural":
		return thermal.NaturalWater{DiameterM: diameterM}
	case "boiling":
		csf, n := rohsenow(job.Water)
		return thermal.BoilingWater{Csf: csf, N: n, DiameterM: diameterM}
	}
	return thermal.FixedWater{HWM2K: job.Water.HWM2K}
}

// rohsenow returns the Rohsenow C_sf and n of the job: those of the named
// surface, each replaced by rohsenow_csf or rohsenow_n when that is set.
func rohsenow(w WaterJob) (csf, n float64) {
	for _, sf := range thermal.RohsenowSurfaces() {
		if sf.Name == w.RohsenowSurface {
			csf, n = sf.Csf, sf.N
		}
	}
	if w.RohsenowCsf != 0 {
		csf = w.RohsenowCsf
	}
	if w.RohsenowN != 0 {
		n = w.RohsenowN
	}
	return csf, n
}

// plateProblem builds the plate problem of the job on the surface's grid,
// without its interface and water temperature.
func plateProblem(job Job, lib []contact.Material, s *scan.Surface, inBase []bool, offsetM [2]float64, glassRadiusM float64) (*thermal.Problem, error) {
	layers, err := baseLayers(job, lib)
	if err != nil {
		return nil, err
	}
	baseD := 0.0
	for _, in := range inBase {
		if in {
			baseD += s.CellM * s.CellM
		}
	}
	baseD = 2 * math.Sqrt(baseD/math.Pi)
	p := &thermal.Problem{
		Grid:       thermal.Grid{Nx: s.Nx, Ny: s.Ny, CellM: s.CellM, X0M: s.X0M, Y0M: s.Y0M},
		InBase:     inBase,
		BaseLayers: layers,
		Water:      waterSide(job, baseD),
	}
	panMat, err := contact.LookupMaterial(lib, job.Pan.Layers[0].Material)
	if err != nil {
		return nil, fmt.Errorf("job: pan.layers[0]: %w", err)
	}
	p.PanEmissivity = orMaterial(job.Pan.Emissivity, panMat.Emissivity)
	roomK := job.Hob.RoomC + kelvin
	zoneCentre := [2]float64{-offsetM[0], -offsetM[1]}
	switch job.Hob.Mode {
	case "temperature":
		top := make([]float64, len(inBase))
		prof, err := readProfile(job.Hob.TemperatureProfile, "t_c")
		if err != nil {
			return nil, err
		}
		for k := range top {
			top[k] = job.Hob.TemperatureC + kelvin
			if prof != nil {
				x, y := cellCentre(s, k)
				top[k] = prof.at(math.Hypot(x-zoneCentre[0], y-zoneCentre[1])) + kelvin
			}
		}
		p.Temperature = &thermal.TemperatureHob{TopK: top}
		if job.Hob.PowerLimited {
			p.Temperature.RatedPowerW = ratedPowerW(job, math.Pi*baseD*baseD/4)
		}
	default:
		key, name, thickMM := hobPlate(job)
		glass, err := contact.LookupMaterial(lib, name)
		if err != nil {
			return nil, fmt.Errorf("job: %s: %w", key, err)
		}
		rodL := job.Hob.RodLengthMM / 1e3
		if rodL == 0 {
			rodL = job.Hob.ZoneDiameterMM / 1e3
		}
		h := &thermal.HeaterHob{
			PowerW:          job.Hob.HeaterPowerW,
			ZoneDiameterM:   job.Hob.ZoneDiameterMM / 1e3,
			ZoneCentreM:     zoneCentre,
			Glass:           thermal.Layer{ThicknessM: thickMM / 1e3, ConductivityWMK: glass.ConductivityWMK},
			GlassEmissivity: orMaterial(job.Hob.Emissivity, glass.Emissivity),
			GlassRadiusM:    glassRadiusM,
			DownHWM2K:       job.Hob.DownLossWM2K,
			RoomK:           roomK,
			LimiterK:        job.Hob.LimiterC + kelvin,
			Rod:             &thermal.Rod{OffsetM: job.Hob.RodOffsetMM / 1e3, LengthM: rodL},
		}
		if job.Hob.Mode == "solid-plate" {
			// The regulator holds the plate at its setting; no radiation
			// passes a metal plate.
			h.LimiterK = job.Hob.TemperatureC + kelvin
		} else {
			h.Coil = &thermal.Coil{Emissivity: job.Hob.CoilEmissivity, BandLoM: job.Hob.GlassWindowLoUM * 1e-6,
				BandHiM: job.Hob.GlassWindowHiUM * 1e-6, Tau: job.Hob.GlassTau}
		}
		prof, err := readProfile(job.Hob.PowerProfile, "relative")
		if err != nil {
			return nil, err
		}
		if prof != nil {
			h.PowerProfile = prof.at
		}
		p.Heater = h
	}
	return p, nil
}

// ratedPowerW is the temperature mode's rated power, W: the job's rated
// power density over the base area baseM2 when set, else heater_power_w.
func ratedPowerW(job Job, baseM2 float64) float64 {
	if d := job.Hob.RatedPowerDensityKW; d > 0 {
		return d * 1e3 * baseM2
	}
	return job.Hob.HeaterPowerW
}

func cellCentre(s *scan.Surface, k int) (x, y float64) { return s.X(k % s.Nx), s.Y(k / s.Nx) }

// radialProfile is a piecewise-linear function of radius (m).
type radialProfile struct{ rM, v []float64 }

func (p *radialProfile) at(rM float64) float64 {
	n := len(p.rM)
	if rM <= p.rM[0] {
		return p.v[0]
	}
	if rM >= p.rM[n-1] {
		return p.v[n-1]
	}
	i := 1
	for p.rM[i] < rM {
		i++
	}
	t := (rM - p.rM[i-1]) / (p.rM[i] - p.rM[i-1])
	return p.v[i-1] + t*(p.v[i]-p.v[i-1])
}

// readProfile reads a radial profile CSV "r_mm,<col>" (contact.ReadProfile).
// An empty path returns nil.
func readProfile(path, col string) (*radialProfile, error) {
	if path == "" {
		return nil, nil
	}
	f, err := openProfile(path)
	if err != nil {
		return nil, fmt.Errorf("job: %w", err)
	}
	defer f.Close()
	rM, v, err := contact.ReadProfile(f, path, col)
	if err != nil {
		return nil, err
	}
	return &radialProfile{rM: rM, v: v}, nil
}

// profileFile is an open profile CSV that cannot be read past the size cap.
type profileFile struct {
	*os.File
	name string
	left int64 // bytes that may still be read
}

// openProfile opens a profile CSV of at most maxProfileBytes bytes. A
// larger file is an error naming it and the cap, whether its size shows
// on opening or only while it is read (a file still growing): never
// silently truncated.
func openProfile(path string) (*profileFile, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	st, err := f.Stat()
	if err == nil && st.Mode().IsRegular() && st.Size() > maxProfileBytes {
		f.Close()
		return nil, fmt.Errorf("%s: %d bytes, above the %d MiB cap for profile files", path, st.Size(), maxProfileBytes>>20)
	}
	return &profileFile{File: f, name: path, left: maxProfileBytes}, nil
}

func (p *profileFile) Read(b []byte) (int, error) {
	if int64(len(b)) > p.left+1 {
		b = b[:p.left+1]
	}
	n, err := p.File.Read(b)
	p.left -= int64(n)
	if p.left < 0 {
		return n, fmt.Errorf("%s is larger than the %d MiB cap for profile files", p.name, maxProfileBytes>>20)
	}
	return n, err
}

// hobSurface returns the hob top on the pan grid: from a hob scan, a radial
// height profile (CSV), or an ideal flat hob.
func hobSurface(path string, like *scan.Surface, offsetM [2]float64, job Job) (*scan.Surface, *FileReport, error) {
	if path == "" && job.Hob.Profile == "" {
		return contact.FlatHob(like), nil, nil
	}
	if path == "" || strings.EqualFold(filepath.Ext(path), ".csv") && isProfileCSV(path) {
		if path == "" {
			path = job.Hob.Profile
		}
		f, err := openProfile(path)
		if err != nil {
			return nil, nil, fmt.Errorf("hob profile: %w", err)
		}
		defer f.Close()
		rM, zM, err := contact.ReadRadialProfile(f, path)
		if err != nil {
			return nil, nil, fmt.Errorf("hob profile: %w", err)
		}
		s, err := contact.RadialHob(like, rM, zM, offsetM)
		if err != nil {
			return nil, nil, fmt.Errorf("hob profile: %w", err)
		}
		sha, err := FileSHA256(path)
		if err != nil {
			return nil, nil, err
		}
		return s, &FileReport{Path: filepath.Base(path), Format: "radial-profile-csv", SHA256: sha,
			Points: len(rM), Unit: "mm", UnitSource: "header"}, nil
	}
	hj := job
	hj.Grid.Face, hj.Grid.DiameterMM = "", 0
	cloud, fr, err := readScan(path, filepath.Base(path), hj, "")
	if err != nil {
		if bareProfile(path) {
			return nil, nil, fmt.Errorf("hob: %s: two numbers a line and no header, read as a scan (which needs x, y, z): "+
				"if it is a radial hob profile, add the header line r_mm,z_mm (radius and height in mm) as its first line", filepath.Base(path))
		}
		return nil, nil, fmt.Errorf("hob: %w", err)
	}
	lev, err := scan.Level(cloud, scan.LevelOptions{Face: "up", HobTop: true, Reuse: true, DropNormals: true})
	if err != nil {
		return nil, nil, fmt.Errorf("hob %s: levelling: %w", fr.Path, err)
	}
	if err := squareGridLimit(&job, "the hob scan's grid", lev.RadiusM, "the hob scan's diameter"); err != nil {
		return nil, nil, fmt.Errorf("hob %s: %w", fr.Path, err)
	}
	g, err := scan.Grid(lev, scan.GridOptions{CellM: like.CellM, OutlierK: job.Grid.OutlierK, MaxCells: job.Limits.MaxCells})
	if err != nil {
		return nil, nil, fmt.Errorf("hob %s: gridding: %w", fr.Path, err)
	}
	if err := checkFilter(&job, "the hob scan's grid", g.Raw.Nx, g.Raw.Ny); err != nil {
		return nil, nil, fmt.Errorf("hob %s: %w", fr.Path, err)
	}
	filt, err := scan.Filter(g.Raw, scan.FilterOptions{CutoffM: job.Grid.CutoffMM / 1e3, Method: scan.FilterMethod(job.Grid.Filter)})
	if err != nil {
		return nil, nil, fmt.Errorf("hob %s: filter: %w", fr.Path, err)
	}
	s, err := contact.ResampleHob(filt.Form, like, offsetM)
	if err != nil {
		return nil, nil, fmt.Errorf("hob %s: %w", fr.Path, err)
	}
	return s, &fr, nil
}

// bareProfile reports whether a text file's first line that is neither
// empty nor a # comment holds exactly two numbers: a radial profile
// without its r_mm,z_mm header.
func bareProfile(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	buf := make([]byte, 4096)
	n, _ := io.ReadFull(f, buf)
	for _, line := range strings.Split(string(buf[:n]), "\n") {
		line = strings.TrimSpace(line)
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		fields := strings.FieldsFunc(line, func(r rune) bool { return r == ',' || r == ';' || r == ' ' || r == '\t' })
		if len(fields) != 2 {
			return false
		}
		for _, v := range fields {
			if _, err := strconv.ParseFloat(v, 64); err != nil {
				return false
			}
		}
		return true
	}
	return false
}

// isProfileCSV reports whether a CSV's header names a radial profile.
func isProfileCSV(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	buf := make([]byte, 256)
	n, _ := f.Read(buf)
	first, _, _ := strings.Cut(string(buf[:n]), "\n")
	first = strings.ToLower(strings.TrimSpace(first))
	return strings.HasPrefix(first, "r_mm") || strings.HasPrefix(first, "r,")
}

type heatupOut struct {
	report   *HeatupReport
	warnings []string
}

// heatupReport integrates the heat-up of the water load for the scan and
// its flat twin (DESIGN 5.4; quasi-steady, see thermal.Heatup). power(scanIf)
// and power(flatIf) run in two goroutines at once, so they must share no
// solver. samples > 0 sets the number of power samples (a test's
// reference); 0 takes them by the water side.
func heatupReport(ctx context.Context, job Job, lib []contact.Material, radiusM float64,
	power func(thermal.Interface) thermal.PowerFunc, scanIf, flatIf thermal.Interface, samples int) (*heatupOut, error) {
	panCp := job.Pan.CpJKgK
	if panCp == 0 {
		m, err := contact.LookupMaterial(lib, job.Pan.Layers[0].Material)
		if err != nil {
			return nil, err
		}
		panCp = m.CpJKgK
	}
	innerD := job.Pan.InnerDiameterMM / 1e3
	if innerD == 0 {
		innerD = 2 * radiusM
	}
	// Wetted wall height from the water volume (density at 20 °C, 998.2
	// kg/m³, Incropera Table A.6 interpolated; a geometric estimate).
	depthM := job.Water.MassKg / 998.2 / (math.Pi * innerD * innerD / 4)
	load := thermal.Load{
		WaterKg: job.Water.MassKg, FromK: job.Water.FromC + kelvin, ToK: job.Water.ToC + kelvin,
		PanKg: job.Pan.MassKg, PanCpJKgK: panCp,
		WaterSurfaceDiameterM: innerD, WallHeightM: depthM, WallDiameterM: innerD,
		WallEmissivity: job.Pan.WallEmissivity, WaterEmissivity: job.Water.Emissivity,
		RoomK: job.Hob.RoomC + kelvin, Evaporation: job.Water.Evaporation, RoomHumidity: 0.5,
	}
	// The base power is nearly linear in the water temperature with a fixed
	// water-side h: two samples (the ends) then agree with three or seven
	// within 0.3 % in heat-up time on the demo's bases. The natural and
	// boiling water sides are curved: three samples.
	opt := thermal.HeatupOptions{PowerSamples: 3}
	if job.Water.Side == "fixed" {
		opt.PowerSamples = 2
	}
	if samples > 0 {
		opt.PowerSamples = samples
	}
	run := func(iface thermal.Interface) (*thermal.HeatupResult, error) {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		return thermal.HeatupContext(ctx, load, power(iface), opt)
	}
	// The scan's and the flat twin's heat-ups are independent (power gives
	// each interface its own solver): they run at once.
	var s, f *thermal.HeatupResult
	errScan, errFlat := both(
		func() (err error) { s, err = run(scanIf); return err },
		func() (err error) { f, err = run(flatIf); return err })
	if err := errScan; err != nil {
		var stall *thermal.StallError
		if errors.As(err, &stall) {
			return nil, fmt.Errorf("the water never reaches %.0f °C on this base: heat in equals losses at %.1f °C", job.Water.ToC, stall.StallK-kelvin)
		}
		return nil, err
	}
	if errFlat != nil {
		return nil, fmt.Errorf("flat twin: %w", errFlat)
	}
	kg := job.Water.MassKg
	hr := &HeatupReport{
		WaterKg: kg, FromC: job.Water.FromC, ToC: job.Water.ToC,
		TimeS: roundTo(s.TimeS, 2), FlatTimeS: roundTo(f.TimeS, 2),
		EnergyKJ: roundTo(s.SourceEnergyJ/1e3, 3), FlatEnergyKJ: roundTo(f.SourceEnergyJ/1e3, 3),
		ExtraEnergyKJ: roundTo((s.SourceEnergyJ-f.SourceEnergyJ)/1e3, 3),
		WhPerKg:       roundTo(s.SourceEnergyJ/3600/kg, 3), FlatWhPerKg: roundTo(f.SourceEnergyJ/3600/kg, 3),
		QuasiSteady: true,
	}
	if f.TimeS > 0 {
		hr.ExtraTimePct = roundTo(100*(s.TimeS/f.TimeS-1), 3)
	}
	out := &heatupOut{report: hr}
	out.warnings = append(out.warnings, prefixed("heat-up: ", s.Warnings)...)
	return out, nil
}
