package pipeline

import (
	"context"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestMonteCarloAdditiveModel reproduces the additive model of JCGM
// 101:2008 §9.2 (Y = X1 + X2 + X3 + X4): with each X_i normal, N(0, 1)
// (§9.2.2), the GUM law of propagation gives u(y) = 2 and the 95 %
// interval ±1.96·2 = ±3.92; with each X_i rectangular of standard
// uncertainty 1 (§9.2.3), u(y) = 2 again, and JCGM 101 Table 3 gives the
// Monte Carlo interval ±3.88 (the output is slightly shorter-tailed than a
// normal). The engine must reproduce u and both endpoints within its
// stated numerical tolerance δ (JCGM 101 §7.9.2 with one significant digit
// of u: δ = 0.5 for u = 2) once it reports convergence; the cap is set
// high enough that it does.
func TestMonteCarloAdditiveModel(t *testing.T) {
	for _, tc := range []struct {
		name     string
		rect     bool
		width    float64
		wantHalf float64
	}{
		{"normal §9.2.2", false, 1, 3.92},
		{"rectangular §9.2.3", true, math.Sqrt(3), 3.88},
	} {
		t.Run(tc.name, func(t *testing.T) {
			inputs := make([]mcInput, 4)
			for i := range inputs {
				inputs[i] = mcInput{rect: tc.rect}
				inputs[i].Width = tc.width
			}
			rng := rand.New(rand.NewPCG(1, mcStream))
			ys, _, converged, delta, err := monteCarlo(context.Background(), rng, inputs, 10000,
				func(x []float64) ([nFig]float64, error) {
					var y [nFig]float64
					y[figLoss] = x[0] + x[1] + x[2] + x[3]
					return y, nil
				})
			if err != nil {
				t.Fatal(err)
			}
			if !converged {
				t.Fatalf("not converged after %d trials", len(ys))
			}
			f := figureStats(ys, figLoss, 0, delta[figLoss])
			t.Logf("u = %.3f, interval [%.3f, %.3f], %d trials", f.U, f.Low, f.High, f.Trials)
			tol := f.Tolerance
			if tol != 0.5 {
				t.Errorf("tolerance δ = %g, want 0.5 for u = 2 at one significant digit", tol)
			}
			if math.Abs(f.U-2) > tol || math.Abs(f.Low+tc.wantHalf) > tol || math.Abs(f.High-tc.wantHalf) > tol {
				t.Errorf("u = %.3f, interval [%.3f, %.3f] after %d trials; want 2, ±%.2f within δ = %g",
					f.U, f.Low, f.High, f.Trials, tc.wantHalf, tol)
			}
			if f.Trials > 2000 {
				t.Errorf("%d trials: the adaptive rule should stop near 460 for δ = u/4", f.Trials)
			}
		})
	}
}

// TestCoverageInterval checks the probabilistically symmetric interval of
// JCGM 101 §7.7.2 on the integers 1..M.
func TestCoverageInterval(t *testing.T) {
	for _, tc := range []struct {
		m         int
		low, high float64
	}{
		{100, 3, 98},    // q = 95, r = 3 (M − q odd: (M − q + 1)/2)
		{200, 5, 195},   // q = 190, r = (M − q)/2 = 5
		{40, 1, 39},     // q = 38, r = 1
		{1000, 25, 975}, // q = 950, r = 25
		{30, 1, 30},     // q = 29 (28.5 rounded up), r = 1
	} {
		v := make([]float64, tc.m)
		for i := range v {
			v[i] = float64(i + 1)
		}
		lo, hi := coverageInterval(v, 0.95)
		if lo != tc.low || hi != tc.high {
			t.Errorf("M = %d: [%g, %g], want [%g, %g]", tc.m, lo, hi, tc.low, tc.high)
		}
	}
}

// TestDecisionRule: guarded acceptance on a loss at the limit ± a
// fraction of U is inconclusive, well inside passes, well outside fails;
// simple acceptance and uncertainty off judge the value alone.
func TestDecisionRule(t *testing.T) {
	const limit, U = 10.0, 0.8 // loss limit and expanded uncertainty, %
	for _, tc := range []struct {
		name     string
		loss     float64
		decision string
		off      bool
		want     string
		status   string
	}{
		{"at the limit", limit, "guarded", false, ResultInconclusive, StatusInconclusive},
		{"limit - U/2", limit - U/2, "guarded", false, ResultInconclusive, StatusInconclusive},
		{"limit + U/2", limit + U/2, "guarded", false, ResultInconclusive, StatusInconclusive},
		{"well inside", limit - 3*U, "guarded", false, ResultPass, StatusOK},
		{"well outside", limit + 3*U, "guarded", false, ResultFail, StatusOut},
		{"simple, limit - U/2", limit - U/2, "simple", false, ResultPass, StatusOK},
		{"simple, limit + U/2", limit + U/2, "simple", false, ResultFail, StatusOut},
		{"off, limit - U/2", limit - U/2, "guarded", true, ResultPass, StatusOK},
	} {
		t.Run(tc.name, func(t *testing.T) {
			job := DefaultJob()
			job.Tolerances.LossMaxPct = limit
			job.Uncertainty.Decision = tc.decision
			rep := &Report{Heat: &HeatReport{LossPct: tc.loss}}
			if !tc.off {
				rep.Uncertainty = &UncertaintyReport{LossPct: &FigureUncertainty{Value: tc.loss, U: U / 2, Low: tc.loss - U, High: tc.loss + U}}
			}
			v := decide(job, rep)
			if v.Result != tc.want || v.Pass != (tc.want == ResultPass) {
				t.Errorf("result %q pass %v, want %q (reasons %q)", v.Result, v.Pass, tc.want, v.Reasons)
			}
			if tc.off && v.Rule != ruleSimpleOff || !tc.off && tc.decision == "simple" && v.Rule != ruleSimple {
				t.Errorf("rule %q", v.Rule)
			}
			rep.Verdict = v
			if row := RowFromReport("x", rep); row.Status != tc.status {
				t.Errorf("summary status %q, want %q", row.Status, tc.status)
			}
		})
	}
}

// TestUncertaintyText: the summary gives value ± U with U = 2u to two
// significant digits and the value to the same decimal place.
func TestUncertaintyText(t *testing.T) {
	u := &UncertaintyReport{Trials: 40, Mode: "fast", MaxTrials: 40, Converged: true,
		ConcavityMM: &FigureUncertainty{Value: 0.29964, U: 0.000305, Low: 0.29903, High: 0.30021},
		LossPct:     &FigureUncertainty{Value: 18.064, U: 1.133, Low: 15.9, High: 20.3}}
	got := uncertaintyText(u)
	for _, want := range []string{"concavity 0.29964 ± 0.00061 mm [0.29903, 0.30021]", "loss 18.1 ± 2.3 % [15.9, 20.3]"} {
		if !strings.Contains(got, want) {
			t.Errorf("summary lacks %q:\n%s", want, got)
		}
	}
	if uncertaintyText(nil) != "" {
		t.Error("no section should print nothing")
	}
}

// TestDecisionReasonDigits: a guarded reason prints the value and its
// interval to the decimal place of two significant digits of U, as the
// summary does (JCGM 100 §7.2.6), not to six digits.
func TestDecisionReasonDigits(t *testing.T) {
	job := DefaultJob()
	job.Tolerances.LossMaxPct = 10
	rep := &Report{Heat: &HeatReport{LossPct: 8.649},
		Uncertainty: &UncertaintyReport{LossPct: &FigureUncertainty{Value: 8.649, U: 1.1, Low: 6.43389, High: 10.3427}}}
	v := decide(job, rep)
	want := "loss_pct 8.6 %: its 95 % interval [6.4, 10.3] straddles the max 10 % (inconclusive)"
	if len(v.Reasons) != 1 || v.Reasons[0] != want {
		t.Errorf("reasons %q, want [%q]", v.Reasons, want)
	}
}
