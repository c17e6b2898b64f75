package lowlp

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"syscall"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"
)

// gonumSolve solves p with gonum's dense simplex, an independent oracle. It
// returns the optimal value of maximise C·x and the optimum. The variables
// are shifted to u = x + Bound ≥ 0 so the standard form needs no split
// free variables: minimise −C·u subject to [A I; I I]·[u; s] = [B + A·Bound;
// 2·Bound], u, s ≥ 0.
func gonumSolve(t *testing.T, p *Problem) (float64, []float64, error) {
	t.Helper()
	d, n := len(p.C), len(p.B)
	rows, cols := n+d, d+n+d
	a := mat.NewDense(rows, cols, nil)
	b := make([]float64, rows)
	for i := 0; i < n; i++ {
		b[i] = p.B[i]
		for j := 0; j < d; j++ {
			a.Set(i, j, p.A[i*d+j])
			b[i] += p.A[i*d+j] * p.Bound[j]
		}
		a.Set(i, d+i, 1)
	}
	for j := 0; j < d; j++ {
		a.Set(n+j, j, 1)
		a.Set(n+j, d+n+j, 1)
		b[n+j] = 2 * p.Bound[j]
	}
	c := make([]float64, cols)
	for j := 0; j < d; j++ {
		c[j] = -p.C[j]
	}
	f, us, err := lp.Simplex(c, a, b, 0, nil)
	if err != nil {
		return 0, nil, err
	}
	x := make([]float64, d)
	v := 0.0
	for j := 0; j < d; j++ {
		x[j] = us[j] - p.Bound[j]
		v += p.C[j] * x[j]
	}
	_ = f
	return v, x, nil
}

// randomProblem returns n random constraints in d variables, all satisfied
// by a random interior point, with a random objective.
func randomProblem(rng *rand.Rand, d, n int) *Problem {
	p := &Problem{C: make([]float64, d), A: make([]float64, n*d), B: make([]float64, n), Bound: make([]float64, d)}
	x0 := make([]float64, d)
	for j := range x0 {
		x0[j] = rng.NormFloat64()
		p.C[j] = rng.NormFloat64()
		p.Bound[j] = 100
	}
	for i := 0; i < n; i++ {
		var ax float64
		for j := 0; j < d; j++ {
			v := rng.NormFloat64()
			p.A[i*d+j] = v
			ax += v * x0[j]
		}
		p.B[i] = ax + rng.Float64()*2
	}
	return p
}

func relDiff(a, b float64) float64 {
	return math.Abs(a-b) / math.Max(1, math.Max(math.Abs(a), math.Abs(b)))
}

// TestSolveRandomAgainstSimplex compares with gonum's simplex on random
// feasible problems in 2, 3 and 4 variables, to 1e-9 relative.
func TestSolveRandomAgainstSimplex(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, d := range []int{1, 2, 3, 4} {
		for _, n := range []int{1, 5, 20, 80} {
			for trial := 0; trial < 10; trial++ {
				p := randomProblem(rng, d, n)
				want, wantX, err := gonumSolve(t, p)
				if err != nil {
					t.Fatalf("d=%d n=%d trial %d: gonum: %v", d, n, trial, err)
				}
				x, got, err := Solve(p, rand.New(rand.NewPCG(uint64(trial), 7)))
				if err != nil {
					t.Fatalf("d=%d n=%d trial %d: %v", d, n, trial, err)
				}
				if relDiff(got, want) > 1e-9 {
					t.Errorf("d=%d n=%d trial %d: value %.15g, simplex %.15g", d, n, trial, got, want)
				}
				// Random data has a unique optimum.
				for j := range x {
					if relDiff(x[j], wantX[j]) > 1e-7 {
						t.Errorf("d=%d n=%d trial %d: x = %v, simplex %v", d, n, trial, x, wantX)
						break
					}
				}
				checkFeasible(t, p, x, 1e-9)
			}
		}
	}
}

