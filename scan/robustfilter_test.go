package scan

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// noisySquare returns an n×n grid of 0.5 mm cells of 10 µm white noise on a
// 0.3 mm dish, with 0.5 % spikes of ±0.3 … 2 mm.
func noisySquare(n int, seed uint64) *Surface {
	rng := rand.New(rand.NewPCG(seed, 1))
	h := 0.5e-3
	r := float64(n) * h / 2
	s := squareSurface(n, n, h, dish(0.3e-3, r))
	for k := range s.ZM {
		s.ZM[k] += 10e-6 * rng.NormFloat64()
		if rng.Float64() < 0.005 {
			s.ZM[k] += (0.3e-3 + 1.7e-3*rng.Float64()) * float64(1-2*rng.IntN(2))
		}
	}
	return s
}

// BenchmarkRobustFilter times the robust filter (orders 1 and 2) and the
// linear one on 250², 500² and 1000² grids of 0.5 mm cells, 8 mm cut-off.
func BenchmarkRobustFilter(b *testing.B) {
	for _, n := range []int{250, 500, 1000} {
		s := noisySquare(n, 3)
		for _, c := range []struct {
			name string
			opt  FilterOptions
		}{
			{"gaussian", FilterOptions{CutoffM: 8e-3, Method: FilterGaussian}},
			{"robust1", FilterOptions{CutoffM: 8e-3, Order: Order1}},
			{"robust2", FilterOptions{CutoffM: 8e-3, Order: Order2}},
		} {
			b.Run(fmt.Sprintf("%s/%d", c.name, n), func(b *testing.B) {
				var it int
				t0 := cpuTime()
				for b.Loop() {
					res, err := Filter(s, c.opt)
					if err != nil {
						b.Fatal(err)
					}
					it = res.Iterations
				}
				b.ReportMetric(float64(it), "passes")
				b.ReportMetric(float64(cpuTime()-t0)/1e6/float64(b.N), "cpu-ms/op")
			})
		}
	}
}

// stepSpike returns a 60 × 40 mm grid of 0.5 mm cells: a profile along x
// with a step of height hStep at x = 0, one spike of spikeM at (−12 mm,
// 0), and 1 µm white noise (so the robust scale is not zero).
func stepSpike(hStep, spikeM float64) *Surface {
	const h = 0.5e-3
	rng := rand.New(rand.NewPCG(21, 22))
	s := squareSurface(121, 81, h, func(x, y float64) float64 {
		if x >= 0 {
			return hStep
		}
		return 0
	})
	for k := range s.ZM {
		s.ZM[k] += 1e-6 * rng.NormFloat64()
	}
	s.ZM[s.Index(60-24, 40)] += spikeM
	return s
}

// TestRobustFilterStepAndSpike checks the published behaviour of the robust
// Gaussian regression filter on a step-plus-spike profile (Brinkmann,
// Bodschwinna & Lemke 2001, and the examples of ISO/TS 16610-31; from
// memory): an isolated spike does not lift the mean line at all, and near
// a step the cells with large residuals lose their weight, so the mean
// line settles onto each level closer to the step than the linear filter's
// (it still bends across the step itself: the weights are per cell, not
// per window). The linear filter is checked against its closed form: on a
// step of height H its output is H·Φ(d/σ), d the distance from the edge,
// σ = α·λc/√(2π) = 1.50 mm for λc = 8 mm; at a one-cell spike it is the
// spike times the kernel's centre weight (h/(α λc))² = 1.77 %.
func TestRobustFilterStepAndSpike(t *testing.T) {
	const (
		hStep  = 0.1e-3
		spike  = 2e-3
		cutoff = 8e-3
		h      = 0.5e-3
	)
	s := stepSpike(hStep, spike)
	lin, err := Filter(s, FilterOptions{CutoffM: cutoff, Method: FilterGaussian})
	if err != nil {
		t.Fatal(err)
	}
	rob, err := Filter(s, FilterOptions{CutoffM: cutoff})
	if err != nil {
		t.Fatal(err)
	}
	sigma := GaussianAlpha * cutoff / math.Sqrt(2*math.Pi)
	j := 40
	var sumLin, sumRob float64
	for i := 50; i <= 80; i++ {
		x := s.X(i)
		d := x + h/2 // the edge lies between the cells at −h and 0
		want := hStep * 0.5 * (1 + math.Erf(d/sigma/math.Sqrt2))
		zl, zr := lin.Form.ZM[s.Index(i, j)], rob.Form.ZM[s.Index(i, j)]
		if math.Abs(zl-want) > 0.01*hStep {
			t.Errorf("x %.2f mm: linear filter %.2f µm, closed form %.2f µm", x*1e3, zl*1e6, want*1e6)
		}
		level := 0.0
		if x >= 0 {
			level = hStep
		}
		el, er := math.Abs(zl-level), math.Abs(zr-level)
		if math.Abs(d) >= 2.5e-3 && er > 0.7*el+0.2e-6 {
			t.Errorf("x %.2f mm: robust filter %.2f µm off the level, linear %.2f µm", x*1e3, er*1e6, el*1e6)
		}
		if math.Abs(d) >= 1e-3 {
			sumLin += el
			sumRob += er
		}
	}
	if sumRob >= sumLin {
		t.Errorf("summed deviation from the levels beyond 1 mm: robust %.1f µm, linear %.1f µm", sumRob*1e6, sumLin*1e6)
	}
	// The spike, 12 mm from the step.
	at := s.Index(60-24, j)
	dl, dr := lin.Form.ZM[at], math.Abs(rob.Form.ZM[at])
	if math.Abs(dl-0.0177*spike) > 0.05*0.0177*spike {
		t.Errorf("linear filter at the spike %.1f µm, want about %.1f µm", dl*1e6, 0.0177*spike*1e6)
	}
	if dr > 0.5e-6 {
		t.Errorf("robust filter at the spike %.2f µm, want ≤ 0.5 µm", dr*1e6)
	}
	if rob.ZeroWeightCells < 1 || rob.Iterations < 2 || rob.Method != FilterRobust || rob.Order != 1 {
		t.Errorf("robust result: %d zero-weight cells, %d passes, %s order %d", rob.ZeroWeightCells, rob.Iterations, rob.Method, rob.Order)
	}
	t.Logf("deviation from the levels beyond 1 mm of the step: linear %.1f µm, robust %.1f µm (summed over 31 cells); spike: linear %.1f µm, robust %.3f µm",
		sumLin*1e6, sumRob*1e6, dl*1e6, dr*1e6)
}

