package pipeline

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"

	"gapflux/contact"
	"gapflux/scan"
)

// UncertaintyJob sets the Monte Carlo evaluation of the headline figures'
// uncertainty (JCGM 101:2008, GUM Supplement 1) and the verdict's decision
// rule. Each width is the job key of one input; 0 makes the input exact.
// Defaults are ours (jobdoc.go gives the reasoning of each).
type UncertaintyJob struct {
	Mode             string  `toml:"mode"`              // "off", "fast" or "full"
	Decision         string  `toml:"decision"`          // "guarded" or "simple"
	Seed             int     `toml:"seed"`              // PCG seed of the trials
	MaxTrials        int     `toml:"max_trials"`        // 0 = by mode
	NoiseFactor      float64 `toml:"noise_factor"`      // trial noise, multiple of the filter residual RMS
	RadiusMM         float64 `toml:"radius_mm"`         // normal standard deviation of the base radius (rim circle fit)
	PanSqPct         float64 `toml:"pan_sq_pct"`        // rectangular half-width, % of interface.pan_sq_um
	HobSqPct         float64 `toml:"hob_sq_pct"`        // rectangular half-width, % of interface.hob_sq_um
	SlopePct         float64 `toml:"slope_pct"`         // rectangular half-width, % of the combined slope
	MicrohardnessPct float64 `toml:"microhardness_pct"` // rectangular half-width, % of the microhardness
	Accommodation    float64 `toml:"accommodation"`     // rectangular half-width of both accommodation coefficients
	ConductivityPct  float64 `toml:"conductivity_pct"`  // normal standard deviation, % of the base conductivity
	ThicknessMM      float64 `toml:"thickness_mm"`      // normal standard deviation of the hob-side layer's thickness
	PanEmissivity    float64 `toml:"pan_emissivity"`    // rectangular half-width
	HobEmissivity    float64 `toml:"hob_emissivity"`    // rectangular half-width
	LimiterK         float64 `toml:"limiter_k"`         // normal standard deviation of the limiter (regulator) setting, K
	GlassTau         float64 `toml:"glass_tau"`         // rectangular half-width of hob.glass_tau
	PowerPct         float64 `toml:"power_pct"`         // rectangular half-width, % of the rated power
	PlacementMM      float64 `toml:"placement_mm"`      // radius of the uniform disc of the pan's centre about pan.offset_mm
	GridPlacement    bool    `toml:"grid_placement"`    // draw the coarse grid's placement on the analysis grid
	TrialCoarsen     int     `toml:"trial_coarsen"`     // cell of the trials' grid, in analysis cells; 0 = mcCoarsen
}

// Monte Carlo settings (JCGM 101 §7.9, adapted: see adaptiveStable).
const (
	mcBatch      = 10  // trials per batch h (JCGM 101 suggests 10⁴; our chain costs ~0.5 s a trial)
	mcFastTrials = 40  // trial cap of uncertainty.mode = "fast"
	mcFullTrials = 200 // trial cap of uncertainty.mode = "full"
	mcDigits     = 1   // significant decimal digits n_dig of u the tolerance δ is set from (JCGM 101 §7.9.2)
	mcCoverage   = 0.95
	mcStream     = 0x6761706675780a01 // second PCG word, fixed ("gapflux")
	// quantileSE is √(0.025·0.975)/φ(1.96) = 0.1561/0.05845, the standard
	// error of a normal's 2.5 % quantile estimate in units of σ/√M.
	quantileSE = 2.671
)

