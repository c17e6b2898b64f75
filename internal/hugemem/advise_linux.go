package hugemem

import "syscall"

// advise marks b, whole huge pages, with MADV_HUGEPAGE. The advice is
// only a hint: an error (a kernel without transparent huge pages) leaves
// the memory as it was, which is what the caller would have had anyway.
func advise(b []byte) {
	_ = syscall.Madvise(b, syscall.MADV_HUGEPAGE)
}
