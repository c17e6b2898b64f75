package scan

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// squareSurface returns an nx×ny surface of Measured cells with heights
// f(x, y), centred on the origin.
func squareSurface(nx, ny int, h float64, f func(x, y float64) float64) *Surface {
	s := NewSurface(nx, ny, h, -float64(nx/2)*h, -float64(ny/2)*h)
	for j := range ny {
		for i := range nx {
			k := s.Index(i, j)
			s.ZM[k] = f(s.X(i), s.Y(j))
			s.State[k] = Measured
		}
	}
	return s
}

// discSurface returns the base disc of radius r at cell h with heights f.
func discSurface(r, h float64, f func(x, y float64) float64) *Surface {
	k := int(math.Floor(r/h + 1e-9))
	s := NewSurface(2*k+1, 2*k+1, h, -float64(k)*h, -float64(k)*h)
	for j := range s.Ny {
		for i := range s.Nx {
			x, y := s.X(i), s.Y(j)
			if x*x+y*y <= r*r*(1+1e-12) {
				q := s.Index(i, j)
				s.ZM[q] = f(x, y)
				s.State[q] = Measured
			}
		}
	}
	return s
}

func TestFormFilterTransmission(t *testing.T) {
	// ISO 16610-61 (and -21 for profiles): Gaussian transmission
	// H(λ) = exp(−π (α λc/λ)²) with α² = ln2/π, i.e. 2^−(λc/λ)²; 50 % at
	// λ = λc (PHYSICS-REFERENCES.md, TRADE-FACTS.md section 5 [F]).
	const (
		lc = 8e-3
		h  = 0.25e-3
	)
	cases := []struct {
		ratio float64 // λ/λc
		angle float64 // direction of the wave vector, degrees from x
		want  float64
		tol   float64
	}{
		{1, 0, 0.5, 0.002},
		{1, 30, 0.5, 0.002},
		{2, 0, math.Pow(2, -0.25), 0.002},
		{0.5, 90, 1.0 / 16, 0.002},
		{10, 0, math.Pow(2, -0.01), 0.002},
		{0.25, 0, math.Pow(2, -16), 0.001},
	}
	for _, tc := range cases {
		lambda := tc.ratio * lc
		th := tc.angle * math.Pi / 180
		kx, ky := 2*math.Pi/lambda*math.Cos(th), 2*math.Pi/lambda*math.Sin(th)
		s := squareSurface(241, 241, h, func(x, y float64) float64 {
			return 10e-6 * math.Sin(kx*x+ky*y)
		})
		res, err := FormFilter(s, lc)
		if err != nil {
			t.Fatal(err)
		}
		// Least-squares amplitude of sin and cos over cells at least λc
		// from the grid's edge (full kernel there).
		var ss, sc, cc, zs, zc float64
		for j := range s.Ny {
			for i := range s.Nx {
				x, y := s.X(i), s.Y(j)
				if math.Abs(x) > 30e-3-lc-h || math.Abs(y) > 30e-3-lc-h {
					continue
				}
				sn, cs := math.Sin(kx*x+ky*y), math.Cos(kx*x+ky*y)
				z := res.Form.ZM[s.Index(i, j)]
				ss += sn * sn
				sc += sn * cs
				cc += cs * cs
				zs += z * sn
				zc += z * cs
			}
		}
		det := ss*cc - sc*sc
		a := (zs*cc - zc*sc) / det
		b := (zc*ss - zs*sc) / det
		got := math.Hypot(a, b) / 10e-6
		if math.Abs(got-tc.want) > tc.tol {
			t.Errorf("λ = %g λc at %g°: transmission %.4f, want %.4f ± %g", tc.ratio, tc.angle, got, tc.want, tc.tol)
		}
	}
}

func TestFormFilterKeepsPlanesToTheRim(t *testing.T) {
	f := plane(3e-3, -1.5e-3, 0.2e-3)
	s := discSurface(0.03, 0.5e-3, f)
	// A hole marked Filled takes part like any base cell.
	s.State[s.Index(20, 60)] = Filled
	res, err := FormFilter(s, 8e-3)
	if err != nil {
		t.Fatal(err)
	}
	for k := range s.ZM {
		if !s.InBase(k) {
			if !math.IsNaN(res.Form.ZM[k]) || res.Form.State[k] != Outside {
				t.Fatalf("outside cell %d changed", k)
			}
			continue
		}
		if d := res.Form.ZM[k] - s.ZM[k]; math.Abs(d) > 1e-15 {
			t.Fatalf("cell %d moved by %g m", k, d)
		}
	}
	if res.NoiseM > 1e-15 || res.CutoffM != 8e-3 {
		t.Errorf("noise %g, cut-off %g", res.NoiseM, res.CutoffM)
	}
}

