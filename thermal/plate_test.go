package thermal

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gapflux/fluid"

	"gonum.org/v1/gonum/mat"
)

// Stubs of the interface and water side, independent of the models in
// water.go and of package contact.

// stubH is an interface conductance that is the same in every cell.
type stubH struct{ solid, gas, rad float64 }

func (s stubH) H(k int, tHobK, tPanK float64) (float64, float64, float64) {
	return s.solid, s.gas, s.rad
}

// stubField is a gas-only interface conductance given per cell.
type stubField []float64

func (s stubField) H(k int, tHobK, tPanK float64) (float64, float64, float64) {
	return 0, s[k], 0
}

// stubRad is a constant gas conductance plus grey radiation between the two
// surfaces (parallel plates: PHYSICS-REFERENCES.md item 5.1).
type stubRad struct{ gas, eps1, eps2 float64 }

func (s stubRad) hr(t1, t2 float64) float64 {
	return fluid.StefanBoltzmann * (t1*t1 + t2*t2) * (t1 + t2) / (1/s.eps1 + 1/s.eps2 - 1)
}

func (s stubRad) H(k int, tHobK, tPanK float64) (float64, float64, float64) {
	return 0, s.gas, s.hr(tHobK, tPanK)
}

// stubWater is a water side with a fixed coefficient.
type stubWater float64

func (w stubWater) H(tBaseK, tWaterK float64) float64 { return float64(w) }

// stubCubic is a boiling-like water side, q = c·ΔT³ (h = c·ΔT²) above the
// water temperature and 0 below.
type stubCubic float64

func (w stubCubic) H(tBaseK, tWaterK float64) float64 {
	d := math.Max(tBaseK-tWaterK, 0)
	return float64(w) * d * d
}

// stubOnset is a water side with a fixed 1000 W/(m²·K) below 373.15 K and a
// steep rise above it, q = 1000 ΔT + 30 (T_s − 373.15)³, capped at 1.2 MW/m²
// (shaped like natural convection, nucleate boiling and a critical flux).
type stubOnset struct{}

func (stubOnset) H(tBaseK, tWaterK float64) float64 {
	d := tBaseK - tWaterK
	if d <= 0 {
		return 1000
	}
	q := 1000 * d
	if e := tBaseK - 373.15; e > 0 {
		q += 30 * e * e * e
	}
	return min(q, 1.2e6) / d
}

// stubFlip is an interface that switches between good and poor contact
// around tPanK = at: the fixed-point iteration on it cycles.
type stubFlip struct{ at float64 }

func (s stubFlip) H(k int, tHobK, tPanK float64) (float64, float64, float64) {
	if tPanK < s.at {
		return 0, 5000, 0
	}
	return 0, 10, 0
}

// stubBad returns a NaN conductance in one cell.
type stubBad struct{ cell int }

func (s stubBad) H(k int, tHobK, tPanK float64) (float64, float64, float64) {
	if k == s.cell {
		return 0, math.NaN(), 0
	}
	return 0, 100, 0
}

// aluminium4mm is the default base of DESIGN.md §5.3a: 4 mm, k = 222 W/(m·K).
var aluminium4mm = []Layer{{ThicknessM: 0.004, ConductivityWMK: 222}}

// discMask marks the cells of g whose centre lies within rM of (cx, cy).
func discMask(g Grid, cx, cy, rM float64) []bool {
	m := make([]bool, g.Len())
	for k := range m {
		x, y := g.CentreM(k)
		m[k] = math.Hypot(x-cx, y-cy) <= rM
	}
	return m
}

func fill(n int, v float64) []float64 {
	s := make([]float64, n)
	for i := range s {
		s[i] = v
	}
	return s
}

func allTrue(n int) []bool {
	m := make([]bool, n)
	for i := range m {
		m[i] = true
	}
	return m
}

// checkBalance asserts the energy balance of a solution: heat in through the
// interface equals heat out to the water, and in heater mode the delivered
// heater power equals heat into the pan plus the downward and uncovered-glass
// losses (plus transmitted power that misses the pan, lostW).
func checkBalance(t *testing.T, name string, s *Solution, lostW float64) {
	t.Helper()
	if d := math.Abs(s.PowerW-s.WaterW) / math.Abs(s.PowerW); !(d <= 1e-6) {
		t.Errorf("%s: pan balance: in %.12g W, to water %.12g W (rel %.3g)", name, s.PowerW, s.WaterW, d)
	}
	if s.TGlassK == nil {
		return
	}
	out := s.PowerW + s.DownLossW + s.UncoveredLossW + s.TransmittedLostW + lostW
	if d := math.Abs(s.HeaterW-out) / s.HeaterW; !(d <= 1e-6) {
		t.Errorf("%s: hob balance: heater %.12g W, pan + down + uncovered + lost %.12g W (rel %.3g)", name, s.HeaterW, out, d)
	}
	parts := s.SolidW + s.GasW + s.RadW + s.TransmittedW
	if d := math.Abs(parts-s.PowerW) / s.PowerW; !(d <= 1e-12) {
		t.Errorf("%s: parts %.12g W, power %.12g W", name, parts, s.PowerW)
	}
}

