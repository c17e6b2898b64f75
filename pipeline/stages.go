package pipeline

import (
	"context"
	"fmt"
	"math"

	"gapflux/contact"
	"gapflux/scan"
	"gapflux/thermal"
)

// The analysis chain (DESIGN 5.6), as Analyze runs it:
//
//	read → level → grid → filter → form      Analyze (file in, base form out)
//	pose → gap → interface → solve (scan and flat twin) → rings → heat-up
//	                                         analyzeSurface (SurfaceInput in)
//	uncertainty → verdict                    judge
//
// analyzeSurface reads no file: the Monte Carlo trials (uncertainty.go)
// re-run it on a re-filtered noisy surface (a noise draw) or on the nominal
// surface with perturbed interface and material inputs (a property draw).

// SurfaceInput is the typed input of the chain from the form surface on.
type SurfaceInput struct {
	Name    string             // the scan's name, for errors
	Job     Job                // effective settings (grid.cell_mm resolved)
	Lib     []contact.Material // material library of the job
	Surf    *scan.Surface      // form-filtered base heights, padded to the glass in heater mode
	Hob     *scan.Surface      // hob top on the same grid
	OffsetM [2]float64         // pan centre relative to the zone centre, m
	GlassRM float64            // radius of the glass modelled about the zone centre, m (heater mode)
	Heater  bool               // the job heats through a glass top (heater mode)
	RadiusM float64            // base radius, m

	// Trial marks a Monte Carlo trial: no sensitivity table, no quality
	// gate. Warm holds nominal solutions the trial's solves start from.
	Trial bool
	Warm  *warmStart
	Flat  *flatReuse // the flat twin's solves a trial reuses (nil: none)
	gate  *gate
	// solvers, when set, are the solvers (work buffers) of the scan's and
	// the flat twin's solves, kept from one trial to the next so that a
	// trial does not allocate them again; nil means new ones.
	solvers *[2]thermal.Solver
	// heatupSamples > 0 solves the heat-up's power at that many water
	// temperatures on the analysis grid (a test's reference); 0 is the
	// analysis's own choice (surfaceRun.heatup).
	heatupSamples int
}

// warmStart holds the nominal solutions of the scan and its flat twin.
type warmStart struct{ Scan, Flat *thermal.Solution }

// padHalfM is the half-width the padded grid must cover about the base
// centre in heater mode (the padding analyzeSurface's input had).
func (in SurfaceInput) padHalfM() float64 {
	return math.Hypot(in.OffsetM[0], in.OffsetM[1]) + in.GlassRM
}

// judge runs the uncertainty evaluation the job asks for (none when
// uncertainty.mode = "off") and then the verdict under the job's decision
// rule, filling rep.Uncertainty and rep.Verdict.
func judge(ctx context.Context, in SurfaceInput, raw *scan.Surface, filt *scan.FilterResult, res *Result) error {
	rep := res.Report
	if in.Job.Uncertainty.Mode != "off" && rep.Heat != nil {
		u, err := evaluateUncertainty(ctx, in, raw, filt, res)
		if err != nil {
			return fmt.Errorf("%s: uncertainty: %w", in.Name, err)
		}
		rep.Uncertainty = u
	}
	rep.Verdict = decide(in.Job, rep)
	return nil
}
