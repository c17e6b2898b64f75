package scan

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// ZernikeTerm is one term of a Zernike expansion of a base's form.
//
// Ordering and normalisation follow ANSI Z80.28 / ISO 24157 (Thibos et al.
// 2002): the single index is j = (n(n+2)+m)/2 counted from 0, and
//
//	Z_n^m(ρ, θ) = N_n^m R_n^|m|(ρ) cos(mθ)    for m ≥ 0,
//	Z_n^m(ρ, θ) = N_n^m R_n^|m|(ρ) sin(|m|θ)  for m < 0,
//	N_n^m = sqrt(2(n+1)/(1+δ_m0)),
//
// so that (1/π)∫∫ Z_j Z_j' ρ dρ dθ = δ_jj' over the unit disc. A
// coefficient is then the RMS over the disc of its term.
type ZernikeTerm struct {
	// Index is the OSA/ANSI single index j, from 0.
	Index int
	// N is the radial order, M the azimuthal frequency (negative: sine).
	N, M int
	// Name is the term's common (optics) name, e.g. "defocus".
	Name string
	// Plain is the same term in a stamping engineer's words, e.g.
	// "dish/dome" (see ZernikePlainName).
	Plain string
	// CoefM is the coefficient, m.
	CoefM float64
}

// DefaultZernikeOrder is the highest radial order MeasureForm fits
// (28 terms).
const DefaultZernikeOrder = 6

// ZernikeIndex returns the OSA/ANSI single index j = (n(n+2)+m)/2.
// It panics unless n ≥ 0, |m| ≤ n and n−m is even.
func ZernikeIndex(n, m int) int {
	checkZernike(n, m)
	return (n*(n+2) + m) / 2
}

// ZernikeNM returns the radial order n and azimuthal frequency m of the
// OSA/ANSI single index j ≥ 0.
func ZernikeNM(j int) (n, m int) {
	if j < 0 {
		panic("scan: negative Zernike index")
	}
	n = int(math.Ceil((-3 + math.Sqrt(float64(9+8*j))) / 2))
	// Guard against round-off in the square root.
	for n*(n+3)/2 < j {
		n++
	}
	for n > 0 && (n-1)*(n+2)/2 >= j {
		n--
	}
	m = 2*j - n*(n+2)
	return n, m
}

// ZernikeTerms returns the number of terms of radial order 0 to maxOrder.
func ZernikeTerms(maxOrder int) int { return (maxOrder + 1) * (maxOrder + 2) / 2 }

func checkZernike(n, m int) {
	if n < 0 || m > n || m < -n || (n-m)%2 != 0 {
		panic(fmt.Sprintf("scan: invalid Zernike order (n=%d, m=%d)", n, m))
	}
}

// zernikeRadialCoef returns the coefficients of R_n^|m|(ρ) as a polynomial
// in ρ: c[k] multiplies ρ^k. Noll (1976), JOSA 66:207, eq. 2 (radial sum).
func zernikeRadialCoef(n, m int) []float64 {
	if m < 0 {
		m = -m
	}
	c := make([]float64, n+1)
	for s := 0; s <= (n-m)/2; s++ {
		v := factorial(n-s) / (factorial(s) * factorial((n+m)/2-s) * factorial((n-m)/2-s))
		if s%2 == 1 {
			v = -v
		}
		c[n-2*s] = v
	}
	return c
}

func factorial(k int) float64 {
	f := 1.0
	for i := 2; i <= k; i++ {
		f *= float64(i)
	}
	return f
}

// zernikeNorm returns N_n^m = sqrt(2(n+1)/(1+δ_m0)).
func zernikeNorm(n, m int) float64 {
	if m == 0 {
		return math.Sqrt(float64(n + 1))
	}
	return math.Sqrt(float64(2 * (n + 1)))
}

// Zernike returns the orthonormal OSA/ANSI Zernike polynomial Z_n^m at
// polar position (rho, theta) on the unit disc (theta in radians, measured
// from +x toward +y). See ZernikeTerm for the definition. It panics on an
// invalid (n, m).
func Zernike(n, m int, rho, theta float64) float64 {
	checkZernike(n, m)
	c := zernikeRadialCoef(n, m)
	r, p := 0.0, 1.0
	for k := 0; k <= n; k++ {
		r += c[k] * p
		p *= rho
	}
	v := zernikeNorm(n, m) * r
	switch {
	case m > 0:
		v *= math.Cos(float64(m) * theta)
	case m < 0:
		v *= math.Sin(float64(-m) * theta)
	}
	return v
}

