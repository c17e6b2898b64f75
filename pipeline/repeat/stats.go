// Package repeat is the repeatability study of a measurement: n results of
// one figure on one base, taken under repeatability conditions (one
// procedure, one instrument and operator, a short time; ISO 5725-1),
// give the repeatability standard deviation s_r (ISO 5725-2), the
// repeatability limit r = 2.8·s_r (ISO 5725-6) and a test of whether
// the standard uncertainties the results carry cover the spread observed.
// Several bases measured that way pool into one s_r with its degrees of
// freedom. The package knows nothing of scans or reports: it takes values.
package repeat

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// LimitFactor is the factor from s_r to the repeatability limit r: the
// absolute difference of two results that is exceeded with probability
// 5 %, 1.96·√2 ≈ 2.77, rounded to 2.8 as ISO 5725-6:1994 (repeatability
// limit, §4.1 from memory) does.
const LimitFactor = 2.8

// ErrTooFew is returned when a statistic needs more results than given.
var ErrTooFew = errors.New("fewer than two results")

// MeanSD returns the arithmetic mean and the sample standard deviation
// (divisor n−1) of x, the estimate of s_r from one base (ISO 5725-2:1994
// §7.4, the cell standard deviation, with one cell). The sum of squares is taken about the
// mean in a second pass, which keeps it accurate for values far from zero
// with a small spread. It returns ErrTooFew for fewer than two values and
// an error for a value that is not finite.
func MeanSD(x []float64) (mean, sd float64, err error) {
	if len(x) < 2 {
		return 0, 0, ErrTooFew
	}
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, 0, fmt.Errorf("result %d is %v: want a finite number", i+1, v)
		}
		mean += v
	}
	mean /= float64(len(x))
	var ss float64
	for _, v := range x {
		d := v - mean
		ss += d * d
	}
	return mean, math.Sqrt(ss / float64(len(x)-1)), nil
}

// Pooled returns the pooled standard deviation of groups of results, each
// from one base under repeatability conditions, and its degrees of freedom:
// s_r² = Σ(n_i−1)·s_i² / Σ(n_i−1), ν = Σ(n_i−1) (ISO 5725-2:1994 §7.4,
// the repeatability variance as the cell variances weighted by their
// degrees of freedom, one laboratory).
// Groups with fewer than two results carry no freedom and are left out;
// ErrTooFew when none has two.
func Pooled(groups [][]float64) (sd float64, dof int, err error) {
	var ss float64
	for i, g := range groups {
		if len(g) < 2 {
			continue
		}
		_, s, err := MeanSD(g)
		if err != nil {
			return 0, 0, fmt.Errorf("group %d: %w", i+1, err)
		}
		n := len(g) - 1
		ss += float64(n) * s * s
		dof += n
	}
	if dof == 0 {
		return 0, 0, ErrTooFew
	}
	return math.Sqrt(ss / float64(dof)), dof, nil
}

// ChiSquareQuantile is the p quantile of the chi-square distribution with
// dof degrees of freedom (gonum stat/distuv, inverse regularised gamma).
func ChiSquareQuantile(p float64, dof int) float64 {
	return distuv.ChiSquared{K: float64(dof)}.Quantile(p)
}

// SigmaInterval is the two-sided confidence interval, at level (0.95 for
// 95 %), of the standard deviation σ of a normal population from a sample
// standard deviation s with dof degrees of freedom: (dof·s²/σ²) is
// chi-square with dof degrees of freedom, so σ lies in
// [s·√(dof/χ²_{(1+level)/2}), s·√(dof/χ²_{(1−level)/2})]
// (e.g. Montgomery & Runger, Applied Statistics and Probability for
// Engineers, the chapter on intervals for a variance; from memory).
func SigmaInterval(s float64, dof int, level float64) (lo, hi float64) {
	a := (1 - level) / 2
	nu := float64(dof)
	return s * math.Sqrt(nu/ChiSquareQuantile(1-a, dof)), s * math.Sqrt(nu/ChiSquareQuantile(a, dof))
}
