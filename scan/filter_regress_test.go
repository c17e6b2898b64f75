package scan

import (
	"fmt"
	"gapflux/internal/fpfuse"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"
)

// applyReference is gaussRegression.apply as it was before the plane
// (order 1) column pass and the row spans: row passes over whole rows,
// column passes into moment rows, a solve per cell. The tests hold the
// present apply to it bit for bit.
func applyReference(r *gaussRegression, w, z, out []float64, use func(q int) bool) {
	nx, ny, d := r.nx, r.ny, r.order
	n := nx * ny
	nw, nz := 2*d+1, d+1
	rw, rz, wz := make([][]float64, nw), make([][]float64, nz), make([]float64, n)
	for a := range rw {
		rw[a] = make([]float64, n)
	}
	for a := range rz {
		rz[a] = make([]float64, n)
	}
	for q := range n {
		if w[q] != 0 {
			wz[q] = w[q] * z[q]
		}
	}
	for j := range ny {
		row := j * nx
		for a := range nw {
			convolveRowReference(rw[a][row:row+nx], w[row:row+nx], r.g[a], r.half)
		}
		for a := range nz {
			convolveRowReference(rz[a][row:row+nx], wz[row:row+nx], r.g[a], r.half)
		}
	}
	mons := monomials(d)
	mw, mz := monomials(2*d), mons
	bw, bz := make([][]float64, len(mw)), make([][]float64, len(mz))
	for t := range bw {
		bw[t] = make([]float64, nx)
	}
	for t := range bz {
		bz[t] = make([]float64, nx)
	}
	var sol regressionSolver
	for j := range ny {
		for t := range bw {
			clear(bw[t])
		}
		for t := range bz {
			clear(bz[t])
		}
		for l := max(-r.half, -j); l <= min(r.half, ny-1-j); l++ {
			r.accumulate(bw, rw, mw, l, (j+l)*nx)
			r.accumulate(bz, rz, mz, l, (j+l)*nx)
		}
		for i := range nx {
			if q := j*nx + i; use(q) {
				out[q] = solveReference(&sol, d, mons, bw, bz, i)
			}
		}
	}
}

// convolveRowReference is convolveRow as it was: over the whole row.
func convolveRowReference(dst, src, g []float64, half int) {
	n := len(dst)
	clear(dst)
	for k := -half; k <= half; k++ {
		c := g[k+half]
		if c == 0 {
			continue
		}
		i0, i1 := max(0, -k), min(n, n-k)
		if i0 >= i1 {
			continue
		}
		d, s := dst[i0:i1], src[i0+k:i1+k]
		for i := range d {
			d[i] += c * s[i]
		}
	}
}

// solveReference is regressionSolver.solve as it was: the moments of
// column i read from moment rows.
func solveReference(s *regressionSolver, d int, mons [][2]int, bw, bz [][]float64, i int) float64 {
	m00 := bw[0][i]
	if !(m00 > 0) {
		return nan
	}
	idx := func(a, b int) int { // position of (a, b) in monomials(2d)
		s := a + b
		return s*(s+1)/2 + b
	}
	for deg := d; deg >= 1; deg-- {
		k := (deg + 1) * (deg + 2) / 2
		for r := range k {
			for c := range k {
				s.a[r*k+c] = bw[idx(mons[r][0]+mons[c][0], mons[r][1]+mons[c][1])][i] / m00
			}
			s.b[r] = bz[r][i] / m00
		}
		if x, ok := solveSmallInPlace(k, s.a[:k*k], s.b[:k]); ok {
			return x
		}
	}
	return bz[0][i] / m00
}

// regressionCase is a grid with a mask, weights and heights for the
// regression tests: odd sizes, holes, zero weights, an empty row.
type regressionCase struct {
	name        string
	nx, ny      int
	cutoffCells float64
	w, z        []float64
	in          []bool
}

