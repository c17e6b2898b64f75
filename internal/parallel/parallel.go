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
	parts = max(1, min(parts, n))
	if parts == 1 {
		return find(0, n)
	}
	vs := make([]int, parts)
	oks := make([]bool, parts)
	var wg sync.WaitGroup
	for t := range parts {
		wg.Add(1)
		go func() {
			defer wg.Done()
			vs[t], oks[t] = find(t*n/parts, (t+1)*n/parts)
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
