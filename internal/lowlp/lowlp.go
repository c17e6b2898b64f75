// Package lowlp solves linear programs with few variables and many
// constraints by Seidel's randomised incremental algorithm.
//
// The method is that of R. Seidel, "Small-dimensional linear programming and
// convex hulls made easy", Discrete Comput. Geom. 6 (1991) 423–434: add the
// constraints in random order; when the current optimum violates the new
// constraint, the new optimum lies on its hyperplane and is found by the same
// method one dimension lower. Expected time is O(d!·n) for n constraints in
// d variables.
//
// Ties are broken lexicographically, so the optimum returned is unique: among
// all points maximising C·x, the one with the largest x₀, then the largest x₁,
// and so on. A box |x_j| ≤ Bound_j keeps every problem bounded.
package lowlp

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
)

// MaxDim is the largest number of variables a Problem may have.
const MaxDim = 4

// ErrInfeasible is returned when no point satisfies every constraint.
var ErrInfeasible = errors.New("lowlp: infeasible")

// Tolerances, relative to the magnitude of the terms involved.
const (
	// epsViol is how far a·x may exceed b, relative to |b| + Σ|a_j x_j|,
	// before a constraint counts as violated.
	epsViol = 1e-12
	// epsPar decides when a constraint is parallel to a line or when an
	// objective has no component along it.
	epsPar = 1e-12
	// epsGap is how far an empty interval may overlap, relative to its
	// ends, and still be taken as a single point.
	epsGap = 1e-9
)

// Problem is the linear program
//
//	maximise C·x  subject to  A_i·x ≤ B_i (i = 0..n−1),  |x_j| ≤ Bound_j.
//
// The number of variables d is len(C), 1 ≤ d ≤ MaxDim.
type Problem struct {
	// C is the objective, length d.
	C []float64
	// A holds the constraint rows one after the other: row i is
	// A[i*d : (i+1)*d]. Its length is n·d.
	A []float64
	// B holds the right-hand sides, length n.
	B []float64
	// Bound holds positive, finite bounds on each variable, length d. They
	// keep the problem bounded; choose them larger than any optimum of
	// interest, since a bound that is active at the optimum is reported like
	// any other constraint.
	Bound []float64
}

// boxRow is the constraint s·x_v ≤ Bound_v of an eliminated variable v.
type boxRow struct {
	v int
	s float64
}

// level is the subproblem on an affine subspace: x = t + Σ_j T[·][j]·x_j
// over the free variables j, the others being eliminated.
type level struct {
	k    int
	free [MaxDim]int
	T    [MaxDim][MaxDim]float64 // T[m][j]: coefficient of free x_j in x_m
	t    [MaxDim]float64
	pre  [2 * MaxDim]boxRow
	npre int
}

// Solver solves Problems and keeps its workspace between calls, so that
// repeated solves allocate nothing but the result. A Solver is not safe for
// concurrent use.
type Solver struct {
	rng   *rand.Rand
	perm  []int32   // scratch for shuffle
	a     []float64 // constraint rows in random order
	b     []float64
	d     int
	c     [MaxDim]float64
	bound [MaxDim]float64
	x     [MaxDim]float64
	lv    [MaxDim + 1]level
}

// NewSolver returns a Solver that draws its random order from rng. The same
// rng state gives the same result.
func NewSolver(rng *rand.Rand) *Solver {
	if rng == nil {
		panic("lowlp: nil rng")
	}
	return &Solver{rng: rng}
}

// Solve returns the lexicographically largest optimum x of p and its value
// C·x, using rng for the random order. It returns ErrInfeasible when the
// constraints (with the box) have no common point, and an error when p holds
// non-finite numbers or bounds that are not positive. It panics if the
// lengths of p's slices do not agree or d is out of range.
func Solve(p *Problem, rng *rand.Rand) (x []float64, value float64, err error) {
	return NewSolver(rng).Solve(p)
}

// Solve is like the function Solve, reusing s's workspace.
func (s *Solver) Solve(p *Problem) (x []float64, value float64, err error) {
	d := len(p.C)
	if d < 1 || d > MaxDim {
		panic(fmt.Sprintf("lowlp: %d variables, want 1 to %d", d, MaxDim))
	}
	n := len(p.B)
	if len(p.A) != n*d || len(p.Bound) != d {
		panic(fmt.Sprintf("lowlp: len(A) = %d, len(B) = %d, len(Bound) = %d for %d variables",
			len(p.A), n, len(p.Bound), d))
	}
	s.d = d
	for j := 0; j < d; j++ {
		if !isFinite(p.C[j]) {
			return nil, 0, fmt.Errorf("lowlp: objective C[%d] = %g is not finite", j, p.C[j])
		}
		if bj := p.Bound[j]; !(bj > 0) || math.IsInf(bj, 0) {
			return nil, 0, fmt.Errorf("lowlp: Bound[%d] = %g, want positive and finite", j, bj)
		}
		s.c[j] = p.C[j]
		s.bound[j] = p.Bound[j]
	}
	if err := s.shuffle(p); err != nil {
		return nil, 0, err
	}

	top := &s.lv[d]
	top.k = d
	top.npre = 0
	for m := 0; m < d; m++ {
		top.free[m] = m
		top.t[m] = 0
		for j := 0; j < d; j++ {
			top.T[m][j] = 0
		}
		top.T[m][m] = 1
	}
	if err := s.solveLevel(d, n); err != nil {
		return nil, 0, err
	}
	x = make([]float64, d)
	copy(x, s.x[:d])
	for j := range x {
		value += s.c[j] * x[j]
	}
	return x, value, nil
}

