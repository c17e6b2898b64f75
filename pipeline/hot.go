package pipeline

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gapflux/bow"
	"gapflux/contact"
)

// HotChain runs the cold chain's later stages on a base surface: rest pose,
// gap, interface conductance and plate solve. Given the base heights per
// cell (m, +z into the pan, NaN outside the base) it returns the heat flux
// into the pan (W/m²) and the base node temperature (K) per cell.
type HotChain func(ctx context.Context, surfaceZM []float64) (fluxWM2, tBaseK []float64, err error)

// HotOptions controls the coupled hot-state iteration. Zero values take
// the defaults.
type HotOptions struct {
	// ScanTempK is the temperature at which the base was scanned, K: the
	// reference of the layers' thermal expansion. Required.
	ScanTempK float64
	// TolM ends the iteration when the bow computed from the latest chain
	// run differs from the bow it was run on by at most TolM anywhere on
	// the base, m (default 1 µm).
	TolM float64
	// Relax is the first under-relaxation factor ω in (0, 1] (default
	// 0.7): the next bow is w + ω (w_new − w). From the second iteration on
	// ω follows Aitken's Δ² rule (see SolveHotState), kept in [0.1, 1].
	Relax float64
	// MaxIter bounds the chain runs (default 30).
	MaxIter int
}

// Hot-state defaults.
const (
	DefaultHotTolM    = 1e-6
	DefaultHotRelax   = 0.7
	DefaultHotMaxIter = 30
	minHotRelax       = 0.1
)

// HotState is the base as it is when cooking.
type HotState struct {
	SurfaceZM []float64 // hot base: cold surface + BowM on base cells, m (NaN outside)
	BowM      []float64 // thermal deflection w per cell, m (0 outside the base)
	FluxWM2   []float64 // flux of the last chain run, W/m²
	TBaseK    []float64 // base node temperature of the last chain run, K
	// Iterations counts the chain runs.
	Iterations int
	// ChangeM is the largest |w_new − w| of the last iteration, m.
	ChangeM   float64
	Converged bool    // ChangeM ≤ TolM
	Relax     float64 // relaxation factor of the last update
}

// SolveHotState finds the hot shape of a base by fixed-point iteration:
// starting from the cold surface coldZM (m, NaN outside the base), it runs
// chain on the current hot surface, bends the base under the resulting flux
// and temperature with bend (whose grid is that of coldZM and whose mask is
// inBase), and sets hot = cold + w, under-relaxed, until the bow changes by
// at most opt.TolM. When the last iteration converged, the returned bow is
// the one computed from the returned flux, so the surface and the flux
// agree to within TolM. Not converging within MaxIter is not an error: the
// state says Converged = false and the caller warns.
func SolveHotState(ctx context.Context, coldZM []float64, inBase []bool, bend *bow.Solver, chain HotChain, opt HotOptions) (*HotState, error) {
	opt, err := opt.withDefaults()
	if err != nil {
		return nil, err
	}
	switch {
	case bend == nil || chain == nil:
		return nil, errors.New("hot state: no bending solver or no chain")
	case len(coldZM) != len(inBase):
		return nil, fmt.Errorf("hot state: cold surface has %d cells, base mask %d", len(coldZM), len(inBase))
	}
	for k, in := range inBase {
		if in && (math.IsNaN(coldZM[k]) || math.IsInf(coldZM[k], 0)) {
			return nil, fmt.Errorf("hot state: cold surface height at base cell %d is %g, want finite", k, coldZM[k])
		}
	}
	st := &HotState{SurfaceZM: append([]float64(nil), coldZM...), BowM: make([]float64, len(coldZM)), Relax: opt.Relax}
	wNew := make([]float64, len(coldZM))
	var r, rPrev []float64 // residuals over the base cells, in cell order
	for st.Iterations < opt.MaxIter {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		q, t, err := chain(ctx, st.SurfaceZM)
		st.Iterations++
		if err != nil {
			return nil, fmt.Errorf("hot state, iteration %d: %w", st.Iterations, err)
		}
		st.FluxWM2, st.TBaseK = q, t
		if wNew, err = bend.Deflect(ctx, q, t, opt.ScanTempK, wNew); err != nil {
			return nil, fmt.Errorf("hot state, iteration %d: %w", st.Iterations, err)
		}
		r, rPrev = rPrev[:0], r
		st.ChangeM = 0
		for k, in := range inBase {
			if in {
				d := wNew[k] - st.BowM[k]
				r = append(r, d)
				st.ChangeM = max(st.ChangeM, math.Abs(d))
			}
		}
		st.Converged = st.ChangeM <= opt.TolM
		if st.Converged {
			for k, in := range inBase {
				if in {
					st.BowM[k] = wNew[k]
					st.SurfaceZM[k] = coldZM[k] + wNew[k]
				}
			}
			break
		}
		if len(rPrev) == len(r) {
			st.Relax = aitken(st.Relax, rPrev, r)
		}
		i := 0
		for k, in := range inBase {
			if in {
				st.BowM[k] += st.Relax * r[i]
				st.SurfaceZM[k] = coldZM[k] + st.BowM[k]
				i++
			}
		}
	}
	return st, nil
}