// TestUniform: uniform interface and hob temperature give a uniform base at
// the closed-form 1D temperature, flux q = (T_hob − T_w)/(1/h_dn + 1/h_up)
// with h_dn = 1/(1/h + R_b/2), h_up = 1/(1/h_w + R_b/2) (series resistances;
// DESIGN.md §5.3).
func TestUniform(t *testing.T) {
	tests := []struct {
		name   string
		nx, ny int
		discR  float64 // 0: the whole grid is base
		h      stubH
		hw     float64
		layers []Layer
	}{
		{"rectangle good contact", 40, 30, 0, stubH{50, 3000, 20}, 1000, aluminium4mm},
		{"disc poor contact", 64, 64, 0.015, stubH{0.1, 40, 5}, 1000, aluminium4mm},
		{"clad base strong water side", 17, 9, 0, stubH{3, 800, 0}, 12000,
			[]Layer{{0.0006, 16}, {0.003, 222}, {0.0006, 16}}},
		{"single cell", 1, 1, 0, stubH{0, 500, 0}, 800, aluminium4mm},
	}
	for _, tc := range tests {
		g := Grid{Nx: tc.nx, Ny: tc.ny, CellM: 0.0005, X0M: -float64(tc.nx-1) * 0.00025, Y0M: -float64(tc.ny-1) * 0.00025}
		in := allTrue(g.Len())
		if tc.discR > 0 {
			in = discMask(g, 0, 0, tc.discR)
		}
		const top, tw = 523.15, 333.15
		p := &Problem{Grid: g, InBase: in, BaseLayers: tc.layers, Interface: tc.h,
			Water: stubWater(tc.hw), TWaterK: tw, Temperature: &TemperatureHob{TopK: fill(g.Len(), top)}}
		s, err := Solve(p)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		var rb float64
		for _, l := range tc.layers {
			rb += l.ThicknessM / l.ConductivityWMK
		}
		h := tc.h.solid + tc.h.gas + tc.h.rad
		hdn := 1 / (1/h + rb/2)
		hup := 1 / (1/tc.hw + rb/2)
		wantT := (hdn*top + hup*tw) / (hdn + hup)
		wantQ := (top - tw) / (1/hdn + 1/hup)
		nb := 0
		for k, b := range in {
			if !b {
				if !math.IsNaN(s.TPanK[k]) || s.FluxWM2[k] != 0 {
					t.Fatalf("%s: cell %d outside the base: T %g, flux %g", tc.name, k, s.TPanK[k], s.FluxWM2[k])
				}
				continue
			}
			nb++
			if d := math.Abs(s.TPanK[k] - wantT); d > 1e-8 {
				t.Fatalf("%s: cell %d: T = %.12g K, want %.12g", tc.name, k, s.TPanK[k], wantT)
			}
			if d := math.Abs(s.FluxWM2[k]-wantQ) / wantQ; d > 1e-9 {
				t.Fatalf("%s: cell %d: q = %.12g W/m², want %.12g", tc.name, k, s.FluxWM2[k], wantQ)
			}
			if s.GasWM2K[k] != tc.h.gas || s.SolidWM2K[k] != tc.h.solid || s.RadWM2K[k] != tc.h.rad {
				t.Fatalf("%s: cell %d: parts %g %g %g", tc.name, k, s.SolidWM2K[k], s.GasWM2K[k], s.RadWM2K[k])
			}
		}
		wantP := wantQ * float64(nb) * g.CellM * g.CellM
		if d := math.Abs(s.PowerW-wantP) / wantP; d > 1e-9 {
			t.Errorf("%s: power %.12g W, want %.12g", tc.name, s.PowerW, wantP)
		}
		if d := math.Abs(s.GasW - wantP*tc.h.gas/h); d > 1e-9*wantP {
			t.Errorf("%s: gas power %.12g W, want %.12g", tc.name, s.GasW, wantP*tc.h.gas/h)
		}
		checkBalance(t, tc.name, s, 0)
		if s.TGlassK != nil || s.HeaterW != 0 || p.Mode() != TemperatureMode || p.Mode().String() != "temperature" {
			t.Errorf("%s: temperature mode has glass output, or mode %v", tc.name, p.Mode())
		}
	}
}

// TestStepFin: a long strip whose interface conductance steps from h1
// (x < 0) to h2 (x > 0). Far from the step each side sits at its 1D
// temperature T∞,i = (h_dn,i T_hob + h_up T_w)/h_i, h_i = h_dn,i + h_up; near
// it, K d²T/dx² = h_i (T − T∞,i) gives T = T∞,1 + C1 e^(x/L1) for x < 0 and
// T∞,2 + C2 e^(−x/L2) for x > 0, L_i = √(K/h_i). Continuity of T and of
// K dT/dx at x = 0 gives C1 = D L1/(L1+L2), C2 = −D L2/(L1+L2),
// D = T∞,2 − T∞,1 (the infinite fin of Incropera §3.6, from memory, joined
// at x = 0; derived here). The cell-centred scheme with the step on a face is
// second order: with cells of 0.5 mm against L ≈ 17–30 mm the profile error
// is a few 1e-5 of D; the test allows 2e-4·D.
func TestStepFin(t *testing.T) {
	const (
		cell      = 0.0005
		nx        = 1200 // ±300 mm: more than 10 L on each side
		top, tw   = 523.15, 333.15
		h1, h2, w = 3000.0, 60.0, 1000.0
	)
	k := 222 * 0.004
	g := Grid{Nx: nx, Ny: 3, CellM: cell, X0M: -300e-3 + cell/2, Y0M: 0}
	hf := make(stubField, g.Len())
	for c := range hf {
		if x, _ := g.CentreM(c); x < 0 {
			hf[c] = h1
		} else {
			hf[c] = h2
		}
	}
	p := &Problem{Grid: g, InBase: allTrue(g.Len()), BaseLayers: aluminium4mm, Interface: hf,
		Water: stubWater(w), TWaterK: tw, Temperature: &TemperatureHob{TopK: fill(g.Len(), top)}}
	s, err := Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	checkBalance(t, "fin", s, 0)
	halfR := 0.004 / 222 / 2
	hup := 1 / (1/w + halfR)
	side := func(h float64) (tinf, l float64) {
		hdn := 1 / (1/h + halfR)
		return (hdn*top + hup*tw) / (hdn + hup), math.Sqrt(k / (hdn + hup))
	}
	t1, l1 := side(h1)
	t2, l2 := side(h2)
	d := t2 - t1
	want := func(x float64) float64 {
		if x < 0 {
			return t1 + d*l1/(l1+l2)*math.Exp(x/l1)
		}
		return t2 - d*l2/(l1+l2)*math.Exp(-x/l2)
	}
	worst := 0.0
	defer func() { t.Logf("largest profile error %.3g of the step %.4g K", worst, d) }()
	for _, i := range []int{0, 300, 560, 590, 599, 600, 601, 610, 640, 700, 900, 1199} {
		for j := 0; j < 3; j++ {
			c := j*nx + i
			x, _ := g.CentreM(c)
			e := math.Abs(s.TPanK[c] - want(x))
			worst = math.Max(worst, e/math.Abs(d))
			if e > 2e-4*math.Abs(d) {
				t.Errorf("x = %+.2f mm: T = %.6f K, fin solution %.6f K (error %.2g of the step %.4g K)", x*1e3, s.TPanK[c], want(x), e/math.Abs(d), d)
			}
		}
	}
}

// TestParaboloidGap: a dished base with gap g(r) = s(1 − r²/a²) + g0 over a
// disc of radius a, gas conduction only (h = k/g), base held at the water
// temperature (huge water-side h, negligible base resistance). The power is
// P = ∫₀ᵃ kΔT/g(r) 2πr dr = π a² k ΔT/s · ln(1 + s/g0) (substitute
// u = r²/a²; derived here). The grid discretises the disc by cell centres;
// the test allows 0.5 % (measured: 0.07 %).
func TestParaboloidGap(t *testing.T) {
	const (
		a, sag, g0 = 0.1, 0.5e-3, 20e-6
		kGas       = 0.04
		top, tw    = 500.0, 350.0
		cell       = 0.5e-3
	)
	n := int(2*a/cell) + 2
	g := Grid{Nx: n, Ny: n, CellM: cell, X0M: -float64(n-1) * cell / 2, Y0M: -float64(n-1) * cell / 2}
	in := discMask(g, 0, 0, a)
	hf := make(stubField, g.Len())
	for c := range hf {
		x, y := g.CentreM(c)
		r2 := (x*x + y*y) / (a * a)
		hf[c] = kGas / (sag*(1-r2) + g0)
	}
	p := &Problem{Grid: g, InBase: in, BaseLayers: []Layer{{1e-4, 1e5}}, Interface: hf,
		Water: stubWater(1e9), TWaterK: tw, Temperature: &TemperatureHob{TopK: fill(g.Len(), top)}}
	s, err := Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	checkBalance(t, "paraboloid", s, 0)
	want := math.Pi * a * a * kGas * (top - tw) / sag * math.Log(1+sag/g0)
	t.Logf("power %.6g W, analytic %.6g W (%.3g %%)", s.PowerW, want, 100*(s.PowerW/want-1))
	if d := math.Abs(s.PowerW-want) / want; d > 0.005 {
		t.Errorf("power %.6g W, analytic %.6g W (%.3g %%)", s.PowerW, want, 100*d)
	}
	if s.GasW != s.PowerW && math.Abs(s.GasW-s.PowerW) > 1e-9*s.PowerW {
		t.Errorf("gas power %.9g W, total %.9g W", s.GasW, s.PowerW)
	}
}

