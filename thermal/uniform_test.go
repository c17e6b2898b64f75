package thermal

import (
	"gapflux/internal/fpfuse"
	"math"
	"math/rand/v2"
	"testing"
)

// uniformLevel returns a level of nx × ny cells and nl layers whose active
// nodes are a disc per layer (the glass's wider) with face conductances kf
// between active neighbours, random sinks and couplings, and its diagonal
// set.
func uniformLevel(nx, ny, nl int, kf [2]float64, seed uint64) *level {
	return discLevel(nx, ny, nl, kf, [2]float64{0.7, 0.95}, seed)
}

// discLevel is uniformLevel with the discs' radii, as fractions of half
// the grid's width and height (beyond 1 the active nodes reach the grid's
// edges).
func discLevel(nx, ny, nl int, kf, radii [2]float64, seed uint64) *level {
	lv := newLevel(nx, ny, nl)
	rng := rand.New(rand.NewPCG(seed, 3))
	for l := 0; l < nl; l++ {
		r := radii[l]
		for p := range lv.act[l] {
			dx := (float64(p%nx) + 0.5 - float64(nx)/2) / (float64(nx) / 2)
			dy := (float64(p/nx) + 0.5 - float64(ny)/2) / (float64(ny) / 2)
			lv.act[l][p] = dx*dx+dy*dy <= r*r
		}
	}
	for l := 0; l < nl; l++ {
		for p, a := range lv.act[l] {
			if !a {
				continue
			}
			lv.sink[l][p] = 1e-4 * math.Pow(1e4, rng.Float64())
			if p%nx+1 < nx && lv.act[l][p+1] {
				lv.kx[l][p] = kf[l]
			}
			if p+nx < lv.n && lv.act[l][p+nx] {
				lv.ky[l][p] = kf[l]
			}
			if l == 1 && lv.act[0][p] {
				lv.cpl[p] = 1e-3 * math.Pow(1e3, rng.Float64())
			}
		}
	}
	lv.setSpans()
	lv.setDiag()
	return lv
}

// TestUniformKernels: on levels with one face conductance per layer the
// uniform runs cover most active cells, and the diagonal, the operator, the
// residual and the smoother give the same bits with them as from the face
// arrays alone (the runs emptied).
func TestUniformKernels(t *testing.T) {
	if fpfuse.Fuses() {
		t.Skip("this build fuses multiply-add (internal/fpfuse): the face-array kernels round differently from the uniform ones")
	}
	for _, tc := range []struct {
		nx, ny, nl int
		kf         [2]float64
	}{{40, 37, 1, [2]float64{0.888, 0}}, {41, 40, 2, [2]float64{0.888, 0.0064}}, {33, 30, 2, [2]float64{1.3, 0.7}}} {
		lv := uniformLevel(tc.nx, tc.ny, tc.nl, tc.kf, 5)
		covered, active := 0, 0
		for j := 0; j < lv.ny; j++ {
			covered += lv.ue[0][j] - lv.ua[0][j]
		}
		for _, a := range lv.act[0] {
			if a {
				active++
			}
		}
		if covered < active/2 {
			t.Fatalf("%+v: uniform runs cover %d of %d active cells", tc, covered, active)
		}
		size := lv.nl * lv.n
		rng := rand.New(rand.NewPCG(7, 8))
		x, b := make([]float64, size), make([]float64, size)
		for l := 0; l < lv.nl; l++ {
			for p, a := range lv.act[l] {
				if a {
					x[l*lv.n+p], b[l*lv.n+p] = rng.NormFloat64(), rng.NormFloat64()
				}
			}
		}
		run := func() [][]float64 {
			lv.setDiag()
			ax, res, sw := make([]float64, size), make([]float64, size), append([]float64(nil), x...)
			lv.apply(ax, x)
			lv.residual(res, x, b)
			lv.sweeps(sw, b, 0, 2, false, nil, nil)
			lv.sweeps(sw, b, 1, 2, false, nil, nil)
			return [][]float64{append([]float64(nil), lv.diag[0]...), append([]float64(nil), lv.inv...), ax, res, sw}
		}
		with := run()
		for l := 0; l < lv.nl; l++ {
			copy(lv.ue[l], lv.ua[l])
		}
		without := run()
		for v, name := range []string{"diagonal", "inverse", "A x", "residual", "sweeps"} {
			if i := firstBitDiff(with[v], without[v]); i >= 0 {
				t.Fatalf("%+v: %s[%d] = %.17g with the uniform runs, %.17g without", tc, name, i, with[v][i], without[v][i])
			}
		}
		// Sweeps from zero: the first half-sweep without reading the
		// neighbours gives the same bits, also for a right-hand side of −0
		// at an interior cell of the first colour (b + 0 is +0).
		c := lv.ny/2*lv.nx + lv.nx/2
		c -= (c%lv.nx + c/lv.nx) % 2
		b[c] = math.Copysign(0, -1)
		for m := 1; m <= 2; m++ {
			fast, slow := make([]float64, size), make([]float64, size)
			lv.sweeps(fast, b, 0, m, true, nil, nil)
			lv.sweeps(slow, b, 0, m, false, nil, nil)
			if i := firstBitDiff(fast, slow); i >= 0 {
				t.Fatalf("%+v, %d sweeps from zero: x[%d] = %.17g skipping the zero neighbours, %.17g reading them", tc, m, i, fast[i], slow[i])
			}
		}
	}
}

