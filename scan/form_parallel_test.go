package scan

import (
	"fmt"
	"gapflux/internal/fpfuse"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// fitZernikeReference is FitZernike's least-squares fit as it was: the
// basis term by term, the normal matrix by gonum's SymRankK over blocks
// of 512 cells. The tests hold fitZernike to it bit for bit.
func fitZernikeReference(s *Surface, radiusM float64, maxOrder int) []float64 {
	idx := formCells(s, radiusM)
	for maxOrder > 0 && 2*ZernikeTerms(maxOrder) > len(idx) {
		maxOrder--
	}
	t := ZernikeTerms(maxOrder)
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
			zernikeBasisReference(ab.RawRowView(r), maxOrder, s.X(k%s.Nx)*inv, s.Y(k/s.Nx)*inv)
			zv.SetVec(r, s.ZM[k])
		}
		g.SymRankK(g, 1, ab.T())
		part.MulVec(ab.T(), zv)
		rhs.AddVec(rhs, &part)
	}
	var ch mat.Cholesky
	if !ch.Factorize(g) {
		return nil
	}
	var x mat.VecDense
	if err := ch.SolveVecTo(&x, rhs); err != nil {
		return nil
	}
	return x.RawVector().Data
}

// zernikeBasisReference is zernikeBasis.eval as it was: each term's
// radial polynomial on its own.
func zernikeBasisReference(dst []float64, maxOrder int, x, y float64) {
	rho := math.Hypot(x, y)
	c, s := 1.0, 0.0
	if rho > 0 {
		c, s = x/rho, y/rho
	}
	pw, ck, sk := make([]float64, maxOrder+1), make([]float64, maxOrder+1), make([]float64, maxOrder+1)
	pw[0], ck[0], sk[0] = 1, 1, 0
	for k := 1; k <= maxOrder; k++ {
		pw[k] = pw[k-1] * rho
		ck[k] = ck[k-1]*c - sk[k-1]*s
		sk[k] = sk[k-1]*c + ck[k-1]*s
	}
	for j := range dst {
		n, m := ZernikeNM(j)
		rc := zernikeRadialCoef(n, m)
		r := 0.0
		for k := n; k >= 0; k -= 2 {
			r += rc[k] * pw[k]
		}
		v := zernikeNorm(n, m) * r
		switch {
		case m > 0:
			v *= ck[m]
		case m < 0:
			v *= sk[-m]
		}
		dst[j] = v
	}
}

// formCase is a surface for the form tests: a rough dish with a saddle
// and noise, holes (Filled and Outside cells) and a base disc off the
// grid's centre.
type formCase struct {
	name    string
	s       *Surface
	radiusM float64
}

func formCases() []formCase {
	var cs []formCase
	for k, c := range []struct {
		nx, ny   int
		radiusM  float64
		holeFrac float64
	}{
		{81, 81, 0.02, 0.1},   // some 5000 cells: more than one chunk, a part block
		{97, 63, 0.015, 0.3},  // odd sizes, many holes
		{129, 129, 0.03, 0},   // three chunks and a tail
		{9, 7, 0.002, 0.2},    // few cells: the order is lowered
		{45, 45, 0.0112, 0.5}, // half the cells gone
	} {
		rng := rand.New(rand.NewPCG(uint64(k), 11))
		h := 0.5e-3
		s := NewSurface(c.nx, c.ny, h, -float64(c.nx/2)*h+0.1e-3, -float64(c.ny/2)*h-0.2e-3)
		for q := range s.ZM {
			x, y := s.X(q%c.nx), s.Y(q/c.nx)
			u, v := x/c.radiusM, y/c.radiusM
			s.ZM[q] = 0.3e-3*(u*u+v*v) + 0.05e-3*(u*u-v*v) + 2e-5*u*v*v*v + 1e-6*rng.NormFloat64()
			switch f := rng.Float64(); {
			case f < c.holeFrac/2:
				s.State[q], s.ZM[q] = Outside, math.NaN()
			case f < c.holeFrac:
				s.State[q] = Filled
			default:
				s.State[q] = Measured
			}
		}
		cs = append(cs, formCase{fmt.Sprintf("%dx%d-r%gmm-holes%g", c.nx, c.ny, 1e3*c.radiusM, c.holeFrac), s, c.radiusM})
	}
	return cs
}

// TestFitZernikeMatchesReference holds the fit to fitZernikeReference bit
// for bit, on 1, 2 and 4 processors.
func TestFitZernikeMatchesReference(t *testing.T) {
	if fpfuse.Fuses() {
		t.Skip("this build fuses multiply-add (internal/fpfuse): gonum's kernels round differently from the tiles")
	}
	for _, c := range formCases() {
		want := fitZernikeReference(c.s, c.radiusM, DefaultZernikeOrder)
		for _, procs := range []int{1, 2, 4} {
			old := runtime.GOMAXPROCS(procs)
			got, err := FitZernike(c.s, c.radiusM, DefaultZernikeOrder)
			runtime.GOMAXPROCS(old)
			if err != nil {
				t.Fatalf("%s: %v", c.name, err)
			}
			if len(got) != len(want) {
				t.Fatalf("%s, %d procs: %d terms, reference %d", c.name, procs, len(got), len(want))
			}
			for j, term := range got {
				if math.Float64bits(term.CoefM) != math.Float64bits(want[j]) {
					t.Errorf("%s, %d procs: term %d = %v, reference %v", c.name, procs, j, term.CoefM, want[j])
				}
			}
		}
	}
}

// TestMeasureFormSameOnAnyProcessors checks that every field of the
// form (flatness, planes, concavity, Zernike terms) has the same bits on
// 1, 2 and 4 processors.
func TestMeasureFormSameOnAnyProcessors(t *testing.T) {
	for _, c := range formCases() {
		var want string
		for _, procs := range []int{1, 2, 4} {
			old := runtime.GOMAXPROCS(procs)
			f, err := MeasureForm(c.s, c.radiusM)
			runtime.GOMAXPROCS(old)
			if err != nil {
				t.Fatalf("%s: %v", c.name, err)
			}
			got := fmt.Sprintf("%#v", *f) // %v writes every float64 exactly
			if procs == 1 {
				want = got
			} else if got != want {
				t.Errorf("%s: %d procs:\n%s\n1 proc:\n%s", c.name, procs, got, want)
			}
		}
	}
}
