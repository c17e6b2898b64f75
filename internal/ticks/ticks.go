// Package ticks labels plot axes so that every label is distinct and
// reads as the tick's value.
//
// gonum/plot's DefaultTicks may label two major ticks alike when the axis
// spans a narrow range far from zero (3.55 and 3.50 both read "3.5"); a
// reader then cannot tell the scale. Distinct keeps gonum's tick positions
// and gives the labels the fewest significant digits that tell them apart.
package ticks

import (
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
)

// Distinct is a plot.Ticker: gonum's default tick positions, labelled
// with the fewest decimals (or, far from 1, significant digits) that make
// every major tick's label different, without trailing zeros.
type Distinct struct{}

// Ticks returns the ticks of the range [lo, hi].
func (Distinct) Ticks(lo, hi float64) []plot.Tick {
	t := plot.DefaultTicks{}.Ticks(lo, hi)
	var major []float64
	for _, tk := range t {
		if tk.Label != "" {
			major = append(major, tk.Value)
		}
	}
	labels := Labels(major)
	k := 0
	for i := range t {
		if t[i].Label != "" {
			t[i].Label = labels[k]
			k++
		}
	}
	return t
}

// Labels formats the values vs with the fewest decimals (0 to 15) that
// tell them all apart and read as the values (each label within a
// millionth of the smallest spacing of its value), trailing zeros removed;
// values of magnitude 1e6 and above or below 1e-4 use exponent notation
// with the fewest significant digits that do the same. Equal values get
// equal labels.
func Labels(vs []float64) []string {
	big, tol := 0.0, math.Inf(1)
	for i, v := range vs {
		big = math.Max(big, math.Abs(v))
		for _, w := range vs[:i] {
			if d := math.Abs(v - w); d > 0 {
				tol = math.Min(tol, 1e-6*d)
			}
		}
	}
	if math.IsInf(tol, 1) {
		tol = 1e-9 * big
	}
	exp := big >= 1e6 || big > 0 && big < 1e-4
	out := make([]string, len(vs))
	for n := 0; n <= 15; n++ {
		if exp {
			for i, v := range vs {
				out[i] = strconv.FormatFloat(v, 'g', n+1, 64)
			}
		} else {
			for i, v := range vs {
				out[i] = trimZeros(strconv.FormatFloat(v, 'f', n, 64))
			}
		}
		if readsAs(out, vs, tol) {
			break
		}
	}
	return out
}

// readsAs reports whether every label parses to its value within tol and
// no two different values share a label.
func readsAs(labels []string, vs []float64, tol float64) bool {
	seen := make(map[string]float64, len(vs))
	for i, l := range labels {
		x, err := strconv.ParseFloat(l, 64)
		if err != nil || math.Abs(x-vs[i]) > tol {
			return false
		}
		if w, ok := seen[l]; ok && w != vs[i] {
			return false
		}
		seen[l] = vs[i]
	}
	return true
}

// trimZeros removes trailing zeros after a decimal point, and the point
// itself when nothing follows it; "-0" reads "0".
func trimZeros(s string) string {
	if strings.IndexByte(s, '.') >= 0 {
		s = strings.TrimRight(s, "0")
		s = strings.TrimSuffix(s, ".")
	}
	if s == "-0" {
		return "0"
	}
	return s
}
