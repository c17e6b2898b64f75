package scan

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"gapflux/internal/hugemem"
	"gapflux/internal/parallel"
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
// cos(kθ) and sin(kθ) by recurrence, so no trigonometric call is made,
// and the radial polynomial R_n^|m| is evaluated once for the two terms
// ±m that share it.
type zernikeBasis struct {
	maxOrder int
	n, m     []int
	norm     []float64
	// The radial polynomials of the distinct (n, |m|): polynomial p has
	// the coefficients rc[ro[p]:ro[p+1]] of the powers rk[ro[p]:ro[p+1]]
	// of ρ, from ρ^n down in steps of 2 to ρ^0 or ρ^1; term j uses
	// polynomial poly[j].
	rc         []float64
	rk, ro     []int
	poly       []int
	rv         []float64 // radial polynomial values at the point
	pw, ck, sk []float64 // ρ^k, cos(kθ), sin(kθ)
}

func newZernikeBasis(maxOrder int) *zernikeBasis {
	t := ZernikeTerms(maxOrder)
	b := &zernikeBasis{maxOrder: maxOrder, n: make([]int, t), m: make([]int, t),
		norm: make([]float64, t), poly: make([]int, t), ro: []int{0},
		pw: make([]float64, maxOrder+1), ck: make([]float64, maxOrder+1), sk: make([]float64, maxOrder+1)}
	polyOf := map[[2]int]int{}
	for j := range t {
		n, m := ZernikeNM(j)
		b.n[j], b.m[j] = n, m
		b.norm[j] = zernikeNorm(n, m)
		key := [2]int{n, max(m, -m)}
		p, ok := polyOf[key]
		if !ok {
			p = len(b.rv)
			polyOf[key] = p
			rc := zernikeRadialCoef(n, m)
			for k := n; k >= 0; k -= 2 {
				b.rc = append(b.rc, rc[k])
				b.rk = append(b.rk, k)
			}
			b.ro = append(b.ro, len(b.rc))
			b.rv = append(b.rv, 0)
		}
		b.poly[j] = p
	}
	return b
}