// randomProblem is a temperature-mode problem on an nx × ny grid with a disc
// base, a radial hob temperature and an interface h drawn log-uniformly in
// [20, 1e4] W/(m²·K) per cell.
func randomProblem(nx, ny int, seed uint64) *Problem {
	rng := rand.New(rand.NewPCG(seed, 7))
	g := Grid{Nx: nx, Ny: ny, CellM: 0.002, X0M: -float64(nx-1) * 0.001, Y0M: -float64(ny-1) * 0.001}
	r := 0.001 * float64(min(nx, ny)-1)
	in := discMask(g, 0, 0, r)
	hf := make(stubField, g.Len())
	top := make([]float64, g.Len())
	for c := range hf {
		hf[c] = 20 * math.Pow(500, rng.Float64())
		x, y := g.CentreM(c)
		top[c] = 520 - 40*(x*x+y*y)/(r*r)
	}
	return &Problem{Grid: g, InBase: in, BaseLayers: aluminium4mm, Interface: hf,
		Water: stubWater(1500), TWaterK: 333.15, Temperature: &TemperatureHob{TopK: top}}
}

// TestDirectTemperature compares Solve with a dense Cholesky solve (gonum
// mat) of the same finite-volume equations, assembled here independently,
// to 1e-8 K. RelTol is 1e-12: the default 1e-10 leaves errors of order 1e-8 K
// on these ill-conditioned systems (weak sinks against strong faces).
func TestDirectTemperature(t *testing.T) {
	for _, sz := range [][2]int{{30, 30}, {31, 24}, {5, 40}} {
		p := randomProblem(sz[0], sz[1], uint64(sz[0]*100+sz[1]))
		p.RelTol = 1e-12
		s, err := Solve(p)
		if err != nil {
			t.Fatal(err)
		}
		checkBalance(t, "direct", s, 0)
		g := p.Grid
		a := g.CellM * g.CellM
		kb := 222 * 0.004
		halfR := 0.004 / 222 / 2
		idx := map[int]int{}
		for c, b := range p.InBase {
			if b {
				idx[c] = len(idx)
			}
		}
		m := mat.NewSymDense(len(idx), nil)
		rhs := mat.NewVecDense(len(idx), nil)
		hf := p.Interface.(stubField)
		for c, u := range idx {
			hdn := 1 / (1/hf[c] + halfR)
			hup := 1 / (1/1500.0 + halfR)
			d := a * (hdn + hup)
			rhs.SetVec(u, a*(hdn*p.Temperature.TopK[c]+hup*p.TWaterK))
			i, j := c%g.Nx, c/g.Nx
			for _, nb := range [][2]int{{i - 1, j}, {i + 1, j}, {i, j - 1}, {i, j + 1}} {
				if nb[0] < 0 || nb[0] >= g.Nx || nb[1] < 0 || nb[1] >= g.Ny {
					continue
				}
				if v, ok := idx[nb[1]*g.Nx+nb[0]]; ok {
					d += kb
					m.SetSym(u, v, -kb)
				}
			}
			m.SetSym(u, u, d)
		}
		var ch mat.Cholesky
		if !ch.Factorize(m) {
			t.Fatal("oracle matrix not positive definite")
		}
		var x mat.VecDense
		if err := ch.SolveVecTo(&x, rhs); err != nil {
			t.Fatal(err)
		}
		for c, u := range idx {
			if d := math.Abs(s.TPanK[c] - x.AtVec(u)); d > 1e-8 {
				t.Fatalf("%v cell %d: T = %.12g K, direct %.12g K", sz, c, s.TPanK[c], x.AtVec(u))
			}
		}
	}
}

