package scan

import (
	"errors"
	"fmt"
	"math"
)

// Shape words (Shape.Word), as a stamping or tooling engineer names a base.
const (
	// ShapeFlat: no curvature and no tilt above the threshold.
	ShapeFlat = "flat"
	// ShapeTilted: flat but inclined to the base frame's plane (a wedge
	// when the other face is the reference).
	ShapeTilted = "tilted"
	// ShapeDished: concave both ways, the centre raised into the pan.
	ShapeDished = "dished"
	// ShapeDomed: convex both ways, the centre lowest.
	ShapeDomed = "domed"
	// ShapeSaddle: concave one way and convex the other (twisted).
	ShapeSaddle = "saddle"
	// ShapeBent: curved about one axis only (cylindrical).
	ShapeBent = "bent"
)

// Shape classification defaults (our own choices, DESIGN.md 3).
const (
	// DefaultShapeNoiseK is how many noise RMS a rim sag must exceed to
	// count: 3, common practice for a detection threshold.
	DefaultShapeNoiseK = 3.0
	// DefaultShapeFloorM is the least rim sag, m, that counts: 0.02 mm,
	// our own choice: half the ±0.02 %-of-diameter band (0.04 mm on a
	// 200 mm base) within which the verdict already treats a base as flat.
	DefaultShapeFloorM = 0.02e-3
	// shapeRatio is the ratio of the smaller to the larger principal rim
	// sag below which a base is "bent" about one axis rather than dished,
	// domed or a saddle: 1/3, our own choice (a cylinder has 0, a
	// spherical dish 1).
	shapeRatio = 1.0 / 3
)

// ShapeOptions sets the thresholds of MeasureShape. The zero value gives
// the defaults and no noise term.
type ShapeOptions struct {
	// NoiseM is the scanner noise, m RMS (e.g. FilterResult.NoiseM).
	NoiseM float64
	// NoiseK multiplies NoiseM; 0 means DefaultShapeNoiseK.
	NoiseK float64
	// FloorM is the least rim sag that counts, m; 0 means
	// DefaultShapeFloorM.
	FloorM float64
}

// Quadric is the least-squares quadric
//
//	z = A + B·x + C·y + D·x² + E·x·y + F·y²
//
// over a base disc, in the base frame: A in m, B and C dimensionless, D,
// E and F in 1/m.
type Quadric struct {
	A, B, C, D, E, F float64
	// RadiusM is the radius of the disc fitted, m; Cells the number of
	// measured cells in it.
	RadiusM float64
	Cells   int
	// ResidualRMSM is the RMS of the fit's residuals, m.
	ResidualRMSM float64
}

// Shape is the form of a base in a stamping engineer's words, from the
// principal curvatures of its least-squares quadric (DESIGN.md 3).
type Shape struct {
	// Word is one of ShapeFlat, ShapeTilted, ShapeDished, ShapeDomed,
	// ShapeSaddle or ShapeBent.
	Word    string
	Quadric Quadric
	// CurvatureInvM are the principal curvatures κ, 1/m: the eigenvalues
	// of the Hessian [[2D, E], [E, 2F]] (small slopes), the one of larger
	// magnitude first. Positive: z rises away from the centre (convex
	// seen from the hob, +z into the pan).
	CurvatureInvM [2]float64
	// AxisDeg is the direction of each principal curvature, degrees in
	// [0, 180) from +x towards +y.
	AxisDeg [2]float64
	// RimSagM is −κ·R²/2 per principal direction, m: how far the centre
	// stands above the rim ends along that direction. Positive: concave
	// (dished) that way, like concavity_mm; negative: convex.
	RimSagM [2]float64
	// BendAxisDeg is the axis a bent base is bent about: the straight
	// direction, that of the smaller curvature, degrees in [0, 180).
	BendAxisDeg float64
	// TiltRiseM is how much the quadric's plane part rises across the
	// diameter, 2R·|(B, C)|, m; TiltAxisDeg the direction it rises
	// towards, degrees in [0, 360) from +x towards +y.
	TiltRiseM   float64
	TiltAxisDeg float64
	// ThresholdM is the rim sag (and tilt rise) below which a term counts
	// as zero: max(NoiseK·NoiseM, FloorM), m.
	ThresholdM float64
}

