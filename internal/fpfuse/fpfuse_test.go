package fpfuse

import (
	"runtime"
	"testing"
)

// TestFuses: on amd64 the probe is fused exactly when the build targets
// GOAMD64=v3 or later, which has the FMA instructions; other
// architectures are reported, not asserted.
func TestFuses(t *testing.T) {
	if runtime.GOARCH == "amd64" && Fuses() != amd64v3 {
		t.Errorf("amd64, v3 build %v: Fuses() = %v", amd64v3, Fuses())
	}
	t.Logf("GOARCH %s, fuses %v", runtime.GOARCH, Fuses())
}