// TestDirectHeater compares a heater-mode solve whose glass is entirely
// under the pan (so the system is linear) with a dense Cholesky solve of
// the two-layer equations assembled here: glass nodes with the heater
// source (radial profile 1 + r/r_z, normalised), transmitted fraction 0.2
// into the pan, downward loss, and the series t_g/(2k_g) + 1/h + R_b/2 to the
// pan node. Agreement to 1e-8 K, with RelTol 1e-12 as in
// TestDirectTemperature.
func TestDirectHeater(t *testing.T) {
	const (
		nx, ny = 28, 26
		cell   = 0.004
		hw     = 900.0
		tw     = 350.0
		room   = 296.15
		down   = 10.0
		tau    = 0.2
		power  = 1500.0
	)
	g := Grid{Nx: nx, Ny: ny, CellM: cell, X0M: -0.05, Y0M: -0.048}
	rng := rand.New(rand.NewPCG(3, 4))
	hf := make(stubField, g.Len())
	for c := range hf {
		hf[c] = 30 * math.Pow(100, rng.Float64())
	}
	heater := &HeaterHob{PowerW: power, ZoneDiameterM: 0.07, ZoneCentreM: [2]float64{0.003, -0.002},
		PowerProfile: func(r float64) float64 { return 1 + r/0.035 },
		Glass:        Layer{0.004, 1.6}, GlassEmissivity: 0.9, GlassRadiusM: 0.045,
		DownHWM2K: down, RoomK: room, TransmittedFraction: tau}
	p := &Problem{Grid: g, InBase: allTrue(g.Len()), BaseLayers: aluminium4mm, Interface: hf,
		Water: stubWater(hw), TWaterK: tw, Heater: heater, RelTol: 1e-12}
	s, err := Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	checkBalance(t, "heater direct", s, 0)
	n := g.Len()
	a := cell * cell
	glass := discMask(g, 0.003, -0.002, 0.045)
	zone := discMask(g, 0.003, -0.002, 0.035)
	var wsum float64
	w := make([]float64, n)
	for c := range w {
		if zone[c] {
			x, y := g.CentreM(c)
			w[c] = 1 + math.Hypot(x-0.003, y+0.002)/0.035
			wsum += w[c]
		}
	}
	// Unknowns: pan node c → c, glass node c → n + c (all kept; a glass
	// node outside the glass disc gets an identity row).
	m := mat.NewSymDense(2*n, nil)
	rhs := mat.NewVecDense(2*n, nil)
	halfRb, halfRg := 0.004/222/2, 0.004/1.6/2
	hup := 1 / (1/hw + halfRb)
	// The heater power enters at the glass underside, which loses
	// down·(T_u − room): the node sees the loss through half the glass and
	// gets the share gIn of the power.
	gIn := 1 / (1 + down*halfRg)
	for c := 0; c < n; c++ {
		i, j := c%nx, c/nx
		dp, dg := a*hup, a*down*gIn
		bp, bg := a*hup*tw, a*down*gIn*room
		if glass[c] {
			cp := a / (halfRg + 1/hf[c] + halfRb)
			dp += cp
			dg += cp
			m.SetSym(c, n+c, -cp)
			bp += power * tau * w[c] / wsum
			bg += power * (1 - tau) * w[c] / wsum * gIn
		}
		for _, nb := range [][2]int{{i + 1, j}, {i, j + 1}, {i - 1, j}, {i, j - 1}} {
			if nb[0] < 0 || nb[0] >= nx || nb[1] < 0 || nb[1] >= ny {
				continue
			}
			q := nb[1]*nx + nb[0]
			dp += 0.888
			m.SetSym(c, q, -0.888)
			if glass[c] && glass[q] {
				dg += 1.6 * 0.004
				m.SetSym(n+c, n+q, -1.6*0.004)
			}
		}
		m.SetSym(c, c, dp)
		rhs.SetVec(c, bp)
		if glass[c] {
			m.SetSym(n+c, n+c, dg)
			rhs.SetVec(n+c, bg)
		} else {
			m.SetSym(n+c, n+c, 1)
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(m) {
		t.Fatal("oracle matrix not positive definite")
	}
	var x mat.VecDense
	if err := ch.SolveVecTo(&x, rhs); err != nil {
		t.Fatal(err)
	}
	for c := 0; c < n; c++ {
		if d := math.Abs(s.TPanK[c] - x.AtVec(c)); d > 1e-8 {
			t.Fatalf("pan cell %d: T = %.12g K, direct %.12g K", c, s.TPanK[c], x.AtVec(c))
		}
		if !glass[c] {
			if !math.IsNaN(s.TGlassK[c]) {
				t.Fatalf("cell %d beyond the glass has T_glass %g", c, s.TGlassK[c])
			}
			continue
		}
		if d := math.Abs(s.TGlassK[c] - x.AtVec(n+c)); d > 1e-8 {
			t.Fatalf("glass cell %d: T = %.12g K, direct %.12g K", c, s.TGlassK[c], x.AtVec(n+c))
		}
	}
	if d := math.Abs(s.TransmittedW - tau*power); d > 1e-9*power {
		t.Errorf("transmitted %.12g W, want %.12g", s.TransmittedW, tau*power)
	}
	if p.Mode() != HeaterMode || p.Mode().String() != "heater" {
		t.Errorf("mode %v", p.Mode())
	}
	if s.DutyPct != 100 || s.HeaterW != power || s.UncoveredLossW != 0 {
		t.Errorf("duty %g %%, heater %g W, uncovered %g W", s.DutyPct, s.HeaterW, s.UncoveredLossW)
	}
}

// TestNonlinearUniform: a uniform base with a T-dependent interface (gas plus
// radiation between the surfaces, item 5.1) and nonlinear water sides,
// against the scalar balance solved by bisection here: a boiling-like
// q = c ΔT³, and an onset law (stubOnset: a fixed h below saturation, a
// steep cubic rise above it, capped like a critical heat flux).
func TestNonlinearUniform(t *testing.T) {
	const top = 560.0
	halfR := 0.004 / 222 / 2
	ifc := stubRad{gas: 400, eps1: 0.9, eps2: 0.6}
	tests := []struct {
		name  string
		tw    float64
		water WaterSide
	}{
		{"fixed water", 373.15, stubWater(1000)},
		{"cubic water", 373.15, stubCubic(30)},
		{"onset, subcooled", 340, stubOnset{}},
		{"onset, saturated", 373.15, stubOnset{}},
	}
	for _, tc := range tests {
		g := Grid{Nx: 12, Ny: 10, CellM: 0.001}
		p := &Problem{Grid: g, InBase: allTrue(g.Len()), BaseLayers: aluminium4mm, Interface: ifc,
			Water: tc.water, TWaterK: tc.tw, Temperature: &TemperatureHob{TopK: fill(g.Len(), top)},
			OuterTolK: 1e-9}
		s, err := Solve(p)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		checkBalance(t, tc.name, s, 0)
		if s.OuterIterations < 3 {
			t.Errorf("%s: %d outer iterations for a nonlinear problem", tc.name, s.OuterIterations)
		}
		// Oracle: with the inner face at ts, q = h_w(ts)·(ts − T_w), node
		// T = ts + q·R/2, outer face Tf = T + q·R/2; the root of
		// h(top, Tf)·(top − Tf) − q.
		res := func(ts float64) (float64, float64) {
			q := tc.water.H(ts, tc.tw) * (ts - tc.tw)
			tn := ts + q*halfR
			tf := tn + q*halfR
			h := ifc.gas + ifc.hr(top, tf)
			return h*(top-tf) - q, tn
		}
		lo, hi := tc.tw, top
		for range 200 {
			mid := 0.5 * (lo + hi)
			if r, _ := res(mid); r > 0 {
				lo = mid
			} else {
				hi = mid
			}
		}
		_, want := res(0.5 * (lo + hi))
		for c, v := range s.TPanK {
			if math.Abs(v-want) > 1e-7 {
				t.Fatalf("%s: cell %d: T = %.12g K, scalar balance %.12g K", tc.name, c, v, want)
			}
		}
	}
}

// TestBoilingOnset: patches of good and poor contact over subcooled water
// with the onset law put some cells just below saturation (small h) and
// others far up the steep branch. Plain Newton updates cycle between the two
// (the cell jumps by ~80 K each iteration and never settles); the line
// search must make the outer iteration converge, quickly, with the energy
// balance held.
func TestBoilingOnset(t *testing.T) {
	for _, tw := range []float64{300, 340, 373.15} {
		p := patchProblem(48, 0.002, 0.01)
		p.Water = stubOnset{}
		p.TWaterK = tw
		s, err := Solve(p)
		if err != nil {
			t.Fatalf("water %g K: %v", tw, err)
		}
		checkBalance(t, "onset", s, 0)
		if s.OuterIterations > 15 {
			t.Errorf("water %g K: %d outer iterations", tw, s.OuterIterations)
		}
		boiling := 0
		for _, v := range s.TPanK {
			if v > 380 {
				boiling++
			}
		}
		if boiling == 0 {
			t.Errorf("water %g K: no cell past the onset; the test lost its point", tw)
		}
	}
}

// heaterScene is the default radiant zone of DESIGN.md §5.3a (1800 W,
// 180 mm zone, 4 mm glass-ceramic k = 1.6, ε 0.9, 10 W/m²K down to 23 °C,
// limiter 560 °C) under a 200 mm base, on a grid of the given cell size with
// interface ifc.
func heaterScene(cell float64, ifc Interface) *Problem {
	rg := 0.13
	n := int(2*rg/cell) + 1
	g := Grid{Nx: n, Ny: n, CellM: cell, X0M: -float64(n-1) * cell / 2, Y0M: -float64(n-1) * cell / 2}
	return &Problem{Grid: g, InBase: discMask(g, 0, 0, 0.1), BaseLayers: aluminium4mm, Interface: ifc,
		Water: stubWater(1000), TWaterK: 333.15,
		Heater: &HeaterHob{PowerW: 1800, ZoneDiameterM: 0.18, Glass: Layer{0.004, 1.6}, GlassEmissivity: 0.9,
			GlassRadiusM: rg, DownHWM2K: 10, RoomK: 296.15, LimiterK: 833.15}}
}

// TestHeaterContact: in heater mode a flat, well-contacting base keeps the
// glass cooler than a poor one; a lifted pan (almost no contact) makes the
// limiter cut the duty so the hottest glass sits at the limiter temperature.
func TestHeaterContact(t *testing.T) {
	var glassMax []float64
	for _, h := range []float64{3000, 300, 1} {
		p := heaterScene(0.004, stubRad{gas: h, eps1: 0.9, eps2: 0.3})
		s, err := Solve(p)
		if err != nil {
			t.Fatalf("h %g: %v", h, err)
		}
		checkBalance(t, "heater", s, 0)
		glassMax = append(glassMax, s.GlassMaxK)
		limited := s.DutyPct < 100
		switch h {
		case 3000:
			if limited || len(s.Warnings) != 0 {
				t.Errorf("flat base: duty %g %%, warnings %q", s.DutyPct, s.Warnings)
			}
			// 1800 W into a 180 mm zone is 70.7 kW/m²; with the glass near
			// 500 K the down and uncovered losses are ~100 W, so well over
			// 80 % must reach the pan (our own bound, from the balance).
			if s.PowerW < 0.8*1800 {
				t.Errorf("flat base: %g W of 1800 W into the pan", s.PowerW)
			}
		case 1:
			if !limited {
				t.Fatalf("lifted pan: limiter did not engage (glass max %.1f K)", s.GlassMaxK)
			}
			if d := math.Abs(s.GlassMaxK - 833.15); d > 1e-6 {
				t.Errorf("lifted pan: glass max %.9g K, limiter 833.15 K", s.GlassMaxK)
			}
			if len(s.Warnings) == 0 || !strings.Contains(s.Warnings[0], "cycled") {
				t.Errorf("lifted pan: warnings %q", s.Warnings)
			}
			if !(s.HeaterW < 1800) || math.Abs(s.HeaterW-18*s.DutyPct) > 1e-9 {
				t.Errorf("lifted pan: heater %g W at duty %g %%", s.HeaterW, s.DutyPct)
			}
		}
		for c, v := range s.TGlassK {
			if !math.IsNaN(v) && v > s.GlassMaxK {
				t.Fatalf("glass cell %d at %g K above max %g", c, v, s.GlassMaxK)
			}
		}
	}
	if !(glassMax[0] < glassMax[1] && glassMax[1] < glassMax[2]) {
		t.Errorf("glass max %v K: want increasing as contact worsens", glassMax)
	}
}

// TestHeaterLowLimiter: a limiter just above the water temperature holds the
// glass there, from a start that is hotter than the limiter.
func TestHeaterLowLimiter(t *testing.T) {
	p := heaterScene(0.004, stubH{0, 1500, 10})
	p.TWaterK = 350
	p.Heater.LimiterK = 380
	s, err := Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	checkBalance(t, "low limiter", s, 0)
	if math.Abs(s.GlassMaxK-380) > 1e-6 || !(s.DutyPct > 0 && s.DutyPct < 100) {
		t.Errorf("glass max %.9g K, duty %g %%", s.GlassMaxK, s.DutyPct)
	}
}

// TestHeaterPanBesideZone: a pan smaller than the zone leaves heated
// glass uncovered; its losses enter the balance, and the transmitted
// power over the uncovered zone (the duty times the zone's share outside
// the base) is lost. It is warned about from 1 % of the heater's power:
// a small pan loses more, a base a little smaller than the zone less
// (0.9 %: reported, not warned).
func TestHeaterPanBesideZone(t *testing.T) {
	for _, tc := range []struct {
		name     string
		centreXM float64 // base centre, m
		radiusM  float64 // base radius, m
		warn     bool
	}{
		{"small pan", 0.01, 0.07, true},
		{"nearly covering", 0, 0.086, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := heaterScene(0.004, stubH{0, 1500, 10})
			p.InBase = discMask(p.Grid, tc.centreXM, 0, tc.radiusM)
			p.Heater.TransmittedFraction = 0.1
			s, err := Solve(p)
			if err != nil {
				t.Fatal(err)
			}
			zone := discMask(p.Grid, 0, 0, 0.09)
			var nz, nout int
			for c, z := range zone {
				if z {
					nz++
					if !p.InBase[c] {
						nout++
					}
				}
			}
			lost := s.HeaterW * 0.1 * float64(nout) / float64(nz)
			checkBalance(t, tc.name, s, 0)
			if d := math.Abs(s.TransmittedLostW - lost); d > 1e-9*lost {
				t.Errorf("transmitted beside the pan %.12g W, want %.12g", s.TransmittedLostW, lost)
			}
			if share := s.TransmittedLostW / s.HeaterW; tc.warn != (share >= 0.01) {
				t.Fatalf("%.3g W of %.4g W passes beside the pan: the case needs a share on the other side of 1 %%", s.TransmittedLostW, s.HeaterW)
			}
			if warnsBeside(s) != tc.warn {
				t.Errorf("warned %v, want %v: %q", !tc.warn, tc.warn, s.Warnings)
			}
			if tc.warn && !(s.UncoveredLossW > 0.05*s.HeaterW) {
				t.Errorf("uncovered loss %g W of %g W", s.UncoveredLossW, s.HeaterW)
			}
		})
	}
}

// warnsBeside reports whether s warns of radiation passing beside the pan.
func warnsBeside(s *Solution) bool {
	for _, w := range s.Warnings {
		if strings.Contains(w, "beside the pan") {
			return true
		}
	}
	return false
}

// TestNoConvergence: an interface that flips between good and poor contact
// around the pan temperature makes the fixed point cycle; Solve must stop
// with an error naming the last change, not hang.
func TestNoConvergence(t *testing.T) {
	g := Grid{Nx: 6, Ny: 5, CellM: 0.001}
	p := &Problem{Grid: g, InBase: allTrue(g.Len()), BaseLayers: aluminium4mm, Interface: stubFlip{400},
		Water: stubWater(1000), TWaterK: 300, Temperature: &TemperatureHob{TopK: fill(g.Len(), 500)}}
	_, err := Solve(p)
	if err == nil || !strings.Contains(err.Error(), "did not converge") || !strings.Contains(err.Error(), "|ΔT|") {
		t.Fatalf("got %v", err)
	}
}

func TestBadInput(t *testing.T) {
	good := func() *Problem {
		g := Grid{Nx: 4, Ny: 3, CellM: 0.001}
		return &Problem{Grid: g, InBase: allTrue(12), BaseLayers: aluminium4mm, Interface: stubH{0, 100, 0},
			Water: stubWater(1000), TWaterK: 300, Temperature: &TemperatureHob{TopK: fill(12, 500)}}
	}
	heater := func() *Problem {
		p := good()
		p.Temperature = nil
		p.Heater = &HeaterHob{PowerW: 100, ZoneDiameterM: 0.002, Glass: Layer{0.004, 1.6}, GlassRadiusM: 0.003,
			RoomK: 296, GlassEmissivity: 0.9, LimiterK: 800}
		return p
	}
	tests := []struct {
		name string
		mod  func(p *Problem) *Problem
		want string
	}{
		{"nil", func(p *Problem) *Problem { return nil }, "nil problem"},
		{"zero grid", func(p *Problem) *Problem { p.Grid.Nx = 0; return p }, "bad grid"},
		{"nan cell", func(p *Problem) *Problem { p.Grid.CellM = math.NaN(); return p }, "bad grid"},
		{"short mask", func(p *Problem) *Problem { p.InBase = p.InBase[:5]; return p }, "InBase"},
		{"empty base", func(p *Problem) *Problem { p.InBase = make([]bool, 12); return p }, "no base cells"},
		{"no layers", func(p *Problem) *Problem { p.BaseLayers = nil; return p }, "no base layers"},
		{"bad layer", func(p *Problem) *Problem { p.BaseLayers = []Layer{{0.001, 0}}; return p }, "conductivity"},
		{"no interface", func(p *Problem) *Problem { p.Interface = nil; return p }, "interface"},
		{"no water", func(p *Problem) *Problem { p.Water = nil; return p }, "water"},
		{"water temperature", func(p *Problem) *Problem { p.TWaterK = -1; return p }, "water temperature"},
		{"both hobs", func(p *Problem) *Problem { q := heater(); q.Temperature = p.Temperature; return q }, "exactly one"},
		{"no hob", func(p *Problem) *Problem { p.Temperature = nil; return p }, "exactly one"},
		{"short TopK", func(p *Problem) *Problem { p.Temperature.TopK = p.Temperature.TopK[:3]; return p }, "TopK"},
		{"nan TopK", func(p *Problem) *Problem { p.Temperature.TopK[4] = math.NaN(); return p }, "cell 4"},
		{"tolerance", func(p *Problem) *Problem { p.RelTol = 2; return p }, "tolerance"},
		{"NaN interface", func(p *Problem) *Problem { p.Interface = stubBad{7}; return p }, "cell 7"},
		{"negative water h", func(p *Problem) *Problem { p.Water = stubWater(-5); return p }, "water side"},
		{"glass radius", func(p *Problem) *Problem { q := heater(); q.Heater.GlassRadiusM = 0.0005; return q }, "glass radius"},
		{"glass layer", func(p *Problem) *Problem { q := heater(); q.Heater.Glass.ThicknessM = 0; return q }, "glass"},
		{"emissivity", func(p *Problem) *Problem { q := heater(); q.Heater.GlassEmissivity = 1.5; return q }, "emissivity"},
		{"room", func(p *Problem) *Problem { q := heater(); q.Heater.RoomK = 20; return q }, "room"},
		{"transmitted", func(p *Problem) *Problem { q := heater(); q.Heater.TransmittedFraction = 1; return q }, "transmitted"},
		{"limiter", func(p *Problem) *Problem { q := heater(); q.Heater.LimiterK = 290; return q }, "limiter"},
		{"power", func(p *Problem) *Problem { q := heater(); q.Heater.PowerW = math.Inf(1); return q }, "heater power"},
		{"profile", func(p *Problem) *Problem {
			q := heater()
			q.Heater.PowerProfile = func(float64) float64 { return -1 }
			return q
		}, "profile"},
		{"zero profile", func(p *Problem) *Problem {
			q := heater()
			q.Heater.PowerProfile = func(float64) float64 { return 0 }
			return q
		}, "no glass cell"},
		{"short start", func(p *Problem) *Problem { p.InitialTPanK = fill(11, 300); return p }, "InitialTPanK"},
		{"NaN start", func(p *Problem) *Problem { p.InitialTPanK = fill(12, 300); p.InitialTPanK[5] = math.NaN(); return p }, "cell 5"},
		{"glass start", func(p *Problem) *Problem { q := heater(); q.InitialTGlassK = fill(12, -1); return q }, "InitialTGlassK"},
		{"duty start", func(p *Problem) *Problem { q := heater(); q.InitialDutyPct = 120; return q }, "initial duty"},
	}
	for _, tc := range tests {
		_, err := Solve(tc.mod(good()))
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: got error %v, want one containing %q", tc.name, err, tc.want)
		}
	}
	// The heater stub itself is valid.
	if _, err := Solve(heater()); err != nil {
		t.Errorf("valid heater problem: %v", err)
	}
}

