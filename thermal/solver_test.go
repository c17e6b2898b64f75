package thermal

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// patchProblem is a realistic temperature-mode problem on an n × n grid:
// the 4 mm aluminium base of DESIGN.md §5.3a (K = 222·0.004 W/K) as the disc
// inscribed in the grid, water side 1000 W/(m²·K), a 250 °C hob, and an
// interface h drawn log-uniformly from 20 to 1e4 W/(m²·K) in square patches
// of side patchM (seeded, so every run is the same).
func patchProblem(n int, cellM, patchM float64) *Problem {
	g := Grid{Nx: n, Ny: n, CellM: cellM, X0M: -float64(n-1) * cellM / 2, Y0M: -float64(n-1) * cellM / 2}
	rng := rand.New(rand.NewPCG(11, 13))
	np := int(float64(n)*cellM/patchM) + 1
	ph := make([]float64, np*np)
	for i := range ph {
		ph[i] = 20 * math.Pow(500, rng.Float64())
	}
	hf := make(stubField, g.Len())
	for c := range hf {
		i, j := c%n, c/n
		pi, pj := int(float64(i)*cellM/patchM), int(float64(j)*cellM/patchM)
		hf[c] = ph[pj*np+pi]
	}
	return &Problem{Grid: g, InBase: discMask(g, 0, 0, float64(n-1)*cellM/2), BaseLayers: aluminium4mm,
		Interface: hf, Water: stubWater(1000), TWaterK: 333.15,
		Temperature: &TemperatureHob{TopK: fill(g.Len(), 523.15)}}
}

// randomLevel builds a one- or two-layer level with random coefficients:
// faces 0.1–1, sinks log-uniform in [1e-7, 1e-3], couplings log-uniform in
// [1e-5, 1], active nodes in an ellipse (wider for layer 1) plus 2 % at
// random.
func randomLevel(nx, ny, nl int, seed uint64) *level {
	return randomizeLevel(newLevel(nx, ny, nl), seed)
}

// randomizeLevel fills the zeroed level lv as randomLevel does.
func randomizeLevel(lv *level, seed uint64) *level {
	rng := rand.New(rand.NewPCG(seed, 1))
	nx, ny, nl := lv.nx, lv.ny, lv.nl
	for l := 0; l < nl; l++ {
		for p := 0; p < lv.n; p++ {
			i, j := p%nx, p/nx
			dx := (float64(i) + 0.5 - float64(nx)/2) / (float64(nx) / 2)
			dy := (float64(j) + 0.5 - float64(ny)/2) / (float64(ny) / 2)
			r := 0.8 + 0.2*float64(l)
			lv.act[l][p] = dx*dx+dy*dy <= r*r || rng.Float64() < 0.02
		}
	}
	for l := 0; l < nl; l++ {
		for p := 0; p < lv.n; p++ {
			i, j := p%nx, p/nx
			if !lv.act[l][p] {
				continue
			}
			lv.sink[l][p] = 1e-7 * math.Pow(1e4, rng.Float64())
			if i+1 < nx && lv.act[l][p+1] {
				lv.kx[l][p] = 0.1 + 0.9*rng.Float64()
			}
			if j+1 < ny && lv.act[l][p+nx] {
				lv.ky[l][p] = 0.1 + 0.9*rng.Float64()
			}
			if l == 1 && lv.act[0][p] {
				lv.cpl[p] = 1e-5 * math.Pow(1e5, rng.Float64())
			}
		}
	}
	lv.setDiag()
	return lv
}

// denseOf assembles the matrix of lv, a test oracle for apply.
func denseOf(lv *level) *mat.SymDense {
	n := lv.n
	m := mat.NewSymDense(lv.nl*n, nil)
	for l := 0; l < lv.nl; l++ {
		for p := 0; p < n; p++ {
			u := l*n + p
			m.SetSym(u, u, lv.diag[l][p])
			if lv.kx[l][p] != 0 {
				m.SetSym(u, u+1, -lv.kx[l][p])
			}
			if lv.ky[l][p] != 0 {
				m.SetSym(u, u+lv.nx, -lv.ky[l][p])
			}
		}
	}
	if lv.nl == 2 {
		for p, c := range lv.cpl {
			if c != 0 {
				m.SetSym(p, n+p, -c)
			}
		}
	}
	return m
}