// firstBitDiff returns the first index where a and b differ in their bits,
// or −1.
func firstBitDiff(a, b []float64) int {
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return i
		}
	}
	return -1
}

// TestSweepsDone: the pre-smoothing with the residual of each row made
// and restricted by done (as the V-cycle does) leaves the same smoothed
// x, residual and coarse right-hand side, to the bit, as the sweeps
// followed by residualRestrict, on grids down to one row and with one or
// two sweeps; done sees every row once, in order.
func TestSweepsDone(t *testing.T) {
	for _, tc := range []struct {
		nx, ny, nl, m int
	}{{41, 40, 2, 2}, {33, 30, 2, 1}, {40, 37, 1, 2}, {9, 3, 2, 2}, {8, 2, 2, 2}, {7, 1, 1, 2}} {
		lv := uniformLevel(tc.nx, tc.ny, tc.nl, [2]float64{0.888, 0.0064}, 9)
		c := lv.coarsen(nil)
		c.setSpans()
		size := lv.nl * lv.n
		rng := rand.New(rand.NewPCG(11, 12))
		b := make([]float64, size)
		for l := 0; l < lv.nl; l++ {
			for p, a := range lv.act[l] {
				if a {
					b[l*lv.n+p] = rng.NormFloat64()
				}
			}
		}
		xA, rA, dA := make([]float64, size), make([]float64, size), make([]float64, c.nl*c.n)
		lv.sweeps(xA, b, 0, tc.m, true, nil, nil)
		lv.residualRestrict(c, dA, rA, xA, b)
		xB, rB, dB := make([]float64, size), make([]float64, size), make([]float64, c.nl*c.n)
		var rows []int
		lv.sweeps(xB, b, 0, tc.m, true, nil, func(j int) {
			rows = append(rows, j)
			lv.applyRowAll(rB, xB, b, j)
			lv.restrictRow(c, dB, rB, j)
		})
		for j, r := range rows {
			if r != j || len(rows) != lv.ny {
				t.Fatalf("%+v: done saw rows %v, want 0 … %d once each in order", tc, rows, lv.ny-1)
			}
		}
		for v, pair := range [][2][]float64{{xA, xB}, {rA, rB}, {dA, dB}} {
			if i := firstBitDiff(pair[0], pair[1]); i >= 0 {
				t.Fatalf("%+v: %s[%d] = %.17g after the sweeps, %.17g made row by row", tc, []string{"x", "residual", "coarse b"}[v], i, pair[0][i], pair[1][i])
			}
		}
	}
}

