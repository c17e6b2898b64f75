package scan

import (
	"errors"
	"fmt"
	"math"
)

// Form holds the form parameters of a base's height field, all in metres
// and measured perpendicular to the reference plane (see MeasureForm).
type Form struct {
	// FlatnessMZM is the minimum-zone flatness (ISO 12781-1 FLTt about the
	// MZPL reference): the distance between the two closest parallel planes
	// enclosing the cells, m.
	FlatnessMZM float64
	// FlatnessLSM is the peak-to-valley about the least-squares plane
	// (ISO 12781-1 LSPL), m.
	FlatnessLSM float64
	// ConcavityM is −c3·R² of the least-squares paraboloid
	// z = c0 + c1·x + c2·y + c3·r² over the disc (DESIGN.md section 3), m.
	// Positive: concave (dished, centre raised into the pan); negative:
	// convex (domed).
	ConcavityM float64
	// ConcavityPctOfDiameter is 100·ConcavityM / DiameterM.
	ConcavityPctOfDiameter float64
	// DiameterM is the diameter of the evaluated disc, m.
	DiameterM float64
	// LSPlane is (a, b, c) of the least-squares plane z = a·x + b·y + c
	// (a, b dimensionless, c in m).
	LSPlane [3]float64
	// MZPlane is (a, b, c) of the minimum-zone mid-plane z = a·x + b·y + c.
	MZPlane [3]float64
	// Zernike holds the Zernike terms up to radial order
	// DefaultZernikeOrder (fewer on a sparse grid), coefficients in m.
	Zernike []ZernikeTerm
	// Cells is the number of measured cells the form was computed from.
	Cells int
}

// MeasureForm computes flatness, concavity and Zernike terms of s over
// the Measured cells whose centres lie within radiusM of the origin
// (the base centre). Filled cells are interpolated, not measured, and are
// left out.
//
// Both flatness values are computed as vertical (z) deviations and then
// converted to distances normal to the reference plane by dividing by
// sqrt(1+a²+b²) (ISO 12781-1 takes local flatness deviations normal to the
// reference plane; on a levelled scan the factor differs from 1 by less than
// 1e-5). The minimum zone is exact: see MinimumZone.
func MeasureForm(s *Surface, radiusM float64) (*Form, error) {
	if s == nil {
		return nil, errors.New("scan: form: nil surface")
	}
	if !(radiusM > 0) || math.IsInf(radiusM, 0) {
		return nil, fmt.Errorf("scan: form: radius %g m is not positive and finite", radiusM)
	}
	idx := formCells(s, radiusM)
	if len(idx) < 4 {
		return nil, fmt.Errorf("scan: form: %d measured cells inside the %.1f mm disc; need at least 4", len(idx), 2e3*radiusM)
	}
	x := make([]float64, len(idx))
	y := make([]float64, len(idx))
	z := make([]float64, len(idx))
	for n, k := range idx {
		x[n], y[n], z[n] = s.X(k%s.Nx), s.Y(k/s.Nx), s.ZM[k]
	}
	f := &Form{DiameterM: 2 * radiusM, Cells: len(idx)}
	// The Zernike fit (itself split between the processors) runs beside
	// the flatness and concavity; each is computed as on its own, and
	// the first error in the order flatness, concavity, Zernike is the
	// one returned.
	var zern []ZernikeTerm
	var zernErr error
	done := make(chan struct{})
	go func() {
		defer close(done)
		zern, zernErr = fitZernike(s, idx, radiusM, DefaultZernikeOrder)
	}()
	err := measureFlatness(f, x, y, z, radiusM)
	<-done
	if err != nil {
		return nil, err
	}
	if zernErr != nil {
		return nil, zernErr
	}
	f.Zernike = zern
	return f, nil
}