// solveFresh is Solve on newly allocated storage (no workspace pool).
func solveFresh(p *Problem) (*Solution, error) {
	if err := validate(p); err != nil {
		return nil, err
	}
	s := newPlate(p)
	if err := s.warmStart(); err != nil {
		return nil, err
	}
	if err := s.run(); err != nil {
		return nil, err
	}
	return s.solution()
}

// sameSolution reports the first difference, bit for bit, between two
// solutions' temperatures, fluxes and totals.
func sameSolution(a, b *Solution) string {
	eq := func(x, y float64) bool { return x == y || (math.IsNaN(x) && math.IsNaN(y)) }
	for _, f := range []struct {
		name string
		x, y []float64
	}{{"TPanK", a.TPanK, b.TPanK}, {"TGlassK", a.TGlassK, b.TGlassK}, {"FluxWM2", a.FluxWM2, b.FluxWM2}} {
		if len(f.x) != len(f.y) {
			return f.name + " lengths"
		}
		for i := range f.x {
			if !eq(f.x[i], f.y[i]) {
				return fmt.Sprintf("%s[%d]: %.17g and %.17g", f.name, i, f.x[i], f.y[i])
			}
		}
	}
	if a.PowerW != b.PowerW || a.HeaterW != b.HeaterW || a.UncoveredLossW != b.UncoveredLossW ||
		a.LinearIterations != b.LinearIterations || a.OuterIterations != b.OuterIterations {
		return fmt.Sprintf("totals: %+v and %+v", *a, *b)
	}
	return ""
}

