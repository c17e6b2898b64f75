package pipeline

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"sync"

	"gapflux/contact"
	"gapflux/scan"
	"gapflux/thermal"
)

// mcCoarsen is the trials' grid coarsening of uncertainty.trial_coarsen = 0:
// the trials run the chain from the pose on on a grid of twice the
// analysis's cell (a quarter of the cells), and each figure is corrected by
// the difference between the analysis and the coarse nominal runs
// (trialRunner). Ours: TestCoarseTrialsUnbiased bounds the bias it leaves.
const mcCoarsen = 2

// trialDraw is what one trial draws besides the property inputs: scanner
// noise on the measured cells of the raw grid (nil: none), the coarse
// grid's placement (one of the f² sub-grids of the analysis grid) and the
// pan's displacement on the zone, m.
type trialDraw struct {
	noise  []float64
	phase  int
	placeM [2]float64
}

// coarsePhase is one placement of the coarse grid on the analysis grid:
// its offset in analysis cells, the nominal figures on it and the nominal
// solutions the trials on it start from.
type coarsePhase struct {
	ox, oy  int
	nominal [nFig]float64
	warm    *warmStart
}

// trialRunner re-runs the chain for the trials. The form figures are
// measured on the analysis grid; the chain from the pose on runs on a
// grid f times coarser (f = 1: the analysis grid), and each chain figure
// is shifted by corr, the analysis's figure less the mean of the coarse
// nominal runs over the placements drawn (a control variate: the coarse
// grid's bias cancels, its spread stays), or, for the figures of
// scaledFig, multiplied by scale, their ratio.
type trialRunner struct {
	in      SurfaceInput
	solvers [2]thermal.Solver // the trials' plate solvers (scan, flat twin), reused from trial to trial
	raw     *scan.Surface
	form    *scan.Surface // the nominal form-filtered surface (unpadded)
	fopt    scan.FilterOptions
	inputs  []mcInput
	sigmaM  float64 // noise RMS of a trial, m
	nominal [nFig]float64

	f         int           // coarsening factor
	phases    []coarsePhase // the coarse grid's placements drawn (one when not drawn)
	centre    int           // index in phases of the centred placement (cells f/2, f/2)
	corr      [nFig]float64 // added to each chain figure of a coarse run
	scale     [nFig]float64 // multiplies each chain figure of a coarse run (scaledFig)
	placeM    float64       // radius of the pan's placement disc, m (0: not drawn)
	flatHob   bool          // the hob top is flat: it is rebuilt on every trial's grid
	flatReuse map[string]*flatReuse

	// concavityCorrMM is added to the concavity of every noise trial: the
	// nominal concavity less that of the form filtered a second time
	// without noise (refilterBias), mm.
	concavityCorrMM float64
}

// refilterBias returns the concavity the form filter takes off when it
// filters the nominal form a second time, as a noise trial does (form plus
// new noise, filtered again), in mm, measured on the disc of radius
// radiusM: the nominal concavity less the twice-filtered one. Concavity is
// linear in the heights, so this shift alone centres the trials on the
// measured value (a 180 mm dish: −0.0004 mm, 1.5 u, before). Flatness is
// not shifted: it grows with the noise, and the once-filtered form holds
// the scan's own filtered noise, which the trials must not count twice.
func (t *trialRunner) refilterBias(radiusM float64) (float64, error) {
	zero := make([]float64, len(t.raw.State))
	f, err := scan.Filter(t.noisyForm(zero), t.fopt)
	if err != nil {
		return 0, fmt.Errorf("form filter: %w", err)
	}
	form, err := scan.MeasureForm(f.Form, radiusM)
	if err != nil {
		return 0, fmt.Errorf("form: %w", err)
	}
	return t.nominal[figConcavity] - form.ConcavityM*1e3, nil
}