// regressionCases returns grids of disc, ragged and holed masks with
// weights in [0, 1] (some exactly 0, as the robust filter leaves them)
// and rough heights.
func regressionCases() []regressionCase {
	var cs []regressionCase
	for k, c := range []struct {
		nx, ny int
		cut    float64
		mask   string
	}{
		{37, 29, 4, "disc"}, {41, 41, 16.2, "disc"}, {101, 63, 8, "holes"},
		{64, 33, 7.5, "ragged"}, {9, 31, 4, "holes"}, {53, 7, 5, "ragged"}, {1, 17, 4, "disc"},
	} {
		rng := rand.New(rand.NewPCG(uint64(k), 7))
		rc := regressionCase{name: fmt.Sprintf("%dx%d-%s-%g", c.nx, c.ny, c.mask, c.cut), nx: c.nx, ny: c.ny,
			cutoffCells: c.cut, w: make([]float64, c.nx*c.ny), z: make([]float64, c.nx*c.ny), in: make([]bool, c.nx*c.ny)}
		for j := range c.ny {
			for i := range c.nx {
				q := j*c.nx + i
				u, v := 2*float64(i)/float64(c.nx)-1, 2*float64(j)/float64(c.ny)-1
				switch c.mask {
				case "disc":
					rc.in[q] = u*u+v*v <= 1
				case "holes":
					rc.in[q] = rng.Float64() > 0.3 && (i-c.nx/3)*(i-c.nx/3)+(j-c.ny/2)*(j-c.ny/2) > 9
				case "ragged":
					rc.in[q] = i >= j%5 && i < c.nx-(j*j)%7 && j != c.ny/2
				}
				rc.z[q] = math.NaN()
				if !rc.in[q] {
					continue
				}
				rc.z[q] = 1e-3*(u*u-0.3*u*v) + 1e-5*rng.NormFloat64()
				rc.w[q] = 1
				switch f := rng.Float64(); {
				case f < 0.1:
					rc.w[q] = 0
				case f < 0.5:
					rc.w[q] = rng.Float64()
				}
			}
		}
		cs = append(cs, rc)
	}
	return cs
}

// TestRegressionMatchesReference holds apply to applyReference bit for
// bit (NaN where the window has no weight included) for orders 0, 1 and
// 2, twice on one gaussRegression (its buffers are reused), on 1 and 4
// processors.
func TestRegressionMatchesReference(t *testing.T) {
	if fpfuse.Fuses() {
		t.Skip("this build fuses multiply-add (internal/fpfuse): the reference copy rounds differently")
	}
	for _, procs := range []int{1, 4} {
		old := runtime.GOMAXPROCS(procs)
		for _, c := range regressionCases() {
			use := func(q int) bool { return c.in[q] }
			for order := range 3 {
				r := newGaussRegression(c.nx, c.ny, c.cutoffCells, order)
				want := make([]float64, len(c.z))
				applyReference(r, c.w, c.z, want, use)
				for pass := range 2 {
					got := make([]float64, len(c.z))
					r.apply(c.w, c.z, got, use)
					for q := range got {
						if math.Float64bits(got[q]) != math.Float64bits(want[q]) {
							t.Fatalf("%d procs, %s, order %d, pass %d: cell %d = %v (%x), reference %v (%x)",
								procs, c.name, order, pass, q, got[q], math.Float64bits(got[q]), want[q], math.Float64bits(want[q]))
						}
					}
				}
			}
		}
		runtime.GOMAXPROCS(old)
	}
}

// TestFilterSameOnAnyProcessors checks that the linear and robust filters
// of orders 0, 1 and 2 give the same bits (form heights, noise, passes,
// zero-weight cells) on 1, 2 and 4 processors, on grids of odd sizes with
// holes and spikes.
func TestFilterSameOnAnyProcessors(t *testing.T) {
	for _, c := range formCases() {
		rng := rand.New(rand.NewPCG(5, 5))
		s := c.s.Clone()
		for q := range s.ZM {
			if s.State[q] == Measured && rng.Float64() < 0.01 {
				s.ZM[q] += 0.5e-3
			}
		}
		for _, m := range []FilterMethod{FilterGaussian, FilterRobust} {
			for _, o := range []FilterOrder{Order0, Order1, Order2} {
				opt := FilterOptions{CutoffM: 4.1 * s.CellM, Method: m, Order: o}
				var want string
				for _, procs := range []int{1, 2, 4} {
					old := runtime.GOMAXPROCS(procs)
					res, err := Filter(s, opt)
					runtime.GOMAXPROCS(old)
					if err != nil {
						t.Fatalf("%s %s order %d: %v", c.name, m, o, err)
					}
					bits := make([]uint64, len(res.Form.ZM))
					for q, z := range res.Form.ZM {
						bits[q] = math.Float64bits(z)
					}
					got := fmt.Sprintf("%x noise %x passes %d zero %d", bits, math.Float64bits(res.NoiseM), res.Iterations, res.ZeroWeightCells)
					if procs == 1 {
						want = got
					} else if got != want {
						t.Errorf("%s %s order %d: %d procs differ from 1", c.name, m, o, procs)
					}
				}
			}
		}
	}
}