// measureFlatness sets f's least-squares and minimum-zone flatness and
// its concavity from the cells (x, y, z) of the disc of radius radiusM.
func measureFlatness(f *Form, x, y, z []float64, radiusM float64) error {
	ls, err := planeFitLS(x, y, z)
	if err != nil {
		return err
	}
	f.LSPlane = ls
	lo, hi := residualRange(x, y, z, ls)
	f.FlatnessLSM = (hi - lo) / math.Sqrt(1+ls[0]*ls[0]+ls[1]*ls[1])

	w, mz, err := MinimumZone(x, y, z)
	if err != nil {
		return err
	}
	f.MZPlane = mz
	f.FlatnessMZM = w / math.Sqrt(1+mz[0]*mz[0]+mz[1]*mz[1])

	c3, err := paraboloidFit(x, y, z, radiusM)
	if err != nil {
		return err
	}
	f.ConcavityM = -c3 * radiusM * radiusM
	f.ConcavityPctOfDiameter = 100 * f.ConcavityM / f.DiameterM
	return nil
}

// formCells returns the indices of the Measured cells of s with centres
// within radiusM of the origin.
func formCells(s *Surface, radiusM float64) []int {
	r2 := radiusM * radiusM * (1 + 1e-12)
	var idx []int
	for j := range s.Ny {
		y := s.Y(j)
		for i := range s.Nx {
			k := j*s.Nx + i
			if s.State[k] != Measured || math.IsNaN(s.ZM[k]) {
				continue
			}
			x := s.X(i)
			if x*x+y*y <= r2 {
				idx = append(idx, k)
			}
		}
	}
	return idx
}

// residualRange returns the smallest and largest z − (a·x + b·y + c).
func residualRange(x, y, z []float64, p [3]float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for i := range z {
		r := z[i] - (p[0]*x[i] + p[1]*y[i] + p[2])
		lo = min(lo, r)
		hi = max(hi, r)
	}
	return lo, hi
}

// planeFitLS returns (a, b, c) of the least-squares plane z = a·x + b·y + c.
func planeFitLS(x, y, z []float64) ([3]float64, error) {
	n := float64(len(z))
	var mx, my, mzv float64
	for i := range z {
		mx += x[i]
		my += y[i]
		mzv += z[i]
	}
	mx, my, mzv = mx/n, my/n, mzv/n
	var sxx, sxy, syy, sxz, syz float64
	for i := range z {
		dx, dy, dz := x[i]-mx, y[i]-my, z[i]-mzv
		sxx += dx * dx
		sxy += dx * dy
		syy += dy * dy
		sxz += dx * dz
		syz += dy * dz
	}
	det := sxx*syy - sxy*sxy
	if !(det > 1e-12*(sxx*syy)) || sxx == 0 {
		return [3]float64{}, errors.New("scan: form: cells are collinear; no plane")
	}
	a := (sxz*syy - syz*sxy) / det
	b := (syz*sxx - sxz*sxy) / det
	return [3]float64{a, b, mzv - a*mx - b*my}, nil
}

// paraboloidFit returns c3 of the least-squares fit
// z = c0 + c1·x + c2·y + c3·(x²+y²), with r scaled by radiusM inside.
func paraboloidFit(x, y, z []float64, radiusM float64) (float64, error) {
	var a [4][4]float64
	var b [4]float64
	inv := 1 / radiusM
	for i := range z {
		u, v := x[i]*inv, y[i]*inv
		f := [4]float64{1, u, v, u*u + v*v}
		for p := range 4 {
			b[p] += f[p] * z[i]
			for q := range 4 {
				a[p][q] += f[p] * f[q]
			}
		}
	}
	m := make([]float64, 16)
	for p := range 4 {
		copy(m[4*p:], a[p][:])
	}
	c, ok := solveSmall(4, m, b[:])
	if !ok {
		return 0, errors.New("scan: form: paraboloid fit is singular (cells badly spread over the disc)")
	}
	return c[3] * inv * inv, nil
}

