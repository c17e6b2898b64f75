package pipeline

import (
	"fmt"
	"math"

	"gapflux/contact"
	"gapflux/scan"
	"gapflux/thermal"
)

// shapeTolPct is the concavity, in % of the diameter, within which the
// verdict treats a base as flat (our own choice).
const shapeTolPct = 0.02

func geometryReport(f *scan.Form, g *scan.Gridded, filt *scan.FilterResult, lev *scan.Levelled, job Job) *GeometryReport {
	filter := "none"
	if filt.CutoffM > 0 {
		filter = filterName(filt)
	}
	gr := &GeometryReport{
		DiameterMM:             roundTo(f.DiameterM*1e3, 3),
		FlatnessMZMM:           roundTo(f.FlatnessMZM*1e3, 4),
		FlatnessLSMM:           roundTo(f.FlatnessLSM*1e3, 4),
		ConcavityMM:            roundTo(f.ConcavityM*1e3, 4),
		ConcavityPctOfDiameter: roundTo(f.ConcavityPctOfDiameter, 4),
		CoveragePct:            roundTo(g.CoveragePct, 2),
		OutliersRemoved:        g.OutliersRemoved,
		CutoffMM:               roundTo(filt.CutoffM*1e3, 3),
		NoiseUM:                roundTo(filt.NoiseM*1e6, 2),
		CellMM:                 roundTo(g.Raw.CellM*1e3, 4),
		PointSpacingMM:         roundTo(g.PointSpacingM*1e3, 4),
		MeasuredCellsPct:       roundTo(g.MeasuredCellsPct, 2),
		LargestHoleMM:          roundTo(g.LargestHoleM*1e3, 2),
		RimCompletenessPct:     roundTo(g.RimCompletenessPct, 2),
		Filter:                 filter,
		FaceSource:             lev.FaceSource,
		PointsUsed:             len(lev.Cloud.Points),
		PointsDropped:          lev.PointsDropped,
		Zernike: ZernikeReport{
			Ordering:      "ANSI Z80.28 / ISO 24157 single index j = (n(n+2)+m)/2 from 0; m < 0 sine terms",
			Normalisation: "orthonormal over the unit disc: N = sqrt(2(n+1)/(1+δm0)); ρ = r / base radius",
			RadiusMM:      roundTo(lev.RadiusM*1e3, 3),
		},
	}
	for _, t := range f.Zernike {
		gr.Zernike.Terms = append(gr.Zernike.Terms, ZernikeTerm{J: t.Index, N: t.N, M: t.M, Name: t.Name,
			Plain: t.Plain, CoefUM: roundTo(t.CoefM*1e6, 3)})
	}
	sh, err := scan.MeasureShape(filt.Form, lev.RadiusM, scan.ShapeOptions{NoiseM: filt.NoiseM})
	if err != nil {
		gr.Shape, gr.ShapeDetail = "undetermined", err.Error()
		return gr
	}
	gr.Shape, gr.ShapeDetail = sh.Word, shapeDetail(sh)
	gr.ShapeQuadric = &QuadricShape{
		RimSagMM:      [2]float64{roundTo(sh.RimSagM[0]*1e3, 4), roundTo(sh.RimSagM[1]*1e3, 4)},
		AxisDeg:       [2]float64{axisDeg(sh.AxisDeg[0], 1), axisDeg(sh.AxisDeg[1], 1)},
		BendAxisDeg:   axisDeg(sh.BendAxisDeg, 1),
		TiltRiseMM:    roundTo(sh.TiltRiseM*1e3, 4),
		ThresholdMM:   roundTo(sh.ThresholdM*1e3, 4),
		ResidualRMSUM: roundTo(sh.Quadric.ResidualRMSM*1e6, 2),
	}
	return gr
}

