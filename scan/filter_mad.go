package scan

import (
	"math"

	"gapflux/internal/order"
)

// filterMAD returns madOf(r), the median absolute deviation about the
// median of the finite values of r (a stride subsample of at most
// madSampleMax), the robust filter's scale (ISO 16610-71: c = 4.4 MAD).
// Its two medians are found by rankValue, over parts of the values at
// once; a median is a value of the data whatever the method, so the MAD
// is madOf's bit for bit (a zero median's sign may differ, but |a − m|
// has the same bits for either sign).
func filterMAD(r []float64) float64 {
	step := max(1, len(r)/madSampleMax)
	a := make([]float64, 0, len(r)/step+1)
	for i := 0; i < len(r); i += step {
		if !math.IsNaN(r[i]) {
			a = append(a, r[i])
		}
	}
	if len(a) == 0 {
		return 0
	}
	m := parallelMedian(a)
	parallelRows(len(a), func(i0, i1 int) {
		for i := i0; i < i1; i++ {
			a[i] = math.Abs(a[i] - m)
		}
	})
	return parallelMedian(a)
}

// parallelMedian returns medianInPlace's value of a (no NaN): the middle
// value, or the mean of the two middle values, as medianInPlace takes it.
// a is left as it is.
func parallelMedian(a []float64) float64 {
	n := len(a)
	if n < 1<<14 { // a histogram would cost more than it saves
		return medianInPlace(append([]float64(nil), a...))
	}
	k := n / 2
	v := rankValue(a, k)
	if n%2 == 1 {
		return v
	}
	return 0.5 * (rankValue(a, k-1) + v)
}

// rankBits is the number of leading bits of sortKey a histogram bucket
// of rankValue shares.
const rankBits = 16

// sortKey maps x (not NaN) to an integer whose order is x's (−0 before
// +0).
func sortKey(x float64) uint64 {
	u := math.Float64bits(x)
	if u>>63 == 1 {
		return ^u
	}
	return u | 1<<63
}

// rankValue returns the k-th smallest value of a (no NaN; k from 0): the
// values are counted by the leading rankBits bits of their sort keys in
// parts at once, and the value is selected among those of the one bucket
// that holds rank k. Within a bucket zeros share a sign, so the order of
// the keys is that of the values.
func rankValue(a []float64, k int) float64 {
	parts := rowParts(len(a))
	hist := make([][]int32, parts)
	parallelParts(len(a), parts, func(t, i0, i1 int) {
		h := make([]int32, 1<<rankBits)
		for _, x := range a[i0:i1] {
			h[sortKey(x)>>(64-rankBits)]++
		}
		hist[t] = h
	})
	b, below := uint64(0), 0
	for ; b < 1<<rankBits; b++ {
		c := 0
		for _, h := range hist {
			c += int(h[b])
		}
		if below+c > k {
			break
		}
		below += c
	}
	in := make([][]float64, parts)
	parallelParts(len(a), parts, func(t, i0, i1 int) {
		s := make([]float64, 0, hist[t][b])
		for _, x := range a[i0:i1] {
			if sortKey(x)>>(64-rankBits) == b {
				s = append(s, x)
			}
		}
		in[t] = s
	})
	var sel []float64
	for _, s := range in {
		sel = append(sel, s...)
	}
	return order.Select(sel, k-below)
}