// solveSmall solves the n×n system a·x = b (a row-major, overwritten) by
// Gaussian elimination with partial pivoting. ok is false when a pivot is
// zero or tiny relative to the matrix's largest entry.
func solveSmall(n int, a, b []float64) (x []float64, ok bool) {
	x = append([]float64(nil), b...)
	big := 0.0
	for _, v := range a[:n*n] {
		big = max(big, math.Abs(v))
	}
	if big == 0 {
		return nil, false
	}
	for c := range n {
		p := c
		for r := c + 1; r < n; r++ {
			if math.Abs(a[r*n+c]) > math.Abs(a[p*n+c]) {
				p = r
			}
		}
		if math.Abs(a[p*n+c]) <= 1e-14*big {
			return nil, false
		}
		if p != c {
			for k := range n {
				a[p*n+k], a[c*n+k] = a[c*n+k], a[p*n+k]
			}
			x[p], x[c] = x[c], x[p]
		}
		inv := 1 / a[c*n+c]
		for r := c + 1; r < n; r++ {
			f := a[r*n+c] * inv
			if f == 0 {
				continue
			}
			for k := c; k < n; k++ {
				a[r*n+k] -= f * a[c*n+k]
			}
			x[r] -= f * x[c]
		}
	}
	for r := n - 1; r >= 0; r-- {
		s := x[r]
		for k := r + 1; k < n; k++ {
			s -= a[r*n+k] * x[k]
		}
		x[r] = s / a[r*n+r]
	}
	return x, true
}

// MinimumZone returns the minimum-zone (Chebyshev) plane of the points
// (x[i], y[i], z[i]): the plane z = a·x + b·y + c minimising the largest
// vertical deviation, and the vertical width of the zone (twice that
// deviation), in the unit of z. The result is exact up to round-off: the
// linear programme
//
//	minimise h  s.t.  −h ≤ z_i − (a·x_i + b·y_i + c) ≤ h  for every i
//
// (Carr & Ferreira 1995, Precis. Eng. 17:131, from memory) is solved
// through its dual, which has four rows, by a revised simplex method that
// prices every point at each step. The entering column is the point that
// violates the current zone most (constraint generation), and the method
// stops when no point lies outside the zone by more than 1e-12 of the z
// range. The width returned is the largest minus the smallest deviation
// about the final plane, so it is always achieved by that plane.
//
// MinimumZone needs at least three points not on one line in x-y; the
// slices must have equal length (else it panics).
func MinimumZone(x, y, z []float64) (width float64, plane [3]float64, err error) {
	if len(x) != len(z) || len(y) != len(z) {
		panic("scan: MinimumZone: slices of unequal length")
	}
	n := len(z)
	if n < 3 {
		return 0, plane, fmt.Errorf("scan: minimum zone: %d points; need at least 3", n)
	}
	for i := range z {
		if math.IsNaN(x[i]+y[i]+z[i]) || math.IsInf(x[i]+y[i]+z[i], 0) {
			return 0, plane, fmt.Errorf("scan: minimum zone: point %d is not finite", i)
		}
	}
	// Centre and scale for conditioning.
	var mx, my, mzv float64
	for i := range z {
		mx += x[i]
		my += y[i]
		mzv += z[i]
	}
	fn := float64(n)
	mx, my, mzv = mx/fn, my/fn, mzv/fn
	var sl, sz float64
	for i := range z {
		sl = max(sl, math.Abs(x[i]-mx), math.Abs(y[i]-my))
		sz = max(sz, math.Abs(z[i]-mzv))
	}
	if sl == 0 {
		return 0, plane, errors.New("scan: minimum zone: all points share one x-y position")
	}
	if sz == 0 {
		return 0, [3]float64{0, 0, mzv}, nil
	}
	xs := make([]float64, 3*n)
	for i := range z {
		xs[3*i] = (x[i] - mx) / sl
		xs[3*i+1] = (y[i] - my) / sl
		xs[3*i+2] = (z[i] - mzv) / sz
	}
	p, err := chebyshevPlane(xs)
	if err != nil {
		return 0, plane, err
	}
	a := p[0] * sz / sl
	b := p[1] * sz / sl
	c := mzv + p[2]*sz - a*mx - b*my
	plane = [3]float64{a, b, c}
	lo, hi := residualRange(x, y, z, plane)
	return hi - lo, plane, nil
}