// TestSolverDirect: multigrid-preconditioned CG against a dense Cholesky
// solve (gonum mat) of the same random one- and two-layer systems, and the
// V-cycle's symmetry (<Bu, v> = <u, Bv>) and positivity, which CG needs.
func TestSolverDirect(t *testing.T) {
	for _, tc := range []struct{ nx, ny, nl int }{{30, 30, 1}, {33, 21, 2}, {40, 3, 2}, {1, 50, 1}, {9, 9, 2}} {
		name := fmt.Sprintf("%d×%d×%d", tc.nx, tc.ny, tc.nl)
		lv := randomLevel(tc.nx, tc.ny, tc.nl, uint64(tc.nx*tc.ny))
		mg := newMultigrid(lv)
		if err := mg.update(); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		size := tc.nl * lv.n
		rng := rand.New(rand.NewPCG(5, 6))
		b := make([]float64, size)
		for l := 0; l < tc.nl; l++ {
			for p := 0; p < lv.n; p++ {
				if lv.act[l][p] {
					b[l*lv.n+p] = rng.NormFloat64()
				}
			}
		}
		x := make([]float64, size)
		it, rel, err := newPCG(size).solve(lv, mg, x, b, 1e-12, 0)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		var ch mat.Cholesky
		if !ch.Factorize(denseOf(lv)) {
			t.Fatalf("%s: oracle not positive definite", name)
		}
		var want mat.VecDense
		if err := ch.SolveVecTo(&want, mat.NewVecDense(size, b)); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		scale := mat.Norm(&want, math.Inf(1))
		for i := range x {
			if d := math.Abs(x[i] - want.AtVec(i)); d > 1e-9*scale {
				t.Fatalf("%s: x[%d] = %.12g, direct %.12g (%d iterations, residual %.2g)", name, i, x[i], want.AtVec(i), it, rel)
			}
		}
		u, v, bu, bv := make([]float64, size), make([]float64, size), make([]float64, size), make([]float64, size)
		for i := range u {
			if b[i] != 0 {
				u[i], v[i] = rng.NormFloat64(), rng.NormFloat64()
			}
		}
		mg.precondition(bu, u)
		mg.precondition(bv, v)
		var ubv, vbu, ubu, uu float64
		for i := range u {
			ubv += u[i] * bv[i]
			vbu += v[i] * bu[i]
			ubu += u[i] * bu[i]
			uu += u[i] * u[i]
		}
		if math.Abs(ubv-vbu) > 1e-10*math.Abs(ubv) {
			t.Errorf("%s: V-cycle not symmetric: <u,Bv> %.15g, <v,Bu> %.15g", name, ubv, vbu)
		}
		if !(ubu > 0) {
			t.Errorf("%s: <u,Bu> = %g", name, ubu)
		}
	}
}