// TestWorkspaceReuse: a solve in storage left by another problem on the same
// grid (other base mask, interface, limiter state and hob mode) gives the
// same bits as a solve in fresh storage, and a Solver reusing its buffers
// agrees too; a solution keeps its values through the Solver's next solve.
func TestWorkspaceReuse(t *testing.T) {
	heaterA := heaterScene(0.004, stubRad{gas: 60, eps1: 0.9, eps2: 0.3}) // limiter engaged
	heaterB := heaterScene(0.004, stubH{0, 1500, 10})
	heaterB.InBase = discMask(heaterB.Grid, 0.01, 0, 0.07)
	heaterB.Heater.TransmittedFraction = 0.1
	tempA := patchProblem(48, 0.002, 0.01)
	tempB := randomProblem(48, 48, 9)
	for _, pair := range [][2]*Problem{{heaterA, heaterB}, {heaterB, heaterA}, {tempA, tempB}} {
		want, err := solveFresh(pair[1])
		if err != nil {
			t.Fatal(err)
		}
		s := reusePlate(pair[0], nil)
		if err := s.run(); err != nil {
			t.Fatal(err)
		}
		s = reusePlate(pair[1], s)
		if err := s.run(); err != nil {
			t.Fatal(err)
		}
		got, err := s.solution()
		if err != nil {
			t.Fatal(err)
		}
		if d := sameSolution(got, want); d != "" {
			t.Errorf("reused storage: %s", d)
		}
		var sv Solver
		for range 2 {
			if _, err := sv.Solve(pair[0]); err != nil {
				t.Fatal(err)
			}
			got, err := sv.Solve(pair[1])
			if err != nil {
				t.Fatal(err)
			}
			if d := sameSolution(got, want); d != "" {
				t.Errorf("Solver.Solve after another problem: %s", d)
			}
		}
		// The solution is made of the solve's work vectors (handOver): a
		// later solve on the same Solver and grid must leave it as it was.
		kept, err := sv.Solve(pair[1])
		if err != nil {
			t.Fatal(err)
		}
		if _, err := sv.Solve(pair[0]); err != nil {
			t.Fatal(err)
		}
		if d := sameSolution(kept, want); d != "" {
			t.Errorf("a solution after the Solver's next solve: %s", d)
		}
	}
}

