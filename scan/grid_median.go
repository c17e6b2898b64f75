package scan

import (
	"math"
	"slices"

	"gapflux/internal/order"
)

// Sizes of the bracketing median (bracketMedian).
const (
	// bracketMin is the smallest slice bracketMedian brackets; below it a
	// selection over the whole slice is as quick.
	bracketMin = 1 << 14
	// bracketSample is the number of values (an even stride) whose order
	// statistics choose the bracket.
	bracketSample = 1024
	// bracketSigmas is the bracket's half-width in standard deviations
	// of the rank of the median in a sample of m values (√m/2), so that
	// the median misses the bracket in about one call in a thousand (and
	// then costs one more selection).
	bracketSigmas = 3.0
)

// bracketMedian returns the median of a (finite values; the mean of the
// two middle values for an even count), the value medianInPlace returns
// up to the sign of a zero median (|a − m| has the same bits for either),
// reordering a. For long slices, a sorted stride sample brackets the
// median between two of its values; one pass counts the values below the
// bracket, finds the largest of them and moves those inside it to the
// front, and a selection among those few gives the median's order
// statistics. When the median falls outside the bracket, the whole slice
// is selected from, as medianInPlace does.
func bracketMedian(a []float64) float64 {
	n := len(a)
	if n < bracketMin {
		return medianInPlace(a)
	}
	step := n / bracketSample
	s := make([]float64, 0, bracketSample+1)
	for i := 0; i < n; i += step {
		s = append(s, a[i])
	}
	slices.Sort(s)
	mid := len(s) / 2
	half := int(bracketSigmas*math.Sqrt(float64(len(s)))/2) + 1
	lo, hi := s[max(0, mid-half)], s[min(len(s)-1, mid+half)]
	below, in := 0, 0
	maxBelow := math.Inf(-1)
	for i, v := range a {
		switch {
		case v < lo:
			below++
			maxBelow = max(maxBelow, v)
		case v <= hi:
			a[in], a[i] = a[i], a[in]
			in++
		}
	}
	k := n / 2
	if k < below || k >= below+in {
		return medianInPlace(a)
	}
	// The k-th smallest value is the (k − below)-th of the bracket's.
	b := a[:in]
	kb := k - below
	v := order.Select(b, kb)
	if n%2 == 1 {
		return v
	}
	// The (k−1)-th smallest: the largest of the bracket's below the k-th,
	// or the largest below the bracket (k ≥ 1 here).
	prev := maxBelow
	for _, w := range b[:kb] {
		prev = max(prev, w)
	}
	return 0.5 * (prev + v)
}

// Lengths of the slices medianOf selects from a copy of.
const (
	// shortMedianMin is the shortest: on fewer values medianInPlace,
	// which sorts them by insertion, is as quick with no copy.
	shortMedianMin = 9
	// shortMedianMax is the longest.
	shortMedianMax = 64
)

// medianOf returns medianInPlace(a), to the bit, and may reorder a
// (callers must not depend on a's order afterwards). From shortMedianMin
// to shortMedianMax values it takes order.Median of a copy of a, quicker
// on short slices; only when that median is a zero, whose sign depends on
// the order the selection met the zeros in, or NaN, or a holds a NaN, does
// it return medianInPlace of a in the caller's order.
func medianOf(a []float64) float64 {
	n := len(a)
	if n < shortMedianMin || n > shortMedianMax {
		return medianInPlace(a)
	}
	var buf [shortMedianMax]float64
	b := buf[:n]
	for i, v := range a {
		if v != v {
			return medianInPlace(a)
		}
		b[i] = v
	}
	if m := order.Median(b); m != 0 && m == m {
		return m
	}
	return medianInPlace(a)
}
