// Package parallel runs work over contiguous parts of a range at once
// (Do), and a search that keeps the answer of the first part in order
// (First), so that a parallel reader reports the same first fault as a
// sequential one.
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
	Do(n, parts, func(t, lo, hi int) { vs[t], oks[t] = find(t, lo, hi) })
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

// Do runs f(t, lo, hi) at once for the parts contiguous ranges [lo, hi)
// of [0, n) that Range gives, t = 0 … parts−1 in order, and returns when
// all have returned. parts is not clamped (a range may be empty, so that
// per-part results indexed by t are all written); with parts ≤ 1,
// f(0, 0, n) runs on the caller's goroutine.
func Do(n, parts int, f func(t, lo, hi int)) {
	if parts <= 1 {
		f(0, 0, n)
		return
	}
	var wg sync.WaitGroup
	for t := range parts {
		lo, hi := Range(n, parts, t)
		wg.Add(1)
		go func() {
			defer wg.Done()
			f(t, lo, hi)
		}()
	}
	wg.Wait()
}