// UncertaintyReport is the report's uncertainty section: each headline
// figure's standard uncertainty and 95 % coverage interval from the
// trials, the inputs and their distributions, and a budget.
type UncertaintyReport struct {
	Method    string `json:"method"`
	Mode      string `json:"mode"`
	Seed      int    `json:"seed"`
	Trials    int    `json:"trials"`
	MaxTrials int    `json:"max_trials"`
	// Converged says every figure met its numerical tolerance (JCGM 101
	// §7.9) before the trial cap.
	Converged      bool               `json:"converged"`
	ConcavityMM    *FigureUncertainty `json:"concavity_mm,omitempty"`
	FlatnessMZMM   *FigureUncertainty `json:"flatness_mz_mm,omitempty"`
	RockMM         *FigureUncertainty `json:"rock_mm,omitempty"`
	TipForceN      *FigureUncertainty `json:"tip_force_n,omitempty"`
	ContactAreaPct *FigureUncertainty `json:"contact_area_pct,omitempty"`
	LossPct        *FigureUncertainty `json:"loss_pct,omitempty"`
	ExtraTimePct   *FigureUncertainty `json:"extra_time_pct,omitempty"`
	RocksPct       float64            `json:"rocks_pct"` // share of the trials in which the pan rocks
	Inputs         []UncertaintyInput `json:"inputs"`
	Budget         *UncertaintyBudget `json:"budget,omitempty"`
	Notes          []string           `json:"notes"`
	figs           [nFig]*FigureUncertainty
}

// FigureUncertainty is one figure's Monte Carlo result, in the figure's
// unit: the standard deviation u of the trials (JCGM 101 §7.6), the
// probabilistically symmetric 95 % coverage interval [low, high] (§7.7),
// the trials it rests on and the numerical tolerance δ (§7.9.2).
type FigureUncertainty struct {
	Value     float64 `json:"value"`
	U         float64 `json:"u"`
	Low       float64 `json:"low"`
	High      float64 `json:"high"`
	Trials    int     `json:"trials"`
	Tolerance float64 `json:"tolerance"`
	Converged bool    `json:"converged"`
	mean      float64 // mean of the trials (tests)
}

// UncertaintyInput is one input quantity of the trials and its
// probability distribution (JCGM 101 §6.4): rectangular with the given
// half-width, or normal with the given standard deviation.
type UncertaintyInput struct {
	Name         string  `json:"name"`
	Key          string  `json:"key"`
	Distribution string  `json:"distribution"`
	Nominal      float64 `json:"nominal"`
	Width        float64 `json:"width"`
	U            float64 `json:"u"`
	Unit         string  `json:"unit"`
}

// UncertaintyBudget gives each input's share of the variance of loss_pct
// and concavity_mm.
type UncertaintyBudget struct {
	Method      string       `json:"method"`
	LossPct     []BudgetLine `json:"loss_pct"`
	ConcavityMM []BudgetLine `json:"concavity_mm"`
}

// BudgetLine is one input's term: the sensitivity coefficient c (figure
// per input unit), |c|·u and its share of the summed variance.
type BudgetLine struct {
	Input       string  `json:"input"`
	Sensitivity float64 `json:"sensitivity"`
	Contrib     float64 `json:"contribution"`
	SharePct    float64 `json:"share_pct"`
}

// The figures the trials record.
const (
	figConcavity = iota
	figFlatness
	figRock
	figTipForce
	figContact
	figLoss
	figExtraTime
	figRocks // 1 when the pan rocks: the rocking decision, not reported
	nFig
)

var figNames = [nFig]string{"concavity_mm", "flatness_mz_mm", "rock_mm", "tip_force_n",
	"contact_area_pct", "loss_pct", "extra_time_pct", "rocks"}

// figUnits are the figures' units, in figNames' order.
var figUnits = [nFig]string{"mm", "mm", "mm", "N", "%", "%", "%", ""}

// figure returns the report's value of figure j (figConcavity …
// figExtraTime), false when the report lacks it (a rejected scan, a
// tip force not found). Like UncertaintyReport.figure it reads the named
// fields, so it serves reports read back from report.json.
func (r *Report) figure(j int) (float64, bool) {
	switch {
	case j == figConcavity && r.Geometry != nil:
		return r.Geometry.ConcavityMM, true
	case j == figFlatness && r.Geometry != nil:
		return r.Geometry.FlatnessMZMM, true
	case j == figRock && r.Pose != nil:
		return r.Pose.RockMM, true
	case j == figTipForce && r.Pose != nil && r.Pose.TipForceN != nil:
		return *r.Pose.TipForceN, true
	case j == figContact && r.Gap != nil:
		return r.Gap.ContactAreaPct, true
	case j == figLoss && r.Heat != nil:
		return r.Heat.LossPct, true
	case j == figExtraTime && r.Heatup != nil:
		return r.Heatup.ExtraTimePct, true
	}
	return 0, false
}

