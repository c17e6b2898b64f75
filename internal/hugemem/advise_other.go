//go:build !linux

package hugemem

// advise does nothing where madvise(MADV_HUGEPAGE) does not exist.
func advise(b []byte) {}