// shapeDetail says in words what the shape word rests on: the principal
// rim sags (positive: the centre stands above the rim that way) and, for a
// bent base, the axis it is bent about.
func shapeDetail(sh *scan.Shape) string {
	s, a, t := sh.RimSagM, sh.AxisDeg, sh.ThresholdM
	mm := func(v float64) string { return fmt.Sprintf("%+.3f mm", roundTo(v*1e3, 3)) }
	limit := fmt.Sprintf(" (positive: centre above the rim; below %.3f mm counts as none)", t*1e3)
	var sags string
	switch {
	case math.Abs(s[0]) <= t:
		sags = fmt.Sprintf("no rim sag above the threshold (largest %s)", mm(s[0]))
	case math.Abs(s[0]-s[1]) <= t:
		sags = fmt.Sprintf("rim sag %s all round (%s across %.0f°, %s across %.0f°)", mm((s[0]+s[1])/2), mm(s[0]), axisDeg(a[0], 0), mm(s[1]), axisDeg(a[1], 0))
	default:
		sags = fmt.Sprintf("rim sags %s across %.0f° and %s across %.0f°", mm(s[0]), axisDeg(a[0], 0), mm(s[1]), axisDeg(a[1], 0))
	}
	switch sh.Word {
	case scan.ShapeBent:
		return fmt.Sprintf("bent about an axis at %.0f° from x: %s%s", axisDeg(sh.BendAxisDeg, 0), sags, limit)
	case scan.ShapeTilted:
		return fmt.Sprintf("rising %.3f mm across the diameter towards %.0f°; %s%s", sh.TiltRiseM*1e3, sh.TiltAxisDeg, sags, limit)
	}
	return sags + limit
}

// axisDeg rounds an axis direction to the given decimals and folds 180°
// back to 0° (an axis has no sense).
func axisDeg(d float64, decimals int) float64 {
	r := roundTo(d, decimals)
	if r >= 180 {
		r -= 180
	}
	return r
}

// filterName describes the form filter that ran, for the report.
func filterName(f *scan.FilterResult) string {
	if f.Method == scan.FilterGaussian {
		return fmt.Sprintf("ISO 16610-61 areal Gaussian, cut-off %.3g mm, regression order %d (edge-corrected)", f.CutoffM*1e3, f.Order)
	}
	return fmt.Sprintf("ISO 16610-71 robust Gaussian regression (Tukey biweight, c = 4.4 MAD), cut-off %.3g mm, order %d, %d passes",
		f.CutoffM*1e3, f.Order, f.Iterations)
}

func poseReport(p *contact.Pose, comM [2]float64, job Job) *PoseReport {
	pr := &PoseReport{
		TiltDeg:         roundTo(p.TiltDeg, 5),
		Rocks:           p.Rocks,
		RockMM:          roundTo(p.RockM*1e3, 4),
		TipMM:           roundTo(p.TipM*1e3, 4),
		Support:         p.Support,
		ContactPointsMM: [][2]float64{},
		CentreOfMassMM:  [2]float64{roundTo(comM[0]*1e3, 3), roundTo(comM[1]*1e3, 3)},
		RockLimitMM:     job.Grid.RockMM,
		SupportWidthMM:  roundTo(p.SupportWidthM*1e3, 3),
		TipForceLimitN:  p.TipForceLimitN,
		WeightN:         roundTo(p.WeightN, 3),
	}
	if !math.IsInf(p.TipForceN, 1) {
		f := roundTo(p.TipForceN, 3)
		pr.TipForceN = &f
	}
	for _, c := range p.ContactPointsM {
		pr.ContactPointsMM = append(pr.ContactPointsMM, [2]float64{roundTo(c[0]*1e3, 3), roundTo(c[1]*1e3, 3)})
	}
	return pr
}

func gapReport(gap []float64, mask, inBase []bool, pressurePa, areaM2 float64, ip contact.InterfaceParams) *GapReport {
	n, nc := 0, 0
	sum, mx := 0.0, 0.0
	for k, in := range inBase {
		if !in {
			continue
		}
		n++
		if mask[k] {
			nc++
		}
		sum += gap[k]
		mx = math.Max(mx, gap[k])
	}
	gr := &GapReport{
		ContactBandUM:     roundTo(3*ip.SigmaM*1e6, 3),
		ContactPressurePa: roundTo(pressurePa, 3),
		PressureRatio:     roundSig(pressurePa/ip.HardnessPa, 4),
	}
	if n > 0 {
		gr.ContactAreaPct = roundTo(100*float64(nc)/float64(n), 3)
		gr.MeanGapMM = roundTo(sum/float64(n)*1e3, 5)
		gr.MaxGapMM = roundTo(mx*1e3, 5)
	}
	return gr
}