func checkFeasible(t *testing.T, p *Problem, x []float64, tol float64) {
	t.Helper()
	d := len(p.C)
	for i := range p.B {
		var ax float64
		for j := 0; j < d; j++ {
			ax += p.A[i*d+j] * x[j]
		}
		if ax > p.B[i]+tol*math.Max(1, math.Abs(p.B[i])) {
			t.Errorf("constraint %d violated: %g > %g", i, ax, p.B[i])
		}
	}
	for j := range x {
		if math.Abs(x[j]) > p.Bound[j]*(1+tol) {
			t.Errorf("bound %d violated: |%g| > %g", j, x[j], p.Bound[j])
		}
	}
}

// planeProblem is the support-plane LP of the rest pose: maximise the plane
// a·x + b·y + c at the origin subject to lying under every point (x, y, z).
func planeProblem(pts [][3]float64) *Problem {
	p := &Problem{C: []float64{0, 0, 1}, Bound: []float64{1e3, 1e3, 1e3}}
	for _, q := range pts {
		p.A = append(p.A, q[0], q[1], 1)
		p.B = append(p.B, q[2])
	}
	return p
}

func TestSolveDegenerate(t *testing.T) {
	var grid [][3]float64
	for j := -10; j <= 10; j++ {
		for i := -10; i <= 10; i++ {
			grid = append(grid, [3]float64{float64(i) * 0.01, float64(j) * 0.01, 0})
		}
	}
	// The same grid on the plane z = 0.3x − 0.2y + 0.05.
	var tilted [][3]float64
	for _, q := range grid {
		tilted = append(tilted, [3]float64{q[0], q[1], 0.3*q[0] - 0.2*q[1] + 0.05})
	}
	// Every constraint three times.
	dup := randomProblem(rand.New(rand.NewPCG(3, 3)), 3, 30)
	for k := 0; k < 2; k++ {
		dup.A = append(dup.A, dup.A[:90]...)
		dup.B = append(dup.B, dup.B[:30]...)
	}
	dupWant, _, err := gonumSolve(t, &Problem{C: dup.C, A: dup.A[:90], B: dup.B[:30], Bound: dup.Bound})
	if err != nil {
		t.Fatal(err)
	}

	tests := []struct {
		name  string
		p     *Problem
		want  float64
		wantX []float64 // nil: not checked
	}{
		// All points coplanar: the unique supporting plane is z = 0.
		{"flat grid", planeProblem(grid), 0, []float64{0, 0, 0}},
		{"tilted grid", planeProblem(tilted), 0.05, []float64{0.3, -0.2, 0.05}},
		{"duplicates", dup, dupWant, nil},
		// Optimum on an edge: x + y ≤ 1 is parallel to the objective, so the
		// lexicographic rule takes the largest x₀ the box allows, then x₁.
		{"edge", &Problem{C: []float64{1, 1}, A: []float64{1, 1}, B: []float64{1}, Bound: []float64{5, 5}},
			1, []float64{5, -4}},
		// No objective at all: the lexicographic rule alone decides.
		{"zero objective", &Problem{C: []float64{0, 0, 0}, A: []float64{1, 1, 1}, B: []float64{2}, Bound: []float64{1, 1, 1}},
			0, []float64{1, 1, 0}},
		// The box is the only constraint.
		{"box only", &Problem{C: []float64{1, -2, 0.5, -1}, Bound: []float64{1, 2, 3, 4}},
			1 + 4 + 1.5 + 4, []float64{1, -2, 3, -4}},
		// Line support: points on the y axis at z = 0 and elsewhere higher;
		// the plane may turn about the axis; the lexicographic rule takes
		// the largest slope a that the point (1, 0, 1) allows.
		{"line support", planeProblem([][3]float64{{0, -1, 0}, {0, 1, 0}, {1, 0, 1}, {-1, 0, 2}}),
			0, []float64{1, 0, 0}},
	}
	for _, tc := range tests {
		for seed := uint64(0); seed < 5; seed++ {
			x, v, err := Solve(tc.p, rand.New(rand.NewPCG(seed, 1)))
			if err != nil {
				t.Fatalf("%s seed %d: %v", tc.name, seed, err)
			}
			if math.Abs(v-tc.want) > 1e-12*math.Max(1, math.Abs(tc.want)) {
				t.Errorf("%s seed %d: value %.17g, want %.17g", tc.name, seed, v, tc.want)
			}
			for j := range tc.wantX {
				if math.Abs(x[j]-tc.wantX[j]) > 1e-12 {
					t.Errorf("%s seed %d: x = %v, want %v", tc.name, seed, x, tc.wantX)
					break
				}
			}
			checkFeasible(t, tc.p, x, 1e-12)
		}
	}
}

