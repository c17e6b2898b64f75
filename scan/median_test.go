package scan

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// medianSorted is the median by its definition: the middle of the sorted
// values, or the mean of the two middle ones for an even count.
func medianSorted(a []float64) float64 {
	s := slices.Sorted(slices.Values(a))
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return 0.5 * (s[n/2-1] + s[n/2])
}

// sameBits reports whether x and y are the same float64, bit for bit.
func sameBits(x, y float64) bool { return math.Float64bits(x) == math.Float64bits(y) }

// shortMedianCases returns slices of every length 1 … 80 (beyond
// shortMedianMax too) with heights as a scan has them, many ties, zeros of
// both signs at and around the median, infinities, NaNs, and sorted,
// reversed and constant orders.
func shortMedianCases() map[string][]float64 {
	r := rand.New(rand.NewPCG(11, 12))
	negZero := math.Copysign(0, -1)
	cases := map[string][]float64{}
	for n := 1; n <= 80; n++ {
		gen := map[string]func(i int) float64{
			"heights":  func(int) float64 { return 1e-3 + 8e-6*r.NormFloat64() },
			"ties":     func(int) float64 { return 1e-6 * float64(r.IntN(4)) },
			"zeros":    func(int) float64 { return []float64{-1e-6, negZero, 0, 1e-6}[r.IntN(4)] },
			"onlyZero": func(int) float64 { return []float64{negZero, 0}[r.IntN(2)] },
			"nearZero": func(i int) float64 { return []float64{negZero, 0, float64(i - n/2)}[r.IntN(3)] },
			"opposite": func(i int) float64 { return float64(2*(i%2)-1) * float64(1+r.IntN(2)) },
			"inf":      func(int) float64 { return []float64{math.Inf(-1), 1, math.Inf(1)}[r.IntN(3)] },
			"nan":      func(i int) float64 { return []float64{math.NaN(), float64(i), -float64(i)}[r.IntN(3)] },
			"sorted":   func(i int) float64 { return float64(i) },
			"reversed": func(i int) float64 { return float64(n - i) },
			"constant": func(int) float64 { return 7 },
		}
		for name, g := range gen {
			a := make([]float64, n)
			for i := range a {
				a[i] = g(i)
			}
			cases[fmt.Sprintf("%s/n=%d", name, n)] = a
		}
	}
	return cases
}

// TestMedianOf checks medianOf against medianInPlace, the median the
// callers took before, bit for bit (the sign of a zero median and NaN
// included), and, without NaNs, against the definition (medianSorted).
func TestMedianOf(t *testing.T) {
	for name, a := range shortMedianCases() {
		got := medianOf(slices.Clone(a))
		want := medianInPlace(slices.Clone(a))
		if !sameBits(got, want) {
			t.Errorf("%s: medianOf = %g (%#x), medianInPlace %g (%#x)", name, got, math.Float64bits(got), want, math.Float64bits(want))
		}
		if slices.ContainsFunc(a, math.IsNaN) {
			continue
		}
		if def := medianSorted(a); got != def && !(math.IsNaN(got) && math.IsNaN(def)) {
			t.Errorf("%s: medianOf = %g, sorted middle %g", name, got, def)
		}
	}
}

// TestMedianOfZeroSign checks the cases where only the order decides the
// sign of a zero median: the same multiset of ±0 and ±1 in every rotation.
func TestMedianOfZeroSign(t *testing.T) {
	negZero := math.Copysign(0, -1)
	for n := shortMedianMin; n <= shortMedianMax; n++ {
		a := make([]float64, n)
		for i := range a {
			a[i] = []float64{negZero, 0, negZero, -1, 1}[i%5]
		}
		for rot := range n {
			b := append(slices.Clone(a[rot:]), a[:rot]...)
			got, want := medianOf(slices.Clone(b)), medianInPlace(slices.Clone(b))
			if !sameBits(got, want) {
				t.Fatalf("n %d, rotation %d: medianOf = %g, medianInPlace %g", n, rot, got, want)
			}
		}
	}
}

// windowMediansRef is windowMedians as it was written first: each
// window's values gathered row by row (gatherWindow) and medianInPlace of
// them.
func windowMediansRef(g refGrid, med []float64) []float64 {
	f := make([]float64, g.nx*g.ny)
	var buf []float64
	for j := range g.ny {
		for i := range g.nx {
			buf = gatherWindow(g, med, i, j, buf)
			f[j*g.nx+i] = nan
			if len(buf) > 0 {
				f[j*g.nx+i] = medianInPlace(buf)
			}
		}
	}
	return f
}

// TestWindowMedians checks windowMedians against windowMediansRef bit for
// bit on grids narrower and wider than the window (its edges), with
// shares of undefined cells from none to all, on heights with −0 cells
// and on fields of few values (ties, and zeros of both signs at the
// median).
func TestWindowMedians(t *testing.T) {
	r := rand.New(rand.NewPCG(13, 14))
	negZero := math.Copysign(0, -1)
	fewValues := func(g refGrid, nanShare float64) []float64 {
		f := make([]float64, g.nx*g.ny)
		for q := range f {
			f[q] = []float64{-1e-6, negZero, 0, 1e-6}[r.IntN(4)]
			if r.Float64() < nanShare {
				f[q] = nan
			}
		}
		return f
	}
	for _, size := range [][2]int{{1, 1}, {1, 9}, {3, 9}, {7, 7}, {9, 7}, {20, 13}, {40, 41}} {
		g := refGrid{nx: size[0], ny: size[1], h: 1e-3}
		for _, nanShare := range []float64{0, 0.2, 0.6, 1} {
			for name, field := range map[string][]float64{
				"heights":   randomRefField(r, g, nanShare),
				"fewValues": fewValues(g, nanShare),
			} {
				got, want := windowMedians(g, field), windowMediansRef(g, field)
				for q := range got {
					if !sameBits(got[q], want[q]) {
						t.Fatalf("%s on %d×%d, NaN share %.1f: cell (%d, %d) = %g, want %g",
							name, g.nx, g.ny, nanShare, q%g.nx, q/g.nx, got[q], want[q])
					}
				}
			}
		}
	}
}
