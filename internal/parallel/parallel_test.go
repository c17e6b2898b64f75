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

// TestFirstPart checks that FirstPart numbers its ranges 0 … Parts−1 in
// order and covers [0, n) with them.
func TestFirstPart(t *testing.T) {
	for _, tc := range []struct{ n, parts int }{{100, 3}, {5, 8}, {0, 2}, {7, 1}, {64, 4}} {
		p := Parts(tc.n, tc.parts)
		los, his := make([]int, p), make([]int, p)
		FirstPart(tc.n, tc.parts, func(r, lo, hi int) (int, bool) {
			los[r], his[r] = lo, hi
			if l, h := Range(tc.n, p, r); l != lo || h != hi {
				t.Errorf("n %d parts %d: Range %d is [%d, %d), FirstPart gave [%d, %d)", tc.n, tc.parts, r, l, h, lo, hi)
			}
			return 0, false
		})
		next := 0
		for i := range p {
			if los[i] != next || his[i] < los[i] {
				t.Fatalf("n %d parts %d: range %d is [%d, %d), want it to start at %d", tc.n, tc.parts, i, los[i], his[i], next)
			}
			next = his[i]
		}
		if next != tc.n {
			t.Errorf("n %d parts %d: ranges end at %d", tc.n, tc.parts, next)
		}
	}
}

// TestDo: every part runs once with the range Range gives, parts not
// clamped (more parts than items leaves empty ranges), and one part runs
// on the caller's goroutine over the whole range.
func TestDo(t *testing.T) {
	for _, tc := range []struct{ n, parts int }{{10, 1}, {10, 3}, {3, 5}, {0, 2}, {1000, 7}} {
		seen := make([][2]int, max(tc.parts, 1))
		runs := make([]int, max(tc.parts, 1))
		Do(tc.n, tc.parts, func(p, lo, hi int) {
			seen[p] = [2]int{lo, hi}
			runs[p]++
		})
		covered := 0
		for p := range seen {
			lo, hi := Range(tc.n, max(tc.parts, 1), p)
			if runs[p] != 1 || seen[p] != [2]int{lo, hi} {
				t.Errorf("n %d, %d parts: part %d ran %d times over %v, want once over [%d, %d)", tc.n, tc.parts, p, runs[p], seen[p], lo, hi)
			}
			covered += hi - lo
		}
		if covered != tc.n {
			t.Errorf("n %d, %d parts: ranges cover %d items", tc.n, tc.parts, covered)
		}
	}
}
