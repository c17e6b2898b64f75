package contact

import (
	"fmt"
	"math"
	"strings"
	"sync"

	"gapflux/fluid"
)

// Interface models (InterfaceParams.Model).
const (
	// ModelPlastic is the Cooper–Mikic–Yovanovich plastic solid-spot
	// model with Yovanovich's (1982) fit constants 1.25 and 0.95
	// (PlasticContactWM2K); the default.
	ModelPlastic = "cmy-plastic"
	// ModelPlasticOld is the name ModelPlastic had before issue 9. It is
	// still accepted and means exactly ModelPlastic (CanonicalModel); it
	// is not Mikic's own 1974 plastic fit (1.13, 0.94).
	ModelPlasticOld = "mikic-plastic"
	// ModelElastic is Mikic's (1974) elastic model with the coefficient
	// 1.54 of Yovanovich's reviews (Mikic printed 1.55) and exponent 0.94
	// (ElasticContactWM2K).
	ModelElastic = "mikic-elastic"
)

// ContactBandSigmas is the width of the contact band in combined RMS
// roughnesses: cells with gap g ≤ 3σ are contact cells (DESIGN.md 5.2).
const ContactBandSigmas = 3.0

// SeparationFloorRatio is the smallest relative pressure at which the
// mean-plane separation is evaluated: below it, including an unloaded
// band, Y is taken at 1e-9 (Y ≈ 6.0σ). Our own choice; the Gaussian tail
// holds no information that deep.
const SeparationFloorRatio = 1e-9

// Flags report where an interface conductance left the range of its
// correlations, or another regime change worth a warning.
type Flags uint32

const (
	// OutOfRangeLow: the contact band's relative pressure is below 1e-6, the
	// bottom of the range of the solid-spot and separation correlations.
	// Both were evaluated as is (power law and logarithm), not clamped.
	OutOfRangeLow Flags = 1 << iota
	// OutOfRangeHigh: the relative pressure is above 2e-2. The solid-spot
	// power law was evaluated as is; the separation at 2e-2.
	OutOfRangeHigh
	// NoLoad: the contact band carries no pressure (P ≤ 0): no solid-spot
	// conductance; the separation was taken at SeparationFloorRatio.
	NoLoad
	// Convective: the gap's Rayleigh number exceeds 1708 and the gas term
	// was multiplied by the Hollands et al. (1975) Nusselt number.
	Convective
	// FilmClamped: the film temperature was outside the air table
	// (250–1000 K); air properties were taken at the nearer end.
	FilmClamped
)

var flagNames = [...]string{"out-of-range-low", "out-of-range-high", "no-load", "convective", "film-clamped"}

// String lists the set flags joined by "|", or "none".
func (f Flags) String() string {
	if f == 0 {
		return "none"
	}
	var s []string
	for i, n := range flagNames {
		if f&(1<<i) != 0 {
			s = append(s, n)
		}
	}
	if rest := f &^ (1<<len(flagNames) - 1); rest != 0 {
		s = append(s, fmt.Sprintf("0x%x", uint32(rest)))
	}
	return strings.Join(s, "|")
}

// InterfaceParams describes a pan–hob interface, SI throughout
// (DESIGN.md 5.2, defaults 5.3a). Surface 1 is the hob, surface 2 the pan.
type InterfaceParams struct {
	SigmaM     float64 // combined RMS roughness σ, m (CombinedRoughnessM)
	Slope      float64 // combined mean absolute asperity slope m (CombinedSlope or a SlopeCorrelation)
	KSolidWMK  float64 // harmonic-mean conductivity k_s of the two solids, W/(m·K)
	HardnessPa float64 // contact microhardness H_c of the softer surface, Pa (plastic model)
	EPrimePa   float64 // effective elastic modulus E′, Pa (elastic model)

	// Model is ModelPlastic (also when empty, or ModelPlasticOld) or
	// ModelElastic.
	Model string

	// Thermal accommodation coefficients of the gas on the hob and the pan.
	Accommodation1, Accommodation2 float64
	GasPressurePa                  float64 // pressure of the gas in the gap, Pa
	Gamma                          float64 // ratio of specific heats of the gas (1.4 for air)

	// Total hemispherical emissivities of the hob top and the pan base.
	Emissivity1, Emissivity2 float64
}