// newTrialRunner prepares the trials of the nominal analysis res: the
// coarse grid's placements and their nominal runs, and the correction.
func newTrialRunner(ctx context.Context, in SurfaceInput, raw *scan.Surface, filt *scan.FilterResult, res *Result, inputs []mcInput) (*trialRunner, error) {
	uj := in.Job.Uncertainty
	t := &trialRunner{in: in, raw: raw, form: filt.Form, inputs: inputs, sigmaM: uj.NoiseFactor * filt.NoiseM,
		fopt:    scan.FilterOptions{CutoffM: in.Job.Grid.CutoffMM / 1e3, Method: scan.FilterMethod(in.Job.Grid.Filter)},
		f:       trialCoarsen(uj),
		flatHob: isFlatHob(in.Hob), flatReuse: map[string]*flatReuse{}}
	if t.flatHob {
		t.placeM = uj.PlacementMM / 1e3
	}
	form, err := scan.MeasureForm(filt.Form, in.RadiusM)
	if err != nil {
		return nil, err
	}
	t.nominal[figConcavity], t.nominal[figFlatness] = form.ConcavityM*1e3, form.FlatnessMZM*1e3
	t.nominal = figuresOf(t.nominal, res)
	if t.sigmaM > 0 {
		if t.concavityCorrMM, err = t.refilterBias(in.RadiusM); err != nil {
			return nil, err
		}
	}

	o := t.f / 2
	t.phases = []coarsePhase{{ox: o, oy: o}}
	if uj.GridPlacement && t.f > 1 {
		t.phases = t.phases[:0]
		for oy := range t.f {
			for ox := range t.f {
				if ox == o && oy == o {
					t.centre = len(t.phases)
				}
				t.phases = append(t.phases, coarsePhase{ox: ox, oy: oy})
			}
		}
	}
	x0 := nominalInputs(inputs)
	var sum [nFig]float64
	for p := range t.phases {
		y, r, err := t.chain(ctx, x0, trialDraw{phase: p})
		if err != nil {
			return nil, fmt.Errorf("coarse nominal run: %w", err)
		}
		t.phases[p].nominal = y
		t.phases[p].warm = &warmStart{Scan: r.Scan, Flat: r.Flat}
		for j := range nFig {
			sum[j] += y[j]
		}
	}
	for j := range nFig {
		t.scale[j] = 1
		if j == figConcavity || j == figFlatness || j == figRocks {
			continue // measured on the analysis grid, or a yes/no
		}
		mean := sum[j] / float64(len(t.phases))
		if scaledFig(j) && mean > 0 && t.nominal[j] > 0 {
			t.scale[j] = t.nominal[j] / mean
			continue
		}
		t.corr[j] = t.nominal[j] - mean
	}
	return t, nil
}

// trialCoarsen is the coarsening factor of the trials' grid.
func trialCoarsen(uj UncertaintyJob) int {
	if uj.TrialCoarsen == 0 {
		return mcCoarsen
	}
	return uj.TrialCoarsen
}

// isFlatHob tells a flat hob top (no hob scan or profile: every height 0).
func isFlatHob(h *scan.Surface) bool {
	for _, z := range h.ZM {
		if !math.IsNaN(z) && z != 0 {
			return false
		}
	}
	return true
}

func nominalInputs(inputs []mcInput) []float64 {
	x0 := make([]float64, len(inputs))
	for i, m := range inputs {
		x0[i] = m.Nominal
	}
	return x0
}

// drawTrial draws a trial's noise (measured cells of the raw grid, RMS
// sigmaM), the coarse grid's placement (uniform over the placements) and
// the pan's displacement (uniform on the placement disc, JCGM 101 §6.4.3
// generalised to a disc by rejection), from rng in that order.
func (t *trialRunner) drawTrial(rng *rand.Rand, measured int) trialDraw {
	var d trialDraw
	if t.sigmaM > 0 {
		d.noise = make([]float64, measured)
		for i := range d.noise {
			d.noise[i] = t.sigmaM * rng.NormFloat64()
		}
	}
	if len(t.phases) > 1 {
		d.phase = rng.IntN(len(t.phases))
	}
	if t.placeM > 0 {
		for {
			x, y := 2*rng.Float64()-1, 2*rng.Float64()-1
			if x*x+y*y <= 1 {
				d.placeM = [2]float64{t.placeM * x, t.placeM * y}
				break
			}
		}
	}
	return d
}

