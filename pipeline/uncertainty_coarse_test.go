package pipeline

import (
	"context"
	"math"
	"testing"

	"gapflux/scan"
	"gapflux/scan/synth"
	"gapflux/thermal"
)

// TestDecimate: a coarse cell is the f×f block of fine cells from
// (f·i + ox, f·j + oy), at the block's centre; it is in the base when at
// least half the block is, with the lowest height of the block's base
// cells, Measured when any of them is; f = 1 is the grid itself.
func TestDecimate(t *testing.T) {
	s := scan.NewSurface(7, 5, 0.001, -0.003, -0.002)
	for k := range s.ZM {
		s.ZM[k], s.State[k] = float64((k*37)%11), scan.CellState(k%3)
	}
	for _, tc := range []struct{ f, ox, oy, nx, ny int }{{2, 0, 0, 3, 2}, {2, 1, 1, 3, 2}, {3, 1, 0, 2, 1}} {
		c := decimate(s, tc.f, tc.ox, tc.oy)
		if c.Nx != tc.nx || c.Ny != tc.ny || c.CellM != float64(tc.f)*s.CellM {
			t.Fatalf("f %d offset (%d, %d): %d×%d cells of %g m, want %d×%d", tc.f, tc.ox, tc.oy, c.Nx, c.Ny, c.CellM, tc.nx, tc.ny)
		}
		for j := range c.Ny {
			for i := range c.Nx {
				in, measured, z, cx, cy := 0, false, math.Inf(1), 0.0, 0.0
				for b := range tc.f * tc.f {
					fi, fj := tc.f*i+tc.ox+b%tc.f, tc.f*j+tc.oy+b/tc.f
					cx, cy = cx+s.X(fi), cy+s.Y(fj)
					k := s.Index(fi, fj)
					if s.State[k] != scan.Outside {
						in++
						z = math.Min(z, s.ZM[k])
						measured = measured || s.State[k] == scan.Measured
					}
				}
				n := float64(tc.f * tc.f)
				q := c.Index(i, j)
				want := scan.Outside
				if 2*in >= tc.f*tc.f {
					want = scan.Filled
					if measured {
						want = scan.Measured
					}
				}
				if c.State[q] != want || want != scan.Outside && c.ZM[q] != z ||
					math.Abs(c.X(i)-cx/n) > 1e-12 || math.Abs(c.Y(j)-cy/n) > 1e-12 {
					t.Errorf("f %d offset (%d, %d): coarse cell (%d, %d) at (%g, %g) state %v height %g; want (%g, %g) %v %g",
						tc.f, tc.ox, tc.oy, i, j, c.X(i), c.Y(j), c.State[q], c.ZM[q], cx/n, cy/n, want, z)
				}
			}
		}
	}
	if decimate(s, 1, 0, 0) != s {
		t.Error("f = 1 should return the grid itself")
	}
}