// TestApplySpans: the operator, which visits only each row's span of active
// nodes, against the dense matrix (denseOf) on random one- and two-layer
// levels, also in storage reused from a level with other active nodes.
func TestApplySpans(t *testing.T) {
	for _, tc := range []struct{ nx, ny, nl int }{{30, 30, 1}, {33, 21, 2}, {40, 3, 2}, {1, 50, 1}, {9, 9, 2}} {
		var prev *level
		for seed := uint64(1); seed <= 3; seed++ {
			lv := randomizeLevel(reuseLevel(prev, tc.nx, tc.ny, tc.nl, true), seed*97)
			if seed == 2 {
				// Fewer active nodes than the storage's last use.
				for l := 0; l < lv.nl; l++ {
					for p := range lv.act[l] {
						if p%lv.nx < lv.nx/3 {
							lv.act[l][p] = false
							lv.kx[l][p], lv.ky[l][p], lv.sink[l][p] = 0, 0, 0
							if p > 0 {
								lv.kx[l][p-1] = 0
							}
							if p >= lv.nx {
								lv.ky[l][p-lv.nx] = 0
							}
							if lv.nl == 2 {
								lv.cpl[p] = 0
							}
						}
					}
				}
			}
			lv.setSpans()
			lv.setDiag()
			prev = lv
			rng := rand.New(rand.NewPCG(seed, 2))
			size := lv.nl * lv.n
			x := make([]float64, size)
			for l := 0; l < lv.nl; l++ {
				for p, a := range lv.act[l] {
					if a {
						x[l*lv.n+p] = rng.NormFloat64()
					}
				}
			}
			got := make([]float64, size)
			lv.apply(got, x)
			var want mat.VecDense
			want.MulVec(denseOf(lv), mat.NewVecDense(size, x))
			for i, v := range got {
				if d := math.Abs(v - want.AtVec(i)); d > 1e-12*(1+math.Abs(v)) {
					t.Fatalf("%d×%d×%d seed %d: (A x)[%d] = %.15g, dense %.15g", tc.nx, tc.ny, tc.nl, seed, i, v, want.AtVec(i))
				}
			}
		}
	}
}

// TestPCGForcing: with a forcing factor eta the solve stops once the
// residual has dropped by eta (and not at the tolerance); from a guess
// already within the tolerance it still does one iteration.
func TestPCGForcing(t *testing.T) {
	lv := randomLevel(40, 40, 2, 11)
	mg := newMultigrid(lv)
	if err := mg.update(); err != nil {
		t.Fatal(err)
	}
	size := 2 * lv.n
	rng := rand.New(rand.NewPCG(3, 4))
	b := make([]float64, size)
	for l := 0; l < 2; l++ {
		for p, a := range lv.act[l] {
			if a {
				b[l*lv.n+p] = rng.NormFloat64()
			}
		}
	}
	x := make([]float64, size)
	cg := newPCG(size)
	it, rel, err := cg.solve(lv, mg, x, b, 1e-12, 0.1)
	if err != nil {
		t.Fatal(err)
	}
	r := make([]float64, size)
	lv.residual(r, x, b)
	if got := norm(r) / norm(b); !(it >= 1 && got <= 0.1 && got > 1e-6) || math.Abs(got-rel) > 1e-6*rel {
		t.Errorf("eta 0.1: %d iterations, relative residual %.3g (reported %.3g)", it, got, rel)
	}
	if _, _, err := cg.solve(lv, mg, x, b, 1e-12, 0); err != nil {
		t.Fatal(err)
	}
	it, rel, err = cg.solve(lv, mg, x, b, 1e-12, 0)
	if err != nil || it != 1 || !(rel <= 1e-12) {
		t.Errorf("from a solved guess: %d iterations, relative residual %.3g, %v", it, rel, err)
	}
}

