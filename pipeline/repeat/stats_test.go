package repeat

import (
	"errors"
	"math"
	"testing"
)

func near(got, want, tol float64) bool { return math.Abs(got-want) <= tol }

func TestMeanSD(t *testing.T) {
	for _, tc := range []struct {
		name     string
		x        []float64
		mean, sd float64
		tol      float64
	}{
		// statistics.stdev([2,4,4,4,5,5,7,9]) = 2.138089935299395 (Python 3
		// statistics module; also sqrt(32/7), common textbook example).
		{"textbook", []float64{2, 4, 4, 4, 5, 5, 7, 9}, 5, 2.138089935299395, 1e-12},
		// Analytic: two results a apart give s = a/√2.
		{"pair", []float64{0.1495, 0.1502}, 0.14985, 0.0007 / math.Sqrt2, 1e-15},
		// The same values shifted by 1e9: a one-pass sum of squares loses
		// every digit here; the two-pass sum keeps them (analytic).
		{"large offset", []float64{1e9 + 2, 1e9 + 4, 1e9 + 4, 1e9 + 4, 1e9 + 5, 1e9 + 5, 1e9 + 7, 1e9 + 9}, 1e9 + 5, 2.138089935299395, 1e-6},
		{"identical", []float64{3, 3, 3}, 3, 0, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, s, err := MeanSD(tc.x)
			if err != nil {
				t.Fatal(err)
			}
			if !near(m, tc.mean, tc.tol) || !near(s, tc.sd, tc.tol) {
				t.Errorf("MeanSD = %.15g, %.15g; want %.15g, %.15g ± %g", m, s, tc.mean, tc.sd, tc.tol)
			}
		})
	}
}

func TestMeanSDBadInput(t *testing.T) {
	for _, tc := range []struct {
		name string
		x    []float64
	}{
		{"none", nil},
		{"one", []float64{1}},
		{"NaN", []float64{1, math.NaN(), 2}},
		{"Inf", []float64{1, 2, math.Inf(-1)}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if _, _, err := MeanSD(tc.x); err == nil {
				t.Errorf("MeanSD(%v): no error", tc.x)
			}
		})
	}
	if _, _, err := MeanSD([]float64{1}); !errors.Is(err, ErrTooFew) {
		t.Errorf("one value: %v, want ErrTooFew", err)
	}
}

func TestPooled(t *testing.T) {
	for _, tc := range []struct {
		name   string
		groups [][]float64
		sd     float64
		dof    int
	}{
		// Analytic: {1,2,3} has s² = 1 (2 dof), {10,14} s² = 8 (1 dof):
		// s_r² = (2·1 + 1·8)/3 = 10/3.
		{"two bases", [][]float64{{1, 2, 3}, {10, 14}}, math.Sqrt(10.0 / 3), 3},
		// A base with one result carries no freedom and changes nothing.
		{"single left out", [][]float64{{1, 2, 3}, {10, 14}, {100}}, math.Sqrt(10.0 / 3), 3},
		// One base: the pooled value is its own s.
		{"one base", [][]float64{{2, 4, 4, 4, 5, 5, 7, 9}}, 2.138089935299395, 7},
		// Equal sizes pool to the root mean square of the s_i (analytic):
		// {0,2} s² = 2, {0,4} s² = 8 → √5.
		{"equal sizes", [][]float64{{0, 2}, {0, 4}}, math.Sqrt(5), 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, dof, err := Pooled(tc.groups)
			if err != nil {
				t.Fatal(err)
			}
			if !near(s, tc.sd, 1e-12) || dof != tc.dof {
				t.Errorf("Pooled = %.15g (%d dof), want %.15g (%d dof)", s, dof, tc.sd, tc.dof)
			}
		})
	}
	if _, _, err := Pooled([][]float64{{1}, {2}}); !errors.Is(err, ErrTooFew) {
		t.Errorf("only single results: %v, want ErrTooFew", err)
	}
	if _, _, err := Pooled([][]float64{{1, 2}, {1, math.NaN()}}); err == nil {
		t.Error("NaN in a group: no error")
	}
}