// ZernikeName returns the common name of the term (n, m): names for n ≤ 4
// follow Thibos et al. (2002) (from memory), higher orders are named by
// family; others read "Z(n,m)".
func ZernikeName(n, m int) string {
	checkZernike(n, m)
	switch [2]int{n, m} {
	case [2]int{0, 0}:
		return "piston"
	case [2]int{1, -1}:
		return "tilt y"
	case [2]int{1, 1}:
		return "tilt x"
	case [2]int{2, -2}:
		return "oblique astigmatism"
	case [2]int{2, 0}:
		return "defocus"
	case [2]int{2, 2}:
		return "vertical astigmatism"
	case [2]int{3, -3}:
		return "vertical trefoil"
	case [2]int{3, -1}:
		return "vertical coma"
	case [2]int{3, 1}:
		return "horizontal coma"
	case [2]int{3, 3}:
		return "oblique trefoil"
	case [2]int{4, -4}:
		return "oblique quadrafoil"
	case [2]int{4, -2}:
		return "oblique secondary astigmatism"
	case [2]int{4, 0}:
		return "primary spherical"
	case [2]int{4, 2}:
		return "vertical secondary astigmatism"
	case [2]int{4, 4}:
		return "vertical quadrafoil"
	case [2]int{5, -1}:
		return "vertical secondary coma"
	case [2]int{5, 1}:
		return "horizontal secondary coma"
	case [2]int{6, 0}:
		return "secondary spherical"
	}
	return fmt.Sprintf("Z(%d,%d)", n, m)
}

// ZernikePlainName returns the term (n, m) in plain words for a base's
// form, to stand beside its optics name (ZernikeName): what the term does
// to a base seen from the hob. Cosine terms (m > 0) have a lobe or axis at
// 0° (+x); sine terms (m < 0) are turned by 90°/|m|. Our own wording.
//
//	m = 0:   piston, dish/dome (defocus), ring wave (spherical), and
//	         double, triple … ring waves at higher orders
//	|m| = 1: tilt (n = 1), then a one-sided ramp (coma-like) and its
//	         secondary forms
//	|m| = 2: saddle (astigmatism) and secondary saddles
//	|m| ≥ 3: rim waves with |m| lobes (trefoil: three-lobed, quadrafoil:
//	         four-lobed)
//
// It panics on an invalid (n, m).
func ZernikePlainName(n, m int) string {
	checkZernike(n, m)
	am := m
	if am < 0 {
		am = -am
	}
	order := []string{"", "secondary ", "tertiary ", "quaternary "}
	rank := func(first int) string { // "" for the first order of a family
		if k := (n - first) / 2; k < len(order) {
			return order[k]
		}
		return fmt.Sprintf("order-%d ", n)
	}
	xy := map[bool]string{true: "x", false: "y"}[m >= 0]
	angle := 0.0
	if m < 0 {
		angle = 90 / float64(am)
	}
	switch {
	case n == 0:
		return "piston (height offset)"
	case am == 0 && n == 2:
		return "dish/dome"
	case am == 0:
		waves := []string{"ring wave", "double ring wave", "triple ring wave"}
		if k := n/2 - 2; k < len(waves) {
			return waves[k]
		}
		return fmt.Sprintf("%d-ring wave", n/2-1)
	case n == 1:
		return "tilt along " + xy
	case am == 1:
		return rank(3) + "one-sided ramp along " + xy + " (coma-like)"
	case am == 2:
		return fmt.Sprintf("%ssaddle, axes at %g°", rank(2), angle)
	}
	lobes := fmt.Sprintf("%d", am)
	if am < 10 {
		lobes = [...]string{"", "", "", "three", "four", "five", "six", "seven", "eight", "nine"}[am]
	}
	return fmt.Sprintf("%s%s-lobed rim wave, a lobe at %g°", rank(am), lobes, angle)
}

// zernikeBasis evaluates all terms j = 0 … len(dst)−1 at the point (x, y)
// of the unit disc (ρ = hypot(x, y)) into dst. The angle enters through
// cos(kθ) and sin(kθ) by recurrence, so no trigonometric call is made.
type zernikeBasis struct {
	maxOrder int
	n, m     []int
	norm     []float64
	radial   [][]float64
	pw       []float64 // ρ^k
	ck, sk   []float64 // cos(kθ), sin(kθ)
}