// figure returns the reported uncertainty of figure j (figConcavity …
// figExtraTime), or nil when it was not evaluated. It reads the named
// fields, so it serves reports read back from report.json too.
func (u *UncertaintyReport) figure(j int) *FigureUncertainty {
	if u == nil || j < 0 || j >= figRocks {
		return nil
	}
	return [figRocks]*FigureUncertainty{figConcavity: u.ConcavityMM, figFlatness: u.FlatnessMZMM, figRock: u.RockMM,
		figTipForce: u.TipForceN, figContact: u.ContactAreaPct, figLoss: u.LossPct, figExtraTime: u.ExtraTimePct}[j]
}

// mcInput is one input quantity of the trials.
type mcInput struct {
	UncertaintyInput
	rect  bool
	apply func(j *Job, lib []contact.Material, v float64)
}

// draw samples the input (JCGM 101 §6.4.2 rectangular, §6.4.7 normal).
func (m *mcInput) draw(rng *rand.Rand) float64 {
	if m.rect {
		return m.Nominal + m.Width*(2*rng.Float64()-1)
	}
	return m.Nominal + m.Width*rng.NormFloat64()
}

func clamp(v, lo, hi float64) float64 { return math.Min(hi, math.Max(lo, v)) }

// mcInputs lists the property inputs of job with a non-zero width, in a
// fixed order (the slope last: it scales the slope of the drawn roughness).
func mcInputs(job Job, lib []contact.Material, radiusM float64) ([]mcInput, error) {
	uj := job.Uncertainty
	panMat, err := contact.LookupMaterial(lib, job.Pan.Layers[0].Material)
	if err != nil {
		return nil, err
	}
	_, hobName, _ := hobPlate(job)
	hobMat, err := contact.LookupMaterial(lib, hobName)
	if err != nil {
		return nil, err
	}
	var out []mcInput
	add := func(name, key, unit string, rect bool, nominal, width float64, apply func(*Job, []contact.Material, float64)) {
		if width <= 0 {
			return
		}
		dist, u := "normal", width
		if rect {
			dist, u = "rectangular", width/math.Sqrt(3)
		}
		out = append(out, mcInput{UncertaintyInput: UncertaintyInput{Name: name, Key: key, Distribution: dist,
			Nominal: nominal, Width: width, U: u, Unit: unit}, rect: rect, apply: apply})
	}
	add("base radius (rim circle fit)", "uncertainty.radius_mm", "mm", false, radiusM*1e3, uj.RadiusMM,
		func(*Job, []contact.Material, float64) {}) // trialRunner.run applies it
	ij := job.Interface
	add("interface.pan_sq_um", "uncertainty.pan_sq_pct", "µm", true, ij.PanSqUM, ij.PanSqUM*uj.PanSqPct/100,
		func(j *Job, _ []contact.Material, v float64) { j.Interface.PanSqUM = math.Max(v, 0.001) })
	add("interface.hob_sq_um", "uncertainty.hob_sq_pct", "µm", true, ij.HobSqUM, ij.HobSqUM*uj.HobSqPct/100,
		func(j *Job, _ []contact.Material, v float64) { j.Interface.HobSqUM = math.Max(v, 0.001) })
	add("interface.microhardness_mpa", "uncertainty.microhardness_pct", "MPa", true, ij.MicrohardnessMPa, ij.MicrohardnessMPa*uj.MicrohardnessPct/100,
		func(j *Job, _ []contact.Material, v float64) { j.Interface.MicrohardnessMPa = math.Max(v, 10) })
	add("interface.accommodation", "uncertainty.accommodation", "", true, ij.PanAccommodation, uj.Accommodation,
		func(j *Job, _ []contact.Material, v float64) {
			d := v - ij.PanAccommodation
			j.Interface.PanAccommodation = clamp(ij.PanAccommodation+d, 0.01, 1)
			j.Interface.HobAccommodation = clamp(ij.HobAccommodation+d, 0.01, 1)
		})
	add("base conductivity factor", "uncertainty.conductivity_pct", "", false, 1, uj.ConductivityPct/100,
		func(j *Job, lib []contact.Material, v float64) {
			v = math.Max(v, 0.1)
			for i := range lib {
				for _, l := range j.Pan.Layers {
					if lib[i].Name == l.Material {
						lib[i].ConductivityWMK *= v
						break
					}
				}
			}
		})
	add("pan.layers[0].thickness_mm", "uncertainty.thickness_mm", "mm", false, job.Pan.Layers[0].ThicknessMM, uj.ThicknessMM,
		func(j *Job, _ []contact.Material, v float64) {
			j.Pan.Layers = slices.Clone(j.Pan.Layers)
			j.Pan.Layers[0].ThicknessMM = math.Max(v, 0.01)
		})
	add("pan.emissivity", "uncertainty.pan_emissivity", "", true, orMaterial(job.Pan.Emissivity, panMat.Emissivity), uj.PanEmissivity,
		func(j *Job, _ []contact.Material, v float64) { j.Pan.Emissivity = clamp(v, 0.01, 1) })
	add("hob.emissivity", "uncertainty.hob_emissivity", "", true, orMaterial(job.Hob.Emissivity, hobMat.Emissivity), uj.HobEmissivity,
		func(j *Job, _ []contact.Material, v float64) { j.Hob.Emissivity = clamp(v, 0.01, 1) })
	addHobSettings(job, add)
	add("asperity slope factor", "uncertainty.slope_pct", "", true, 1, uj.SlopePct/100,
		func(j *Job, lib []contact.Material, v float64) {
			ip, err := interfaceParams(*j, lib)
			if err != nil {
				return // the trial's own interfaceParams reports it
			}
			s := clamp(ip.Slope*v, 0.0015, 1.4)
			j.Interface.PanSlope, j.Interface.HobSlope = s/math.Sqrt2, s/math.Sqrt2
		})
	return out, nil
}

