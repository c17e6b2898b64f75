package hugemem

import "testing"

// TestAlignedInterior checks the whole 2 MiB pages found inside a range
// against ones counted by hand.
func TestAlignedInterior(t *testing.T) {
	const mb = 1 << 20
	for _, tc := range []struct {
		name           string
		p, size        uintptr
		wantLo, wantHi uintptr
	}{
		{"aligned, two pages", 4 * mb, 4 * mb, 0, 4 * mb},
		{"aligned, page and a half", 4 * mb, 3 * mb, 0, 2 * mb},
		{"unaligned, one page inside", 4*mb + 4096, 4 * mb, 2*mb - 4096, 4*mb - 4096},
		{"unaligned, none inside", 4*mb + 4096, 2 * mb, 0, 0},
		{"ends on a boundary", 3 * mb, 3 * mb, mb, 3 * mb},
		{"empty", 4 * mb, 0, 0, 0},
	} {
		lo, hi := alignedInterior(tc.p, tc.size)
		if lo != tc.wantLo || hi != tc.wantHi {
			t.Errorf("%s: [%d, %d), want [%d, %d)", tc.name, lo, hi, tc.wantLo, tc.wantHi)
		}
		if hi > lo && ((tc.p+lo)%hugePageBytes != 0 || (tc.p+hi)%hugePageBytes != 0 || hi > tc.size) {
			t.Errorf("%s: [%d, %d) not whole huge pages inside the range", tc.name, lo, hi)
		}
	}
}

// TestMake checks that Make gives what make gives: the length and
// capacity asked for, every element zero, for buffers under and over
// MinBytes.
func TestMake(t *testing.T) {
	for _, tc := range []struct {
		name    string
		n, c    int
		wantCap int
	}{
		{"small", 10, 0, 10},
		{"capacity beyond length", 0, 1 << 20, 1 << 20},
		{"capacity under length", 1 << 20, 5, 1 << 20},
		{"large", 3 << 20, 0, 3 << 20},
	} {
		v := Make[float64](tc.n, tc.c)
		if len(v) != tc.n || cap(v) != tc.wantCap {
			t.Errorf("%s: len %d cap %d, want %d and %d", tc.name, len(v), cap(v), tc.n, tc.wantCap)
		}
		for i, x := range v[:cap(v)] {
			if x != 0 {
				t.Fatalf("%s: element %d is %g, want 0", tc.name, i, x)
			}
		}
	}
	if v := Make[[3]int32](0, 0); v == nil || len(v) != 0 {
		t.Errorf("Make(0, 0) = %v (nil %v), want an empty non-nil slice like make", v, v == nil)
	}
}

// BenchmarkFirstTouch times allocating a 64 MiB buffer and writing it
// once, with make and with Make: the cost the first write's page faults
// add (SetBytes: the buffer's size).
func BenchmarkFirstTouch(b *testing.B) {
	const n = 8 << 20 // float64s: 64 MiB
	for _, bc := range []struct {
		name string
		mk   func() []float64
	}{
		{"make", func() []float64 { return make([]float64, n) }},
		{"Make", func() []float64 { return Make[float64](n, 0) }},
	} {
		b.Run(bc.name, func(b *testing.B) {
			b.SetBytes(8 * n)
			for b.Loop() {
				v := bc.mk()
				for i := range v {
					v[i] = 1
				}
			}
		})
	}
}