// TestSolverJacobi: on grids with three or more multigrid levels (too big
// for the dense oracle), multigrid-PCG and Jacobi-PCG, two independent
// preconditioners, must reach the same solution.
func TestSolverJacobi(t *testing.T) {
	for _, tc := range []struct{ nx, ny, nl int }{{64, 48, 2}, {100, 37, 1}, {700, 2, 2}} {
		name := fmt.Sprintf("%d×%d×%d", tc.nx, tc.ny, tc.nl)
		lv := randomLevel(tc.nx, tc.ny, tc.nl, 99)
		mg := newMultigrid(lv)
		if len(mg.levels) < 3 {
			t.Fatalf("%s: %d levels", name, len(mg.levels))
		}
		if err := mg.update(); err != nil {
			t.Fatal(err)
		}
		size := tc.nl * lv.n
		rng := rand.New(rand.NewPCG(8, 9))
		b := make([]float64, size)
		for l := 0; l < tc.nl; l++ {
			for p := 0; p < lv.n; p++ {
				if lv.act[l][p] {
					b[l*lv.n+p] = rng.Float64()
				}
			}
		}
		x, y := make([]float64, size), make([]float64, size)
		itMG, _, err := newPCG(size).solve(lv, mg, x, b, 1e-12, 0)
		if err != nil {
			t.Fatalf("%s: multigrid: %v", name, err)
		}
		cg := newPCG(size)
		cg.maxIter = 100000
		itJ, _, err := cg.solve(lv, jacobi{lv}, y, b, 1e-12, 0)
		if err != nil {
			t.Fatalf("%s: Jacobi: %v", name, err)
		}
		scale := 0.0
		for _, v := range y {
			scale = math.Max(scale, math.Abs(v))
		}
		for i := range x {
			if d := math.Abs(x[i] - y[i]); d > 1e-7*scale {
				t.Fatalf("%s: x[%d]: multigrid %.12g (%d it), Jacobi %.12g (%d it)", name, i, x[i], itMG, y[i], itJ)
			}
		}
		if itMG > 30 {
			t.Errorf("%s: %d multigrid iterations", name, itMG)
		}
	}
}

// TestMultigridScaling: the iteration count of the multigrid-preconditioned
// CG must stay nearly flat as the grid is refined (the same plate at 2, 1 and
// 0.5 mm cells), while Jacobi-PCG grows with the grid side (GO-NOTES.md (f)).
func TestMultigridScaling(t *testing.T) {
	sizes := []int{64, 128, 256}
	if testing.Short() {
		sizes = sizes[:2]
	}
	var its []int
	for _, n := range sizes {
		its = append(its, firstSolveIterations(t, patchProblem(n, 0.128/float64(n), 0.01)))
	}
	t.Logf("multigrid-PCG iterations on %v grids: %v", sizes, its)
	for i := 1; i < len(its); i++ {
		if its[i] > its[0]+4 || its[i] > 25 {
			t.Errorf("iterations grow with the grid: %v on %v", its, sizes)
		}
	}
	// Heater mode (two layers): one linear solve of the first linearised
	// system, from zero to 1e-10, at 4, 2 and 1 mm cells.
	cells := []float64{0.004, 0.002, 0.001}
	if testing.Short() {
		cells = cells[:2]
	}
	var hits []int
	for _, c := range cells {
		hits = append(hits, firstSolveIterations(t, heaterScene(c, stubH{0, 1500, 10})))
	}
	t.Logf("heater mode, iterations of one solve at %v m cells: %v", cells, hits)
	for _, v := range hits {
		if v > 12 {
			t.Errorf("heater mode: %v iterations at %v m cells", hits, cells)
		}
	}
	// Jacobi on the 128² grid for contrast.
	p := patchProblem(128, 0.001, 0.01)
	s := newPlate(p)
	if err := s.assemble(); err != nil {
		t.Fatal(err)
	}
	x := make([]float64, len(s.t))
	cg := newPCG(len(x))
	cg.maxIter = 5000
	it, _, err := cg.solve(s.lv, jacobi{s.lv}, x, s.bRest, 1e-10, 0)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("Jacobi-PCG on 128²: %d iterations", it)
	if it < 3*its[1] {
		t.Errorf("Jacobi %d iterations against multigrid %d: the test problem is too easy", it, its[1])
	}
}

// firstSolveIterations returns the multigrid-PCG iterations of one linear
// solve of the first linearised system of p (heater at full duty), from
// zero to a relative residual of 1e-10.
func firstSolveIterations(t *testing.T, p *Problem) int {
	t.Helper()
	s := newPlate(p)
	if err := s.assemble(); err != nil {
		t.Fatal(err)
	}
	if err := s.mg.update(); err != nil {
		t.Fatal(err)
	}
	b := append([]float64(nil), s.bRest...)
	if s.bHeat != nil {
		floats.Add(b, s.bHeat)
	}
	x := make([]float64, len(b))
	it, _, err := newPCG(len(b)).solve(s.lv, s.mg, x, b, 1e-10, 0)
	if err != nil {
		t.Fatal(err)
	}
	return it
}