// addHobSettings adds the hob settings that drive the heat in the job's
// mode (as sensitivityCases moves them): the limiter (regulator) setting
// in heater and solid-plate modes, the glass window's transmittance in
// heater mode, and the rated power wherever it limits the heat (heater and
// solid-plate modes, and temperature mode with hob.power_limited).
func addHobSettings(job Job, add func(name, key, unit string, rect bool, nominal, width float64, apply func(*Job, []contact.Material, float64))) {
	uj, h := job.Uncertainty, job.Hob
	switch h.Mode {
	case "heater":
		add("hob.limiter_c", "uncertainty.limiter_k", "°C", false, h.LimiterC, uj.LimiterK,
			func(j *Job, _ []contact.Material, v float64) { j.Hob.LimiterC = math.Max(v, j.Hob.RoomC+1) })
		add("hob.glass_tau", "uncertainty.glass_tau", "", true, h.GlassTau, uj.GlassTau,
			func(j *Job, _ []contact.Material, v float64) { j.Hob.GlassTau = clamp(v, 0, 0.99) })
	case "solid-plate":
		add("hob.temperature_c", "uncertainty.limiter_k", "°C", false, h.TemperatureC, uj.LimiterK,
			func(j *Job, _ []contact.Material, v float64) { j.Hob.TemperatureC = math.Max(v, j.Hob.RoomC+1) })
	case "temperature":
		if !h.PowerLimited {
			return
		}
	}
	add("rated power factor", "uncertainty.power_pct", "", true, 1, uj.PowerPct/100,
		func(j *Job, _ []contact.Material, v float64) {
			v = math.Max(v, 0.1)
			j.Hob.HeaterPowerW *= v
			j.Hob.RatedPowerDensityKW *= v
		})
}