// MeasureShape fits the quadric to the Measured cells of s within radiusM
// of the origin and names the shape: with the principal rim sags s₁, s₂
// (|s₁| ≥ |s₂|) and the threshold t,
//
//	|s₁| ≤ t                      flat (tilted if the tilt rise > t)
//	|s₂| ≤ t or |s₂/s₁| < 1/3     bent about the axis of s₂
//	s₂/s₁ ≥ 1/3                   dished (s₁ > 0) or domed (s₁ < 0)
//	s₂/s₁ ≤ −1/3                  saddle
//
// An exact quadric is recovered exactly (to round-off), whatever the
// cells: the fit is linear in its six coefficients.
func MeasureShape(s *Surface, radiusM float64, opt ShapeOptions) (*Shape, error) {
	if opt.NoiseK == 0 {
		opt.NoiseK = DefaultShapeNoiseK
	}
	if opt.FloorM == 0 {
		opt.FloorM = DefaultShapeFloorM
	}
	switch {
	case !(opt.NoiseM >= 0) || math.IsInf(opt.NoiseM, 0):
		return nil, fmt.Errorf("scan: shape: noise %g m must be finite and non-negative", opt.NoiseM)
	case !(opt.NoiseK > 0) || math.IsInf(opt.NoiseK, 0), !(opt.FloorM > 0) || math.IsInf(opt.FloorM, 0):
		return nil, fmt.Errorf("scan: shape: threshold factor %g and floor %g m must be positive and finite", opt.NoiseK, opt.FloorM)
	}
	q, err := FitQuadric(s, radiusM)
	if err != nil {
		return nil, err
	}
	sh := &Shape{Quadric: *q, ThresholdM: max(opt.NoiseK*opt.NoiseM, opt.FloorM)}
	r := q.RadiusM

	// Principal curvatures of [[2D, E], [E, 2F]]: κ = (D + F) ± √((D − F)² + E²),
	// the larger at θ = ½·atan2(E, D − F).
	mean, rad := q.D+q.F, math.Hypot(q.D-q.F, q.E)
	th := 0.5 * math.Atan2(q.E, q.D-q.F)
	k := [2]float64{mean + rad, mean - rad}
	ax := [2]float64{th, th + math.Pi/2}
	if math.Abs(k[1]) > math.Abs(k[0]) {
		k[0], k[1], ax[0], ax[1] = k[1], k[0], ax[1], ax[0]
	}
	for i := range 2 {
		sh.CurvatureInvM[i] = k[i]
		sh.AxisDeg[i] = angleDeg(ax[i])
		sh.RimSagM[i] = -k[i] * r * r / 2
	}
	sh.BendAxisDeg = sh.AxisDeg[1]
	sh.TiltRiseM = 2 * r * math.Hypot(q.B, q.C)
	sh.TiltAxisDeg = math.Mod(math.Atan2(q.C, q.B)*180/math.Pi+360, 360)
	sh.Word = shapeWord(sh.RimSagM, sh.TiltRiseM, sh.ThresholdM)
	return sh, nil
}

// shapeWord names the shape from the principal rim sags (larger first),
// the tilt rise and the threshold t (see MeasureShape).
func shapeWord(sag [2]float64, tiltM, t float64) string {
	switch {
	case math.Abs(sag[0]) <= t && tiltM > t:
		return ShapeTilted
	case math.Abs(sag[0]) <= t:
		return ShapeFlat
	}
	ratio := sag[1] / sag[0]
	switch {
	case math.Abs(sag[1]) <= t || math.Abs(ratio) < shapeRatio:
		return ShapeBent
	case ratio < 0:
		return ShapeSaddle
	case sag[0] > 0:
		return ShapeDished
	}
	return ShapeDomed
}

// angleDeg maps an angle in radians to degrees in [0, 180) (an axis has
// no sense), rounded to 1e-9° so that 180° − ε reads 0°.
func angleDeg(a float64) float64 {
	d := math.Mod(a*180/math.Pi, 180)
	if d < 0 {
		d += 180
	}
	if d = math.Round(d*1e9) / 1e9; d >= 180 {
		d -= 180
	}
	return d
}

// FitQuadric returns the least-squares quadric (see Quadric) through the
// Measured cells of s with centres within radiusM of the origin, solved
// from the normal equations in coordinates scaled by radiusM (well
// conditioned on a disc). Filled cells are interpolated and left out.
func FitQuadric(s *Surface, radiusM float64) (*Quadric, error) {
	if s == nil {
		return nil, errors.New("scan: shape: nil surface")
	}
	if !(radiusM > 0) || math.IsInf(radiusM, 0) {
		return nil, fmt.Errorf("scan: shape: radius %g m is not positive and finite", radiusM)
	}
	idx := formCells(s, radiusM)
	if len(idx) < 6 {
		return nil, fmt.Errorf("scan: shape: %d measured cells inside the %.1f mm disc; need at least 6", len(idx), 2e3*radiusM)
	}
	var a [36]float64
	var b [6]float64
	inv := 1 / radiusM
	basis := func(k int) [6]float64 {
		u, v := s.X(k%s.Nx)*inv, s.Y(k/s.Nx)*inv
		return [6]float64{1, u, v, u * u, u * v, v * v}
	}
	for _, k := range idx {
		f := basis(k)
		for p := range 6 {
			b[p] += f[p] * s.ZM[k]
			for q := range 6 {
				a[6*p+q] += f[p] * f[q]
			}
		}
	}
	c, ok := solveSmall(6, a[:], b[:])
	if !ok {
		return nil, fmt.Errorf("scan: shape: quadric fit is singular (the %d cells do not spread over the disc)", len(idx))
	}
	ss := 0.0
	for _, k := range idx {
		f := basis(k)
		e := s.ZM[k]
		for p := range 6 {
			e -= c[p] * f[p]
		}
		ss += e * e
	}
	return &Quadric{A: c[0], B: c[1] * inv, C: c[2] * inv, D: c[3] * inv * inv, E: c[4] * inv * inv, F: c[5] * inv * inv,
		RadiusM: radiusM, Cells: len(idx), ResidualRMSM: math.Sqrt(ss / float64(len(idx)))}, nil
}
