package contact

import (
	"math"
	"testing"
)

func TestHollandsNusselt(t *testing.T) {
	// PHYSICS-REFERENCES.md 9.2 / summary #9 [N], Hollands et al. (1975).
	tests := []struct{ ra, want float64 }{
		{-100, 1}, {0, 1}, {1000, 1}, {1708, 1.000}, {5000, 1.948}, {1e4, 2.391},
		{1e5, 3.994}, {1e6, 6.994}, {1e7, 13.41},
	}
	for _, tt := range tests {
		if got := HollandsNusselt(tt.ra); math.Abs(got-tt.want) > 0.5e-3*max(1, tt.want/10) {
			t.Errorf("Nu(%g) = %.4f, want %.4g", tt.ra, got, tt.want)
		}
	}
	// Continuous at onset.
	if got := HollandsNusselt(1708 * (1 + 1e-9)); math.Abs(got-1) > 1e-8 {
		t.Errorf("Nu just above onset = %g", got)
	}
}

func TestLayerRayleigh(t *testing.T) {
	// PHYSICS-REFERENCES.md 4.4 [N]: air at 450 K, ΔT = 50 K: Ra = 0.089,
	// 0.71, 5.7 and 89 for gaps of 0.5, 1, 2 and 5 mm (2 significant figures).
	tests := []struct{ gapM, want float64 }{
		{0.5e-3, 0.089}, {1e-3, 0.71}, {2e-3, 5.7}, {5e-3, 89},
	}
	for _, tt := range tests {
		got, err := LayerRayleigh(tt.gapM, 475, 425)
		if err != nil {
			t.Fatal(err)
		}
		if rel(got, tt.want) > 0.01 {
			t.Errorf("Ra(%g m) = %.4g, want %.2g", tt.gapM, got, tt.want)
		}
		// Heated from above: negative, stable.
		if neg, _ := LayerRayleigh(tt.gapM, 425, 475); rel(neg, -got) > 1e-12 {
			t.Errorf("Ra reversed = %g, want %g", neg, -got)
		}
	}
	if _, err := LayerRayleigh(1e-3, 1400, 1200); err == nil {
		t.Error("no error for a film temperature beyond the air table")
	}
}