// perturbed returns a copy of job and lib with the inputs at values x.
func perturbed(job Job, lib []contact.Material, inputs []mcInput, x []float64) (Job, []contact.Material) {
	lib = slices.Clone(lib)
	for i := range inputs {
		inputs[i].apply(&job, lib, x[i])
	}
	return job, lib
}

// figuresOf fills the chain's figures of res into y (the form figures stay).
func figuresOf(y [nFig]float64, res *Result) [nFig]float64 {
	rep := res.Report
	y[figRock], y[figTipForce], y[figRocks] = rep.Pose.RockMM, math.NaN(), 0
	if rep.Pose.TipForceN != nil {
		y[figTipForce] = *rep.Pose.TipForceN
	}
	if rep.Pose.Rocks {
		y[figRocks] = 1
	}
	y[figContact] = rep.Gap.ContactAreaPct
	y[figLoss] = 100 * (1 - res.Scan.PowerW/res.Flat.PowerW)
	y[figExtraTime] = math.NaN()
	if rep.Heatup != nil {
		y[figExtraTime] = rep.Heatup.ExtraTimePct
	}
	return y
}

// evaluateUncertainty runs the Monte Carlo trials on the nominal analysis
// res (JCGM 101 §7): each trial draws every property and hob-setting
// input from its distribution, new scanner noise (when
// uncertainty.noise_factor > 0), the coarse grid's placement and the pan's
// placement, and re-runs the chain on the coarse grid (trialRunner).
// Batches of mcBatch trials run until every figure is stable
// to its numerical tolerance (adaptiveStable) or the cap is reached.
// The budget comes from one-at-a-time sensitivity coefficients (budget).
func evaluateUncertainty(ctx context.Context, in SurfaceInput, raw *scan.Surface, filt *scan.FilterResult, res *Result) (*UncertaintyReport, error) {
	uj := in.Job.Uncertainty
	inputs, err := mcInputs(in.Job, in.Lib, in.RadiusM)
	if err != nil {
		return nil, err
	}
	t, err := newTrialRunner(ctx, in, raw, filt, res, inputs)
	if err != nil {
		return nil, err
	}

	maxTrials := uj.MaxTrials
	if maxTrials == 0 {
		maxTrials = map[string]int{"fast": mcFastTrials, "full": mcFullTrials}[uj.Mode]
	}
	measured := 0
	for _, s := range raw.State {
		if s == scan.Measured {
			measured++
		}
	}
	rng := rand.New(rand.NewPCG(uint64(uj.Seed), mcStream))
	ys, xs, converged, delta, err := monteCarlo(ctx, rng, inputs, maxTrials, func(x []float64) ([nFig]float64, error) {
		return t.run(ctx, x, t.drawTrial(rng, measured))
	})
	if err != nil {
		return nil, err
	}
	ur := &UncertaintyReport{
		Method: fmt.Sprintf("Monte Carlo, JCGM 101:2008: %d trials in batches of %d, adaptive per §7.9 with the tolerance δ from %d significant digit of u; 95 %% probabilistically symmetric coverage intervals (§7.7); PCG random numbers, seed %d",
			len(ys), mcBatch, mcDigits, uj.Seed),
		Mode: uj.Mode, Seed: uj.Seed, Trials: len(ys), MaxTrials: maxTrials, Converged: converged,
		Notes: []string{
			fmt.Sprintf("scanner noise: Gaussian, RMS %.3g µm (uncertainty.noise_factor × the form filter's residual RMS) drawn onto the form-filtered height of every measured cell (a parametric bootstrap: the form stands for the true surface), which is filtered again; filled cells keep their interpolated heights", t.sigmaM*1e6),
			"the base radius draw re-measures the form on the drawn disc and carries the radius into the heat-up",
		},
	}
	ur.Notes = append(ur.Notes, t.notes()...)
	for _, m := range inputs {
		ur.Inputs = append(ur.Inputs, m.UncertaintyInput)
	}
	ur.Inputs = roundInputs(ur.Inputs)
	for j := range figRocks {
		ur.figs[j] = figureStats(ys, j, t.nominal[j], delta[j])
	}
	ur.ConcavityMM, ur.FlatnessMZMM, ur.RockMM, ur.TipForceN = ur.figs[figConcavity], ur.figs[figFlatness], ur.figs[figRock], ur.figs[figTipForce]
	ur.ContactAreaPct, ur.LossPct, ur.ExtraTimePct = ur.figs[figContact], ur.figs[figLoss], ur.figs[figExtraTime]
	rocks := 0.0
	for _, y := range ys {
		rocks += y[figRocks]
	}
	ur.RocksPct = roundTo(100*rocks/float64(len(ys)), 2)
	if ur.Budget, err = budget(ctx, t, xs, ys); err != nil {
		return nil, err
	}
	return ur, nil
}

