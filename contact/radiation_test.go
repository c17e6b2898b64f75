package contact

import (
	"math"
	"testing"

	"gapflux/fluid"
)

func TestRadiation(t *testing.T) {
	// PHYSICS-REFERENCES.md 5.2 [N], 4 significant figures: tolerance half a
	// unit in the last printed digit.
	tests := []struct{ t1, t2, e1, e2, want, tol float64 }{
		{500, 450, 0.9, 0.1, 2.411, 0.0005},
		{500, 450, 0.9, 0.9, 19.94, 0.005},
		{600, 500, 0.9, 0.6, 21.40, 0.005},
		{473.15, 423.15, 0.9, 0.16, 3.219, 0.0005},
		{373.15, 373.15, 1, 1, 11.78, 0.005},
	}
	for _, tt := range tests {
		got := RadiationWM2K(tt.t1, tt.t2, tt.e1, tt.e2)
		if math.Abs(got-tt.want) > tt.tol {
			t.Errorf("h_r(%g, %g, %g, %g) = %.5g, want %.4g", tt.t1, tt.t2, tt.e1, tt.e2, got, tt.want)
		}
		// Symmetric, and h_r·ΔT is the net grey-plate flux.
		if r := RadiationWM2K(tt.t2, tt.t1, tt.e2, tt.e1); rel(r, got) > 1e-14 {
			t.Errorf("not symmetric: %g vs %g", r, got)
		}
		if tt.t1 != tt.t2 {
			q := fluid.StefanBoltzmann * (math.Pow(tt.t1, 4) - math.Pow(tt.t2, 4)) / (1/tt.e1 + 1/tt.e2 - 1)
			if rel(got*(tt.t1-tt.t2), q) > 1e-12 {
				t.Errorf("flux %g vs %g", got*(tt.t1-tt.t2), q)
			}
		}
	}
	// Black bodies at equal T: 4σT³ (item 5.2 row 5).
	if got, want := RadiationWM2K(373.15, 373.15, 1, 1), 4*fluid.StefanBoltzmann*math.Pow(373.15, 3); rel(got, want) > 1e-14 {
		t.Errorf("4σT³: %g vs %g", got, want)
	}
}