func heatReport(job Job, s, f *thermal.Solution, baseAreaM2 float64) *HeatReport {
	hr := &HeatReport{
		Mode:             job.Hob.Mode,
		WaterC:           job.Water.SteadyC,
		PowerW:           roundTo(s.PowerW, 3),
		FlatPowerW:       roundTo(f.PowerW, 3),
		MeanFluxKWM2:     roundTo(s.PowerW/baseAreaM2/1e3, 4),
		FlatMeanFluxKWM2: roundTo(f.PowerW/baseAreaM2/1e3, 4),
		SolverIterations: s.LinearIterations,
		OuterIterations:  s.OuterIterations,
		SolverResidual:   roundSig(s.RelResidual, 3),
	}
	if f.PowerW > 0 {
		hr.LossPct = roundTo(100*(1-s.PowerW/f.PowerW), 3)
	}
	if tot := s.SolidW + s.GasW + s.RadW; tot > 0 {
		hr.SolidPct = roundTo(100*s.SolidW/tot, 4)
		hr.GasPct = roundTo(100*s.GasW/tot, 4)
		hr.RadiationPct = roundTo(100*s.RadW/tot, 4)
	}
	hr.TransmittedPct = roundTo(100*s.TransmittedShare, 4)
	if s.PowerW > 0 {
		hr.TransmittedAbsorbedPct = roundTo(100*s.TransmittedW/s.PowerW, 4)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, t := range s.TPanK {
		if !math.IsNaN(t) {
			lo, hi = math.Min(lo, t), math.Max(hi, t)
		}
	}
	hr.BaseMinC, hr.BaseMaxC = roundTo(lo-kelvin, 3), roundTo(hi-kelvin, 3)
	if job.Hob.Mode == "temperature" {
		hr.PowerLimited = &job.Hob.PowerLimited
		if job.Hob.PowerLimited {
			p := func(v float64) *float64 { v = roundTo(v, 3); return &v }
			b := func(v bool) *bool { return &v }
			hr.RatedPowerW = p(ratedPowerW(job, baseAreaM2))
			hr.PowerLimitApplied, hr.FlatPowerLimitApplied = b(s.PowerLimited), b(f.PowerLimited)
			hr.TopShiftK, hr.FlatTopShiftK = p(s.TopShiftK), p(f.TopShiftK)
			if job.Hob.TemperatureProfile == "" {
				hr.TopC, hr.FlatTopC = p(job.Hob.TemperatureC-s.TopShiftK), p(job.Hob.TemperatureC-f.TopShiftK)
			}
		}
	}
	if job.heated() {
		p := func(v float64) *float64 { v = roundTo(v, 3); return &v }
		hr.GlassMaxC, hr.FlatGlassMaxC = p(s.GlassMaxK-kelvin), p(f.GlassMaxK-kelvin)
		hr.HeaterDutyPct, hr.FlatHeaterDutyPct = p(s.DutyPct), p(f.DutyPct)
		hr.HeaterW, hr.DownLossW, hr.UncoveredLossW = p(s.HeaterW), p(s.DownLossW), p(s.UncoveredLossW)
		hr.RodC, hr.FlatRodC = p(s.RodK-kelvin), p(f.RodK-kelvin)
		hr.TransmittedLostW = p(s.TransmittedLostW)
		if s.CoilK > 0 {
			hr.CoilC, hr.FlatCoilC = p(s.CoilK-kelvin), p(f.CoilK-kelvin)
			hr.FlatTransmittedPct = p(100 * f.TransmittedShare)
		}
	}
	return hr
}

func ringReports(rings []thermal.Ring) []RingReport {
	out := make([]RingReport, 0, len(rings))
	for _, r := range rings {
		out = append(out, RingReport{
			RInMM:        roundTo(r.RInM*1e3, 3),
			ROutMM:       roundTo(r.ROutM*1e3, 3),
			AreaMM2:      roundTo(r.AreaM2*1e6, 2),
			ContactPct:   roundTo(100*r.ContactFrac, 3),
			MeanGapMM:    roundTo(r.MeanGapM*1e3, 5),
			MaxGapMM:     roundTo(r.MaxGapM*1e3, 5),
			HWM2K:        roundTo(r.HWM2K, 3),
			HSolidWM2K:   roundTo(r.SolidWM2K, 5),
			HGasWM2K:     roundTo(r.GasWM2K, 3),
			HRadWM2K:     roundTo(r.RadWM2K, 3),
			FluxKWM2:     roundTo(r.FluxWM2/1e3, 4),
			FlatFluxKWM2: roundTo(r.FlatFluxWM2/1e3, 4),
			PowerW:       roundTo(r.PowerW, 4),
			FlatPowerW:   roundTo(r.FlatPowerW, 4),
			PowerLostW:   roundTo(r.FlatPowerW-r.PowerW, 4),
		})
	}
	return out
}

// verdict judges the report against the job's tolerances.
func verdict(job Job, rep *Report) *VerdictReport {
	if rep.Hot != nil {
		return stateVerdict(job, rep) // cold, hot or both (hot.verdict)
	}
	t := job.Tolerances
	v := &VerdictReport{Pass: true, Reasons: []string{}}
	fail := func(format string, a ...any) {
		v.Pass = false
		v.Reasons = append(v.Reasons, fmt.Sprintf(format, a...))
	}
	if g := rep.Geometry; g != nil {
		// Within ±shapeTolPct a base is flat (the shape word says so); the
		// limits are judged outside that band so that scanner noise alone
		// cannot make a flat base "convex".
		c := g.ConcavityPctOfDiameter
		switch {
		case c < t.ConcavityMinPct-shapeTolPct && c < 0:
			fail("%s: concavity %.3f mm (%.3f %% of diameter) is below the minimum %.3f %%", lowCentreWords(g.Shape), g.ConcavityMM, c, t.ConcavityMinPct)
		case c < t.ConcavityMinPct-shapeTolPct:
			fail("concavity %.3f %% of diameter is below the minimum %.3f %%", c, t.ConcavityMinPct)
		case c > t.ConcavityMaxPct+shapeTolPct:
			fail("concavity %.3f mm (%.3f %% of diameter) is above the maximum %.3f %%", g.ConcavityMM, c, t.ConcavityMaxPct)
		}
		if g.FlatnessMZMM > t.FlatnessMZMaxMM {
			fail("minimum-zone flatness %.3f mm is above the maximum %.3f mm", g.FlatnessMZMM, t.FlatnessMZMaxMM)
		}
	}
	if p := rep.Pose; p != nil && p.Rocks && !t.RockingAllowed {
		fail("the pan rocks: %s", rockWords(p))
	}
	if h := rep.Heat; h != nil && h.LossPct > t.LossMaxPct {
		fail("the base loses %.1f %% of the flat twin's heating power (limit %.1f %%)", h.LossPct, t.LossMaxPct)
	}
	return v
}

// lowCentreWords names a base whose centre lies below its rim (negative
// concavity) by its shape word: only a domed base is called convex; a bent
// or saddle-shaped base is low at the centre on average only.
func lowCentreWords(shape string) string {
	switch shape {
	case scan.ShapeDomed, "":
		return "convex base"
	case scan.ShapeBent:
		return "bent base, centre below the rim on average"
	case scan.ShapeSaddle:
		return "saddle-shaped base, centre below the rim on average"
	}
	return "centre below the rim"
}

// rockWords says why a pan rocks (DESIGN 5.1).
func rockWords(p *PoseReport) string {
	if p.Support != contact.SupportPolygon || p.TipForceN == nil {
		return fmt.Sprintf("it stands on a %s through its centre of mass, and the pressed rim drops %.3f mm (limit %.3f mm)",
			p.Support, p.RockMM, p.RockLimitMM)
	}
	return fmt.Sprintf("a rim press of %.1f N tips it (under the %.1f N light-touch limit), and the rim then drops %.3f mm (limit %.3f mm)",
		*p.TipForceN, p.TipForceLimitN, p.RockMM, p.RockLimitMM)
}

// interfaceWarnings turns the interface models' range flags into report
// warnings, at the solved hob and pan temperatures (K, per cell).
func interfaceWarnings(f *contact.Field, hobK, panK []float64, solidPct float64) []string {
	var ws []string
	band := f.Band()
	switch {
	case band.Flags&contact.NoLoad != 0:
		ws = append(ws, "no cell lies in the contact band: the solid-spot term is zero")
	case band.Flags&contact.OutOfRangeLow != 0:
		ws = append(ws, fmt.Sprintf("relative contact pressure P/H_c = %.2g is below the range of the solid-spot and separation correlations (1e-6 to 2e-2): they were evaluated as they are, not clamped; solid contact carries %.3g %% of the heat, so the result hardly depends on it", band.Ratio, solidPct))
	case band.Flags&contact.OutOfRangeHigh != 0:
		ws = append(ws, fmt.Sprintf("relative contact pressure P/H_c = %.2g is above the correlations' range (2e-2)", band.Ratio))
	}
	if hobK != nil && panK != nil {
		fl := f.Flags(hobK, panK)
		if fl&contact.Convective != 0 {
			ws = append(ws, "the gap is wide enough for the air layer to convect (Rayleigh number above 1708): the Hollands et al. (1975) correlation was applied there")
		}
		if fl&contact.FilmClamped != 0 {
			ws = append(ws, "the gap's film temperature left the air table (250–1000 K): air properties were taken at the table's end")
		}
	}
	return ws
}

// glassDataMaxC is the top of the temperature range, °C, that the
// glass-ceramic data of our references cover (20–700 °C; PHYSICS-
// REFERENCES, glass-ceramic row, from memory there). Glass-ceramic tops
// are ceramized at about 900 °C (TRADE-FACTS, a maker's technical page).
const glassDataMaxC = 700

// glassWarnings warns, in heater mode, when the glass top under the scan
// or under its flat twin gets hotter than glassDataMaxC somewhere: the
// limiter senses only the mean underside along its rod, so a lifted part
// of a base can leave glass beneath it far hotter than the limiter
// setting while the heater stays on.
func glassWarnings(job Job, h *HeatReport) []string {
	if job.Hob.Mode != "heater" || h == nil {
		return nil
	}
	var ws []string
	for _, c := range []struct {
		who  string
		maxC *float64
	}{{"with this base", h.GlassMaxC}, {"with the flat twin", h.FlatGlassMaxC}} {
		if c.maxC == nil || !(*c.maxC > glassDataMaxC) {
			continue
		}
		ws = append(ws, fmt.Sprintf("the glass top reaches %.0f °C %s, above the %d °C to which our glass-ceramic data reach "+
			"(the limiter, set to %.0f °C, senses only the mean along its rod): heat figures there are extrapolated, "+
			"and a real top that hot may be damaged; ask the hob maker", *c.maxC, c.who, glassDataMaxC, job.Hob.LimiterC))
	}
	return ws
}

// fillGapConductance adds the base-mean interface conductance parts of the
// solved scan to the gap section.
func fillGapConductance(g *GapReport, s *thermal.Solution, inBase []bool) {
	var n, hs, hg, hr float64
	for k, in := range inBase {
		if in {
			n++
			hs += s.SolidWM2K[k]
			hg += s.GasWM2K[k]
			hr += s.RadWM2K[k]
		}
	}
	if n == 0 {
		return
	}
	g.MeanHSolidWM2K = roundTo(hs/n, 6)
	g.MeanHGasWM2K = roundTo(hg/n, 3)
	g.MeanHRadWM2K = roundTo(hr/n, 3)
	if hs > 0 {
		g.GasOverSolid = roundTo(hg/hs, 1)
	}
}