func benchmarkSolve(b *testing.B, n int, cellM float64) {
	p := patchProblem(n, cellM, 0.01)
	var s *Solution
	var err error
	b.ResetTimer()
	for range b.N {
		if s, err = Solve(p); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(s.LinearIterations), "linear-iter")
	b.ReportMetric(float64(s.OuterIterations), "outer-iter")
}

// BenchmarkSolve: whole temperature-mode solves of the patch problem
// (constant interface and water side, so two outer iterations: one solve and
// one check), setup included.
func BenchmarkSolve250(b *testing.B)  { benchmarkSolve(b, 250, 0.0005) }
func BenchmarkSolve500(b *testing.B)  { benchmarkSolve(b, 500, 0.0005) }
func BenchmarkSolve1000(b *testing.B) { benchmarkSolve(b, 1000, 0.00025) }

// BenchmarkSolveHeater: the default radiant zone (heaterScene) with a
// T-dependent interface at 1 mm cells (261² grid, two layers).
func BenchmarkSolveHeater(b *testing.B) {
	p := heaterScene(0.001, stubRad{gas: 500, eps1: 0.9, eps2: 0.3})
	var s *Solution
	var err error
	for range b.N {
		if s, err = Solve(p); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(s.LinearIterations), "linear-iter")
	b.ReportMetric(float64(s.OuterIterations), "outer-iter")
}

// heaterFine is the default radiant zone under a 200 mm base with a gas
// and radiation gap at 0.5 mm cells (521² grid, two layers), the limiter
// engaged: the size and regime of the pipeline's heater-mode solves.
func heaterFine(tWaterK float64) *Problem {
	p := heaterScene(0.0005, stubRad{gas: 60, eps1: 0.9, eps2: 0.3})
	p.Water = FixedWater{HWM2K: 1000}
	p.TWaterK = tWaterK
	return p
}

// BenchmarkSolveHeaterFine: whole heater-mode solves of heaterFine from the
// built-in start.
func BenchmarkSolveHeaterFine(b *testing.B) {
	p := heaterFine(333.15)
	var s *Solution
	var err error
	for range b.N {
		if s, err = Solve(p); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(s.LinearIterations), "linear-iter")
	b.ReportMetric(float64(s.OuterIterations), "outer-iter")
}

// BenchmarkSolveHeaterWarm: heaterFine at 333.15 K started from its solution
// at 313.15 K (Problem.Initial*), as a heat-up sweep can.
func BenchmarkSolveHeaterWarm(b *testing.B) {
	prev, err := Solve(heaterFine(313.15))
	if err != nil {
		b.Fatal(err)
	}
	p := heaterFine(333.15)
	p.InitialTPanK, p.InitialTGlassK, p.InitialDutyPct = prev.TPanK, prev.TGlassK, prev.DutyPct
	var s *Solution
	b.ResetTimer()
	for range b.N {
		if s, err = Solve(p); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(s.LinearIterations), "linear-iter")
	b.ReportMetric(float64(s.OuterIterations), "outer-iter")
}

// BenchmarkVCycleHeater: one V-cycle on the two-layer level of heaterFine.
func BenchmarkVCycleHeater(b *testing.B) {
	s := newPlate(heaterFine(333.15))
	if err := s.assemble(); err != nil {
		b.Fatal(err)
	}
	if err := s.mg.update(); err != nil {
		b.Fatal(err)
	}
	z := make([]float64, len(s.t))
	b.ReportAllocs()
	b.ResetTimer()
	for range b.N {
		s.mg.precondition(z, s.bRest)
	}
}

