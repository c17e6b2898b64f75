package hugemem

import (
	"bufio"
	"fmt"
	"os"
	"strconv"
	"strings"
	"testing"
	"unsafe"
)

// TestAdviseMarksMapping checks, in /proc/self/smaps (Linux, proc(5)),
// that the mapping holding a large buffer from Make carries the kernel's
// "hg" flag (MADV_HUGEPAGE). Whether the kernel then found free huge pages
// for it is logged, not asserted: a fragmented machine may fall back to
// small pages, which only costs time.
func TestAdviseMarksMapping(t *testing.T) {
	mode, err := os.ReadFile("/sys/kernel/mm/transparent_hugepage/enabled")
	if err != nil {
		t.Skipf("no transparent huge pages here: %v", err)
	}
	v := Make[byte](16<<20, 0)
	for i := range v {
		v[i] = 1
	}
	addr := uintptr(unsafe.Pointer(&v[8<<20]))
	flags, hugeKB, err := mappingOf(addr)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("THP mode %q; mapping flags %q, AnonHugePages %d kB", strings.TrimSpace(string(mode)), flags, hugeKB)
	if !strings.Contains(" "+flags+" ", " hg ") {
		t.Errorf("the 16 MiB buffer's mapping has flags %q, want hg (MADV_HUGEPAGE)", flags)
	}
}

// mappingOf returns the VmFlags and the AnonHugePages (kB) of the mapping
// of /proc/self/smaps holding addr.
func mappingOf(addr uintptr) (flags string, hugeKB int, err error) {
	f, err := os.Open("/proc/self/smaps")
	if err != nil {
		return "", 0, err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	in := false
	for sc.Scan() {
		line := sc.Text()
		fields := strings.Fields(line)
		if len(fields) == 0 {
			continue
		}
		if lo, hi, ok := span(fields[0]); ok {
			in = addr >= lo && addr < hi
			continue
		}
		if !in {
			continue
		}
		switch fields[0] {
		case "AnonHugePages:":
			hugeKB, _ = strconv.Atoi(fields[1])
		case "VmFlags:":
			return strings.Join(fields[1:], " "), hugeKB, nil
		}
	}
	if err := sc.Err(); err != nil {
		return "", 0, err
	}
	return "", 0, fmt.Errorf("no mapping of /proc/self/smaps holds %#x", addr)
}

// span parses a mapping's "lo-hi" address range (hexadecimal).
func span(s string) (lo, hi uintptr, ok bool) {
	a, b, found := strings.Cut(s, "-")
	if !found {
		return 0, 0, false
	}
	l, err1 := strconv.ParseUint(a, 16, 64)
	h, err2 := strconv.ParseUint(b, 16, 64)
	if err1 != nil || err2 != nil {
		return 0, 0, false
	}
	return uintptr(l), uintptr(h), true
}