// chebyshevPlane solves the minimum-zone dual for scaled points
// pts = [x0 y0 z0 x1 y1 z1 ...] (|coordinates| ≤ 1) and returns (a, b, c).
//
// Dual (standard form, 4 rows, 2N columns μ ≥ 0):
//
//	minimise  Σ −z_i μ⁺_i + z_i μ⁻_i
//	s.t.      Σ (μ⁺_i − μ⁻_i)(x_i, y_i, 1) = 0,  Σ (μ⁺_i + μ⁻_i) = 1.
//
// Its simplex multipliers are −(a, b, c, h); the reduced cost of μ⁺_i is
// h − r_i and of μ⁻_i is h + r_i with r_i = z_i − (a x_i + b y_i + c).
func chebyshevPlane(pts []float64) ([3]float64, error) {
	d := zoneDual{pts: pts, n: len(pts) / 3}
	// Starting basis: μ⁺ and μ⁻ of one point at 1/2 each, plus μ⁺ of two
	// more points so that the three are not collinear.
	p0, p1, p2, ok := spreadTriple(pts)
	if !ok {
		return [3]float64{}, errors.New("scan: minimum zone: points are collinear in x-y")
	}
	basis := [4]int{2 * p0, 2*p0 + 1, 2 * p1, 2 * p2}
	stall := 0
	prevObj := math.Inf(1)
	maxIter := 50*d.n + 1000
	for iter := 0; iter < maxIter; iter++ {
		bm, xb, y, obj, ok := d.solveBasis(basis)
		if !ok {
			return [3]float64{}, errSingularBasis
		}
		if obj < prevObj-1e-15 {
			stall = 0
			prevObj = obj
		} else {
			stall++
		}
		bland := stall > 30
		a, b, c, h := -y[0], -y[1], -y[2], -y[3]
		enter := d.price(a, b, c, h, bland)
		if enter < 0 {
			return [3]float64{a, b, c}, nil
		}
		// Ratio test on the direction w = B⁻¹ a_enter.
		aq := d.col(enter)
		w, ok := solveSmall(4, bm[:], aq[:])
		if !ok {
			return [3]float64{}, errSingularBasis
		}
		leave := ratioTest(basis, xb, w, bland)
		if leave < 0 {
			return [3]float64{}, errors.New("scan: minimum zone: unbounded dual (numerical failure)")
		}
		basis[leave] = enter
	}
	return [3]float64{}, errors.New("scan: minimum zone: simplex did not converge")
}

var errSingularBasis = errors.New("scan: minimum zone: singular basis")

// zoneDual is chebyshevPlane's dual problem over the n scaled points pts.
// Column 2i is μ⁺ of point i, column 2i+1 its μ⁻.
type zoneDual struct {
	pts []float64
	n   int
}

// col returns the constraint column of dual variable j.
func (d zoneDual) col(j int) [4]float64 {
	i := j >> 1
	if j&1 == 0 {
		return [4]float64{d.pts[3*i], d.pts[3*i+1], 1, 1}
	}
	return [4]float64{-d.pts[3*i], -d.pts[3*i+1], -1, 1}
}

// cost returns the objective coefficient of dual variable j.
func (d zoneDual) cost(j int) float64 {
	if j&1 == 0 {
		return -d.pts[3*(j>>1)+2]
	}
	return d.pts[3*(j>>1)+2]
}

