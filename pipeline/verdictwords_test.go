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