// DefaultInterfaceParams returns the interface of DESIGN.md 5.3a (our own
// invented scenario): aluminium 1050 pan on glass-ceramic, combined
// roughness 1.5 µm, slope from Antonetti (0.1471), microhardness 600 MPa,
// accommodation 0.8 on both sides, air at 1 atm, glass emissivity 0.9 and
// pan emissivity 0.3, plastic model.
func DefaultInterfaceParams() InterfaceParams {
	lib := Materials()
	pan, err := LookupMaterial(lib, "alu-1050")
	if err != nil {
		panic(err)
	}
	hob, err := LookupMaterial(lib, "glass-ceramic")
	if err != nil {
		panic(err)
	}
	sigma := 1.5e-6
	slope, _ := Antonetti.Slope(sigma)
	return InterfaceParams{
		SigmaM:         sigma,
		Slope:          slope,
		KSolidWMK:      HarmonicConductivityWMK(pan.ConductivityWMK, hob.ConductivityWMK),
		HardnessPa:     600e6,
		EPrimePa:       EffectiveModulusPa(pan.YoungPa, pan.Poisson, hob.YoungPa, hob.Poisson),
		Model:          ModelPlastic,
		Accommodation1: 0.8,
		Accommodation2: 0.8,
		GasPressurePa:  fluid.StandardPressurePa,
		Gamma:          1.4,
		Emissivity1:    0.9,
		Emissivity2:    0.3,
	}
}

// Validate reports the first parameter that is out of its domain.
func (p *InterfaceParams) Validate() error {
	bad := func(name string, v float64, want string) error {
		return fmt.Errorf("contact: interface %s = %g, want %s", name, v, want)
	}
	pos := []struct {
		name string
		v    float64
	}{{"SigmaM", p.SigmaM}, {"Slope", p.Slope}, {"KSolidWMK", p.KSolidWMK}, {"GasPressurePa", p.GasPressurePa}}
	for _, c := range pos {
		if !(c.v > 0) || math.IsInf(c.v, 1) {
			return bad(c.name, c.v, "> 0")
		}
	}
	switch p.Model {
	case "", ModelPlastic, ModelPlasticOld:
		if !(p.HardnessPa > 0) || math.IsInf(p.HardnessPa, 1) {
			return bad("HardnessPa", p.HardnessPa, "> 0")
		}
	case ModelElastic:
		if !(p.EPrimePa > 0) || math.IsInf(p.EPrimePa, 1) {
			return bad("EPrimePa", p.EPrimePa, "> 0")
		}
	default:
		return fmt.Errorf("contact: unknown interface model %q (known: %q, %q)", p.Model, ModelPlastic, ModelElastic)
	}
	for _, c := range []struct {
		name string
		v    float64
	}{{"Accommodation1", p.Accommodation1}, {"Accommodation2", p.Accommodation2},
		{"Emissivity1", p.Emissivity1}, {"Emissivity2", p.Emissivity2}} {
		if !(c.v > 0 && c.v <= 1) {
			return bad(c.name, c.v, "in (0, 1]")
		}
	}
	if !(p.Gamma > 1) || math.IsInf(p.Gamma, 1) {
		return bad("Gamma", p.Gamma, "> 1")
	}
	return nil
}

// CanonicalModel returns the current name of an interface model name:
// ModelPlastic for "", ModelPlastic and the old alias ModelPlasticOld, the
// name itself otherwise.
func CanonicalModel(name string) string {
	switch name {
	case "", ModelPlasticOld:
		return ModelPlastic
	}
	return name
}

