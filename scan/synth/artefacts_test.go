package synth_test

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/scan/synth"
)

// TestConeTruth checks the cone's closed-form concavity and flatness against
// a discrete least-squares paraboloid over the sampled disc.
func TestConeTruth(t *testing.T) {
	for _, r0 := range []float64{0, 0.03, 0.08} {
		s := baseSpec(synth.Cone, 10e-3)
		s.SpacingM = 1e-3
		s.ConeStartM = r0
		sc, err := synth.Generate(s)
		if err != nil {
			t.Fatal(err)
		}
		c := fitParaboloid(t, sc.Cloud.Points)
		conc := -c[3] * 0.1 * 0.1 * 1e3
		// The 1 mm lattice sampling of a kinked form moves the discrete
		// fit off the continuous one by about (h/R)² of S; 0.5 % of S is
		// ample and far below the error of a wrong closed form (0.1 % of S
		// is used).
		t.Logf("r0 %g: fitted %.5f mm, truth %.5f mm", r0, conc, sc.Truth.ConcavityMM)
		if math.Abs(conc-sc.Truth.ConcavityMM) > 0.01 {
			t.Errorf("r0 %g: fitted concavity %.4f mm, truth %.4f mm", r0, conc, sc.Truth.ConcavityMM)
		}
		// The flatness of a cone is its rim lift.
		if sc.Truth.FlatnessMM != 10 || sc.Truth.ConeStartMM == 0 {
			t.Errorf("r0 %g: flatness %g mm, cone start %g mm", r0, sc.Truth.FlatnessMM, sc.Truth.ConeStartMM)
		}
		for _, p := range sc.Cloud.Points {
			r := math.Hypot(p.X, p.Y)
			want := 0.0
			start := sc.Truth.ConeStartMM / 1e3
			if r > start {
				want = 10e-3 * (r - start) / (0.1 - start)
			}
			if math.Abs(p.Z-want) > 1e-12 {
				t.Fatalf("z(%g, %g) = %g, want %g", p.X, p.Y, p.Z, want)
			}
		}
	}
}

// TestFormTurn checks that a turned bend raises the rim along the turn
// direction and stays straight along its axis.
func TestFormTurn(t *testing.T) {
	s := baseSpec(synth.Bend, 0.4e-3)
	s.SpacingM = 2e-3
	s.FormTurnDeg = 30
	sc, err := synth.Generate(s)
	if err != nil {
		t.Fatal(err)
	}
	if a := sc.Truth.BendAxisDeg; a == nil || *a != 120 {
		t.Fatalf("bend axis %v, want 120°", a)
	}
	sn, cs := math.Sincos(math.Pi / 6)
	for _, p := range sc.Cloud.Points {
		u := p.X*cs + p.Y*sn // along the raised direction
		if want := 0.4e-3 * u * u / 0.01; math.Abs(p.Z-want) > 1e-12 {
			t.Fatalf("z(%g, %g) = %g, want %g", p.X, p.Y, p.Z, want)
		}
	}
}