// TestSolverCache: a Solver keeps the buffers of its last two grid shapes:
// a fine solve, one on a coarser grid and the fine one again (as the
// pipeline runs the steady solve, the sensitivity table and the heat-up)
// reuse the fine buffers the second time and give the same bits as fresh
// solves; the second fine solve drops the coarse buffers (fewer nodes), so
// the coarse solve after it allocates afresh; a third shape drops the least
// recently used one.
func TestSolverCache(t *testing.T) {
	fine := heaterScene(0.004, stubRad{gas: 60, eps1: 0.9, eps2: 0.3})
	coarse := heaterScene(0.008, stubRad{gas: 60, eps1: 0.9, eps2: 0.3})
	temp := patchProblem(32, 0.002, 0.01)
	var sv Solver
	for i, p := range []*Problem{fine, coarse, fine, coarse, temp, fine} {
		want, err := solveFresh(p)
		if err != nil {
			t.Fatal(err)
		}
		key := [3]int{p.Grid.Nx, p.Grid.Ny, 1}
		if p.Heater != nil {
			key[2] = 2
		}
		var kept *plate
		for _, c := range sv.ws {
			if c.key == key {
				kept = c.s
			}
		}
		got, err := sv.Solve(p)
		if err != nil {
			t.Fatal(err)
		}
		if d := sameSolution(got, want); d != "" {
			t.Errorf("solve %d: %s", i, d)
		}
		// Solve 2 finds its shape kept; 3 finds coarse dropped by the
		// fine solve 2, and 5 finds fine dropped by temp.
		if wantKept := i == 2; (kept != nil) != wantKept {
			t.Errorf("solve %d: buffers kept %v, want %v", i, kept != nil, wantKept)
		}
		if sv.ws[0].key != key || (kept != nil && sv.ws[0].s != kept) {
			t.Errorf("solve %d: the buffers used are not first in the cache", i)
		}
		for _, c := range sv.ws[1:] {
			if c.s != nil && c.key[0]*c.key[1]*c.key[2] < key[0]*key[1]*key[2] {
				t.Errorf("solve %d on %v: buffers of the smaller grid %v still kept", i, key, c.key)
			}
		}
	}
}

// TestWarmStart: starting from the solution at a neighbouring water
// temperature (5 K away) reaches the same state as a cold start (both
// within OuterTolK = 1e-6 K of it, so within 1e-5 K of each other) with
// fewer iterations, with the limiter engaged.
func TestWarmStart(t *testing.T) {
	from := heaterScene(0.002, stubRad{gas: 60, eps1: 0.9, eps2: 0.3})
	prev, err := Solve(from)
	if err != nil {
		t.Fatal(err)
	}
	p := heaterScene(0.002, stubRad{gas: 60, eps1: 0.9, eps2: 0.3})
	p.TWaterK = 328.15
	cold, err := Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	p.InitialTPanK, p.InitialTGlassK, p.InitialDutyPct = prev.TPanK, prev.TGlassK, prev.DutyPct
	warm, err := Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	checkBalance(t, "warm", warm, 0)
	if !(cold.DutyPct < 100) {
		t.Fatalf("limiter not engaged: duty %g %%", cold.DutyPct)
	}
	for _, f := range [][2][]float64{{cold.TPanK, warm.TPanK}, {cold.TGlassK, warm.TGlassK}} {
		for i, v := range f[0] {
			if d := math.Abs(v - f[1][i]); d > 1e-5 {
				t.Fatalf("node %d: cold %.9g K, warm %.9g K", i, v, f[1][i])
			}
		}
	}
	if d := math.Abs(cold.PowerW/warm.PowerW - 1); d > 1e-8 {
		t.Errorf("power: cold %.12g W, warm %.12g W", cold.PowerW, warm.PowerW)
	}
	if !(warm.OuterIterations < cold.OuterIterations && warm.LinearIterations < cold.LinearIterations) {
		t.Errorf("iterations: warm %d outer, %d linear; cold %d, %d", warm.OuterIterations, warm.LinearIterations, cold.OuterIterations, cold.LinearIterations)
	}
	t.Logf("outer iterations: cold %d, warm %d; linear: cold %d, warm %d",
		cold.OuterIterations, warm.OuterIterations, cold.LinearIterations, warm.LinearIterations)

	// Temperature mode with a gas-and-radiation gap and a boiling-like
	// water side: the same state, no more iterations.
	tp := patchProblem(48, 0.002, 0.01)
	tp.Interface, tp.Water = stubRad{gas: 300, eps1: 0.9, eps2: 0.6}, stubCubic(30)
	prevT, err := Solve(tp)
	if err != nil {
		t.Fatal(err)
	}
	tp.TWaterK = 338.15
	coldT, err := Solve(tp)
	if err != nil {
		t.Fatal(err)
	}
	tp.InitialTPanK = prevT.TPanK
	warmT, err := Solve(tp)
	if err != nil {
		t.Fatal(err)
	}
	checkBalance(t, "warm, temperature mode", warmT, 0)
	for i, v := range coldT.TPanK {
		if d := math.Abs(v - warmT.TPanK[i]); d > 1e-5 {
			t.Fatalf("temperature mode, cell %d: cold %.9g K, warm %.9g K", i, v, warmT.TPanK[i])
		}
	}
	if warmT.OuterIterations > coldT.OuterIterations {
		t.Errorf("temperature mode: outer iterations warm %d, cold %d", warmT.OuterIterations, coldT.OuterIterations)
	}
}