// Band holds what the load sets for the whole contact band.
type Band struct {
	PressurePa float64 // nominal contact pressure P, Pa
	// Ratio is the relative pressure: P/H_c (plastic) or √2·P/(m·E′)
	// (elastic). The correlations' range is CorrelationMinRatio to
	// CorrelationMaxRatio.
	Ratio       float64
	SeparationM float64 // mean-plane separation Y_c of the band, m
	SolidWM2K   float64 // solid-spot conductance h_s of a band cell, W/(m²·K)
	Flags       Flags   // OutOfRangeLow, OutOfRangeHigh, NoLoad
}

// Band returns the contact band's relative pressure, separation and
// solid-spot conductance under nominal pressure pressurePa (Pa).
//
// Range policy: below P/H_c = 1e-6 (a pan at cooking load gives about
// 1e-7 to 1e-6) the solid-spot power law and the separation correlation
// are evaluated at the actual ratio, not clamped, and OutOfRangeLow is set
// so the caller can warn. The power law is smooth and gives h_s far below
// the gas term, which is the physical point. Above 2e-2 h_s is evaluated
// as is and Y at 2e-2 (OutOfRangeHigh). The elastic model's ratio
// √2·P/(m·E′) is checked against the same range and also sets the
// separation (our choice: the same Gaussian relation with the elastic
// microhardness m·E′/√2 in place of H_c; from memory [M]).
func (p *InterfaceParams) Band(pressurePa float64) Band {
	b := Band{PressurePa: pressurePa}
	if p.Model == ModelElastic {
		b.Ratio = ElasticRatio(pressurePa, p.Slope, p.EPrimePa)
		b.SolidWM2K = ElasticContactWM2K(p.KSolidWMK, p.Slope, p.SigmaM, pressurePa, p.EPrimePa)
	} else {
		b.Ratio = pressurePa / p.HardnessPa
		b.SolidWM2K = PlasticContactWM2K(p.KSolidWMK, p.Slope, p.SigmaM, b.Ratio)
	}
	ry := b.Ratio
	switch {
	case !(pressurePa > 0):
		b.Flags |= NoLoad
		b.SolidWM2K = 0
		ry = SeparationFloorRatio
	case b.Ratio < CorrelationMinRatio:
		b.Flags |= OutOfRangeLow
		ry = max(ry, SeparationFloorRatio)
	case b.Ratio > CorrelationMaxRatio:
		b.Flags |= OutOfRangeHigh
		ry = CorrelationMaxRatio
	}
	b.SeparationM = SeparationM(p.SigmaM, ry)
	return b
}

// Parts is an interface conductance split by path, W/(m²·K).
type Parts struct {
	SolidWM2K float64 // conduction through the solid contact spots
	GasWM2K   float64 // conduction (and any convection) through the gas
	RadWM2K   float64 // radiation across the gap
}

// Total returns h = h_s + h_g + h_r, the parts added in parallel.
func (p Parts) Total() float64 { return p.SolidWM2K + p.GasWM2K + p.RadWM2K }

// CellInput is what one grid cell contributes to its conductance.
type CellInput struct {
	GapM       float64 // local gap g ≥ 0 between the form surfaces, m; NaN = no base here
	Contact    bool    // the cell is in the contact band (g ≤ 3σ)
	PressurePa float64 // nominal pressure of the contact band, Pa (for all cells)
	THobK      float64 // hob top temperature, K
	TPanK      float64 // pan base outer-face temperature, K
}

// Cell returns the interface conductance of one cell (DESIGN.md 5.2):
//
//   - solid spots, contact cells only: Band(P).SolidWM2K;
//   - gas, all cells: h_g = k_g/(Y + M), with Y = Y_c in contact cells and
//     Y = g + Y_c elsewhere (Y_c the band's mean-plane separation), M the
//     rarefaction length (GasParameterM) with the mean free path
//     fluid.AirMeanFreePathM at the film temperature and the gas pressure,
//     k_g and Pr from fluid.AirAt at the film temperature
//     T_f = (T_hob + T_pan)/2; outside contact, a layer heated from below
//     with Ra > 1708 has h_g multiplied by HollandsNusselt(Ra);
//   - radiation, all cells: RadiationWM2K(T_hob, T_pan, ε₁, ε₂).
//
// Band cells count as touching whatever their gap (up to 3σ), so Y steps
// from Y_c to Y_c + 3σ at the band's edge. The Rayleigh number uses δ = Y.
// A NaN gap gives zero parts; a NaN temperature gives NaN parts. Cell does
// not validate p; see Validate.
func (p *InterfaceParams) Cell(in CellInput) (Parts, Flags) {
	b := p.Band(in.PressurePa)
	c := p.cellConsts()
	return p.cell(&b, &c, in.GapM, in.Contact, in.THobK, in.TPanK)
}

