package order

// insertionMax is the longest range Median sorts by insertion instead of
// partitioning further.
const insertionMax = 8

// Median returns the median of a: the middle value of the sorted values,
// or the mean of the two middle values for an even count. It reorders a.
// a must hold no NaN. A zero median may have either sign whatever the
// signs of the zeros in a (+0 and −0 compare equal), so callers that need
// the exact bits of another median on a zero check for it.
//
// Median is meant for short slices (tens of values): it partitions by
// Lomuto's scheme, whose loop has no branch on the data, around a median
// of three, and sorts short ranges by insertion. It panics on an empty
// slice.
func Median(a []float64) float64 {
	n := len(a)
	if n == 0 {
		panic("order: median of nothing")
	}
	k := n / 2
	from := selectSmall(a, k)
	v := a[k]
	if n%2 == 1 {
		return v
	}
	// The (k−1)-th smallest is the largest of a[:k], which is the
	// largest of a[from:k].
	lo := a[from]
	for _, w := range a[from+1 : k] {
		if w > lo {
			lo = w
		}
	}
	return 0.5 * (lo + v)
}

// selectSmall reorders a (no NaN) so that a[:k] ≤ a[k] ≤ a[k+1:], and
// returns an index from ≤ max(k−1, 0) such that the largest of a[:k] is
// the largest of a[from:k] (k ≥ 1): the values before the range the
// selection ended on are at most its first value's predecessor, the last
// pivot, and a range sorted by insertion has its largest below k at k−1.
func selectSmall(a []float64, k int) (from int) {
	lo, hi := 0, len(a) // the k-th smallest lies in a[lo:hi]
	// Invariant: a[:lo] ≤ a[lo:hi] ≤ a[hi:], and a[lo−1] is the largest
	// of a[:lo] when lo > 0 (a pivot).
	for hi-lo > insertionMax {
		r := a[lo:hi]
		pivotFirst(r)
		var s int
		if lo > 0 && r[0] == a[lo-1] {
			// a[lo-1] ≤ r: the pivot is r's least value, and a
			// partition by < would take only the pivot off.
			s = partitionAtMost(r)
		} else {
			s = partitionBelow(r)
		}
		// r[:s] ≤ r[s] ≤ r[s+1:] (r[:s+1] all equal the pivot after
		// partitionAtMost).
		switch {
		case k < lo+s:
			hi = lo + s
		case k > lo+s:
			lo += s + 1
		default:
			return max(lo-1, 0)
		}
	}
	insertionSort(a[lo:hi])
	return max(k-1, 0)
}

// pivotFirst moves the median of r's first, middle and last values to
// r[0], the least of them to r[mid] and the greatest to r[last]
// (len(r) ≥ 3). min and max order −0 below +0 and do not branch, so the
// three values keep their bits.
func pivotFirst(r []float64) {
	last, mid := len(r)-1, len(r)/2
	x, y, z := r[0], r[mid], r[last]
	lo, hi := min(x, y), max(x, y)
	r[0], r[mid], r[last] = max(lo, min(hi, z)), min(lo, z), max(hi, z)
}

// partitionBelow moves the values of r[1:] below the pivot r[0] to the
// front and the pivot just after them, and returns the pivot's index s:
// r[:s] < r[s] ≤ r[s+1:].
func partitionBelow(r []float64) int {
	p := r[0]
	s := 1
	for i := 1; i < len(r); i++ {
		x := r[i]
		r[i] = r[s]
		r[s] = x
		s += b2i(x < p)
	}
	s--
	r[0], r[s] = r[s], p
	return s
}

// partitionAtMost is partitionBelow moving the values at most the pivot
// to the front: r[:s] ≤ r[s] = p < r[s+1:]. The two are kept apart on
// purpose: the comparison is the loop's only work, and a flag choosing it
// would add a branch per value.
func partitionAtMost(r []float64) int {
	p := r[0]
	s := 1
	for i := 1; i < len(r); i++ {
		x := r[i]
		r[i] = r[s]
		r[s] = x
		s += b2i(x <= p)
	}
	s--
	r[0], r[s] = r[s], p
	return s
}

// insertionSort sorts r in increasing order.
func insertionSort(r []float64) {
	for i := 1; i < len(r); i++ {
		v := r[i]
		j := i - 1
		for j >= 0 && r[j] > v {
			r[j+1] = r[j]
			j--
		}
		r[j+1] = v
	}
}

// b2i returns 1 for true and 0 for false (without a branch).
func b2i(b bool) int {
	var i int
	if b {
		i = 1
	}
	return i
}