// TestUpdateApply: updateApply gives the same p = z + β·p and q = A p, to
// the bit, as the update over every node followed by apply, on grids down
// to one row, with p and z nonzero on inactive nodes too (the update
// covers every node).
func TestUpdateApply(t *testing.T) {
	for _, tc := range []struct {
		nx, ny, nl int
		beta       float64
	}{{41, 40, 2, 0.37}, {40, 37, 1, 1.9}, {9, 3, 2, 0.01}, {8, 2, 2, 0.5}, {7, 1, 1, 0.25}} {
		lv := uniformLevel(tc.nx, tc.ny, tc.nl, [2]float64{0.888, 0.0064}, 13)
		size := lv.nl * lv.n
		rng := rand.New(rand.NewPCG(14, 15))
		p, z := make([]float64, size), make([]float64, size)
		for i := range p {
			p[i], z[i] = rng.NormFloat64(), rng.NormFloat64()
		}
		pA, qA := append([]float64(nil), p...), make([]float64, size)
		for i := range pA {
			pA[i] = z[i] + tc.beta*pA[i]
		}
		lv.apply(qA, pA)
		pB, qB := append([]float64(nil), p...), make([]float64, size)
		lv.updateApply(qB, pB, z, tc.beta)
		for v, pair := range [][2][]float64{{pA, pB}, {qA, qB}} {
			if i := firstBitDiff(pair[0], pair[1]); i >= 0 {
				t.Fatalf("%+v: %s[%d] = %.17g in two passes, %.17g in one", tc, []string{"p", "A p"}[v], i, pair[0][i], pair[1][i])
			}
		}
	}
}

// TestSumPairs: sumPairs adds the same values in the same order as the
// plain loop dst[i>>1] += src[i], to the bit, for ranges starting and
// ending on either parity and empty ones (a pair summed first fails).
func TestSumPairs(t *testing.T) {
	rng := rand.New(rand.NewPCG(16, 17))
	src := make([]float64, 23)
	base := make([]float64, 12)
	// Sums of 1 and values near half its ulp (2⁻⁵³ ≈ 1.1e-16) round
	// differently in any other grouping ((1 + a) + b is not 1 + (a + b)).
	for i := range src {
		src[i] = 1.1e-16 * (1 + rng.Float64())
	}
	for i := range base {
		base[i] = 1
	}
	for _, r := range [][2]int{{0, 23}, {1, 23}, {0, 22}, {3, 20}, {5, 6}, {4, 5}, {7, 7}, {8, 7}} {
		want, got := append([]float64(nil), base...), append([]float64(nil), base...)
		for i := r[0]; i < r[1]; i++ {
			want[i>>1] += src[i]
		}
		sumPairs(got, src, r[0], r[1])
		if i := firstBitDiff(want, got); i >= 0 {
			t.Fatalf("range %v: dst[%d] = %.17g, want %.17g", r, i, got[i], want[i])
		}
	}
}

// TestVCycleStale: a V-cycle started from what the previous V-cycle left
// in its vectors (clearEdges zeroes only the grid's outer two rows and
// columns) gives the same bits as from vectors cleared whole, with the
// active nodes inside the grid or reaching its edges, on one and two
// layers and on grids narrower than four cells.
func TestVCycleStale(t *testing.T) {
	for _, tc := range []struct {
		nx, ny, nl int
		radii      [2]float64
	}{{41, 40, 2, [2]float64{0.7, 0.95}}, {41, 40, 2, [2]float64{1.2, 1.5}}, {40, 37, 1, [2]float64{1.3, 0}}, {33, 3, 2, [2]float64{0.9, 1.4}}, {5, 6, 2, [2]float64{1.1, 1.5}}} {
		lv := discLevel(tc.nx, tc.ny, tc.nl, [2]float64{0.888, 0.0064}, tc.radii, 21)
		mg := newMultigrid(lv)
		if err := mg.update(); err != nil {
			t.Fatal(err)
		}
		size := lv.nl * lv.n
		rng := rand.New(rand.NewPCG(22, 23))
		r1, r2 := make([]float64, size), make([]float64, size)
		for l := 0; l < lv.nl; l++ {
			for p, a := range lv.act[l] {
				if a {
					r1[l*lv.n+p], r2[l*lv.n+p] = rng.NormFloat64(), rng.NormFloat64()
				}
			}
		}
		lv.r = make([]float64, size)
		stale := make([]float64, size)
		mg.precondition(stale, r1)
		mg.precondition(stale, r2)
		for _, c := range mg.levels[1:] {
			clear(c.x)
		}
		fresh := make([]float64, size)
		mg.precondition(fresh, r2)
		if i := firstBitDiff(stale, fresh); i >= 0 {
			t.Fatalf("%+v: z[%d] = %.17g after a V-cycle, %.17g from zero", tc, i, stale[i], fresh[i])
		}
	}
}

