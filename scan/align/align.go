// Package align fits the rotation about the base axis, and a small shift,
// that brings one height field of a base onto another of the same base, so
// two scans taken at different angles on the scanner table can be compared
// cell by cell.
//
// Both surfaces are in the base frame of package scan (origin at the centre
// of the footprint, base plane z = 0). The fitted transform maps a point p
// of surface A to the point q = R(θ)·p + s of surface B that shows the same
// place on the part, with R(θ) the counter-clockwise rotation about +z. The
// objective is the RMS of the height difference B(q) − A(p) about its mean
// (the two levellings may differ by a piston) over the cells both surfaces
// hold inside the common base disc; B is sampled bilinearly.
//
// The search is a coarse scan over 0–360° on a coarsened set of points, a
// golden-section refinement of the angle (Kiefer 1953) about the best coarse
// angle, and a polish of angle and shift by cyclic golden-section searches.
package align

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gapflux/scan"
)

// Defaults used when an Options field is zero.
const (
	// DefaultCoarseStepDeg is the angle step of the coarse search, degrees
	// (our choice: a form with a 2θ symmetry such as a saddle or bend has
	// its RMS well about ±20° wide, so a few degrees never steps over it).
	DefaultCoarseStepDeg = 3.0
	// DefaultCoarseCellM is the lattice spacing of the coarse search, m
	// (our choice: the form filter's default cut-off is 8 mm, so nothing
	// the comparison sees is finer than a few millimetres).
	DefaultCoarseCellM = 4e-3
	// DefaultMaxShiftM bounds the fitted shift, m (our choice: the
	// footprint circle fit centres both scans to well under a millimetre).
	DefaultMaxShiftM = 3e-3
	// DefaultFlatTolM is the least swing of the coarse objective over
	// 360° for which the angle counts as defined, m (our choice: twice the
	// RMS of 8 µm scanner noise left after an 8 mm Gaussian form filter).
	DefaultFlatTolM = 2e-6
	// refinePoints bounds the points the refinement evaluates (the final
	// RMS uses every common cell).
	refinePoints = 20000
	// polishRounds bounds the rounds of the shift and angle polish.
	polishRounds = 8
)

// Options tunes Fit. The zero value uses the defaults above.
type Options struct {
	CoarseStepDeg float64 // coarse angle step, degrees, (0, 30]
	CoarseCellM   float64 // coarse lattice spacing, m
	// MaxShiftM bounds the shift; negative fits no shift.
	MaxShiftM float64
	FlatTolM  float64 // see DefaultFlatTolM
}

// Result is a fitted alignment.
type Result struct {
	// AngleRad is θ, radians in [0, 2π); 0 when the angle is not defined.
	AngleRad float64
	// ShiftM is s, m.
	ShiftM [2]float64
	// Defined is false when the objective is flat over the angle (a
	// rotationally symmetric base): the angle cannot be told and is left 0.
	Defined bool
	// RMSM is the RMS of B − A about its mean at the fit, m, over
	// CommonCells cells; MeanM is that mean (B − A), m.
	RMSM, MeanM float64
	CommonCells int
	// SwingM is the largest minus the smallest objective of the coarse
	// search, m: how strongly the form fixes the angle.
	SwingM float64
	// CoarseMinDeg is the best angle of the coarse search, degrees.
	CoarseMinDeg float64
	// Fold is the largest n ≤ 6 for which the form looks the same turned
	// by 360°/n (the coarse objective is within the flat tolerance of its
	// minimum at every multiple of 360°/n from it): 2 for a saddle or a
	// one-way bend. The angle is then known only modulo 360°/Fold; 1 when
	// no such symmetry is seen or the angle is not defined.
	Fold int
	// Evaluations counts objective evaluations.
	Evaluations int
}

// ErrNoOverlap is wrapped when the two surfaces share too few cells.
var ErrNoOverlap = errors.New("align: the two surfaces share too few base cells")

// points are sample places of A with A's height there.
type points struct{ x, y, z []float64 }