// TestCoarseTrialsUnbiased: trials on a grid twice as coarse, shifted by
// the fine-less-coarse nominal difference (trialRunner), give the same
// loss_pct uncertainty as trials on the analysis grid. Both runs use the
// same seed and the same draws (the coarse grid's placement is not drawn,
// so the random streams agree), so the comparison is paired: what differs
// is the grid alone. Tolerances (ours): the trials' mean within a quarter
// of u (a bias of u/4 moves a 95 % interval by an eighth of its
// half-width, 2u) and u within
// 25 % (the relative standard error of u from 20 independent trials is
// √(1/38) ≈ 16 %; paired trials agree much closer than that unless the
// grid itself moves the figures). Heater mode, the
// default job, a 120 mm dish at 1 mm cells; concavity_mm is measured on the
// analysis grid by both and must agree exactly.
func TestCoarseTrialsUnbiased(t *testing.T) {
	if testing.Short() {
		t.Skip("two Monte Carlo evaluations: about half a minute")
	}
	dir := t.TempDir()
	path := writeSynth(t, dir, "dish", synth.Spec{Shape: synth.Dish, DiameterM: 0.12, SagM: 0.3e-3,
		NoiseM: 8e-6, SpacingM: 1e-3, Seed: 7}, synth.Encoding{Format: "ply", Binary: true})
	for _, tc := range []struct {
		name    string
		hobWide bool
	}{
		{"hob settings drawn", true},            // the limiter's kink dominates: u ≈ 2.4 points
		{"hob settings exact (default)", false}, // noise, radius and properties: u ≈ 0.1 points
	} {
		t.Run(tc.name, func(t *testing.T) {
			var got [2]*UncertaintyReport
			for i, f := range []int{1, 2} {
				job := DefaultJob()
				job.Grid.CellMM = 1
				u := &job.Uncertainty
				u.Mode, u.MaxTrials, u.TrialCoarsen, u.GridPlacement = "fast", 20, f, false
				if tc.hobWide { // widths of our own, as in the README's example
					u.LimiterK, u.GlassTau, u.PowerPct, u.PlacementMM = 15, 0.05, 5, 5
				}
				res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: "dish", Job: job})
				if err != nil {
					t.Fatal(err)
				}
				if got[i] = res.Report.Uncertainty; got[i] == nil || got[i].LossPct == nil {
					t.Fatalf("coarsen %d: no uncertainty of loss_pct", f)
				}
			}
			fine, coarse := got[0].LossPct, got[1].LossPct
			t.Logf("loss_pct: fine trials mean %.4g u %.4g [%.4g, %.4g]; coarse trials mean %.4g u %.4g [%.4g, %.4g]; nominal %.4g",
				fine.mean, fine.U, fine.Low, fine.High, coarse.mean, coarse.U, coarse.Low, coarse.High, fine.Value)
			if math.Abs(coarse.mean-fine.mean) > 0.25*fine.U {
				t.Errorf("coarse trials' mean %.4g against the fine trials' %.4g: more than u/4 = %.3g apart", coarse.mean, fine.mean, 0.25*fine.U)
			}
			if r := coarse.U / fine.U; r < 0.75 || r > 1.25 {
				t.Errorf("coarse trials' u %.4g against the fine trials' %.4g: ratio %.2f outside [0.75, 1.25]", coarse.U, fine.U, r)
			}
			if got[0].ConcavityMM.U != got[1].ConcavityMM.U {
				t.Errorf("concavity_mm u %g and %g: it is measured on the analysis grid by both", got[0].ConcavityMM.U, got[1].ConcavityMM.U)
			}
		})
	}
}

// TestFlatReuse: the flat twin's solve at a water temperature runs once
// per set of flat-twin inputs; a trial that draws property values or a
// pan placement gets no reuse.
func TestFlatReuse(t *testing.T) {
	tr := &trialRunner{inputs: []mcInput{
		{UncertaintyInput: UncertaintyInput{Key: "uncertainty.radius_mm", Nominal: 80}},
		{UncertaintyInput: UncertaintyInput{Key: "uncertainty.pan_sq_pct", Nominal: 1}},
	}, flatReuse: map[string]*flatReuse{}}
	r := tr.flatFor([]float64{80.1, 1}, trialDraw{phase: 1})
	if r == nil || tr.flatFor([]float64{79.9, 1}, trialDraw{phase: 1}) != r {
		t.Fatal("a radius draw should share the flat twin of its placement")
	}
	if tr.flatFor([]float64{80, 1}, trialDraw{phase: 0}) == r {
		t.Error("another grid placement shares the flat twin")
	}
	if tr.flatFor([]float64{80, 1.1}, trialDraw{phase: 1}) != nil || tr.flatFor([]float64{80, 1}, trialDraw{phase: 1, placeM: [2]float64{1e-3, 0}}) != nil {
		t.Error("a property or pan placement draw should get no reuse")
	}
	calls := 0
	solve := func() (*thermal.Solution, error) { calls++; return &thermal.Solution{PowerW: float64(calls)}, nil }
	for _, tK := range []float64{333.15, 293.15, 333.15, 293.15} {
		if _, err := r.solve(tK, solve); err != nil {
			t.Fatal(err)
		}
	}
	if s, _ := r.solve(333.15, solve); calls != 2 || s.PowerW != 1 {
		t.Errorf("%d solves for two water temperatures; the first gave power %g, want 1", calls, s.PowerW)
	}
}