// monteCarlo runs trials in batches of mcBatch until adaptiveStable holds
// or maxTrials ran: each trial draws the inputs from rng in their order,
// then calls model (which may draw more from the same rng). It returns the
// figures and inputs of every trial, whether they converged and each
// figure's tolerance δ (negative: not met).
func monteCarlo(ctx context.Context, rng *rand.Rand, inputs []mcInput, maxTrials int,
	model func(x []float64) ([nFig]float64, error)) (ys [][nFig]float64, xs [][]float64, converged bool, delta [nFig]float64, err error) {
	for len(ys) < maxTrials && !converged {
		for range min(mcBatch, maxTrials-len(ys)) {
			if err := ctx.Err(); err != nil {
				return nil, nil, false, delta, err
			}
			x := make([]float64, len(inputs))
			for i := range inputs {
				x[i] = inputs[i].draw(rng)
			}
			y, err := model(x)
			if err != nil {
				return nil, nil, false, delta, fmt.Errorf("trial %d: %w", len(ys)+1, err)
			}
			ys, xs = append(ys, y), append(xs, x)
		}
		converged, delta = adaptiveStable(ys, mcBatch)
	}
	return ys, xs, converged, delta, nil
}

func roundInputs(in []UncertaintyInput) []UncertaintyInput {
	for i := range in {
		in[i].Nominal, in[i].Width, in[i].U = roundSig(in[i].Nominal, 6), roundSig(in[i].Width, 6), roundSig(in[i].U, 6)
	}
	return in
}

// figureStats summarises figure j of the trials (JCGM 101 §7.6, §7.7.2):
// u is the standard deviation of the M finite values and the coverage
// interval the probabilistically symmetric one (coverageInterval). A
// figure with no finite trial (tip_force_n of a pan that tips under no
// press) is left out.
func figureStats(ys [][nFig]float64, j int, nominal, delta float64) *FigureUncertainty {
	var v []float64
	for _, y := range ys {
		if !math.IsNaN(y[j]) && !math.IsInf(y[j], 0) {
			v = append(v, y[j])
		}
	}
	if len(v) < 2 || math.IsNaN(nominal) {
		return nil
	}
	mean, u := meanStd(v)
	slices.Sort(v)
	lo, hi := coverageInterval(v, mcCoverage)
	sig := func(x float64) float64 { return roundSig(x, 6) }
	return &FigureUncertainty{Value: sig(nominal), U: sig(u), Low: sig(lo), High: sig(hi), Trials: len(v),
		Tolerance: sig(math.Abs(delta)), Converged: delta >= 0, mean: mean}
}

