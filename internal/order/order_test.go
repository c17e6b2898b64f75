package order

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// TestSelect compares Select with a full sort (the definition of the k-th
// order statistic) on random slices with ties, for every k.
func TestSelect(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, n := range []int{1, 2, 3, 17, 18, 100, 1001} {
		a := make([]float64, n)
		for i := range a {
			a[i] = float64(rng.IntN(n/2 + 1)) // ties
		}
		sorted := slices.Clone(a)
		slices.Sort(sorted)
		for k := range n {
			b := slices.Clone(a)
			if got := Select(b, k); got != sorted[k] {
				t.Fatalf("n %d, k %d: %g, want %g", n, k, got, sorted[k])
			}
			for i := 0; i < k; i++ {
				if b[i] > b[k] {
					t.Fatalf("n %d, k %d: a[%d] = %g above a[k] = %g", n, k, i, b[i], b[k])
				}
			}
		}
	}
}