func newZernikeBasis(maxOrder int) *zernikeBasis {
	t := ZernikeTerms(maxOrder)
	b := &zernikeBasis{maxOrder: maxOrder, n: make([]int, t), m: make([]int, t),
		norm: make([]float64, t), radial: make([][]float64, t),
		pw: make([]float64, maxOrder+1), ck: make([]float64, maxOrder+1), sk: make([]float64, maxOrder+1)}
	for j := range t {
		n, m := ZernikeNM(j)
		b.n[j], b.m[j] = n, m
		b.norm[j] = zernikeNorm(n, m)
		b.radial[j] = zernikeRadialCoef(n, m)
	}
	return b
}

func (b *zernikeBasis) eval(dst []float64, x, y float64) {
	rho := math.Hypot(x, y)
	c, s := 1.0, 0.0
	if rho > 0 {
		c, s = x/rho, y/rho
	}
	b.pw[0], b.ck[0], b.sk[0] = 1, 1, 0
	for k := 1; k <= b.maxOrder; k++ {
		b.pw[k] = b.pw[k-1] * rho
		b.ck[k] = b.ck[k-1]*c - b.sk[k-1]*s
		b.sk[k] = b.sk[k-1]*c + b.ck[k-1]*s
	}
	for j := range dst {
		n, m := b.n[j], b.m[j]
		rc := b.radial[j]
		r := 0.0
		for k := n; k >= 0; k -= 2 {
			r += rc[k] * b.pw[k]
		}
		v := b.norm[j] * r
		switch {
		case m > 0:
			v *= b.ck[m]
		case m < 0:
			v *= b.sk[-m]
		}
		dst[j] = v
	}
}

// FitZernike fits Zernike terms of radial order 0 to maxOrder by least
// squares to the Measured cells of s whose centres lie within radiusM of
// the origin, with ρ = r/radiusM and θ from +x toward +y. Filled cells are
// not used. The coefficients are in metres. maxOrder is lowered, if need
// be, until there are at least twice as many cells as terms.
func FitZernike(s *Surface, radiusM float64, maxOrder int) ([]ZernikeTerm, error) {
	if !(radiusM > 0) || math.IsInf(radiusM, 0) {
		return nil, fmt.Errorf("scan: zernike: radius %g m is not positive and finite", radiusM)
	}
	if maxOrder < 0 {
		return nil, fmt.Errorf("scan: zernike: negative order %d", maxOrder)
	}
	idx := formCells(s, radiusM)
	for maxOrder > 0 && 2*ZernikeTerms(maxOrder) > len(idx) {
		maxOrder--
	}
	t := ZernikeTerms(maxOrder)
	if len(idx) < t {
		return nil, errors.New("scan: zernike: no measured cells inside the disc")
	}
	b := newZernikeBasis(maxOrder)
	// Normal equations, accumulated over blocks of rows by a symmetric
	// rank-k update.
	const block = 512
	g := mat.NewSymDense(t, nil)
	rhs := mat.NewVecDense(t, nil)
	a := mat.NewDense(block, t, nil)
	zb := mat.NewVecDense(block, nil)
	var part mat.VecDense
	inv := 1 / radiusM
	for lo := 0; lo < len(idx); lo += block {
		hi := min(len(idx), lo+block)
		ab := a.Slice(0, hi-lo, 0, t).(*mat.Dense)
		zv := zb.SliceVec(0, hi-lo).(*mat.VecDense)
		for r, k := range idx[lo:hi] {
			i, j := k%s.Nx, k/s.Nx
			b.eval(ab.RawRowView(r), s.X(i)*inv, s.Y(j)*inv)
			zv.SetVec(r, s.ZM[k])
		}
		g.SymRankK(g, 1, ab.T())
		part.MulVec(ab.T(), zv)
		rhs.AddVec(rhs, &part)
	}
	var ch mat.Cholesky
	if !ch.Factorize(g) {
		return nil, errors.New("scan: zernike: normal equations not positive definite (cells badly spread over the disc)")
	}
	var x mat.VecDense
	if err := ch.SolveVecTo(&x, rhs); err != nil {
		return nil, fmt.Errorf("scan: zernike: %w", err)
	}
	terms := make([]ZernikeTerm, t)
	for j := range t {
		n, m := b.n[j], b.m[j]
		terms[j] = ZernikeTerm{Index: j, N: n, M: m, Name: ZernikeName(n, m), Plain: ZernikePlainName(n, m), CoefM: x.AtVec(j)}
	}
	return terms, nil
}
