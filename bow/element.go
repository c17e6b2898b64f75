package bow

import "math"

// The Bogner–Fox–Schmit rectangle (Bogner, Fox & Schmit, "The generation of
// interelement-compatible stiffness and mass matrices by the use of
// interpolation formulas", Proc. Conf. Matrix Methods in Structural
// Mechanics, Wright-Patterson AFB, 1965): w is the tensor product of cubic
// Hermite interpolants, with w, ∂w/∂x, ∂w/∂y and ∂²w/∂x∂y at each corner.
// It is C¹-conforming, so the free edge is the natural boundary condition of
// the energy and needs no special treatment, and it reproduces every
// quadratic w exactly (a uniform thermal moment on a free or clamped plate
// is solved exactly on any union of cells).
//
// On a square cell of side h with local coordinates ξ, η ∈ [0, 1], the
// degrees of freedom are scaled to length: (w, h w_x, h w_y, h² w_xy), so all
// four have the unit of w and the matrix is well scaled. Local node n =
// 2b + a sits at (ξ, η) = (a, b); element dof 4n + d.

// hermite returns the 1D cubic Hermite function, and its first and second
// derivatives, at ξ: value (slope = false) or slope (slope = true) at end a.
func hermite(a int, slope bool, x float64) (f, d1, d2 float64) {
	switch {
	case a == 0 && !slope:
		return 1 - 3*x*x + 2*x*x*x, -6*x + 6*x*x, -6 + 12*x
	case a == 0 && slope:
		return x - 2*x*x + x*x*x, 1 - 4*x + 3*x*x, -4 + 6*x
	case !slope:
		return 3*x*x - 2*x*x*x, 6*x - 6*x*x, 6 - 12*x
	default:
		return -x*x + x*x*x, -2*x + 3*x*x, -2 + 6*x
	}
}

// shape holds the 16 shape functions and their ξ, η derivatives at a point.
type shape struct {
	n, xx, yy, xy [16]float64
}

// shapeAt evaluates the element's shape functions at (ξ, η).
func shapeAt(xi, eta float64) shape {
	var s shape
	for node := 0; node < 4; node++ {
		a, b := node%2, node/2
		for d := 0; d < 4; d++ {
			fx, dx, ddx := hermite(a, d == 1 || d == 3, xi)
			fy, dy, ddy := hermite(b, d == 2 || d == 3, eta)
			k := 4*node + d
			s.n[k] = fx * fy
			s.xx[k] = ddx * fy
			s.yy[k] = fx * ddy
			s.xy[k] = dx * dy
		}
	}
	return s
}

// gauss4 are the 4-point Gauss–Legendre nodes and weights on [0, 1]; exact
// for the degree-6 products of the element's second derivatives.
var gauss4 = func() (g [4][2]float64) {
	x := [2]float64{math.Sqrt(3.0/7 - 2.0/7*math.Sqrt(6.0/5)), math.Sqrt(3.0/7 + 2.0/7*math.Sqrt(6.0/5))}
	w := [2]float64{(18 + math.Sqrt(30)) / 36, (18 - math.Sqrt(30)) / 36}
	g[0] = [2]float64{(1 - x[1]) / 2, w[1] / 2}
	g[1] = [2]float64{(1 - x[0]) / 2, w[0] / 2}
	g[2] = [2]float64{(1 + x[0]) / 2, w[0] / 2}
	g[3] = [2]float64{(1 + x[1]) / 2, w[1] / 2}
	return g
}()

// elementStiffness returns the 16×16 bending stiffness of a square cell of
// side hM, N/m, for the isotropic plate stiffnesses d11, d12 (N·m):
// K = ∫ Bᵀ D B dA with B w = (w_xx, w_yy, 2 w_xy) and D66 = (D11 − D12)/2.
func elementStiffness(hM, d11, d12 float64) [16][16]float64 {
	var k [16][16]float64
	d66 := (d11 - d12) / 2
	scale := 1 / (hM * hM) // dA = h² dξdη, each second derivative 1/h²
	for _, gx := range gauss4 {
		for _, gy := range gauss4 {
			s := shapeAt(gx[0], gy[0])
			w := gx[1] * gy[1] * scale
			for i := range 16 {
				for j := range 16 {
					k[i][j] += w * (d11*(s.xx[i]*s.xx[j]+s.yy[i]*s.yy[j]) +
						d12*(s.xx[i]*s.yy[j]+s.yy[i]*s.xx[j]) + 4*d66*s.xy[i]*s.xy[j])
				}
			}
		}
	}
	return k
}

// elementLoad returns the element load vector of a unit thermal moment
// (1 N·m/m): f = −∫ (N_xx + N_yy) dA, N. The potential energy is
// Π = ½ uᵀKu − M_T* fᵀu, so a negative M_T* pushes towards a positive
// Laplacian of w (rim up, centre down).
func elementLoad() [16]float64 {
	var f [16]float64
	for _, gx := range gauss4 {
		for _, gy := range gauss4 {
			s := shapeAt(gx[0], gy[0])
			for i := range 16 {
				f[i] -= gx[1] * gy[1] * (s.xx[i] + s.yy[i])
			}
		}
	}
	return f
}