// run evaluates the figures at property values x with the trial's draw d:
// the form figures on the analysis grid (re-filtered when d has noise),
// the chain's on the coarse grid, corrected by scale and corr.
func (t *trialRunner) run(ctx context.Context, x []float64, d trialDraw) ([nFig]float64, error) {
	y, _, err := t.chain(ctx, x, d)
	if err != nil {
		return y, err
	}
	for j := range nFig {
		y[j] = y[j]*t.scale[j] + t.corr[j]
	}
	return y, nil
}

// scaledFig tells the figures corrected by a ratio instead of a
// difference: the positive ones whose coarse value scales with the cell
// (a contact cell of the coarse grid is four times the area; the rock and
// the tip force follow the support points the coarse grid finds), which a
// difference could drive below zero.
func scaledFig(j int) bool { return j == figContact || j == figRock || j == figTipForce }

// noisyForm returns the raw grid of a noise trial: on every measured cell
// the nominal form-filtered height plus the trial's noise (a parametric
// bootstrap: the form stands for the true surface and the noise is drawn
// anew). Adding the noise to the raw heights instead, which hold the
// scan's own noise already, gave the trials √2 times the scanner noise and
// shifted the figures that grow with noise (flatness, rock, loss) above
// the value measured: six re-scans' loss intervals were centred 1.3 to 3.8
// points above their value. Filled and empty cells keep their raw heights.
func (t *trialRunner) noisyForm(noise []float64) *scan.Surface {
	r := t.raw.Clone()
	n := 0
	for k, s := range r.State {
		if s == scan.Measured {
			r.ZM[k] = t.form.ZM[k] + noise[n]
			n++
		}
	}
	return r
}

// chain runs one trial without the correction and returns its figures and
// its result.
func (t *trialRunner) chain(ctx context.Context, x []float64, d trialDraw) ([nFig]float64, *Result, error) {
	y := t.nominal
	in := t.in
	for i, m := range t.inputs {
		if m.Key == "uncertainty.radius_mm" {
			in.RadiusM = math.Max(x[i], 1) / 1e3
		}
	}
	surf := t.form
	if d.noise != nil {
		r := t.noisyForm(d.noise)
		f, err := scan.Filter(r, t.fopt)
		if err != nil {
			return y, nil, fmt.Errorf("form filter: %w", err)
		}
		surf = f.Form
	}
	if d.noise != nil || in.RadiusM != t.in.RadiusM {
		form, err := scan.MeasureForm(surf, in.RadiusM)
		if err != nil {
			return y, nil, fmt.Errorf("form: %w", err)
		}
		y[figConcavity], y[figFlatness] = form.ConcavityM*1e3, form.FlatnessMZM*1e3
		if d.noise != nil {
			y[figConcavity] += t.concavityCorrMM
		}
	}
	ph := t.phases[d.phase]
	cs := decimate(surf, t.f, ph.ox, ph.oy)
	in.OffsetM = [2]float64{t.in.OffsetM[0] + d.placeM[0], t.in.OffsetM[1] + d.placeM[1]}
	if in.Heater {
		// The glass and the padding cover the farthest placement, so that
		// every trial on a coarse placement has one grid and one glass (and
		// its warm start fits).
		far := math.Hypot(t.in.OffsetM[0], t.in.OffsetM[1]) + t.placeM
		in.GlassRM = glassRadiusM(&in.Job, far, t.in.RadiusM)
		var err error
		if cs, err = padSurface(cs, far+in.GlassRM, in.Job.Limits.MaxCells); err != nil {
			return y, nil, err
		}
	}
	in.Surf, in.Hob = cs, hobOn(cs, t.in.Hob, t.flatHob)
	in.Job, in.Lib = perturbed(in.Job, in.Lib, t.inputs, x)
	in.Trial, in.gate, in.Warm, in.solvers = true, nil, ph.warm, &t.solvers
	if d.placeM != [2]float64{} && ph.warm != nil {
		// The glass disc moves with the zone: its new cells start at room
		// temperature.
		roomK := in.Job.Hob.RoomC + kelvin
		in.Warm = &warmStart{Scan: glassFilled(ph.warm.Scan, roomK), Flat: glassFilled(ph.warm.Flat, roomK)}
	}
	in.Flat = t.flatFor(x, d)
	rep := &Report{}
	res := &Result{Report: rep}
	if _, err := analyzeSurface(ctx, in, rep, res); err != nil {
		return y, nil, err
	}
	return figuresOf(y, res), res, nil
}