// TestCoarsenSetUniform: down a hierarchy of odd and even sizes, with
// random faces (some subnormal, some zero) as well as uniform ones, each
// coarse face is the sum of the fine faces it replaces divided by the
// agglomeration factor, and each level's uniform face is the largest
// face (the builtin max), to the bit.
func TestCoarsenSetUniform(t *testing.T) {
	if fpfuse.Fuses() {
		t.Skip("this build fuses multiply-add (internal/fpfuse): the coarse faces round differently from the reference sums")
	}
	for _, tc := range []struct {
		nx, ny, nl int
		random     bool
	}{{41, 40, 2, false}, {33, 30, 2, true}, {40, 37, 1, true}, {9, 1, 2, true}} {
		lv := uniformLevel(tc.nx, tc.ny, tc.nl, [2]float64{0.888, 0.0064}, 25)
		if tc.random {
			rng := rand.New(rand.NewPCG(26, 27))
			for l := 0; l < lv.nl; l++ {
				for p := range lv.kx[l] {
					for _, k := range []*float64{&lv.kx[l][p], &lv.ky[l][p]} {
						switch rng.IntN(4) {
						case 0:
							*k = 0
						case 1:
							*k = 5e-324 * float64(rng.IntN(7))
						default:
							*k = rng.Float64() * 3
						}
					}
				}
			}
		}
		for f := lv; f.nl*f.n > 4; {
			f.setUniform()
			for l := 0; l < f.nl; l++ {
				want := 0.0
				for p := range f.kx[l] {
					want = max(want, f.kx[l][p], f.ky[l][p])
				}
				if math.Float64bits(f.kf[l]) != math.Float64bits(want) {
					t.Fatalf("%+v, %d×%d layer %d: uniform face %.17g, largest %.17g", tc, f.nx, f.ny, l, f.kf[l], want)
				}
			}
			c := f.coarsen(nil)
			for l := 0; l < f.nl; l++ {
				wx, wy := make([]float64, c.n), make([]float64, c.n)
				for p := range f.kx[l] {
					i, j := p%f.nx, p/f.nx
					P := (j/f.fy)*c.nx + i/f.fx
					if i+1 < f.nx && (i+1)/f.fx != i/f.fx {
						wx[P] += f.kx[l][p] / float64(f.fx)
					}
					if j+1 < f.ny && (j+1)/f.fy != j/f.fy {
						wy[P] += f.ky[l][p] / float64(f.fy)
					}
				}
				if i := firstBitDiff(wx, c.kx[l]); i >= 0 {
					t.Fatalf("%+v, %d×%d layer %d: coarse x face %d = %.17g, want %.17g", tc, f.nx, f.ny, l, i, c.kx[l][i], wx[i])
				}
				if i := firstBitDiff(wy, c.ky[l]); i >= 0 {
					t.Fatalf("%+v, %d×%d layer %d: coarse y face %d = %.17g, want %.17g", tc, f.nx, f.ny, l, i, c.ky[l][i], wy[i])
				}
			}
			f = c
		}
	}
}

// residualRestrict sets r = b − A x and restricts it to the coarse vector
// dst (level c) in two passes: the reference the V-cycle's fused rows
// (sweeps with done) are checked against.
func (lv *level) residualRestrict(c *level, dst, r, x, b []float64) {
	lv.residual(r, x, b)
	lv.restrict(c, dst, r)
}

// restrict sets the coarse vector dst (level c) to the sums of the fine
// values of v over each coarse cell (the transpose of prolongRow; v is zero
// outside the active spans).
func (lv *level) restrict(c *level, dst, v []float64) {
	clear(dst)
	for j := 0; j < lv.ny; j++ {
		lv.restrictRow(c, dst, v, j)
	}
}