// cellConsts holds the factors of a cell's gas and radiation conductances
// that depend on the parameters only, so that a Field computes them once.
type cellConsts struct {
	alpha2Gamma float64 // α·2·γ of the rarefaction length (GasParameterM)
	gammaPlus1  float64 // γ + 1
	radDen      float64 // 1/ε₁ + 1/ε₂ − 1 (RadiationWM2K)
}

// cellConsts returns p's cell constants.
func (p *InterfaceParams) cellConsts() cellConsts {
	return cellConsts{
		alpha2Gamma: AccommodationParameter(p.Accommodation1, p.Accommodation2) * 2 * p.Gamma,
		gammaPlus1:  p.Gamma + 1,
		radDen:      exchangeDenominator(p.Emissivity1, p.Emissivity2),
	}
}

// cell is Cell for band b and constants c, which must be p's.
func (p *InterfaceParams) cell(b *Band, c *cellConsts, gapM float64, contact bool, tHobK, tPanK float64) (Parts, Flags) {
	if math.IsNaN(gapM) {
		return Parts{}, 0
	}
	var out Parts
	flags := b.Flags
	y := b.SeparationM
	if contact {
		out.SolidWM2K = b.SolidWM2K
	} else {
		y += max(gapM, 0)
	}
	tf := (tHobK + tPanK) / 2
	if math.IsNaN(tf) {
		nan := math.NaN()
		return Parts{nan, nan, nan}, flags
	}
	if !(tf >= fluid.AirMinK && tf <= fluid.AirMaxK) {
		flags |= FilmClamped
		tf = min(max(tf, fluid.AirMinK), fluid.AirMaxK)
	}
	air := fluid.GapAirAt(tf) // within the table
	mfp := fluid.KineticMeanFreePathM(air.ViscosityPaS, tf, p.GasPressurePa, fluid.AirMolarMassKgMol)
	m := rarefactionM(c.alpha2Gamma, c.gammaPlus1, air.Prandtl, mfp)
	out.GasWM2K = GasGapWM2K(air.ConductivityWMK, y, m)
	if !contact {
		if ra := rayleigh(air.KinViscosityM2S, air.DiffusivityM2S, tf, tHobK-tPanK, y); ra > RayleighCritical {
			out.GasWM2K *= HollandsNusselt(ra)
			flags |= Convective
		}
	}
	out.RadWM2K = radiationWM2K(tHobK, tPanK, c.radDen)
	return out, flags
}

// ContactPressure finds the contact band of a gap field and the nominal
// pressure on it (DESIGN.md 5.2): cells inside the base whose gap is at most
// ContactBandSigmas·sigmaM are contact cells, and the load loadN (N, e.g.
// (pan + load mass)·fluid.StandardGravityMS2) is shared evenly by them:
// pressurePa = loadN/areaM2, areaM2 = (number of contact cells)·cellAreaM2.
// NaN gaps are never contact. With no contact cell, pressurePa and areaM2
// are 0. It panics if inBase and gapM differ in length.
func ContactPressure(gapM []float64, inBase []bool, cellAreaM2, loadN, sigmaM float64) (contact []bool, pressurePa, areaM2 float64) {
	if len(inBase) != len(gapM) {
		panic(fmt.Sprintf("contact: ContactPressure: %d gaps, %d base flags", len(gapM), len(inBase)))
	}
	band := ContactBandSigmas * sigmaM
	contact = make([]bool, len(gapM))
	n := 0
	for k, g := range gapM {
		if inBase[k] && g <= band { // false for NaN
			contact[k] = true
			n++
		}
	}
	if n == 0 {
		return contact, 0, 0
	}
	areaM2 = float64(n) * cellAreaM2
	return contact, loadN / areaM2, areaM2
}