func (b *zernikeBasis) eval(dst []float64, x, y float64) {
	rho := math.Hypot(x, y)
	c, s := 1.0, 0.0
	if rho > 0 {
		c, s = x/rho, y/rho
	}
	pw, ck, sk := b.pw, b.ck, b.sk
	pw[0], ck[0], sk[0] = 1, 1, 0
	for k := 1; k <= b.maxOrder; k++ {
		pw[k] = pw[k-1] * rho
		ck[k] = ck[k-1]*c - sk[k-1]*s
		sk[k] = sk[k-1]*c + ck[k-1]*s
	}
	rc, rk, rv := b.rc, b.rk[:len(b.rc)], b.rv
	t := 0
	for p, end := range b.ro[1:] {
		r := 0.0
		for ; t < end; t++ {
			r += rc[t] * pw[rk[t]]
		}
		rv[p] = r
	}
	dst = dst[:len(b.poly)]
	for j, p := range b.poly {
		v := b.norm[j] * rv[p]
		switch m := b.m[j]; {
		case m > 0:
			v *= ck[m]
		case m < 0:
			v *= sk[-m]
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
	return fitZernike(s, formCells(s, radiusM), radiusM, maxOrder)
}

// fitZernike is FitZernike over the cells idx (formCells of s).
func fitZernike(s *Surface, idx []int, radiusM float64, maxOrder int) ([]ZernikeTerm, error) {
	for maxOrder > 0 && 2*ZernikeTerms(maxOrder) > len(idx) {
		maxOrder--
	}
	t := ZernikeTerms(maxOrder)
	if len(idx) < t {
		return nil, errors.New("scan: zernike: no measured cells inside the disc")
	}
	g, rhs := zernikeNormal(s, idx, radiusM, maxOrder)
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
		n, m := ZernikeNM(j)
		terms[j] = ZernikeTerm{Index: j, N: n, M: m, Name: ZernikeName(n, m), Plain: ZernikePlainName(n, m), CoefM: x.AtVec(j)}
	}
	return terms, nil
}

// Sizes of zernikeNormal's blocks of cells.
const (
	// zernikeBlock is the number of cells per update of the right-hand
	// side: it fixes how that sum is grouped, so it must not change.
	zernikeBlock = 512
	// zernikeChunk is the number of blocks whose basis rows are
	// evaluated, and added to the normal matrix, at once (some 460 kB of
	// rows, which stay in a core's cache while the tiles read them).
	zernikeChunk = 4
)

// zernikeNormal returns the normal equations G·c = r of the least-squares
// Zernike fit over the cells idx: G = AᵀA (upper triangle) and r = Aᵀz,
// with A's rows the basis at each cell (ρ = r/radiusM).
//
// Each G entry is Σ a_i·a_j over the cells in order, as gonum's Dsyrk
// sums it for a rank-k update by blocks of rows; r is summed by gonum's
// Dgemv over blocks of zernikeBlock cells, added in order. The basis rows
// of a chunk are evaluated in parallel and G's entries are split between
// the processors in tiles (gramTiles): neither changes a sum, so the
// result is the same on any number of processors.
func zernikeNormal(s *Surface, idx []int, radiusM float64, maxOrder int) (*mat.SymDense, *mat.VecDense) {
	t := ZernikeTerms(maxOrder)
	gram := make([]float64, t*t)
	rhs := mat.NewVecDense(t, nil)
	// The chunk's basis rows (cell by cell, for Dgemv) and columns (term
	// by term, for the tiles).
	const rows = zernikeChunk * zernikeBlock
	a, col := hugemem.Make[float64](rows*t, 0), hugemem.Make[float64](t*rows, 0)
	z := make([]float64, rows)
	tiles := gramTiles(t)
	parts := rowParts(rows)
	bases := make([]*zernikeBasis, parts)
	for p := range bases {
		bases[p] = newZernikeBasis(maxOrder)
	}
	inv := 1 / radiusM
	var part mat.VecDense
	for lo := 0; lo < len(idx); lo += rows {
		cells := idx[lo:min(len(idx), lo+rows)]
		parallel.Do(len(cells), min(parts, len(cells)), func(p, r0, r1 int) {
			for r := r0; r < r1; r++ {
				k := cells[r]
				row := a[r*t : (r+1)*t]
				bases[p].eval(row, s.X(k%s.Nx)*inv, s.Y(k/s.Nx)*inv)
				for j, v := range row {
					col[j*rows+r] = v
				}
				z[r] = s.ZM[k]
			}
		})
		parallel.Do(len(tiles), min(parts, len(tiles)), func(_, i0, i1 int) {
			for _, tl := range tiles[i0:i1] {
				addGramTile(gram, col, rows, len(cells), t, tl)
			}
		})
		for b := 0; b < len(cells); b += zernikeBlock {
			n := min(zernikeBlock, len(cells)-b)
			part.MulVec(mat.NewDense(n, t, a[b*t:(b+n)*t]).T(), mat.NewVecDense(n, z[b:b+n]))
			rhs.AddVec(rhs, &part)
		}
	}
	return mat.NewSymDense(t, gram), rhs
}

// gramTile is a 2×4 tile of the normal matrix: rows i[0], i[1] and
// columns j[0] … j[3] of a t×t matrix; an entry is kept only where keep
// says (it lies in the upper triangle and is not a repeat: tiles at the
// edges repeat an index to stay 2×4).
type gramTile struct {
	i    [2]int
	j    [4]int
	keep [2][4]bool
}

// gramTiles covers the upper triangle of a t×t matrix with 2×4 tiles,
// each entry kept by exactly one tile.
func gramTiles(t int) []gramTile {
	var ts []gramTile
	for i := 0; i < t; i += 2 {
		for j := i; j < t; j += 4 {
			var tl gramTile
			tl.i = [2]int{i, min(i+1, t-1)}
			for c := range 4 {
				tl.j[c] = min(j+c, t-1)
				for r := range 2 {
					row, col := i+r, j+c
					tl.keep[r][c] = row < t && col < t && row <= col
				}
			}
			ts = append(ts, tl)
		}
	}
	return ts
}

// addGramTile adds Σ_l a_l,i·a_l,j over the n rows l of the chunk, in
// order, to the tile's kept entries of the t×t matrix g; col holds the
// chunk's basis term by term (term j's n values from col[j·rows]). Each
// entry's sum goes on from its value in g, one product at a time, as
// Dsyrk's AxpyUnitary adds them. (Dsyrk skips a row whose a_l,i is 0:
// that adds ±0 to a sum that is never −0, which leaves it as it is.)
func addGramTile(g, col []float64, rows, n, t int, tl gramTile) {
	var acc [2][4]float64
	for r := range 2 {
		for c := range 4 {
			if tl.keep[r][c] {
				acc[r][c] = g[tl.i[r]*t+tl.j[c]]
			}
		}
	}
	term := func(j int) []float64 { return col[j*rows : j*rows+n] }
	x0 := term(tl.i[0])
	x1 := term(tl.i[1])[:len(x0)]
	y0, y1 := term(tl.j[0])[:len(x0)], term(tl.j[1])[:len(x0)]
	y2, y3 := term(tl.j[2])[:len(x0)], term(tl.j[3])[:len(x0)]
	c00, c01, c02, c03 := acc[0][0], acc[0][1], acc[0][2], acc[0][3]
	c10, c11, c12, c13 := acc[1][0], acc[1][1], acc[1][2], acc[1][3]
	for l, u := range x0 {
		v := x1[l]
		c00 += u * y0[l]
		c01 += u * y1[l]
		c02 += u * y2[l]
		c03 += u * y3[l]
		c10 += v * y0[l]
		c11 += v * y1[l]
		c12 += v * y2[l]
		c13 += v * y3[l]
	}
	acc = [2][4]float64{{c00, c01, c02, c03}, {c10, c11, c12, c13}}
	for r := range 2 {
		for c := range 4 {
			if tl.keep[r][c] {
				g[tl.i[r]*t+tl.j[c]] = acc[r][c]
			}
		}
	}
}