// coverageInterval returns the probabilistically symmetric coverage
// interval of probability p from M sorted values, [y_(r), y_(r+q)]
// (1-based) with q = pM rounded to the nearest integer and r = (M − q)/2
// when that is an integer, else the integer part of (M − q + 1)/2
// (JCGM 101:2008 §7.7.2, from memory).
func coverageInterval(sorted []float64, p float64) (float64, float64) {
	m := len(sorted)
	q := int(math.Floor(p*float64(m) + 0.5))
	r := (m - q + 1) / 2 // (M − q)/2 when M − q is even
	r = max(r, 1)
	return sorted[r-1], sorted[min(r+q, m)-1]
}

func meanStd(v []float64) (float64, float64) {
	mean := 0.0
	for _, x := range v {
		mean += x
	}
	mean /= float64(len(v))
	ss := 0.0
	for _, x := range v {
		ss += (x - mean) * (x - mean)
	}
	if len(v) < 2 {
		return mean, 0
	}
	return mean, math.Sqrt(ss / float64(len(v)-1))
}

// adaptiveStable applies the stopping rule of JCGM 101 §7.9.4 to the
// trials so far, in batches of h: for each reported figure, the batch
// means ȳ⁽ʳ⁾ and standard deviations u⁽ʳ⁾ give s_ȳ and s_u (their
// standard deviations over the b batches, divided by √b); an interval
// endpoint ȳ ± 2u then has s_end = √(s_ȳ² + (2 s_u)²), and the figure is
// stable when 2 s_end ≤ δ, with δ = ½·10^ℓ for u = c·10^ℓ written with
// mcDigits significant digits (§7.9.2). Batches of 10 cannot estimate
// their own 95 % endpoints, hence this combination instead of §7.9.4's
// per-batch endpoints (our adaptation); s_end is at least the standard
// error of a 2.5 % quantile, √(p(1−p)/M)/f, with the density f at the
// quantile taken as a normal's of standard deviation u (quantileSE·u/√M).
// It needs two batches. delta holds
// each figure's δ, negated while the figure is not yet stable.
func adaptiveStable(ys [][nFig]float64, h int) (bool, [nFig]float64) {
	var delta [nFig]float64
	b := len(ys) / h
	ok := b >= 2
	for j := range figRocks {
		var all []float64
		for _, y := range ys {
			all = append(all, y[j])
		}
		if slices.ContainsFunc(all, math.IsNaN) {
			continue // tip_force_n of a pan that tips: not judged
		}
		_, u := meanStd(all)
		if u == 0 {
			continue // the inputs do not move this figure
		}
		l := math.Floor(math.Log10(u)) - (mcDigits - 1)
		delta[j] = 0.5 * math.Pow(10, l)
		if b < 2 {
			delta[j] = -delta[j]
			continue
		}
		means, us := make([]float64, b), make([]float64, b)
		for r := range b {
			means[r], us[r] = meanStd(all[r*h : (r+1)*h])
		}
		_, sm := meanStd(means)
		_, su := meanStd(us)
		sEnd := math.Max(math.Hypot(sm, 2*su)/math.Sqrt(float64(b)), quantileSE*u/math.Sqrt(float64(len(all))))
		if 2*sEnd > delta[j] {
			ok, delta[j] = false, -delta[j]
		}
	}
	return ok, delta
}

