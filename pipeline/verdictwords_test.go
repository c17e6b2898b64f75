package pipeline

import (
	"strings"
	"testing"

	"gapflux/scan"
)

// TestVerdictLowCentreWords checks that a negative concavity is called
// convex only for a domed base: a base bent about one axis or a saddle has
// its centre below the rim on average without being convex.
func TestVerdictLowCentreWords(t *testing.T) {
	for _, tc := range []struct {
		shape string
		want  string
	}{
		{scan.ShapeDomed, "convex base: concavity -0.200 mm"},
		{scan.ShapeBent, "bent base, centre below the rim on average: concavity -0.200 mm"},
		{scan.ShapeSaddle, "saddle-shaped base, centre below the rim on average"},
	} {
		rep := &Report{Geometry: &GeometryReport{DiameterMM: 180, ConcavityMM: -0.2, ConcavityPctOfDiameter: -0.111, Shape: tc.shape}}
		v := verdict(DefaultJob(), rep)
		if v.Pass || len(v.Reasons) != 1 || !strings.HasPrefix(v.Reasons[0], tc.want) {
			t.Errorf("%s: reasons %q, want one starting %q", tc.shape, v.Reasons, tc.want)
		}
	}
}

// TestSignedFixed: the summary's concavity line shows a sign, except on a
// value that rounds to zero (it read "-0.000 mm = +0.000 %").
func TestSignedFixed(t *testing.T) {
	for _, tc := range []struct {
		v    float64
		want string
	}{{0.4, "+0.400"}, {-0.25, "-0.250"}, {-0.0002, "0.000"}, {0.0004, "0.000"}, {0, "0.000"}, {-0.0005001, "-0.001"}} {
		if got := signedFixed(tc.v, 3); got != tc.want {
			t.Errorf("signedFixed(%g, 3) = %q, want %q", tc.v, got, tc.want)
		}
	}
}
