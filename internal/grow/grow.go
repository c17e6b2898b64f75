// Package grow makes room in slices read from streams of unknown length.
package grow

import "slices"

// Room returns s with room for k more elements, quadrupling its capacity
// but not beyond limit elements unless k requires it: few copies of large
// slices on streams of unknown size, while what is allocated stays within
// four times what has been read. The length of s is unchanged, and
// slices.Grow leaves the copied part of the new array uncleared.
func Room[T any](s []T, k int, limit int64) []T {
	if cap(s)-len(s) >= k {
		return s
	}
	c := max(min(int64(4*cap(s)), limit), int64(len(s)+k))
	return slices.Grow(s, int(c)-len(s))
}
