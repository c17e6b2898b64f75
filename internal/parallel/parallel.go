// Package parallel runs a search over contiguous parts of a range at once
// and keeps the answer of the first part in order, so that a parallel
// reader reports the same first fault as a sequential one.
package parallel

import "sync"

// First splits [0, n) into parts contiguous ranges of nearly equal length
// (parts is clamped to 1 … n), runs find on each at once, and returns the
// result of the lowest range for which find reported ok, or ok == false
// when none did. With one part find runs on the caller's goroutine.
func First(n, parts int, find func(lo, hi int) (v int, ok bool)) (v int, ok bool) {
	return FirstPart(n, parts, func(_, lo, hi int) (int, bool) { return find(lo, hi) })
}

// FirstPart is First for a find that also needs the number t of its range
// (0 … parts−1 in order), e.g. to use scratch space of its own per range.
func FirstPart(n, parts int, find func(t, lo, hi int) (v int, ok bool)) (v int, ok bool) {
	parts = Parts(n, parts)
	if parts == 1 {
		return find(0, 0, n)
	}
	vs := make([]int, parts)
	oks := make([]bool, parts)
	var wg sync.WaitGroup
	for t := range parts {
		wg.Add(1)
		go func() {
			defer wg.Done()
			lo, hi := Range(n, parts, t)
			vs[t], oks[t] = find(t, lo, hi)
		}()
	}
	wg.Wait()
	for t := range parts {
		if oks[t] {
			return vs[t], true
		}
	}
	return 0, false
}

// Parts returns the number of ranges First and FirstPart split [0, n)
// into when asked for parts: parts clamped to 1 … n.
func Parts(n, parts int) int { return max(1, min(parts, n)) }

// Range returns range t of the parts ranges (parts as Parts returns it)
// First and FirstPart split [0, n) into.
func Range(n, parts, t int) (lo, hi int) { return t * n / parts, (t + 1) * n / parts }