// TestRobustFilterCleanData checks that without outliers the robust filter
// stays within a fraction of the noise of the linear one of the same order,
// on a noisy dish disc, and that orders 1 and 2 keep a plane exact at the
// rim while order 2 also keeps the dish (a quadric) exact.
func TestRobustFilterCleanData(t *testing.T) {
	const r, h, sigma = 0.04, 0.5e-3, 10e-6
	f := dish(0.3e-3, r)
	rng := rand.New(rand.NewPCG(31, 32))
	noisy := discSurface(r, h, func(x, y float64) float64 { return f(x, y) + sigma*rng.NormFloat64() })
	clean := discSurface(r, h, f)
	tilted := discSurface(r, h, plane(3e-3, -2e-3, 1e-4))
	for _, o := range []FilterOrder{Order0, Order1, Order2} {
		rob, err := Filter(noisy, FilterOptions{CutoffM: 8e-3, Order: o})
		if err != nil {
			t.Fatal(err)
		}
		lin, err := Filter(noisy, FilterOptions{CutoffM: 8e-3, Order: o, Method: FilterGaussian})
		if err != nil {
			t.Fatal(err)
		}
		var ss float64
		n := 0
		for k := range noisy.ZM {
			// Order 0 differs from the others at the rim by the slope
			// times the window's shift; compare inside 30 mm only.
			if noisy.InBase(k) && math.Hypot(noisy.X(k%noisy.Nx), noisy.Y(k/noisy.Nx)) < 0.03 {
				d := rob.Form.ZM[k] - lin.Form.ZM[k]
				ss += d * d
				n++
			}
		}
		// The filtered noise is about 0.1 σ RMS inside; a robust
		// estimator on Gaussian data loses some efficiency and departs
		// from the linear one by a fraction of that (common practice).
		if rms := math.Sqrt(ss / float64(n)); rms > 0.1*sigma {
			t.Errorf("order %d: robust and linear forms differ by %.2f µm RMS", int(o)-1, rms*1e6)
		}
		if o != Order0 && math.Abs(rob.NoiseM-sigma) > 0.05*sigma {
			t.Errorf("order %d: noise %.2f µm, want 10 ± 0.5 µm", int(o)-1, rob.NoiseM*1e6)
		}
		for name, in := range map[string]*Surface{"plane": tilted, "dish": clean} {
			if o == Order0 || (o == Order1 && name == "dish") {
				continue
			}
			res, err := Filter(in, FilterOptions{CutoffM: 8e-3, Order: o})
			if err != nil {
				t.Fatal(err)
			}
			for k := range in.ZM {
				if in.InBase(k) && math.Abs(res.Form.ZM[k]-in.ZM[k]) > 1e-9 {
					t.Fatalf("order %d changed the %s by %g m at cell %d", int(o)-1, name, res.Form.ZM[k]-in.ZM[k], k)
				}
			}
		}
	}
}