// glassFilled returns a copy of s whose glass temperatures, where NaN (no
// glass cell), are tK, K: a warm start for a glass disc that has moved.
func glassFilled(s *thermal.Solution, tK float64) *thermal.Solution {
	if s == nil || s.TGlassK == nil {
		return s
	}
	c := *s
	c.TGlassK = make([]float64, len(s.TGlassK))
	for k, v := range s.TGlassK {
		if math.IsNaN(v) {
			v = tK
		}
		c.TGlassK[k] = v
	}
	return &c
}

// decimate returns the surface on the grid of f×f blocks of s from cell
// (ox, oy) on: block (i, j) holds cells f·i + ox … f·i + ox + f − 1 in x
// (likewise y) and becomes one cell at the block's centre. A block lies in
// the base when at least half its cells of s do; its height is the lowest
// of those (+z into the pan: the part of the block that meets the hob, so
// that the coarse grid keeps the support points and their noise) and it is
// Measured when any of them is. f = 1 returns s.
func decimate(s *scan.Surface, f, ox, oy int) *scan.Surface {
	if f == 1 {
		return s
	}
	nx, ny := (s.Nx-ox)/f, (s.Ny-oy)/f
	half := float64(f-1) / 2
	c := scan.NewSurface(nx, ny, s.CellM*float64(f), s.X0M+(float64(ox)+half)*s.CellM, s.Y0M+(float64(oy)+half)*s.CellM)
	for j := range ny {
		for i := range nx {
			in, z, st := 0, math.Inf(1), scan.Filled
			for b := range f * f {
				k := s.Index(f*i+ox+b%f, f*j+oy+b/f)
				if s.State[k] == scan.Outside {
					continue
				}
				in++
				z = math.Min(z, s.ZM[k])
				if s.State[k] == scan.Measured {
					st = scan.Measured
				}
			}
			if 2*in >= f*f {
				q := c.Index(i, j)
				c.ZM[q], c.State[q] = z, st
			}
		}
	}
	return c
}

// hobOn returns the hob top on grid g: a flat top built on g, else the
// highest of the nominal top hob's cells whose centres lie in each of g's
// cells (the part of the hob the pan meets, as decimate keeps the pan's
// lowest); a cell with none of them is Outside.
func hobOn(g, hob *scan.Surface, flat bool) *scan.Surface {
	if flat {
		return contact.FlatHob(g)
	}
	h := scan.NewSurface(g.Nx, g.Ny, g.CellM, g.X0M, g.Y0M)
	span := func(c, c0, n int) (int, int) { return max(c0, 0), min(c0+n, c) }
	for j := range g.Ny {
		jy0 := int(math.Ceil((g.Y(j)-g.CellM/2-hob.Y0M)/hob.CellM - 1e-9))
		jy1 := int(math.Floor((g.Y(j)+g.CellM/2-hob.Y0M)/hob.CellM + 1e-9))
		for i := range g.Nx {
			ix0 := int(math.Ceil((g.X(i)-g.CellM/2-hob.X0M)/hob.CellM - 1e-9))
			ix1 := int(math.Floor((g.X(i)+g.CellM/2-hob.X0M)/hob.CellM + 1e-9))
			q := h.Index(i, j)
			lo, hi := span(hob.Ny, jy0, jy1-jy0+1)
			for hj := lo; hj < hi; hj++ {
				a, b := span(hob.Nx, ix0, ix1-ix0+1)
				for hi := a; hi < b; hi++ {
					k := hob.Index(hi, hj)
					if hob.State[k] == scan.Outside {
						continue
					}
					if h.State[q] == scan.Outside || hob.ZM[k] > h.ZM[q] {
						h.ZM[q], h.State[q] = hob.ZM[k], hob.State[k]
					}
				}
			}
		}
	}
	return h
}

