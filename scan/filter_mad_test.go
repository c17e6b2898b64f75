package scan

import (
	"math"
	"math/rand/v2"
	"runtime"
	"testing"
)

// TestFilterMADMatchesMadOf holds filterMAD to madOf bit for bit on 1 and
// 4 processors: odd and even counts either side of the histogram's
// threshold, a stride subsample past madSampleMax, ties, zeros of both
// signs, NaNs, one value repeated, a tight cluster.
func TestFilterMADMatchesMadOf(t *testing.T) {
	gen := map[string]func(rng *rand.Rand, i int) float64{
		"normal": func(rng *rand.Rand, _ int) float64 { return 1e-5 * rng.NormFloat64() },
		"ties":   func(rng *rand.Rand, _ int) float64 { return float64(rng.IntN(7)-3) * 1e-6 },
		"zeros": func(rng *rand.Rand, _ int) float64 {
			return [...]float64{0, math.Copysign(0, -1), 1e-6, -1e-6, math.NaN()}[rng.IntN(5)]
		},
		"spikes": func(rng *rand.Rand, _ int) float64 {
			if rng.Float64() < 0.01 {
				return 1e-3 * float64(1-2*rng.IntN(2))
			}
			return 2e-6 * rng.NormFloat64()
		},
		"cluster": func(rng *rand.Rand, _ int) float64 { return 1 + 1e-9*rng.Float64() },
		"same":    func(*rand.Rand, int) float64 { return -2.5e-6 },
		"ramp":    func(_ *rand.Rand, i int) float64 { return float64(i%1000) - 499.5 },
	}
	for name, f := range gen {
		for _, n := range []int{1, 2, 3, 16383, 16384, 16385, 50000, 125629, 400003} {
			rng := rand.New(rand.NewPCG(uint64(n), 3))
			r := make([]float64, n)
			for i := range r {
				r[i] = f(rng, i)
			}
			want := madOf(r)
			for _, procs := range []int{1, 4} {
				old := runtime.GOMAXPROCS(procs)
				got := filterMAD(r)
				runtime.GOMAXPROCS(old)
				if math.Float64bits(got) != math.Float64bits(want) {
					t.Errorf("%s, %d values, %d procs: %v, madOf %v", name, n, procs, got, want)
				}
			}
		}
	}
}