// solveBasis returns the basis matrix B (row-major, 4×4) of basis, the
// basic solution xb = B⁻¹(0, 0, 0, 1), the simplex multipliers y = B⁻ᵀ c_B
// and the objective c_B·xb; ok is false when B is singular.
func (d zoneDual) solveBasis(basis [4]int) (bm [16]float64, xb, y [4]float64, obj float64, ok bool) {
	var bt [16]float64
	for c, j := range basis {
		a := d.col(j)
		for r := range 4 {
			bm[r*4+c] = a[r]
			bt[c*4+r] = a[r]
		}
	}
	m := bm
	xv, ok := solveSmall(4, m[:], []float64{0, 0, 0, 1})
	if !ok {
		return bm, xb, y, 0, false
	}
	copy(xb[:], xv)
	cb := []float64{d.cost(basis[0]), d.cost(basis[1]), d.cost(basis[2]), d.cost(basis[3])}
	yv, ok := solveSmall(4, bt[:], cb)
	if !ok {
		return bm, xb, y, 0, false
	}
	copy(y[:], yv)
	for r := range 4 {
		obj += cb[r] * xb[r]
	}
	return bm, xb, y, obj, true
}

// price returns the entering dual variable for the plane (a, b, c) and
// half-width h: the most violated zone constraint (Dantzig), or with
// bland the lowest-index violated one, which after a run of degenerate
// steps rules out cycling; −1 when none is violated (optimal).
func (d zoneDual) price(a, b, c, h float64, bland bool) int {
	const tol = 1e-12
	enter, best := -1, -tol
	for i := range d.n {
		r := d.pts[3*i+2] - (a*d.pts[3*i] + b*d.pts[3*i+1] + c)
		dp, dm := h-r, h+r
		if bland {
			if dp < -tol {
				return 2 * i
			}
			if dm < -tol {
				return 2*i + 1
			}
			continue
		}
		if dp < best {
			best, enter = dp, 2*i
		}
		if dm < best {
			best, enter = dm, 2*i+1
		}
	}
	return enter
}

// ratioTest returns the row of the basis that leaves when the direction
// w = B⁻¹ a_enter enters at the basic solution xb: the least ratio, ties
// broken by the largest pivot or, with bland, the lowest variable index;
// −1 when no row bounds the step (unbounded).
func ratioTest(basis [4]int, xb [4]float64, w []float64, bland bool) int {
	leave := -1
	bestRatio := math.Inf(1)
	for r := range 4 {
		if w[r] <= 1e-12 {
			continue
		}
		ratio := max(xb[r], 0) / w[r]
		switch {
		case leave < 0 || ratio < bestRatio-1e-15:
			bestRatio, leave = ratio, r
		case ratio > bestRatio+1e-15:
		case bland && basis[r] < basis[leave]:
			leave = r
		case !bland && w[r] > w[leave]:
			leave = r
		}
	}
	return leave
}

// spreadTriple returns three indices of points in pts (x, y, z triples)
// spanning a triangle of large area in x-y, or ok = false if every point
// lies on one line.
func spreadTriple(pts []float64) (p0, p1, p2 int, ok bool) {
	n := len(pts) / 3
	d2 := func(i, j int) float64 {
		dx, dy := pts[3*i]-pts[3*j], pts[3*i+1]-pts[3*j+1]
		return dx*dx + dy*dy
	}
	for i := 1; i < n; i++ {
		if d2(i, 0) > d2(p1, 0) {
			p1 = i
		}
	}
	for i := range n {
		if d2(i, p1) > d2(p0, p1) {
			p0 = i
		}
	}
	ux, uy := pts[3*p1]-pts[3*p0], pts[3*p1+1]-pts[3*p0+1]
	best := 0.0
	for i := range n {
		cr := math.Abs(ux*(pts[3*i+1]-pts[3*p0+1]) - uy*(pts[3*i]-pts[3*p0]))
		if cr > best {
			best, p2 = cr, i
		}
	}
	l2 := ux*ux + uy*uy
	return p0, p1, p2, l2 > 0 && best > 1e-9*l2
}