// shuffle copies p's constraints into s.a and s.b in a uniformly random
// order. Large inputs use the two-pass scatter shuffle of Rao (1961) and
// Sandelius (1962): deal each row into a random bucket, then shuffle each
// bucket (Fisher–Yates). The result is uniform, and all memory traffic but
// the final in-bucket pass, which stays in cache, is sequential.
func (s *Solver) shuffle(p *Problem) error {
	d, n := s.d, len(p.B)
	if cap(s.b) < n {
		s.a = make([]float64, n*d)
		s.b = make([]float64, n)
	}
	s.a, s.b = s.a[:n*d], s.b[:n]
	// Check for non-finite numbers: v − v is 0 for a finite v, else NaN.
	acc := 0.0
	for _, v := range p.A {
		acc += v - v
	}
	for _, v := range p.B {
		acc += v - v
	}
	if acc != 0 {
		for i, bi := range p.B {
			row := p.A[i*d : i*d+d]
			a := bi - bi
			for _, v := range row {
				a += v - v
			}
			if a != 0 {
				return fmt.Errorf("lowlp: constraint %d: %v·x ≤ %g: not finite", i, row, bi)
			}
		}
	}

	const bucketRows = 2048 // rows per bucket on average; d+1 floats each
	nb := 1
	for nb*bucketRows < n && nb < 1<<12 {
		nb <<= 1
	}
	if nb == 1 {
		copy(s.a, p.A)
		copy(s.b, p.B)
		s.fisherYates(0, n)
		return nil
	}
	if cap(s.perm) < n {
		s.perm = make([]int32, n) // bucket of each row
	}
	s.perm = s.perm[:n]
	start := make([]int, nb+1)
	for i := range s.perm {
		k := int32(s.rng.IntN(nb))
		s.perm[i] = k
		start[k+1]++
	}
	for k := 1; k <= nb; k++ {
		start[k] += start[k-1]
	}
	next := append([]int(nil), start[:nb]...)
	for i, k := range s.perm {
		o := next[k]
		next[k]++
		src, dst := p.A[i*d:i*d+d], s.a[o*d:o*d+d]
		for m := range src {
			dst[m] = src[m]
		}
		s.b[o] = p.B[i]
	}
	for k := 0; k < nb; k++ {
		s.fisherYates(start[k], start[k+1])
	}
	return nil
}

// fisherYates shuffles rows lo..hi−1 of s.a and s.b in place.
func (s *Solver) fisherYates(lo, hi int) {
	d := s.d
	for i := hi - 1; i > lo; i-- {
		j := lo + s.rng.IntN(i-lo+1)
		s.b[i], s.b[j] = s.b[j], s.b[i]
		ri, rj := s.a[i*d:i*d+d], s.a[j*d:j*d+d]
		for m := range ri {
			ri[m], rj[m] = rj[m], ri[m]
		}
	}
}

// violated reports whether a·x > b beyond the rounding tolerance.
func (s *Solver) violated(a []float64, b float64) bool {
	d := s.d
	var dot, mag float64
	for j := 0; j < d; j++ {
		v := a[j] * s.x[j]
		dot += v
		mag += math.Abs(v)
	}
	r := dot - b
	return r > 0 && r > epsViol*(math.Abs(b)+mag)
}

// solveLevel sets s.x to the lexicographic optimum on level k's subspace,
// subject to the box, level k's eliminated-variable bounds and the first m
// shuffled constraints.
func (s *Solver) solveLevel(k, m int) error {
	L := &s.lv[k]
	if k == 1 {
		return s.solveLine(L, m)
	}
	s.corner(L)
	var row [MaxDim]float64
	for p := 0; p < L.npre; p++ {
		r := L.pre[p]
		for j := range row {
			row[j] = 0
		}
		row[r.v] = r.s
		if s.violated(row[:], s.bound[r.v]) {
			if err := s.descend(k, row[:], s.bound[r.v], p, 0); err != nil {
				return err
			}
		}
	}
	d := s.d
	for i := 0; i < m; i++ {
		a := s.a[i*d : i*d+d]
		if s.violated(a, s.b[i]) {
			if err := s.descend(k, a, s.b[i], L.npre, i); err != nil {
				return err
			}
		}
	}
	return nil
}

