package scan

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// medianBenchSets returns count slices of n heights, m: scanner noise of
// 8 µm about a height that differs between slices (a cell's samples).
func medianBenchSets(n, count int) [][]float64 {
	r := rand.New(rand.NewPCG(1, uint64(n)))
	sets := make([][]float64, count)
	for s := range sets {
		z0 := 1e-3 * r.Float64()
		a := make([]float64, n)
		for i := range a {
			a[i] = z0 + 8e-6*r.NormFloat64()
		}
		sets[s] = a
	}
	return sets
}

// benchMedians runs median on copies of 1024 sets of n noisy heights in
// turn (a copy per call, as the callers gather theirs).
func benchMedians(b *testing.B, n int, median func([]float64) float64) {
	sets := medianBenchSets(n, 1024)
	buf := make([]float64, n)
	sink := 0.0
	i := 0
	for b.Loop() {
		copy(buf, sets[i&1023])
		sink += median(buf)
		i++
	}
	if sink == 0 {
		b.Log(sink)
	}
}

// BenchmarkMedianOf compares medianOf with medianInPlace (its reference)
// on the slice lengths the grid's callers see most: 16 samples a cell
// (binCloud), 49 cells a window (windowMedians), 64 samples a reference
// cell (refStart).
func BenchmarkMedianOf(b *testing.B) {
	for _, n := range []int{4, 16, 49, 64} {
		b.Run(fmt.Sprintf("n=%d/old", n), func(b *testing.B) { benchMedians(b, n, medianInPlace) })
		b.Run(fmt.Sprintf("n=%d/new", n), func(b *testing.B) { benchMedians(b, n, medianOf) })
	}
}
