package scan

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

func TestZernikeIndex(t *testing.T) {
	// OSA/ANSI j = (n(n+2)+m)/2 (ISO 24157; Thibos et al. 2002). The pair
	// (3, −3) is OSA 6 (PHYSICS-REFERENCES.md 12.4 [S]).
	cases := []struct{ n, m, j int }{
		{0, 0, 0}, {1, -1, 1}, {1, 1, 2}, {2, -2, 3}, {2, 0, 4}, {2, 2, 5},
		{3, -3, 6}, {3, -1, 7}, {3, 1, 8}, {3, 3, 9}, {4, 0, 12}, {6, 0, 24}, {6, 6, 27},
	}
	for _, c := range cases {
		if j := ZernikeIndex(c.n, c.m); j != c.j {
			t.Errorf("ZernikeIndex(%d, %d) = %d, want %d", c.n, c.m, j, c.j)
		}
		if n, m := ZernikeNM(c.j); n != c.n || m != c.m {
			t.Errorf("ZernikeNM(%d) = (%d, %d), want (%d, %d)", c.j, n, m, c.n, c.m)
		}
	}
	for j := range 500 {
		n, m := ZernikeNM(j)
		if ZernikeIndex(n, m) != j {
			t.Fatalf("round trip of %d gives (%d, %d)", j, n, m)
		}
	}
}

func TestZernikeValues(t *testing.T) {
	s3, s5, s6 := math.Sqrt(3), math.Sqrt(5), math.Sqrt(6)
	cases := []struct {
		n, m       int
		rho, theta float64
		want       float64
	}{
		// PHYSICS-REFERENCES.md 12.4 [N]: Noll Z4 = OSA j=4 = √3(2ρ²−1).
		{2, 0, 1, 0.3, s3},
		{2, 0, 0, 0, -s3},
		// Noll Z11 = OSA j=12 = √5(6ρ⁴−6ρ²+1): √5 at ρ = 0 and 1.
		{4, 0, 0, 0, s5},
		{4, 0, 1, 2, s5},
		{4, 0, 0.5, 1, s5 * (6.0/16 - 6.0/4 + 1)},
		// √6 ρ² cos 2θ and √6 ρ² sin 2θ.
		{2, 2, 1, 0, s6},
		{2, -2, 0.5, math.Pi / 4, s6 * 0.25},
		// Tilt: 2ρ sin θ, 2ρ cos θ.
		{1, -1, 0.5, math.Pi / 2, 1},
		{1, 1, 0.5, math.Pi, -1},
		// Coma: √8 (3ρ³ − 2ρ) cos θ.
		{3, 1, 1, 0, math.Sqrt(8)},
	}
	for _, c := range cases {
		if got := Zernike(c.n, c.m, c.rho, c.theta); math.Abs(got-c.want) > 1e-14 {
			t.Errorf("Z(%d,%d)(%g, %g) = %.16g, want %.16g", c.n, c.m, c.rho, c.theta, got, c.want)
		}
	}
	// The basis evaluator used by the fit agrees with Zernike.
	b := newZernikeBasis(6)
	row := make([]float64, 28)
	b.eval(row, 0.3, -0.4)
	for j := range row {
		n, m := ZernikeNM(j)
		if w := Zernike(n, m, 0.5, math.Atan2(-0.4, 0.3)); math.Abs(row[j]-w) > 1e-13 {
			t.Errorf("basis term %d = %g, Zernike %g", j, row[j], w)
		}
	}
}

func TestZernikeOrthonormal(t *testing.T) {
	// (1/π)∫∫ Z_j Z_k ρ dρ dθ = δ_jk over the unit disc (ISO 24157
	// normalisation). Midpoint rule in ρ (error O(1/N²)), uniform in θ
	// (exact for these trigonometric degrees).
	const nr, nt = 1000, 32
	terms := ZernikeTerms(6)
	g := make([]float64, terms*terms)
	b := newZernikeBasis(6)
	row := make([]float64, terms)
	for i := range nr {
		rho := (float64(i) + 0.5) / nr
		for k := range nt {
			th := 2 * math.Pi * float64(k) / nt
			b.eval(row, rho*math.Cos(th), rho*math.Sin(th))
			w := rho * (1.0 / nr) * (2 * math.Pi / nt) / math.Pi
			for p := range terms {
				for q := range terms {
					g[p*terms+q] += w * row[p] * row[q]
				}
			}
		}
	}
	for p := range terms {
		for q := range terms {
			want := 0.0
			if p == q {
				want = 1
			}
			if math.Abs(g[p*terms+q]-want) > 1e-4 {
				t.Errorf("<Z%d, Z%d> = %.6f, want %g", p, q, g[p*terms+q], want)
			}
		}
	}
}

func TestFitZernikeRecoversCoefficients(t *testing.T) {
	const r = 0.05
	rng := rand.New(rand.NewPCG(4, 4))
	coef := make([]float64, ZernikeTerms(6))
	for j := range coef {
		coef[j] = 1e-5 * rng.NormFloat64()
	}
	s := discSurface(r, 1e-3, func(x, y float64) float64 {
		z := 0.0
		for j, c := range coef {
			n, m := ZernikeNM(j)
			z += c * Zernike(n, m, math.Hypot(x, y)/r, math.Atan2(y, x))
		}
		return z
	})
	terms, err := FitZernike(s, r, 6)
	if err != nil {
		t.Fatal(err)
	}
	for j, term := range terms {
		if term.Index != j || term.Name == "" {
			t.Errorf("term %d: %+v", j, term)
		}
		if math.Abs(term.CoefM-coef[j]) > 1e-15 {
			t.Errorf("term %d (%s): %g, want %g", j, term.Name, term.CoefM, coef[j])
		}
	}
}

func TestFitZernikeSparseAndBad(t *testing.T) {
	// 21 cells: the order drops until the cells are twice the terms.
	s := discSurface(2.5e-3, 1e-3, dish(1e-5, 2.5e-3))
	terms, err := FitZernike(s, 2.5e-3, 6)
	if err != nil {
		t.Fatal(err)
	}
	if len(terms) != 10 {
		t.Errorf("%d terms from 21 cells, want 10 (order 3)", len(terms))
	}
	if _, err := FitZernike(s, -1, 6); err == nil || !strings.Contains(err.Error(), "radius") {
		t.Errorf("negative radius: %v", err)
	}
	if _, err := FitZernike(NewSurface(3, 3, 1e-3, 0, 0), 1, 2); err == nil {
		t.Error("no cells: no error")
	}
}