func (o Options) withDefaults() (Options, error) {
	if o.CoarseStepDeg == 0 {
		o.CoarseStepDeg = DefaultCoarseStepDeg
	}
	if o.CoarseCellM == 0 {
		o.CoarseCellM = DefaultCoarseCellM
	}
	if o.MaxShiftM == 0 {
		o.MaxShiftM = DefaultMaxShiftM
	}
	if o.FlatTolM == 0 {
		o.FlatTolM = DefaultFlatTolM
	}
	if !(o.CoarseStepDeg > 0 && o.CoarseStepDeg <= 30) || !(o.CoarseCellM > 0 && o.CoarseCellM < 1) ||
		math.IsNaN(o.MaxShiftM) || o.MaxShiftM > 0.05 || !(o.FlatTolM > 0 && o.FlatTolM < 1e-3) {
		return o, fmt.Errorf("align: options out of range: coarse step %g° (0–30), coarse cell %g m, max shift %g m (≤ 0.05), flat tolerance %g m",
			o.CoarseStepDeg, o.CoarseCellM, o.MaxShiftM, o.FlatTolM)
	}
	return o, nil
}

// Fit finds θ and s that bring b onto a over the disc of radius radiusM
// (m) about the origin. Both surfaces hold heights in ZM, NaN outside the
// base.
func Fit(ctx context.Context, a, b *scan.Surface, radiusM float64, opt Options) (*Result, error) {
	opt, err := opt.withDefaults()
	if err != nil {
		return nil, err
	}
	if err := checkSurface(a); err != nil {
		return nil, fmt.Errorf("align: surface A: %w", err)
	}
	if err := checkSurface(b); err != nil {
		return nil, fmt.Errorf("align: surface B: %w", err)
	}
	if !(radiusM > 0) || math.IsInf(radiusM, 0) {
		return nil, fmt.Errorf("align: radius %g m is not a positive length", radiusM)
	}
	full := cellPoints(a, radiusM, 1)
	if len(full.x) < 16 {
		return nil, fmt.Errorf("%w: A holds %d cells inside r = %.1f mm", ErrNoOverlap, len(full.x), radiusM*1e3)
	}
	stride := 1
	for len(full.x)/(stride*stride) > refinePoints {
		stride++
	}
	fine := cellPoints(a, radiusM, stride)
	coarse := latticePoints(a, radiusM, math.Max(opt.CoarseCellM, a.CellM))
	if len(coarse.x) < 16 {
		coarse = fine
	}
	res := &Result{}
	obj := func(p points, thetaRad, sx, sy float64) float64 {
		res.Evaluations++
		rms, _, n := difference(b, p, thetaRad, sx, sy)
		if 2*n < len(p.x) {
			return math.Inf(1)
		}
		return rms
	}

	// Coarse search over the whole turn.
	steps := int(math.Ceil(360 / opt.CoarseStepDeg))
	step := 2 * math.Pi / float64(steps)
	lo, hi, best := math.Inf(1), math.Inf(-1), 0
	fs := make([]float64, steps)
	for i := range steps {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		f := obj(coarse, float64(i)*step, 0, 0)
		fs[i] = f
		if f < lo {
			lo, best = f, i
		}
		hi = math.Max(hi, f)
	}
	if math.IsInf(lo, 1) {
		return nil, fmt.Errorf("%w at any angle", ErrNoOverlap)
	}
	res.SwingM, res.CoarseMinDeg = hi-lo, float64(best)*step*180/math.Pi
	res.Defined = !math.IsInf(hi, 1) && res.SwingM >= opt.FlatTolM
	res.Fold = 1
	if res.Defined {
		res.Fold = fold(fs, best, opt.FlatTolM)
	}
	theta := 0.0
	if res.Defined {
		c := float64(best) * step
		theta = goldenSection(func(t float64) float64 { return obj(fine, t, 0, 0) }, c-step, c+step, 1e-5)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	theta, sx, sy := polish(fine, obj, theta, res.Defined, opt.MaxShiftM)
	res.AngleRad = math.Mod(theta+4*math.Pi, 2*math.Pi)
	res.ShiftM = [2]float64{sx, sy}
	res.RMSM, res.MeanM, res.CommonCells = difference(b, full, res.AngleRad, sx, sy)
	if res.CommonCells == 0 {
		return nil, fmt.Errorf("%w at the fitted angle", ErrNoOverlap)
	}
	return res, nil
}

// fold returns the largest n ≤ 6 dividing len(fs) for which fs is within
// tol of fs[best] at every multiple of len(fs)/n from best.
func fold(fs []float64, best int, tol float64) int {
	n := len(fs)
	for k := 6; k >= 2; k-- {
		if n%k != 0 {
			continue
		}
		same := true
		for m := 1; m < k && same; m++ {
			same = fs[(best+m*n/k)%n]-fs[best] < tol
		}
		if same {
			return k
		}
	}
	return 1
}

// polish refines the angle (when defined) and the shift (when allowed) by
// cyclic coordinate descent: rounds (at most polishRounds, until a round
// moves nothing by more than 2 µm or 0.001°) of golden-section searches along θ
// (±0.5°), s_x and s_y (±maxShiftM), each from the current best. The
// objective is smooth and its minimum well inside these brackets once the
// coarse search and the angle refinement have run. (gonum/optimize's
// Nelder–Mead would pull golang.org/x/tools into the module through
// gonum/stat/distmv, so it is not used.)
func polish(p points, obj func(points, float64, float64, float64) float64, theta float64, angle bool, maxShiftM float64) (float64, float64, float64) {
	sx, sy := 0.0, 0.0
	if maxShiftM < 0 {
		return theta, sx, sy
	}
	const dTheta = 0.5 * math.Pi / 180
	for range polishRounds {
		px, py, pt := sx, sy, theta
		sx = goldenSection(func(v float64) float64 { return obj(p, theta, v, sy) }, -maxShiftM, maxShiftM, 1e-6)
		sy = goldenSection(func(v float64) float64 { return obj(p, theta, sx, v) }, -maxShiftM, maxShiftM, 1e-6)
		if angle {
			theta = goldenSection(func(v float64) float64 { return obj(p, v, sx, sy) }, theta-dTheta, theta+dTheta, 1e-5)
		}
		if math.Abs(sx-px) < 2e-6 && math.Abs(sy-py) < 2e-6 && math.Abs(theta-pt) < 2e-5 {
			break
		}
	}
	return theta, sx, sy
}

// goldenSection returns the minimiser of f on [lo, hi] to within tol by
// golden-section search (Kiefer 1953; Press et al., Numerical Recipes 3rd
// ed., §10.2).
func goldenSection(f func(float64) float64, lo, hi, tol float64) float64 {
	const g = 0.6180339887498949 // (√5 − 1)/2
	c, d := hi-g*(hi-lo), lo+g*(hi-lo)
	fc, fd := f(c), f(d)
	for hi-lo > tol {
		if fc <= fd {
			hi, d, fd = d, c, fc
			c = hi - g*(hi-lo)
			fc = f(c)
		} else {
			lo, c, fc = c, d, fd
			d = lo + g*(hi-lo)
			fd = f(d)
		}
	}
	return (lo + hi) / 2
}

// difference returns the RMS of B(R(θ)p + s) − A(p) about its mean, that
// mean, m, and the number of points where B is defined.
func difference(b *scan.Surface, p points, thetaRad, sx, sy float64) (rms, mean float64, n int) {
	sin, cos := math.Sincos(thetaRad)
	var sum, sum2 float64
	for i := range p.x {
		x, y := p.x[i], p.y[i]
		zb, ok := Bilinear(b, b.ZM, cos*x-sin*y+sx, sin*x+cos*y+sy)
		if !ok {
			continue
		}
		d := zb - p.z[i]
		sum += d
		sum2 += d * d
		n++
	}
	if n == 0 {
		return math.Inf(1), 0, 0
	}
	mean = sum / float64(n)
	return math.Sqrt(math.Max(sum2/float64(n)-mean*mean, 0)), mean, n
}

// Bilinear interpolates the cell field v (indexed like s) at (x, y), m. It
// reports false when (x, y) is off the grid or any of the four cells around
// it holds NaN.
func Bilinear(s *scan.Surface, v []float64, x, y float64) (float64, bool) {
	fx, fy := (x-s.X0M)/s.CellM, (y-s.Y0M)/s.CellM
	if !(fx >= 0 && fy >= 0) {
		return 0, false
	}
	i, j := int(fx), int(fy)
	if i >= s.Nx-1 || j >= s.Ny-1 {
		if i == s.Nx-1 && fx == float64(i) && j < s.Ny && fy == float64(j) {
			z := v[s.Index(i, j)]
			return z, !math.IsNaN(z)
		}
		return 0, false
	}
	tx, ty := fx-float64(i), fy-float64(j)
	k := s.Index(i, j)
	z00, z10, z01, z11 := v[k], v[k+1], v[k+s.Nx], v[k+s.Nx+1]
	z := (1-ty)*((1-tx)*z00+tx*z10) + ty*((1-tx)*z01+tx*z11)
	return z, !math.IsNaN(z)
}

// Resample returns v (a field indexed like src) sampled bilinearly at the
// cell centres of onto under the transform of r: out[k] = v(R(θ)·p_k + s),
// NaN where src has no value there or onto's cell is outside its base.
func Resample(src *scan.Surface, v []float64, onto *scan.Surface, r *Result) []float64 {
	out := make([]float64, onto.Nx*onto.Ny)
	sin, cos := math.Sincos(r.AngleRad)
	for j := range onto.Ny {
		y := onto.Y(j)
		for i := range onto.Nx {
			k := onto.Index(i, j)
			out[k] = math.NaN()
			if !onto.InBase(k) {
				continue
			}
			x := onto.X(i)
			if z, ok := Bilinear(src, v, cos*x-sin*y+r.ShiftM[0], sin*x+cos*y+r.ShiftM[1]); ok {
				out[k] = z
			}
		}
	}
	return out
}

// cellPoints returns every stride-th base cell centre of a within radiusM.
func cellPoints(a *scan.Surface, radiusM float64, stride int) points {
	var p points
	for j := 0; j < a.Ny; j += stride {
		y := a.Y(j)
		for i := 0; i < a.Nx; i += stride {
			k := a.Index(i, j)
			x := a.X(i)
			if !a.InBase(k) || math.IsNaN(a.ZM[k]) || math.Hypot(x, y) > radiusM {
				continue
			}
			p.x, p.y, p.z = append(p.x, x), append(p.y, y), append(p.z, a.ZM[k])
		}
	}
	return p
}

// latticePoints samples a bilinearly on a square lattice of spacing cellM
// centred on the origin, within radiusM.
func latticePoints(a *scan.Surface, radiusM, cellM float64) points {
	var p points
	n := int(radiusM / cellM)
	for j := -n; j <= n; j++ {
		for i := -n; i <= n; i++ {
			x, y := float64(i)*cellM, float64(j)*cellM
			if math.Hypot(x, y) > radiusM {
				continue
			}
			if z, ok := Bilinear(a, a.ZM, x, y); ok {
				p.x, p.y, p.z = append(p.x, x), append(p.y, y), append(p.z, z)
			}
		}
	}
	return p
}

func checkSurface(s *scan.Surface) error {
	switch {
	case s == nil:
		return errors.New("nil surface")
	case s.Nx < 2 || s.Ny < 2 || len(s.ZM) != s.Nx*s.Ny || len(s.State) != len(s.ZM):
		return fmt.Errorf("grid of %d×%d cells holds %d heights", s.Nx, s.Ny, len(s.ZM))
	case !(s.CellM > 0) || math.IsInf(s.CellM, 0) || math.IsNaN(s.X0M) || math.IsNaN(s.Y0M):
		return fmt.Errorf("cell %g m at (%g, %g) m is not a valid grid", s.CellM, s.X0M, s.Y0M)
	}
	return nil
}