// flatReuse holds the flat twin's solutions of one set of flat-twin
// inputs, by water temperature: the flat twin (full contact over the base
// at the mean pressure) does not depend on the scanner noise or the base
// radius, so trials that draw only those reuse its solves.
type flatReuse struct {
	mu    sync.Mutex
	sols  map[float64]*thermal.Solution
	start map[float64][2]float64 // startPower's powers by start temperature, W
}

// startPower returns the flat twin's powers into the pan and drawn, W,
// at the start temperature fromK (K) as surfaceRun.startPower finds them,
// finding them once.
func (r *flatReuse) startPower(fromK float64, find func() (panW, srcW float64, err error)) (panW, srcW float64, err error) {
	r.mu.Lock()
	defer r.mu.Unlock()
	if p, ok := r.start[fromK]; ok {
		return p[0], p[1], nil
	}
	panW, srcW, err = find()
	if err == nil {
		if r.start == nil {
			r.start = map[float64][2]float64{}
		}
		r.start[fromK] = [2]float64{panW, srcW}
	}
	return panW, srcW, err
}

// solve returns the solution at tWaterK (K), solving it once.
func (r *flatReuse) solve(tWaterK float64, solve func() (*thermal.Solution, error)) (*thermal.Solution, error) {
	r.mu.Lock()
	defer r.mu.Unlock()
	if s, ok := r.sols[tWaterK]; ok {
		return s, nil
	}
	s, err := solve()
	if err == nil {
		r.sols[tWaterK] = s
	}
	return s, err
}

// flatFor returns the flat twin's reuse of a trial: one per coarse
// placement, pan placement and property values (the radius excepted).
// Only trials at the nominal property values and pan placement are kept
// (the draws are continuous: others never repeat).
func (t *trialRunner) flatFor(x []float64, d trialDraw) *flatReuse {
	if d.placeM != [2]float64{} {
		return nil
	}
	var b strings.Builder
	b.WriteString(strconv.Itoa(d.phase))
	for i, m := range t.inputs {
		if m.Key == "uncertainty.radius_mm" {
			continue
		}
		if x[i] != m.Nominal {
			return nil
		}
	}
	key := b.String()
	r := t.flatReuse[key]
	if r == nil {
		r = &flatReuse{sols: map[float64]*thermal.Solution{}}
		t.flatReuse[key] = r
	}
	return r
}

// notes states how the trials were run, for the report.
func (t *trialRunner) notes() []string {
	var out []string
	if t.f > 1 {
		out = append(out, fmt.Sprintf("property, noise and placement draws re-run the chain from the pose on (pose, gap, interface, plate solves, rings, heat-up) on a grid of %d× the analysis cell (%.3g mm; each coarse cell the lowest height of its block of analysis cells, which keeps the support points and their noise), the form figures on the analysis grid; each chain figure of a trial is shifted by the analysis's value less the mean of the coarse nominal runs, contact area, rock and tip force scaled by their ratio (a control variate: the coarse grid's bias cancels, its spread stays)",
			t.f, float64(t.f)*t.in.Surf.CellM*1e3))
	} else {
		out = append(out, "property, noise and placement draws re-run the chain from the pose on (pose, gap, interface, plate solves, rings, heat-up) on the analysis grid")
	}
	if len(t.phases) > 1 {
		out = append(out, fmt.Sprintf("grid placement: each trial's coarse grid is one of the %d sub-grids of the analysis grid, drawn uniformly (the blocks shifted by whole analysis cells); its spread is the coarse grid's and errs high", len(t.phases)))
	} else {
		out = append(out, "grid placement: not drawn (uncertainty.grid_placement = false, or trials on the analysis grid)")
	}
	switch {
	case t.placeM > 0:
		out = append(out, fmt.Sprintf("pan placement: the pan's centre is drawn uniformly on a disc of radius %.3g mm about pan.offset_mm", t.placeM*1e3))
	case !t.flatHob:
		out = append(out, "pan placement: not drawn (a hob top scan or profile would have to be placed again)")
	default:
		out = append(out, "pan placement: not drawn (uncertainty.placement_mm = 0)")
	}
	return out
}
