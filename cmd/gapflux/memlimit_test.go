package main

import (
	"math"
	"os"
	"testing"
)

// TestMemoryLimitFor checks the soft memory limit against the analyses it
// is sized for: 224 MiB each (the peak of one 2 M-point analysis, measured;
// see analysisMemoryBytes), none for no analyses, and no overflow for a
// --workers far beyond any machine.
func TestMemoryLimitFor(t *testing.T) {
	t.Setenv("GOMEMLIMIT", "") // restored after the test
	os.Unsetenv("GOMEMLIMIT")
	for _, tc := range []struct {
		analyses int
		want     int64
		set      bool
	}{
		{1, 224 << 20, true},
		{2, 448 << 20, true},
		{0, 0, false},
		{-3, 0, false},
		{math.MaxInt, 1024 * (224 << 20), true},
	} {
		got, set := memoryLimitFor(tc.analyses)
		if set != tc.set || got != tc.want {
			t.Errorf("%d analyses: limit %d (set %v), want %d (set %v)", tc.analyses, got, set, tc.want, tc.set)
		}
	}
}

// TestMemoryLimitLeavesGOMEMLIMIT checks that a GOMEMLIMIT given in the
// environment (the Go runtime's own setting) wins over ours.
func TestMemoryLimitLeavesGOMEMLIMIT(t *testing.T) {
	t.Setenv("GOMEMLIMIT", "1GiB")
	if got, set := memoryLimitFor(2); set {
		t.Errorf("with GOMEMLIMIT set: limit %d set, want none", got)
	}
}