// budget apportions the variance of loss_pct and concavity_mm. For each
// property input, a one-at-a-time run with the input moved by its standard
// uncertainty u_i (the others nominal, no noise, the coarse grid centred,
// the pan in place) gives the sensitivity
// coefficient c_i = Δy/u_i (JCGM 100 §5.1.3, by finite difference). The
// scanner noise and the placements, which are no scalars of the list, get
// the variance of the trials left after subtracting the linear property
// terms c_i·(x_i − x_i,0): it also holds whatever non-linearity there is,
// and says so in its name. Shares
// are of the sum of the terms' variances.
func budget(ctx context.Context, t *trialRunner, xs [][]float64, ys [][nFig]float64) (*UncertaintyBudget, error) {
	x0 := nominalInputs(t.inputs)
	centre := trialDraw{phase: t.centre}
	y0 := t.phases[t.centre].nominal
	for j := range nFig {
		y0[j] = y0[j]*t.scale[j] + t.corr[j]
	}
	c := make([][nFig]float64, len(t.inputs))
	for i, m := range t.inputs {
		x := slices.Clone(x0)
		x[i] += m.U
		y, err := t.run(ctx, x, centre)
		if err != nil {
			return nil, fmt.Errorf("budget: %s: %w", m.Name, err)
		}
		for j := range nFig {
			c[i][j] = (y[j] - y0[j]) / m.U
		}
	}
	b := &UncertaintyBudget{Method: "one-at-a-time sensitivity coefficients c_i = Δy/u_i (each input moved by its standard uncertainty, the others nominal); scanner noise, placements and non-linearity: the variance of the trials left after the linear property terms"}
	lines := func(j int) []BudgetLine {
		var out []BudgetLine
		var vars []float64
		for i, m := range t.inputs {
			out = append(out, BudgetLine{Input: m.Name, Sensitivity: c[i][j], Contrib: math.Abs(c[i][j]) * m.U})
			vars = append(vars, c[i][j]*c[i][j]*m.U*m.U)
		}
		resid := make([]float64, len(ys))
		for k := range ys {
			resid[k] = ys[k][j] - y0[j]
			for i := range t.inputs {
				resid[k] -= c[i][j] * (xs[k][i] - x0[i])
			}
		}
		_, un := meanStd(resid)
		out = append(out, BudgetLine{Input: "scanner noise, placements and non-linearity", Contrib: un})
		vars = append(vars, un*un)
		tot := 0.0
		for _, v := range vars {
			tot += v
		}
		for i := range out {
			if tot > 0 {
				out[i].SharePct = roundTo(100*vars[i]/tot, 2)
			}
			out[i].Sensitivity, out[i].Contrib = roundSig(out[i].Sensitivity, 4), roundSig(out[i].Contrib, 4)
		}
		return out
	}
	b.LossPct, b.ConcavityMM = lines(figLoss), lines(figConcavity)
	return b, nil
}

// figWords names each figure with an uncertainty, and its unit, in the
// printed summary (indexed like figNames).
var figWords = [figRocks]struct{ name, unit string }{figConcavity: {"concavity", "mm"},
	figFlatness: {"flatness (minimum zone)", "mm"}, figRock: {"rock", "mm"}, figTipForce: {"tip force", "N"},
	figContact: {"contact area", "%"}, figLoss: {"loss", "%"}, figExtraTime: {"extra heat-up time", "%"}}

// expandedDecimals returns the decimal places that give the expanded
// uncertainty U two significant digits (0 when U is 0 or 10 and above); a
// value and its interval are printed to the same place (JCGM 100 §7.2.6).
func expandedDecimals(U float64) int {
	if !(U > 0) || math.IsInf(U, 0) {
		return 0
	}
	return max(0, 1-int(math.Floor(math.Log10(U))))
}

// uncertaintyText gives the summary's lines of the uncertainty section:
// each figure as value ± U with U = 2u (coverage factor k = 2), U to two
// significant digits and the value to the same decimal place, and the
// 95 % interval from the trials.
func uncertaintyText(u *UncertaintyReport) string {
	if u == nil {
		return ""
	}
	var b strings.Builder
	fmt.Fprintf(&b, "  uncertainty (%d Monte Carlo trials, %s mode; U = 2u, interval 95 %%):\n", u.Trials, u.Mode)
	for j, w := range figWords {
		f := u.figure(j)
		if f == nil {
			continue
		}
		U := 2 * f.U
		dec := expandedDecimals(U)
		fmt.Fprintf(&b, "    %s %.*f ± %.*f %s [%.*f, %.*f]\n", w.name, dec, f.Value, dec, U, w.unit, dec, f.Low, dec, f.High)
	}
	if !u.Converged {
		fmt.Fprintf(&b, "    (the trial cap of %d was reached before every figure met its numerical tolerance)\n", u.MaxTrials)
	}
	return b.String()
}