// Field is the interface conductance over a grid of cells; it implements
// the thermal package's Interface. The band quantities (P/H_c, Y_c, h_s)
// are computed once, on first use; the gas and radiation terms depend on
// the temperatures and are computed per call. A Field is safe for
// concurrent use once built; its exported fields must not change after the
// first call.
type Field struct {
	Params     InterfaceParams
	GapM       []float64 // per cell, m; NaN outside the base
	Contact    []bool    // per cell: in the contact band
	PressurePa float64   // nominal pressure of the contact band, Pa

	once   sync.Once
	band   Band
	consts cellConsts
}

// NewField validates p and the field and returns a ready Field.
func NewField(p InterfaceParams, gapM []float64, contact []bool, pressurePa float64) (*Field, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	if len(contact) != len(gapM) {
		return nil, fmt.Errorf("contact: field has %d gaps and %d contact flags", len(gapM), len(contact))
	}
	if math.IsNaN(pressurePa) || pressurePa < 0 || math.IsInf(pressurePa, 0) {
		return nil, fmt.Errorf("contact: contact pressure %g Pa, want finite and ≥ 0", pressurePa)
	}
	for k, g := range gapM {
		if g < 0 || math.IsInf(g, 0) {
			return nil, fmt.Errorf("contact: cell %d has gap %g m, want ≥ 0 or NaN", k, g)
		}
	}
	f := &Field{Params: p, GapM: gapM, Contact: contact, PressurePa: pressurePa}
	f.prepare()
	return f, nil
}

func (f *Field) prepare() {
	f.once.Do(func() {
		if len(f.Contact) != len(f.GapM) {
			panic(fmt.Sprintf("contact: Field has %d gaps and %d contact flags", len(f.GapM), len(f.Contact)))
		}
		f.band = f.Params.Band(f.PressurePa)
		f.consts = f.Params.cellConsts()
	})
}

// Band returns the contact band's quantities (see InterfaceParams.Band).
func (f *Field) Band() Band {
	f.prepare()
	return f.band
}

// Cell returns the conductance parts and flags of cell k with the hob at
// tHobK and the pan at tPanK (K); see InterfaceParams.Cell.
func (f *Field) Cell(k int, tHobK, tPanK float64) (Parts, Flags) {
	f.prepare()
	return f.Params.cell(&f.band, &f.consts, f.GapM[k], f.Contact[k], tHobK, tPanK)
}

// H returns the solid, gas and radiation conductances of cell k,
// W/(m²·K), with the hob at tHobK and the pan at tPanK (K).
func (f *Field) H(k int, tHobK, tPanK float64) (solid, gas, rad float64) {
	p, _ := f.Cell(k, tHobK, tPanK)
	return p.SolidWM2K, p.GasWM2K, p.RadWM2K
}

// Flags returns the union of the flags of all cells with a gap (not NaN)
// and finite temperatures, at the per-cell temperatures tHobK and tPanK
// (K), for example a solved plate. It panics if the lengths differ from
// the field's.
func (f *Field) Flags(tHobK, tPanK []float64) Flags {
	if len(tHobK) != len(f.GapM) || len(tPanK) != len(f.GapM) {
		panic(fmt.Sprintf("contact: Field.Flags: %d cells, %d hob and %d pan temperatures", len(f.GapM), len(tHobK), len(tPanK)))
	}
	f.prepare()
	var out Flags
	for k, g := range f.GapM {
		if math.IsNaN(g) || math.IsNaN(tHobK[k]) || math.IsNaN(tPanK[k]) {
			continue
		}
		_, fl := f.Params.cell(&f.band, &f.consts, g, f.Contact[k], tHobK[k], tPanK[k])
		out |= fl
	}
	return out
}