// TestStreaksAndSpikes checks the listed outliers: their count, that each
// is displaced from the exact (flat) form by the stated height range, and
// that every other point is not.
func TestStreaksAndSpikes(t *testing.T) {
	s := baseSpec(synth.Flat, 0)
	s.SpacingM = 0.8e-3
	s.SpikeFraction = 0.005
	s.SpikeMinM, s.SpikeMaxM = 0.3e-3, 2e-3
	s.Streaks, s.StreakLengthM = 20, 4e-3
	sc, err := synth.Generate(s)
	if err != nil {
		t.Fatal(err)
	}
	tr := sc.Truth
	if !slices.IsSorted(sc.Outliers) {
		t.Error("outlier indices not sorted")
	}
	// A 4 mm streak over a 0.8 mm lattice with a 0.8 mm wide band holds
	// about 4/0.8 = 5 points; 20 streaks about 100 (some overlap spikes).
	if tr.StreakPoints < 50 || tr.StreakPoints > 200 || tr.Streaks != 20 || tr.StreakLengthMM != 4 {
		t.Errorf("streaks %d, %d points, length %g mm", tr.Streaks, tr.StreakPoints, tr.StreakLengthMM)
	}
	if n := len(sc.Outliers); n < tr.StreakPoints || n > tr.StreakPoints+tr.Spikes {
		t.Errorf("%d outliers listed, spikes %d, streak points %d", n, tr.Spikes, tr.StreakPoints)
	}
	if tr.SpikeMinMM != 0.3 || tr.SpikeMaxMM != 2 {
		t.Errorf("spike range %g … %g mm", tr.SpikeMinMM, tr.SpikeMaxMM)
	}
	isOut := make([]bool, len(sc.Cloud.Points))
	for _, i := range sc.Outliers {
		isOut[i] = true
	}
	for i, p := range sc.Cloud.Points {
		d := math.Abs(p.Z)
		if isOut[i] && (d < 0.3e-3-1e-12 || d > 4e-3) { // a streak over a spike may add two heights
			t.Errorf("outlier %d lifted by %g m", i, p.Z)
		}
		if !isOut[i] && d != 0 {
			t.Errorf("point %d lifted by %g m but not listed", i, p.Z)
		}
	}
}

// nnMedian returns the median nearest-neighbour distance of pts (brute
// force over a sorted x order; test sizes only).
func nnMedian(pts []r3.Vec) float64 {
	p := slices.Clone(pts)
	slices.SortFunc(p, func(a, b r3.Vec) int { return cmpF(a.X, b.X) })
	d := make([]float64, len(p))
	for i := range p {
		best := math.Inf(1)
		for j := i - 1; j >= 0 && p[i].X-p[j].X < best; j-- {
			best = min(best, math.Hypot(p[i].X-p[j].X, p[i].Y-p[j].Y))
		}
		for j := i + 1; j < len(p) && p[j].X-p[i].X < best; j++ {
			best = min(best, math.Hypot(p[i].X-p[j].X, p[i].Y-p[j].Y))
		}
		d[i] = best
	}
	slices.Sort(d)
	return d[len(d)/2]
}