// aitken returns the next relaxation factor from the last one and the last
// two residuals, kept in [0.1, 1]; the last one when the residuals did not
// change.
func aitken(relax float64, rPrev, r []float64) float64 {
	var num, den float64
	for i := range r {
		d := r[i] - rPrev[i]
		num += rPrev[i] * d
		den += d * d
	}
	if den == 0 {
		return relax
	}
	return min(1, max(minHotRelax, -relax*num/den))
}

func (o HotOptions) withDefaults() (HotOptions, error) {
	if o.TolM == 0 {
		o.TolM = DefaultHotTolM
	}
	if o.Relax == 0 {
		o.Relax = DefaultHotRelax
	}
	if o.MaxIter == 0 {
		o.MaxIter = DefaultHotMaxIter
	}
	switch {
	case !(o.ScanTempK > 0 && o.ScanTempK < 1000):
		return o, fmt.Errorf("hot state: scan temperature %g K, want in (0, 1000) K", o.ScanTempK)
	case !(o.TolM > 0 && o.TolM < 1e-3):
		return o, fmt.Errorf("hot state: tolerance %g m, want in (0, 1e-3) m", o.TolM)
	case !(o.Relax > 0 && o.Relax <= 1):
		return o, fmt.Errorf("hot state: under-relaxation %g, want in (0, 1]", o.Relax)
	case o.MaxIter < 1 || o.MaxIter > 1000:
		return o, fmt.Errorf("hot state: %d iterations at most, want 1 to 1000", o.MaxIter)
	}
	return o, nil
}

// bendLayers converts the job's pan layers (hob side first) into the
// bending model's layers, with each material's E, ν and α from lib.
func bendLayers(job Job, lib []contact.Material) ([]bow.Layer, error) {
	out := make([]bow.Layer, 0, len(job.Pan.Layers))
	for i, l := range job.Pan.Layers {
		m, err := contact.LookupMaterial(lib, l.Material)
		if err != nil {
			return nil, fmt.Errorf("job: pan.layers[%d]: %w", i, err)
		}
		if !(m.YoungPa > 0) {
			return nil, fmt.Errorf("job: pan.layers[%d]: material %q has no Young's modulus; the hot state needs young_gpa, poisson and expansion_um_mk (give them in a [[material]] table)", i, m.Name)
		}
		out = append(out, bow.Layer{ThicknessM: l.ThicknessMM / 1e3, ConductivityWMK: m.ConductivityWMK,
			YoungPa: m.YoungPa, Poisson: m.Poisson, ExpansionPerK: m.ExpansionPerK})
	}
	return out, nil
}