func TestFormFilterDishConcavity(t *testing.T) {
	// A paraboloid's curvature is kept by a Gaussian in the interior (it
	// only adds a constant); the first-order rim correction keeps the
	// rim's slope. Concavity moves by less than 0.3 %.
	const r, sag = 0.05, 0.25e-3
	s := discSurface(r, 0.5e-3, dish(sag, r))
	res, err := FormFilter(s, 8e-3)
	if err != nil {
		t.Fatal(err)
	}
	raw, err := MeasureForm(s, r)
	if err != nil {
		t.Fatal(err)
	}
	flt, err := MeasureForm(res.Form, r)
	if err != nil {
		t.Fatal(err)
	}
	d := flt.ConcavityM/raw.ConcavityM - 1
	t.Logf("concavity %.5f mm filtered, %.5f mm raw (%+.3f %%)", flt.ConcavityM*1e3, raw.ConcavityM*1e3, 100*d)
	// (A zero-order normalised convolution gives −1.4 % here.)
	if math.Abs(d) > 0.003 {
		t.Errorf("filtered concavity %.5f mm vs %.5f mm raw (%.2f %%)", flt.ConcavityM*1e3, raw.ConcavityM*1e3, 100*d)
	}
}

func TestFormFilterNoise(t *testing.T) {
	// Flat base with 8 µm white noise, gridded from one point per cell
	// (at the cell centres). The 8 mm filter keeps the noise's mean only:
	// its 2-D weight at the centre cell is (h/(α λc))² = 1.8 %, so
	// RMS(raw − filtered) = 8 µm·sqrt(1 − 2·0.018 + Σw²) ≈ 7.9 µm.
	const (
		r, h  = 0.05, 0.5e-3
		sigma = 8e-6
	)
	rng := rand.New(rand.NewPCG(11, 12))
	pts := cellCloud(r, h, plane(0, 0, 0), 0, sigma, rng)
	g, err := Grid(levelled(&Cloud{Points: pts}, r), GridOptions{CellM: h})
	if err != nil {
		t.Fatal(err)
	}
	res, err := FormFilter(g.Raw, 8e-3)
	if err != nil {
		t.Fatal(err)
	}
	if res.NoiseM < 0.95*sigma || res.NoiseM > 1.01*sigma {
		t.Errorf("noise %.3f µm, want 7.6..8.08 µm", res.NoiseM*1e6)
	}
	raw, err := MeasureForm(g.Raw, r)
	if err != nil {
		t.Fatal(err)
	}
	flt, err := MeasureForm(res.Form, r)
	if err != nil {
		t.Fatal(err)
	}
	// Raw peak-to-valley of 31 000 Gaussian samples is about 8.5 σ.
	if raw.FlatnessLSM < 7*sigma {
		t.Errorf("raw flatness %.1f µm, expected about 68 µm", raw.FlatnessLSM*1e6)
	}
	// The first-order fit at the rim passes more noise than the plain
	// Gaussian inside (measured: 0.22 σ RMS at the very rim against
	// 0.10 σ inside), so the rim sets the filtered zone: still more than
	// 5× below the raw one.
	if flt.FlatnessMZM > 0.2*raw.FlatnessLSM {
		t.Errorf("filtered MZ flatness %.2f µm not far below raw PV %.2f µm", flt.FlatnessMZM*1e6, raw.FlatnessLSM*1e6)
	}
	t.Logf("noise %.3f µm; raw PV %.1f µm; filtered MZ %.2f µm", res.NoiseM*1e6, raw.FlatnessLSM*1e6, flt.FlatnessMZM*1e6)
}

func TestFormFilterOff(t *testing.T) {
	s := discSurface(0.01, 1e-3, dish(1e-4, 0.01))
	res, err := FormFilter(s, 0)
	if err != nil {
		t.Fatal(err)
	}
	if res.NoiseM != 0 || res.CutoffM != 0 {
		t.Errorf("filter off: noise %g, cut-off %g", res.NoiseM, res.CutoffM)
	}
	for k := range s.ZM {
		if s.InBase(k) && res.Form.ZM[k] != s.ZM[k] {
			t.Fatal("filter off changed a height")
		}
	}
	res.Form.ZM[s.Index(10, 10)] = 1
	if s.ZM[s.Index(10, 10)] == 1 {
		t.Error("filter off returned the input, not a copy")
	}
}

func TestFormFilterBadInput(t *testing.T) {
	good := discSurface(0.01, 1e-3, plane(0, 0, 0))
	empty := NewSurface(5, 5, 1e-3, 0, 0)
	bad := &Surface{Nx: 3, Ny: 3, CellM: 1e-3, ZM: make([]float64, 8), State: make([]CellState, 9)}
	cases := []struct {
		name string
		s    *Surface
		lc   float64
		want string
	}{
		{"nil", nil, 8e-3, "nil surface"},
		{"negative", good, -1, "cut-off"},
		{"nan", good, math.NaN(), "cut-off"},
		{"coarse", good, 3e-3, "under 4 grid cells"},
		{"empty", empty, 8e-3, "no base cells"},
		{"malformed", bad, 8e-3, "malformed"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := FormFilter(tc.s, tc.lc)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

// BenchmarkFormFilter filters a 200 mm base at 0.5 mm cells (401×401
// grid) with the default 8 mm cut-off.
func BenchmarkFormFilter(b *testing.B) {
	s := discSurface(0.1, 0.5e-3, dish(0.3e-3, 0.1))
	b.ResetTimer()
	for b.Loop() {
		if _, err := FormFilter(s, 8e-3); err != nil {
			b.Fatal(err)
		}
	}
}