func TestSolveInfeasible(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	tests := []struct {
		name string
		p    *Problem
	}{
		{"1d", &Problem{C: []float64{1}, A: []float64{1, -1}, B: []float64{-1, -1}, Bound: []float64{10}}},
		{"outside box", &Problem{C: []float64{1, 1}, A: []float64{-1, 0}, B: []float64{-20}, Bound: []float64{10, 10}}},
		{"triangle and halfplane", &Problem{C: []float64{0, 1},
			A: []float64{-1, 0, 0, -1, 1, 1, -1, -1}, B: []float64{0, 0, 1, -2}, Bound: []float64{10, 10}}},
	}
	// a·x ≤ −1 and −a·x ≤ −1 among random feasible constraints, in 3 and 4 variables.
	for _, d := range []int{3, 4} {
		p := randomProblem(rng, d, 200)
		a := p.A[:d]
		neg := make([]float64, d)
		for j := range a {
			neg[j] = -a[j]
		}
		p.A = append(append(p.A, a...), neg...)
		p.B = append(p.B, -1, -1)
		tests = append(tests, struct {
			name string
			p    *Problem
		}{fmt.Sprintf("opposed pair d=%d", d), p})
	}
	for _, tc := range tests {
		for seed := uint64(0); seed < 5; seed++ {
			_, _, err := Solve(tc.p, rand.New(rand.NewPCG(seed, 9)))
			if !errors.Is(err, ErrInfeasible) {
				t.Errorf("%s seed %d: err = %v, want ErrInfeasible", tc.name, seed, err)
			}
		}
	}
}

func TestSolveBadInput(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	tests := []struct {
		name string
		p    *Problem
	}{
		{"NaN in A", &Problem{C: []float64{1}, A: []float64{math.NaN()}, B: []float64{1}, Bound: []float64{1}}},
		{"Inf in B", &Problem{C: []float64{1}, A: []float64{1}, B: []float64{math.Inf(1)}, Bound: []float64{1}}},
		{"NaN objective", &Problem{C: []float64{math.NaN()}, Bound: []float64{1}}},
		{"zero bound", &Problem{C: []float64{1}, Bound: []float64{0}}},
		{"infinite bound", &Problem{C: []float64{1}, Bound: []float64{math.Inf(1)}}},
	}
	for _, tc := range tests {
		if _, _, err := Solve(tc.p, rng); err == nil || errors.Is(err, ErrInfeasible) {
			t.Errorf("%s: err = %v, want an input error", tc.name, err)
		}
	}
	panics := []struct {
		name string
		p    *Problem
	}{
		{"no variables", &Problem{}},
		{"too many variables", &Problem{C: make([]float64, MaxDim+1), Bound: make([]float64, MaxDim+1)}},
		{"short A", &Problem{C: []float64{1, 1}, A: []float64{1}, B: []float64{1}, Bound: []float64{1, 1}}},
		{"short Bound", &Problem{C: []float64{1, 1}, Bound: []float64{1}}},
	}
	for _, tc := range panics {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", tc.name)
				}
			}()
			Solve(tc.p, rng)
		}()
	}
}

