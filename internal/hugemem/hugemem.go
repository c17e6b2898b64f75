// Package hugemem makes large buffers that the operating system may back
// with transparent huge pages.
//
// The first write to a page of fresh memory costs the kernel a page fault.
// With 4 KiB pages a 2 M-point scan faults some 60 000 times on its way
// through reading, levelling and gridding, and on a virtual machine each
// fault costs several microseconds: a fifth of the analysis's wall time on
// the machine of the README's performance table. A 2 MiB page takes one
// fault where 4 KiB pages take 512. Linux gives huge pages to the memory a
// program marks with madvise(MADV_HUGEPAGE) when
// /sys/kernel/mm/transparent_hugepage/enabled reads "madvise" (Debian's
// and Ubuntu's default) or "always"; the Go runtime does not mark its heap
// (Go 1.21.1 and later), so a buffer is marked here, right after it is
// allocated and before it is first written.
//
// The advice changes no value: a marked buffer holds what make would give.
// Elsewhere than Linux, when huge pages are off, or for buffers under
// MinBytes, Make is plain make.
package hugemem

import "unsafe"

// MinBytes is the smallest buffer Make marks: one huge page. Only the
// whole aligned huge pages inside a buffer are marked, so a buffer under
// two huge pages gains one or none, as its address falls.
const MinBytes = hugePageBytes

// hugePageBytes is the size of an x86-64 and arm64 (4 KiB base page)
// transparent huge page, 2 MiB.
const hugePageBytes = 2 << 20

// Make returns make([]T, n, c) (c < n means c = n) and, when its backing
// array spans at least MinBytes, asks the operating system to back the
// whole huge pages inside the array with huge pages.
func Make[T any](n, c int) []T {
	v := make([]T, n, max(n, c))
	Advise(v)
	return v
}

// Advise asks the operating system to back the whole huge pages inside
// v's backing array (up to its capacity) with huge pages, when the array
// spans at least MinBytes. It is meant for arrays not yet written: memory
// already faulted in keeps its small pages until the kernel's background
// collapse (if any) merges them.
func Advise[T any](v []T) {
	c := cap(v)
	var zero T
	size := uintptr(c) * unsafe.Sizeof(zero)
	if size < MinBytes {
		return
	}
	base := unsafe.Pointer(unsafe.SliceData(v[:c]))
	lo, hi := alignedInterior(uintptr(base), size)
	if hi <= lo {
		return
	}
	advise(unsafe.Slice((*byte)(unsafe.Add(base, lo)), hi-lo))
}

// alignedInterior returns the offsets [lo, hi) from p of the whole
// hugePageBytes-aligned pages inside [p, p+size).
func alignedInterior(p, size uintptr) (lo, hi uintptr) {
	lo = (hugePageBytes - p%hugePageBytes) % hugePageBytes
	hi = (p+size)/hugePageBytes*hugePageBytes - p
	if hi <= lo {
		return 0, 0
	}
	return lo, hi
}