func TestChiSquareQuantile(t *testing.T) {
	for _, tc := range []struct {
		p    float64
		dof  int
		want float64
		tol  float64
	}{
		// Standard tables (e.g. Montgomery & Runger, appendix table of
		// chi-square percentage points), from memory, confirmed by scipy:
		// 7 dof, 0.025 → 1.690, 0.975 → 16.013.
		{0.025, 7, 1.690, 5e-4},
		{0.975, 7, 16.013, 5e-4},
		// scipy.stats.chi2.ppf (scipy 1.10.1).
		{0.025, 1, 0.0009820691171752555, 1e-9},
		{0.975, 1, 5.023886187314888, 1e-9},
		{0.025, 2, 0.05063561596857975, 1e-9},
		{0.975, 2, 7.377758908227871, 1e-9},
		{0.5, 2, 1.386294361119891, 1e-9}, // = 2 ln 2 (analytic: 2 dof is exponential with mean 2)
		{0.025, 5, 0.8312116134866625, 1e-9},
		{0.975, 5, 12.832501994030027, 1e-9},
		{0.025, 10, 3.2469727802368413, 1e-9},
		{0.975, 10, 20.483177350807388, 1e-9},
		{0.025, 30, 16.79077226556663, 1e-8},
		{0.975, 30, 46.97924224367115, 1e-8},
		{0.025, 100, 74.22192747492373, 1e-8},
		{0.975, 100, 129.5611971858366, 1e-8},
	} {
		if got := ChiSquareQuantile(tc.p, tc.dof); !near(got, tc.want, tc.tol) {
			t.Errorf("ChiSquareQuantile(%g, %d) = %.15g, want %.15g ± %g", tc.p, tc.dof, got, tc.want, tc.tol)
		}
	}
}

func TestSigmaInterval(t *testing.T) {
	for _, tc := range []struct {
		name   string
		s      float64
		dof    int
		lo, hi float64
		tol    float64
	}{
		// Boost.Math documentation, "Confidence Intervals on the Standard
		// Deviation" (chi-squared examples), its table for a unit standard
		// deviation at 95 %: 8 observations → 0.6612 … 2.0353, 3 → 0.5207
		// … 6.2847, 100 → 0.8780 … 1.1617.
		{"8 observations", 1, 7, 0.6612, 2.0353, 5e-5},
		{"3 observations", 1, 2, 0.5207, 6.2847, 5e-5},
		{"100 observations", 1, 99, 0.8780, 1.1617, 5e-5},
		// The same page's worked example, the gear diameters of the
		// NIST/SEMATECH e-Handbook §1.3.5.8: s = 0.0062789 from 100
		// results → 0.00551 … 0.00729.
		{"NIST gear data", 0.0062789, 99, 0.00551, 0.00729, 5e-6},
		// scipy 1.10.1: sqrt(7/chi2.ppf(0.975,7)), sqrt(7/chi2.ppf(0.025,7)).
		{"scipy 7 dof", 1, 7, 0.6611741488313407, 2.035272090780168, 1e-9},
	} {
		t.Run(tc.name, func(t *testing.T) {
			lo, hi := SigmaInterval(tc.s, tc.dof, 0.95)
			if !near(lo, tc.lo, tc.tol) || !near(hi, tc.hi, tc.tol) {
				t.Errorf("SigmaInterval(%g, %d) = %.9g … %.9g, want %.9g … %.9g ± %g", tc.s, tc.dof, lo, hi, tc.lo, tc.hi, tc.tol)
			}
		})
	}
}

// TestLimitFactor checks r = 2.8 s_r against its origin 1.96·√2 (ISO
// 5725-6; 1.96 the two-sided 95 % normal quantile).
func TestLimitFactor(t *testing.T) {
	if exact := 1.959963984540054 * math.Sqrt2; !near(LimitFactor, exact, 0.03) {
		t.Errorf("LimitFactor %g is not 1.96·√2 = %g rounded", LimitFactor, exact)
	}
}