// TestSolveDeterministic checks that a seed fixes the answer bit for bit and
// that a reused Solver gives the same answer as a fresh one.
func TestSolveDeterministic(t *testing.T) {
	p := randomProblem(rand.New(rand.NewPCG(11, 12)), 3, 5000)
	x1, v1, err := Solve(p, rand.New(rand.NewPCG(4, 4)))
	if err != nil {
		t.Fatal(err)
	}
	s := NewSolver(rand.New(rand.NewPCG(4, 4)))
	x2, v2, err := s.Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	if v1 != v2 || x1[0] != x2[0] || x1[1] != x2[1] || x1[2] != x2[2] {
		t.Errorf("same seed: %v %v vs %v %v", x1, v1, x2, v2)
	}
	small := randomProblem(rand.New(rand.NewPCG(1, 12)), 3, 10)
	if _, _, err := s.Solve(small); err != nil { // shrink the workspace
		t.Fatal(err)
	}
	x3, v3, err := s.Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	if relDiff(v3, v1) > 1e-12 || relDiff(x3[0], x1[0]) > 1e-9 {
		t.Errorf("reused solver: %v %v vs %v %v", x3, v3, x1, v1)
	}
}

// TestSolveLargeLowerHull checks a large support-plane problem against the
// known answer: points on the paraboloid z = x² + y² over a disc; the plane
// under the origin passes through the origin, and moving the load point to (0.3, 0) gives the tangent plane's
// chord value there (a lattice point: exact).
func TestSolveLargeLowerHull(t *testing.T) {
	var pts [][3]float64
	const m = 150
	for j := -m; j <= m; j++ {
		for i := -m; i <= m; i++ {
			x, y := float64(i)/m, float64(j)/m
			if x*x+y*y <= 1 {
				pts = append(pts, [3]float64{x, y, x*x + y*y})
			}
		}
	}
	p := planeProblem(pts)
	x, v, err := Solve(p, rand.New(rand.NewPCG(1, 1)))
	if err != nil {
		t.Fatal(err)
	}
	// The origin is a lattice point, so the plane may turn about it; the
	// lexicographic rule takes the steepest a, then b, that the neighbours
	// (1/m, 0), (0, 1/m) and (1/m, 1/m) allow: a = b = 1/m.
	if math.Abs(v) > 1e-15 || math.Abs(x[0]-1.0/m) > 1e-12 || math.Abs(x[1]-1.0/m) > 1e-12 {
		t.Errorf("plane under origin: %v, value %g, want (1/m, 1/m, 0)", x, v)
	}
	// Load at (0.3, 0): shift x so the load is at the origin. The lower hull
	// of a convex function sampled on a lattice passes through the lattice
	// point (0.3, 0) itself: value 0.09.
	for i := range pts {
		pts[i][0] -= 0.3
	}
	_, v, err = Solve(planeProblem(pts), rand.New(rand.NewPCG(1, 1)))
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(v-0.09) > 1e-12 {
		t.Errorf("plane under (0.3, 0): %.15g, want 0.09", v)
	}
}

func benchmarkSolve(b *testing.B, n int) {
	rng := rand.New(rand.NewPCG(1, 2))
	// Support-plane problem over a noisy dish, the pose's use.
	p := &Problem{C: []float64{0.01, -0.02, 1}, Bound: []float64{10, 10, 1}}
	p.A = make([]float64, 0, 3*n)
	p.B = make([]float64, 0, n)
	for i := 0; i < n; i++ {
		x, y := rng.Float64()*2-1, rng.Float64()*2-1
		p.A = append(p.A, x, y, 1)
		p.B = append(p.B, -(x*x+y*y)*1e-3+rng.NormFloat64()*1e-5)
	}
	s := NewSolver(rand.New(rand.NewPCG(3, 4)))
	b.ResetTimer()
	cpu0 := cpuTime()
	for b.Loop() {
		if _, _, err := s.Solve(p); err != nil {
			b.Fatal(err)
		}
	}
	// CPU time per solve: steadier than wall time on a shared machine.
	b.ReportMetric(float64(cpuTime()-cpu0)/float64(b.N), "cpu-ns/op")
}

// cpuTime returns the process's user+system CPU time, ns.
func cpuTime() int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return ru.Utime.Nano() + ru.Stime.Nano()
}

func BenchmarkSolve3D62500(b *testing.B)   { benchmarkSolve(b, 62500) }
func BenchmarkSolve3D250000(b *testing.B)  { benchmarkSolve(b, 250000) }
func BenchmarkSolve3D1000000(b *testing.B) { benchmarkSolve(b, 1000000) }
