package grow

import "testing"

// TestRoom checks the capacity rule by hand-worked cases: quadrupling,
// capped at the limit, but never below what k needs; the length and the
// elements kept.
func TestRoom(t *testing.T) {
	for _, tc := range []struct {
		name          string
		len, cap, k   int
		limit         int64
		wantAtLeast   int // slices.Grow may round the capacity up
		wantUnchanged bool
	}{
		{"room already", 2, 10, 8, 100, 10, true},
		{"quadruple", 10, 10, 1, 100, 40, false},
		{"capped by the limit", 10, 10, 1, 25, 25, false},
		{"k beyond the cap", 10, 10, 50, 25, 60, false},
		{"empty", 0, 0, 3, 1000, 3, false},
	} {
		s := make([]int, tc.len, tc.cap)
		for i := range s {
			s[i] = i + 1
		}
		got := Room(s, tc.k, tc.limit)
		if len(got) != tc.len || cap(got)-len(got) < tc.k || cap(got) < tc.wantAtLeast {
			t.Errorf("%s: len %d cap %d, want len %d, cap ≥ %d and room for %d", tc.name, len(got), cap(got), tc.len, tc.wantAtLeast, tc.k)
		}
		if tc.wantUnchanged && cap(got) != tc.cap {
			t.Errorf("%s: reallocated (cap %d → %d) with room already", tc.name, tc.cap, cap(got))
		}
		if !tc.wantUnchanged && tc.limit >= int64(tc.len+tc.k) && cap(got) > max(4*tc.cap, tc.len+tc.k)+64 {
			t.Errorf("%s: cap %d, far beyond the rule's %d", tc.name, cap(got), max(4*tc.cap, tc.len+tc.k))
		}
		for i, v := range got {
			if v != i+1 {
				t.Fatalf("%s: element %d is %d, want %d", tc.name, i, v, i+1)
			}
		}
	}
}
