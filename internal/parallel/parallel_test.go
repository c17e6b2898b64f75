package parallel

import "testing"

// TestFirst checks that the first range in order wins whatever the number
// of parts, that every index is visited exactly once, and the edge cases.
func TestFirst(t *testing.T) {
	bad := map[int]bool{37: true, 80: true, 99: true}
	for _, parts := range []int{0, 1, 2, 3, 7, 100, 1000} {
		seen := make([]int, 100)
		v, ok := First(100, parts, func(lo, hi int) (int, bool) {
			for i := lo; i < hi; i++ {
				seen[i]++
			}
			for i := lo; i < hi; i++ {
				if bad[i] {
					return i, true
				}
			}
			return 0, false
		})
		if !ok || v != 37 {
			t.Errorf("parts %d: got %d %v, want 37 true", parts, v, ok)
		}
		for i, c := range seen {
			if c != 1 {
				t.Errorf("parts %d: index %d visited %d times", parts, i, c)
				break
			}
		}
	}
	if _, ok := First(10, 3, func(lo, hi int) (int, bool) { return 0, false }); ok {
		t.Error("nothing found: ok true")
	}
	if _, ok := First(0, 4, func(lo, hi int) (int, bool) { return lo, hi > lo }); ok {
		t.Error("empty range: ok true")
	}
}