func cmpF(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// TestJitter checks that a jittered cloud keeps its density (points per
// area within 2 %) and that its points are no longer on the lattice.
func TestJitter(t *testing.T) {
	s := baseSpec(synth.Flat, 0)
	s.DiameterM = 0.06
	s.SpacingM = 1e-3
	s.JitterFraction = 0.8
	sc, err := synth.Generate(s)
	if err != nil {
		t.Fatal(err)
	}
	want := math.Pi * 0.03 * 0.03 / 1e-6 // points per disc at 1 mm spacing
	if n := float64(len(sc.Cloud.Points)); math.Abs(n-want) > 0.02*want {
		t.Errorf("%g points, want about %g", n, want)
	}
	// Median nearest neighbour of a ±0.4 h jittered lattice: between the
	// lattice's h and about 0.6 h (simulated, our own).
	if m := nnMedian(sc.Cloud.Points); m < 0.55e-3 || m > 0.95e-3 {
		t.Errorf("median nearest neighbour %g m", m)
	}
	if sc.Truth.JitterFraction != 0.8 {
		t.Errorf("truth jitter %g", sc.Truth.JitterFraction)
	}
}

// TestListedHolesAndSectors checks that listed holes and sectors are empty
// and that points just outside them remain.
func TestListedHolesAndSectors(t *testing.T) {
	s := baseSpec(synth.Flat, 0)
	s.SpacingM = 1e-3
	s.CornerRadiusM, s.WallHeightM = 3e-3, 10e-3
	s.HoleList = []synth.Hole{{XM: 0.03, YM: -0.02, DiameterM: 0.04}}
	s.Sectors = []synth.Sector{{FromDeg: 350, ToDeg: 440, InnerM: 0.09}} // 90° across +x
	sc, err := synth.Generate(s)
	if err != nil {
		t.Fatal(err)
	}
	var nearHole, nearSector int
	for _, p := range sc.Cloud.Points {
		dh := math.Hypot(p.X-0.03, p.Y+0.02)
		if dh < 0.02 {
			t.Fatalf("point (%g, %g) inside the hole", p.X, p.Y)
		}
		if dh < 0.022 {
			nearHole++
		}
		r := math.Hypot(p.X, p.Y)
		a := math.Atan2(p.Y, p.X) * 180 / math.Pi
		if r >= 0.09 && (a >= -10 && a < 80) {
			t.Fatalf("point (%g, %g, %g) inside the sector", p.X, p.Y, p.Z)
		}
		if r > 0.085 && r < 0.09 && a >= -10 && a < 80 {
			nearSector++
		}
	}
	if nearHole < 100 || nearSector < 100 {
		t.Errorf("%d points by the hole, %d inside the sector's inner radius", nearHole, nearSector)
	}
	if len(sc.Truth.HoleList) != 1 || sc.Truth.HoleList[0].DiameterMM != 40 || len(sc.Truth.Sectors) != 1 {
		t.Errorf("truth holes %+v sectors %+v", sc.Truth.HoleList, sc.Truth.Sectors)
	}
}

func TestBadArtefactSpec(t *testing.T) {
	for name, mod := range map[string]func(*synth.Spec){
		"cone start at rim": func(s *synth.Spec) { s.Shape = synth.Cone; s.ConeStartM = 0.1 },
		"spike min > max":   func(s *synth.Spec) { s.SpikeMinM, s.SpikeMaxM = 2e-3, 1e-3 },
		"negative streaks":  func(s *synth.Spec) { s.Streaks = -1 },
		"jitter > 1":        func(s *synth.Spec) { s.JitterFraction = 1.5 },
		"hole outside":      func(s *synth.Spec) { s.HoleList = []synth.Hole{{XM: 0.2, DiameterM: 0.01}} },
		"hole size 0":       func(s *synth.Spec) { s.HoleList = []synth.Hole{{DiameterM: 0}} },
		"empty sector":      func(s *synth.Spec) { s.Sectors = []synth.Sector{{FromDeg: 10, ToDeg: 10}} },
		"NaN turn":          func(s *synth.Spec) { s.FormTurnDeg = math.NaN() },
		"hole over base":    func(s *synth.Spec) { s.HoleList = []synth.Hole{{DiameterM: 0.5}} },
	} {
		s := baseSpec(synth.Flat, 0)
		mod(&s)
		if _, err := synth.Generate(s); !errors.Is(err, synth.ErrSpec) {
			t.Errorf("%s: err %v, want ErrSpec", name, err)
		}
	}
}

// TestSpecErrorsInMillimetres checks that spec errors speak the flags' units
// (mm and µm), not the spec's metres.
func TestSpecErrorsInMillimetres(t *testing.T) {
	for _, tc := range []struct {
		name string
		mod  func(*synth.Spec)
		want string
	}{
		{"sag", func(s *synth.Spec) { s.SagM = 0.2 }, "sag 200 mm is more than a quarter of the diameter"},
		{"spacing", func(s *synth.Spec) { s.SpacingM = 0.1 }, "spacing 100 mm, want > 0 and at most a quarter of the diameter (50 mm)"},
		{"hole", func(s *synth.Spec) { s.HoleList = []synth.Hole{{DiameterM: 0.5}} }, "a 500 mm hole at (0, 0) mm covers the whole 200 mm base"},
		{"points", func(s *synth.Spec) { s.SpacingM = 1e-5 }, "at 0.01 mm spacing on a 200 mm base"},
	} {
		s := baseSpec(synth.Flat, 0)
		tc.mod(&s)
		_, err := synth.Generate(s)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err %v, want it to contain %q", tc.name, err, tc.want)
		}
	}
}