// TestFixedWaterLink: the closed-form link of FixedWater gives the state of
// the general (Newton) link of the same constant coefficient, in both hob
// modes.
func TestFixedWaterLink(t *testing.T) {
	for _, p := range []*Problem{patchProblem(48, 0.002, 0.01), heaterScene(0.004, stubRad{gas: 60, eps1: 0.9, eps2: 0.3})} {
		p.Water = stubWater(1000)
		general, err := Solve(p)
		if err != nil {
			t.Fatal(err)
		}
		p.Water = FixedWater{HWM2K: 1000}
		closed, err := Solve(p)
		if err != nil {
			t.Fatal(err)
		}
		checkBalance(t, "fixed water", closed, 0)
		for i, v := range general.TPanK {
			if d := math.Abs(v - closed.TPanK[i]); d > 1e-6 {
				t.Fatalf("%v: cell %d: %.12g K (Newton link), %.12g K (closed form)", p.Mode(), i, v, closed.TPanK[i])
			}
		}
		if d := math.Abs(general.PowerW/closed.PowerW - 1); d > 1e-9 {
			t.Errorf("%v: power %.12g W and %.12g W", p.Mode(), general.PowerW, closed.PowerW)
		}
	}
}

// TestGlassLaw: the uncovered-glass law takes the plate-average McAdams
// coefficient at the mean surface temperature (AirPlateUpHWM2K, Incropera
// 6th ed. §9.6.2), held at the air table's end beyond it, and its link
// solves the series balance (T_node − T_s)/R = h̄·(T_s − T_room) +
// εσ(T_s⁴ − T_room⁴) (derived here), with g = dq/dT_node (checked by a
// central difference).
func TestGlassLaw(t *testing.T) {
	const (
		room, lM, eps, halfR = 296.15, 0.065, 0.9, 0.004 / 1.6 / 2
	)
	l := glassLaw{eps: eps, roomK: room, lM: lM}
	if err := l.setMean(450); err != nil {
		t.Fatal(err)
	}
	want, err := AirPlateUpHWM2K(450, room, lM)
	if err != nil {
		t.Fatal(err)
	}
	if l.hWM2K != want || l.clamped {
		t.Errorf("h %g W/(m²·K), want %g (clamped %v)", l.hWM2K, want, l.clamped)
	}
	for _, tn := range []float64{296.15, 300, 500, 833.15} {
		ts, q, g := l.link(tn, halfR, math.NaN())
		t2, r2 := ts*ts, room*room
		law := l.hWM2K*(ts-room) + eps*fluid.StefanBoltzmann*(t2*t2-r2*r2)
		if d := math.Abs(q - law); d > 1e-9*math.Abs(law)+1e-9 {
			t.Errorf("T %g K: q %.12g W/m², law at T_s %.12g", tn, q, law)
		}
		if d := math.Abs((tn-ts)/halfR - q); d > 1e-6*math.Abs(q)+1e-6 {
			t.Errorf("T %g K: conduction %.12g W/m², surface %.12g", tn, (tn-ts)/halfR, q)
		}
		// surface (the line search's and the outputs' path) gives link's
		// surface and flux to the bit, and the law's derivative
		// h̄ + 4εσT_s³ (at the last iterate, within 1e-8 K of T_s), from
		// which linkConductance gives link's g to the bit.
		ss, sq, gs := l.surface(tn, halfR, math.NaN())
		if math.Float64bits(ss) != math.Float64bits(ts) || math.Float64bits(sq) != math.Float64bits(q) {
			t.Errorf("T %g K: surface gives %.17g K, %.17g W/m²; link %.17g K, %.17g W/m²", tn, ss, sq, ts, q)
		}
		if dq := l.hWM2K + 4*eps*fluid.StefanBoltzmann*ts*ts*ts; math.Abs(gs-dq) > 1e-6*dq {
			t.Errorf("T %g K: surface derivative %.12g W/(m²·K), law %.12g", tn, gs, dq)
		}
		if lg := l.linkConductance(tn, halfR, sq, gs); math.Float64bits(lg) != math.Float64bits(g) {
			t.Errorf("T %g K: linkConductance %.17g, link's g %.17g W/(m²·K)", tn, lg, g)
		}
		if tn == room {
			continue
		}
		const dT = 1e-3
		_, qp, _ := l.link(tn+dT, halfR, ts)
		_, qm, _ := l.link(tn-dT, halfR, ts)
		if fd := (qp - qm) / (2 * dT); math.Abs(g-fd) > 1e-4*fd {
			t.Errorf("T %g K: g %.9g, central difference %.9g W/(m²·K)", tn, g, fd)
		}
	}
	if err := l.setMean(3000); err != nil || !l.clamped {
		t.Fatalf("hot mean: %v, clamped %v", err, l.clamped)
	}
	if want, _ := AirPlateUpHWM2K(2*fluid.AirMaxK-room, room, lM); l.hWM2K != want {
		t.Errorf("clamped h %g, want %g", l.hWM2K, want)
	}
}

// TestDirection: direction turns the linear solution into the step
// next − T in place, each node to the bit, and stops at the first node
// that is not finite, naming it.
func TestDirection(t *testing.T) {
	for _, tc := range []struct {
		name    string
		next    []float64
		wantErr string // "" for none
	}{
		{"finite", []float64{300.25, 301.5, 1e-300, 299.125}, ""},
		{"NaN then Inf", []float64{300.25, math.NaN(), math.Inf(1), 299.125}, "node 1 became NaN"},
		{"Inf", []float64{300.25, 301.5, math.Inf(-1), 299.125}, "node 2 became -Inf"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := &plate{t: []float64{300, 301.75, 2e-300, 0.1}, outer: 3}
			next := append([]float64(nil), tc.next...)
			err := s.direction(next)
			if tc.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tc.wantErr) {
					t.Fatalf("error %v, want one with %q", err, tc.wantErr)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			for i, d := range next {
				if want := tc.next[i] - s.t[i]; math.Float64bits(d) != math.Float64bits(want) {
					t.Errorf("node %d: step %.17g, want %.17g", i, d, want)
				}
			}
		})
	}
}