func TestFilterOptionsBad(t *testing.T) {
	s := discSurface(0.01, 1e-3, plane(0, 0, 0))
	for name, opt := range map[string]FilterOptions{
		"method":     {CutoffM: 8e-3, Method: "median"},
		"order":      {CutoffM: 8e-3, Order: 7},
		"iterations": {CutoffM: 8e-3, MaxIterations: -1},
		"cut-off":    {CutoffM: math.Inf(1)},
	} {
		if _, err := Filter(s, opt); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}

// outlierCloud returns n points spread uniformly over a disc of radius r
// (random, not a lattice) on a 0.3 mm dish with 10 µm noise and 0.5 %
// spikes of ±0.3 … 2 mm.
func outlierCloud(n int, r float64) (x, y, z []float64) {
	rng := rand.New(rand.NewPCG(5, 5))
	f := dish(0.3e-3, r)
	x, y, z = make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		rr := r * math.Sqrt(rng.Float64())
		th := 2 * math.Pi * rng.Float64()
		x[i], y[i] = rr*math.Cos(th), rr*math.Sin(th)
		z[i] = f(x[i], y[i]) + 10e-6*rng.NormFloat64()
		if rng.Float64() < 0.005 {
			z[i] += (0.3e-3 + 1.7e-3*rng.Float64()) * float64(1-2*rng.IntN(2))
		}
	}
	return x, y, z
}

// BenchmarkLocalOutliers times the outlier test on 0.5, 1 and 2 million
// points over a 200 mm disc, and on a 1000 × 1000 lattice of 0.5 mm cells
// (the cells of a mesh).
func BenchmarkLocalOutliers(b *testing.B) {
	for _, n := range []int{500000, 1000000, 2000000} {
		x, y, z := outlierCloud(n, 0.1)
		sp := math.Sqrt(math.Pi * 0.01 / float64(n))
		b.Run(fmt.Sprintf("cloud%dk", n/1000), func(b *testing.B) {
			t0 := cpuTime()
			for b.Loop() {
				LocalOutliers(x, y, z, sp, DefaultOutlierK)
			}
			b.ReportMetric(float64(cpuTime()-t0)/1e6/float64(b.N), "cpu-ms/op")
		})
	}
	s := noisySquare(1000, 4)
	var x, y, z []float64
	for q := range s.ZM {
		x, y, z = append(x, s.X(q%s.Nx)), append(y, s.Y(q/s.Nx)), append(z, s.ZM[q])
	}
	b.Run("grid1000", func(b *testing.B) {
		t0 := cpuTime()
		for b.Loop() {
			LocalOutliers(x, y, z, s.CellM, DefaultOutlierK)
		}
		b.ReportMetric(float64(cpuTime()-t0)/1e6/float64(b.N), "cpu-ms/op")
	})
}

// BenchmarkPointSpacing times the spacing of 2 million points.
func BenchmarkPointSpacing(b *testing.B) {
	x, y, _ := outlierCloud(2000000, 0.1)
	for b.Loop() {
		PointSpacing(x, y, math.Pi*0.01)
	}
}

// BenchmarkFilterBase filters a 200 mm base at 0.5 mm cells (401×401 grid,
// 10 µm noise, 0.5 % spikes) with the default 8 mm cut-off: the linear
// filter and the robust one (the pipeline's default). cells/s counts base
// cells filtered per second of wall time.
func BenchmarkFilterBase(b *testing.B) {
	rng := rand.New(rand.NewPCG(8, 8))
	f := dish(0.3e-3, 0.1)
	s := discSurface(0.1, 0.5e-3, func(x, y float64) float64 {
		z := f(x, y) + 10e-6*rng.NormFloat64()
		if rng.Float64() < 0.005 {
			z += 1e-3
		}
		return z
	})
	nBase := 0
	for k := range s.State {
		if s.InBase(k) {
			nBase++
		}
	}
	for _, m := range []FilterMethod{FilterGaussian, FilterRobust} {
		b.Run(string(m), func(b *testing.B) {
			t0 := cpuTime()
			var it int
			for b.Loop() {
				res, err := Filter(s, FilterOptions{CutoffM: 8e-3, Method: m})
				if err != nil {
					b.Fatal(err)
				}
				it = res.Iterations
			}
			b.ReportMetric(float64(it), "passes")
			b.ReportMetric(float64(cpuTime()-t0)/1e6/float64(b.N), "cpu-ms/op")
			b.ReportMetric(float64(nBase)*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
		})
	}
}
