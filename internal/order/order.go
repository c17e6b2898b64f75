// Package order finds order statistics of float64 slices in place, in
// expected linear time: Select by Hoare's selection, Median of short
// slices by Lomuto's partition without branches on the data.
package order

// Select reorders a so that a[k] is the k-th smallest value, with
// a[:k] ≤ a[k] ≤ a[k+1:], and returns it.
func Select(a []float64, k int) float64 {
	lo, hi := 0, len(a)-1
	for hi-lo > 16 {
		mid := lo + (hi-lo)/2
		// Median of three as the pivot.
		if a[mid] < a[lo] {
			a[mid], a[lo] = a[lo], a[mid]
		}
		if a[hi] < a[lo] {
			a[hi], a[lo] = a[lo], a[hi]
		}
		if a[hi] < a[mid] {
			a[hi], a[mid] = a[mid], a[hi]
		}
		p := a[mid]
		i, j := lo, hi
		for i <= j {
			for a[i] < p {
				i++
			}
			for a[j] > p {
				j--
			}
			if i <= j {
				a[i], a[j] = a[j], a[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return a[k]
		}
	}
	for i := lo + 1; i <= hi; i++ {
		v := a[i]
		j := i - 1
		for j >= lo && a[j] > v {
			a[j+1] = a[j]
			j--
		}
		a[j+1] = v
	}
	return a[k]
}