// descend solves level k's problem restricted to the hyperplane a·x = b,
// with level k's first npre eliminated-variable bounds and the first m
// shuffled constraints, leaving the optimum in s.x.
func (s *Solver) descend(k int, a []float64, b float64, npre, m int) error {
	L := &s.lv[k]
	d := s.d
	var alpha [MaxDim]float64
	beta := b
	mag := math.Abs(b)
	for mm := 0; mm < d; mm++ {
		beta -= a[mm] * L.t[mm]
		mag += math.Abs(a[mm] * L.t[mm])
	}
	q, best := -1, 0.0
	for f := 0; f < L.k; f++ {
		j := L.free[f]
		var al, am float64
		for mm := 0; mm < d; mm++ {
			al += a[mm] * L.T[mm][j]
			am += math.Abs(a[mm] * L.T[mm][j])
		}
		alpha[j] = al
		mag += am * s.bound[j]
		if w := math.Abs(al) * s.bound[j]; w > best {
			q, best = j, w
		}
	}
	if q < 0 || best <= epsPar*mag {
		// The constraint does not vary on this subspace and is violated.
		return ErrInfeasible
	}

	S := &s.lv[k-1]
	S.k = k - 1
	nf := 0
	for f := 0; f < L.k; f++ {
		if j := L.free[f]; j != q {
			S.free[nf] = j
			nf++
		}
	}
	r := beta / alpha[q]
	for mm := 0; mm < d; mm++ {
		S.t[mm] = L.t[mm] + L.T[mm][q]*r
		for f := 0; f < nf; f++ {
			j := S.free[f]
			S.T[mm][j] = L.T[mm][j] - L.T[mm][q]*alpha[j]/alpha[q]
		}
	}
	S.pre[0] = boxRow{q, 1}
	S.pre[1] = boxRow{q, -1}
	copy(S.pre[2:], L.pre[:npre])
	S.npre = 2 + npre
	return s.solveLevel(k-1, m)
}

// lexSign returns the direction (+1 or −1) in which free variable j should
// move: the sign of the first objective in the order C, e₀, e₁, ... whose
// projection on j is not negligible.
func (s *Solver) lexSign(L *level, j int) float64 {
	var c, cm float64
	for mm := 0; mm < s.d; mm++ {
		v := s.c[mm] * L.T[mm][j]
		c += v
		cm += math.Abs(v)
	}
	if math.Abs(c) > epsPar*cm {
		return math.Copysign(1, c)
	}
	for mm := 0; mm < s.d; mm++ {
		if v := L.T[mm][j]; v != 0 {
			return math.Copysign(1, v)
		}
	}
	return 1 // unreachable: T[j][j] = 1
}

// corner sets s.x to the lexicographic optimum over level L's box alone.
func (s *Solver) corner(L *level) {
	for mm := 0; mm < s.d; mm++ {
		s.x[mm] = L.t[mm]
	}
	for f := 0; f < L.k; f++ {
		j := L.free[f]
		y := s.lexSign(L, j) * s.bound[j]
		for mm := 0; mm < s.d; mm++ {
			s.x[mm] += L.T[mm][j] * y
		}
	}
}

// solveLine solves a one-variable level directly: the feasible set is an
// interval of the free variable.
func (s *Solver) solveLine(L *level, m int) error {
	j := L.free[0]
	d := s.d
	bj := s.bound[j]
	lo, hi := -bj, bj
	var col, t [MaxDim]float64
	var tMax, colMax float64
	for mm := 0; mm < d; mm++ {
		col[mm], t[mm] = L.T[mm][j], L.t[mm]
		tMax = max(tMax, math.Abs(t[mm]))
		colMax = max(colMax, math.Abs(col[mm])*bj)
	}
	// clip narrows [lo, hi] by a·x ≤ b; false means a·x ≤ b fails on the
	// whole line.
	clip := func(a []float64, b float64) bool {
		a = a[:d]
		var al, at, a1 float64
		for mm, v := range a {
			al += v * col[mm]
			at += v * t[mm]
			a1 += math.Abs(v)
		}
		beta := b - at
		if math.Abs(al)*bj <= epsPar*(math.Abs(b)+a1*(tMax+colMax)) {
			// Parallel to the line: either always or never satisfied.
			return beta >= -epsViol*(math.Abs(b)+a1*(tMax+colMax))
		}
		if y := beta / al; al > 0 {
			if y < hi {
				hi = y
			}
		} else if y > lo {
			lo = y
		}
		return true
	}
	var row [MaxDim]float64
	for p := 0; p < L.npre; p++ {
		r := L.pre[p]
		for i := range row {
			row[i] = 0
		}
		row[r.v] = r.s
		if !clip(row[:], s.bound[r.v]) {
			return ErrInfeasible
		}
	}
	a, b := s.a[:m*d], s.b[:m]
	for i := range b {
		if !clip(a[i*d:i*d+d], b[i]) {
			return ErrInfeasible
		}
	}
	var y float64
	switch {
	case lo <= hi:
		if s.lexSign(L, j) > 0 {
			y = hi
		} else {
			y = lo
		}
	case lo-hi <= epsGap*(math.Abs(lo)+math.Abs(hi)):
		y = 0.5 * (lo + hi)
	default:
		return ErrInfeasible
	}
	for mm := 0; mm < d; mm++ {
		s.x[mm] = t[mm] + col[mm]*y
	}
	return nil
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
