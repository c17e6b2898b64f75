package order

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
	s := slices.Clone(a)
	slices.Sort(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return 0.5 * (s[n/2-1] + s[n/2])
}

// medianCases returns slices of every length 1 … 70 in several orders and
// with several kinds of values: distinct, many ties, zeros of both signs,
// infinities, and sorted, reversed, organ-pipe and constant slices.
func medianCases() map[string][]float64 {
	r := rand.New(rand.NewPCG(5, 6))
	cases := map[string][]float64{}
	for n := 1; n <= 70; n++ {
		gen := map[string]func(i int) float64{
			"random":   func(int) float64 { return r.NormFloat64() },
			"ties":     func(int) float64 { return float64(r.IntN(3)) },
			"zeros":    func(int) float64 { return []float64{-1, math.Copysign(0, -1), 0, 2}[r.IntN(4)] },
			"inf":      func(int) float64 { return []float64{math.Inf(-1), 1, math.Inf(1)}[r.IntN(3)] },
			"sorted":   func(i int) float64 { return float64(i) },
			"reversed": func(i int) float64 { return float64(n - i) },
			"organ":    func(i int) float64 { return float64(min(i, n-i)) },
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

// TestMedian compares Median with the definition (medianSorted) on every
// case of medianCases; a zero median may have either sign, as Median
// documents. It also checks that Median keeps a's values.
func TestMedian(t *testing.T) {
	for name, a := range medianCases() {
		b := slices.Clone(a)
		got, want := Median(b), medianSorted(a)
		if got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
			t.Errorf("%s: Median = %g, want %g", name, got, want)
		}
		slices.Sort(b)
		if s := slices.Sorted(slices.Values(a)); !slices.EqualFunc(b, s, func(x, y float64) bool { return x == y }) {
			t.Errorf("%s: values changed: %v, want %v", name, b, s)
		}
	}
}

// TestSelectSmall checks the order selectSmall leaves behind, for every
// k: a[:k] ≤ a[k] ≤ a[k+1:], a[k] the k-th of the sorted values, and
// the index it returns: at most max(k−1, 0), and the largest of a[:k]
// the largest of a[from:k].
func TestSelectSmall(t *testing.T) {
	for name, a := range medianCases() {
		s := slices.Sorted(slices.Values(a))
		for k := range a {
			b := slices.Clone(a)
			from := selectSmall(b, k)
			v := b[k]
			if v != s[k] {
				t.Fatalf("%s, k %d: %g, want %g", name, k, v, s[k])
			}
			for i, w := range b {
				if i < k && w > v || i > k && w < v {
					t.Fatalf("%s, k %d: a[%d] = %g on the wrong side of %g", name, k, i, w, v)
				}
			}
			if from < 0 || from > max(k-1, 0) {
				t.Fatalf("%s, k %d: from %d", name, k, from)
			}
			if k > 0 && slices.Max(b[from:k]) != slices.Max(b[:k]) {
				t.Fatalf("%s, k %d: largest of a[%d:k] %g, of a[:k] %g", name, k, from, slices.Max(b[from:k]), slices.Max(b[:k]))
			}
		}
	}
}

// BenchmarkMedian compares Median with Select plus the largest of the
// lower part (the median the scan package took before) on 1024 slices of
// n normal values in turn.
func BenchmarkMedian(b *testing.B) {
	for _, n := range []int{16, 49, 64} {
		r := rand.New(rand.NewPCG(1, uint64(n)))
		sets := make([][]float64, 1024)
		for s := range sets {
			sets[s] = make([]float64, n)
			for i := range sets[s] {
				sets[s][i] = r.NormFloat64()
			}
		}
		for _, m := range []struct {
			name   string
			median func([]float64) float64
		}{{"select", medianBySelect}, {"median", Median}} {
			b.Run(fmt.Sprintf("n=%d/%s", n, m.name), func(b *testing.B) {
				buf := make([]float64, n)
				i := 0
				for b.Loop() {
					copy(buf, sets[i&1023])
					m.median(buf)
					i++
				}
			})
		}
	}
}

// medianBySelect is the median by Select and the largest value below the
// selected one.
func medianBySelect(a []float64) float64 {
	k := len(a) / 2
	v := Select(a, k)
	if len(a)%2 == 1 {
		return v
	}
	lo := a[0]
	for _, w := range a[1:k] {
		lo = max(lo, w)
	}
	return 0.5 * (lo + v)
}

// TestPartitions checks the split each partition documents, around the
// pivot r[0], on every case of medianCases of three values or more:
// partitionBelow r[:s] < r[s] ≤ r[s+1:], partitionAtMost r[:s] ≤ r[s] <
// r[s+1:], r[s] the pivot, and the count of values below the split
// (strictly, or at most the pivot) as a count over the input gives it.
func TestPartitions(t *testing.T) {
	for _, p := range []struct {
		name      string
		partition func([]float64) int
		left      func(x, p float64) bool // x belongs left of the pivot
	}{
		{"partitionBelow", partitionBelow, func(x, p float64) bool { return x < p }},
		{"partitionAtMost", partitionAtMost, func(x, p float64) bool { return x <= p }},
	} {
		for name, a := range medianCases() {
			if len(a) < 3 {
				continue
			}
			r := slices.Clone(a)
			pivot := r[0]
			want := 0
			for _, x := range a[1:] {
				if p.left(x, pivot) {
					want++
				}
			}
			s := p.partition(r)
			if s != want || r[s] != pivot {
				t.Fatalf("%s %s: split at %d holding %g, want %d holding %g", p.name, name, s, r[s], want, pivot)
			}
			for i, x := range r {
				if i < s && !p.left(x, pivot) || i > s && p.left(x, pivot) {
					t.Fatalf("%s %s: r[%d] = %g on the wrong side of %g at %d", p.name, name, i, x, pivot, s)
				}
			}
		}
	}
}