func benchmarkLinear(b *testing.B, n int, cellM float64, useJacobi bool) {
	p := patchProblem(n, cellM, 0.01)
	s := newPlate(p)
	if err := s.assemble(); err != nil {
		b.Fatal(err)
	}
	if err := s.mg.update(); err != nil {
		b.Fatal(err)
	}
	var pre preconditioner = s.mg
	if useJacobi {
		pre = jacobi{s.lv}
	}
	x := make([]float64, len(s.t))
	cg := newPCG(len(x))
	cg.maxIter = 100000
	var it int
	b.ReportAllocs()
	b.ResetTimer()
	for range b.N {
		clear(x)
		var err error
		if it, _, err = cg.solve(s.lv, pre, x, s.bRest, 1e-10, 0); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(it), "iter")
}

// BenchmarkLinear: one linear solve of the patch problem to 1e-10 from zero,
// multigrid against Jacobi preconditioning (the allocation count shows that
// the iterations allocate nothing). Jacobi on 1000² (0.25 mm cells) took
// 2686 iterations and 43 s when measured once; it is left out here.
func BenchmarkLinearMG250(b *testing.B)     { benchmarkLinear(b, 250, 0.0005, false) }
func BenchmarkLinearMG500(b *testing.B)     { benchmarkLinear(b, 500, 0.0005, false) }
func BenchmarkLinearMG1000(b *testing.B)    { benchmarkLinear(b, 1000, 0.00025, false) }
func BenchmarkLinearJacobi250(b *testing.B) { benchmarkLinear(b, 250, 0.0005, true) }
func BenchmarkLinearJacobi500(b *testing.B) { benchmarkLinear(b, 500, 0.0005, true) }

// BenchmarkVCycle: one multigrid V-cycle on 500².
func BenchmarkVCycle500(b *testing.B) {
	p := patchProblem(500, 0.0005, 0.01)
	s := newPlate(p)
	if err := s.assemble(); err != nil {
		b.Fatal(err)
	}
	if err := s.mg.update(); err != nil {
		b.Fatal(err)
	}
	z := make([]float64, len(s.t))
	b.ReportAllocs()
	b.ResetTimer()
	for range b.N {
		s.mg.precondition(z, s.bRest)
	}
}

// BenchmarkSetupReuse: setting up heaterFine's solve in the buffers of a
// previous solve on the same grid (Solver reuse: the heat-up's solves).
func BenchmarkSetupReuse(b *testing.B) {
	p := heaterFine(333.15)
	s := reusePlate(p, nil)
	b.ResetTimer()
	for range b.N {
		s = reusePlate(p, s)
	}
}

// BenchmarkSolverHeaterFine: heaterFine from the built-in start on a
// Solver that keeps its buffers between solves (the pipeline's case after
// its first solve); setup included, allocation not.
func BenchmarkSolverHeaterFine(b *testing.B) {
	benchSolver(b, heaterFine(333.15))
}

// benchSolver solves p b.N times on one Solver and reports the last
// solve's linear and outer iteration counts.
func benchSolver(b *testing.B, p *Problem) {
	var sv Solver
	var s *Solution
	var err error
	for range b.N {
		if s, err = sv.Solve(p); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(s.LinearIterations), "linear-iter")
	b.ReportMetric(float64(s.OuterIterations), "outer-iter")
}

// BenchmarkSolveHeaterGrid: heaterFine's zone, base and interface on 2, 1,
// 0.5 and 0.25 mm cells (131², 261², 521² and 1041² cells, two layers),
// each on a Solver reusing its buffers: the outer and linear iteration
// counts should not grow with the grid, and the time per solve should grow
// with the cells (about 4× per halving of the cell).
func BenchmarkSolveHeaterGrid(b *testing.B) {
	for _, cell := range []float64{0.002, 0.001, 0.0005, 0.00025} {
		p := heaterScene(cell, stubRad{gas: 60, eps1: 0.9, eps2: 0.3})
		p.Water = FixedWater{HWM2K: 1000}
		p.TWaterK = 333.15
		b.Run(fmt.Sprintf("%dx%d", p.Grid.Nx, p.Grid.Ny), func(b *testing.B) { benchSolver(b, p) })
	}
}
