package spc

import (
	"bytes"
	"errors"
	"fmt"
	"image/color"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/plot"
)

// alternating returns n points 10.5, 9.5, 10.5, ...: mean 10, every moving
// range 1, so σ̂ = 1/1.128 = 0.8865 and the zones are ±0.887, ±1.773, ±2.660.
func alternating(n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = 10.5
		if i%2 == 1 {
			v[i] = 9.5
		}
	}
	return v
}

func TestLimits(t *testing.T) {
	c, err := Individuals(alternating(20), 20)
	if err != nil {
		t.Fatal(err)
	}
	// MR̄ = 1: UCL = 10 + 3/1.128 = 12.6596, MR UCL = 3.267 (D₄, Montgomery 2013 App. VI).
	for _, tc := range []struct {
		name      string
		got, want float64
	}{{"centre", c.Centre, 10}, {"sigma", c.Sigma, 1 / 1.128}, {"UCL", c.UCL, 12.659574}, {"LCL", c.LCL, 7.340426},
		{"MR centre", c.MRCentre, 1}, {"MR UCL", c.MRUCL, 3.267}} {
		if math.Abs(tc.got-tc.want) > 1e-6 {
			t.Errorf("%s = %.7f, want %.7f", tc.name, tc.got, tc.want)
		}
	}
	if c.Signalled() || c.Provisional {
		t.Errorf("stable alternating series: signalled %v, provisional %v", c.Signalled(), c.Provisional)
	}
}

// Each rule fires, alone, at the point that completes its pattern, on a
// series appended to an alternating baseline of 20 points.
func TestRules(t *testing.T) {
	for _, tc := range []struct {
		name   string
		tail   []float64
		want   map[int][]Rule
		wantMR []int
	}{
		{"WE1 high", []float64{13}, map[int][]Rule{20: {WE1}}, []int{20}},
		{"WE1 low", []float64{7}, map[int][]Rule{20: {WE1}}, nil},
		{"WE2", []float64{12, 10, 12}, map[int][]Rule{22: {WE2}}, nil},
		{"WE2 low", []float64{8, 10, 8}, map[int][]Rule{22: {WE2}}, nil},
		{"WE2 needs the same side", []float64{12, 10, 8}, nil, nil},
		{"WE3", []float64{11, 11, 10.2, 11, 11}, map[int][]Rule{24: {WE3}}, nil},
		{"WE4", []float64{10.3, 10.3, 10.3, 10.3, 10.3, 10.3, 10.3, 10.3}, map[int][]Rule{27: {WE4}}, nil},
		{"WE4 broken by the centre line", []float64{10.3, 10.3, 10.3, 10, 10.3, 10.3, 10.3, 10.3}, nil, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, err := Individuals(append(alternating(20), tc.tail...), 20)
			if err != nil {
				t.Fatal(err)
			}
			for i, s := range c.Signals {
				if !slices.Equal(s, tc.want[i]) {
					t.Errorf("point %d: rules %v, want %v", i, s, tc.want[i])
				}
			}
			for i, s := range c.MRSignals {
				if s != slices.Contains(tc.wantMR, i) {
					t.Errorf("moving range %d: signal %v", i, s)
				}
			}
		})
	}
}

// A step of 2σ after a stable stretch is flagged soon after the step. Limits
// from 20 points are themselves uncertain (σ̂ from 19 moving ranges is off
// by about ±15 %), so one seed proves little: over 400 seeded series (20
// baseline points, 10 more stable ones, then 10 after a +2σ step) the share
// flagged within the 10 points after the step must be at least 0.9, and
// at least three times the share flagged in the 10 stable points before it.
func TestStepShiftFlagged(t *testing.T) {
	const series, step, n = 400, 30, 40
	var before, after int
	byRule := map[Rule]int{}
	for k := range series {
		rng := rand.New(rand.NewPCG(7, uint64(k)))
		v := make([]float64, n)
		for i := range v {
			v[i] = 2.0 + 0.1*rng.NormFloat64()
			if i >= step {
				v[i] += 0.2 // 2σ
			}
		}
		c, err := Individuals(v, 20)
		if err != nil {
			t.Fatal(err)
		}
		flagged := func(lo, hi int) bool {
			for i := lo; i < hi; i++ {
				if len(c.Signals[i]) > 0 {
					return true
				}
			}
			return false
		}
		if flagged(20, step) {
			before++
		}
		if flagged(step, n) {
			after++
			for i := step; i < n; i++ {
				if len(c.Signals[i]) > 0 {
					for _, r := range c.Signals[i] {
						byRule[r]++
					}
					break
				}
			}
		}
	}
	pb, pa := float64(before)/series, float64(after)/series
	t.Logf("flagged in the 10 points before the step: %.3f; in the 10 after: %.3f; first signal after it by rule %v", pb, pa, byRule)
	if pa < 0.9 || pa < 3*pb {
		t.Errorf("step flagged in %.3f of series (want ≥ 0.9), stable stretch in %.3f", pa, pb)
	}
}

// On a long stable normal series with limits from the whole series (so
// that σ̂ is close to σ), each rule fires at a rate near its nominal
// per-point rate for known limits, computed from the normal distribution:
//
//	WE1: P(|z|>3)                                  = 0.00270
//	WE2: 2·q·(1−(1−q)²), q = P(z>2)               = 0.00205
//	WE3: 2·r·(4r³(1−r) + r⁴), r = P(z>1)           = 0.00447
//	WE4: 2·(1/2)⁸                                  = 0.00781
//
// (a point "fires" when it completes the pattern; the in-control average
// run length of the four rules together is 91.75 points — Champ & Woodall
// 1987, Technometrics 29(4), from memory; the figure checked against the
// Wikipedia article "Western Electric rules" — the per-point rate differs
// because signals cluster.) Tolerance: ±25 % of the nominal count, about 4 standard errors
// for 100 000 points after allowing for clustering (a run rule's signals
// come in bursts of about 2 for WE4, which triples the variance).
func TestFalseAlarmRate(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 12))
	const n = 100000
	v := make([]float64, n)
	for i := range v {
		v[i] = rng.NormFloat64()
	}
	c, err := Individuals(v, n)
	if err != nil {
		t.Fatal(err)
	}
	upper := func(z float64) float64 { return 0.5 * math.Erfc(z/math.Sqrt2) }
	q, r := upper(2), upper(1)
	nominal := map[Rule]float64{
		WE1: 2 * upper(3),
		WE2: 2 * q * (1 - (1-q)*(1-q)),
		WE3: 2 * r * (4*r*r*r*(1-r) + r*r*r*r),
		WE4: 2 * math.Pow(0.5, 8),
	}
	counts := map[Rule]int{}
	any := 0
	for _, s := range c.Signals {
		for _, rule := range s {
			counts[rule]++
		}
		if len(s) > 0 {
			any++
		}
	}
	sum := 0.0
	for _, rule := range Rules {
		p := nominal[rule]
		sum += p
		got := float64(counts[rule]) / n
		t.Logf("%v: %.5f per point, nominal %.5f", rule, got, p)
		if math.Abs(got-p) > 0.25*p {
			t.Errorf("%v fires at %.5f per point, nominal %.5f (tolerance ±25%%)", rule, got, p)
		}
	}
	if got := float64(any) / n; got > 1.1*sum {
		t.Errorf("any rule: %.5f per point, above the sum of the nominal rates %.5f", got, sum)
	}
}

func TestBadInput(t *testing.T) {
	for _, tc := range []struct {
		name     string
		v        []float64
		baseline int
	}{
		{"one point", []float64{1}, 20},
		{"no points", nil, 20},
		{"baseline 1", []float64{1, 2, 3}, 1},
		{"NaN", []float64{1, math.NaN(), 3}, 2},
		{"Inf", []float64{1, math.Inf(1), 3}, 2},
	} {
		if _, err := Individuals(tc.v, tc.baseline); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
	// Constant baseline: no spread, no rule checked, no panic.
	c, err := Individuals([]float64{5, 5, 5, 6}, 3)
	if err != nil || c.Sigma != 0 || c.Signalled() {
		t.Errorf("constant baseline: %v, sigma %v, signalled %v", err, c.Sigma, c.Signalled())
	}
	// Two points: provisional limits.
	c, err = Individuals([]float64{1, 2}, 20)
	if err != nil || !c.Provisional || c.Baseline != 2 {
		t.Errorf("two points: %v, provisional %v, baseline %d", err, c.Provisional, c.Baseline)
	}
}

func TestWrite(t *testing.T) {
	c, err := Individuals(append(alternating(20), 13, 12, 10, 12), 20)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"png", "svg"} {
		var a, b bytes.Buffer
		if err := c.Write(&a, f, Labels{Title: "part P", Unit: "loss_pct (%)"}); err != nil {
			t.Fatal(err)
		}
		c.Write(&b, f, Labels{Title: "part P", Unit: "loss_pct (%)"})
		if a.Len() < 1000 || !bytes.Equal(a.Bytes(), b.Bytes()) {
			t.Errorf("%s: %d bytes, deterministic %v", f, a.Len(), bytes.Equal(a.Bytes(), b.Bytes()))
		}
	}
	if err := c.Write(&bytes.Buffer{}, "gif", Labels{}); err == nil {
		t.Error("gif: no error")
	}
}

func TestIntTicks(t *testing.T) {
	for _, tc := range []struct {
		lo, hi float64
		want   []float64
	}{
		{0.5, 2.5, []float64{1, 2}},
		{0.5, 36.5, []float64{1, 5, 10, 15, 20, 25, 30, 35}},
		{0.5, 400.5, []float64{1, 50, 100, 150, 200, 250, 300, 350, 400}},
	} {
		var got []float64
		for _, tk := range (intTicks{}).Ticks(tc.lo, tc.hi) {
			got = append(got, tk.Value)
		}
		if !slices.Equal(got, tc.want) {
			t.Errorf("ticks of [%v, %v] = %v, want %v", tc.lo, tc.hi, got, tc.want)
		}
	}
}

// The individuals Labels.Mark sets are ringed, one ring each, and only
// they; on the moving-range panel so is each moving range i whose later
// point i is marked (MR i involves points i−1 and i; point 1 has none).
// Common practice for marking new points on an I-MR chart. (vgsvg writes a stroke colour as "stroke:#RRGGBB;", upper case);
// a point both marked and out of control keeps its square too.
func TestWriteMarks(t *testing.T) {
	hex := func(c color.NRGBA) string { return fmt.Sprintf("stroke:#%02X%02X%02X;", c.R, c.G, c.B) }
	ring, square := hex(inkMark), hex(inkSignal)
	five := []float64{10, 10.4, 9.8, 10.1, 9.9}
	// alternating(20) then 13: WE1 on point 21 and its moving range above
	// the limit (see TestRules), so 2 squares.
	shifted := append(alternating(20), 13)
	for _, tc := range []struct {
		name           string
		values         []float64
		mark           []bool
		rings, mrRings int
		squares        int
		legend         bool
	}{
		{"2 of 5 marked", five, []bool{false, false, false, true, true}, 2, 2, 0, true},
		{"none marked (nil)", five, nil, 0, 0, 0, false},
		{"none marked (all false)", five, make([]bool, 5), 0, 0, 0, false},
		{"first point has no moving range; marks past the last ignored", five, []bool{true, false, false, false, false, true, true}, 1, 0, 0, true},
		{"one of two new points is the first", five, []bool{true, true, false, false, false}, 2, 1, 0, true},
		{"marked and out of control", shifted, append(make([]bool, 20), true), 1, 1, 2, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, err := Individuals(tc.values, 20)
			if err != nil {
				t.Fatal(err)
			}
			var b bytes.Buffer
			if err := c.Write(&b, "svg", Labels{Title: "part P", Unit: "loss_pct (%)", Mark: tc.mark, MarkName: "this batch's points"}); err != nil {
				t.Fatal(err)
			}
			svg := b.String()
			// The moving-range panel is drawn after the individuals,
			// starting with its title.
			cut := strings.Index(svg, ">moving range</text>")
			if cut < 0 {
				t.Fatal("no moving-range panel title in the SVG")
			}
			top, bottom := svg[:cut], svg[cut:]
			if got := strings.Count(top, ring); got != tc.rings {
				t.Errorf("individuals: %d rings (%q), want %d", got, ring, tc.rings)
			}
			if got := strings.Count(bottom, ring); got != tc.mrRings {
				t.Errorf("moving ranges: %d rings (%q), want %d", got, ring, tc.mrRings)
			}
			if got := strings.Count(svg, square); got != tc.squares {
				t.Errorf("%d squares (%q), want %d", got, square, tc.squares)
			}
			// vgsvg draws text as <text> with the string escaped.
			if got := strings.Contains(top, "rings: this batch&#39;s points"); got != tc.legend {
				t.Errorf("axis label names the rings: %v, want %v", got, tc.legend)
			}
			if got := strings.Contains(bottom, "rings: moving ranges ending at this batch&#39;s points"); got != (tc.mrRings > 0) {
				t.Errorf("moving-range axis label names the rings: %v, want %v", got, tc.mrRings > 0)
			}
		})
	}
}

// TestAxisLabelsFit: the axis labels below both panels, with and without
// the rings' part, break between their parts into lines that fit
// labelWidth, the picture less an inch (our margin for the value axis;
// the individuals' label with its rings' part, 150
// characters, ran past the picture's right edge in index.html), keep
// every part, and every text of the SVG carries its width (svgfit).
func TestAxisLabelsFit(t *testing.T) {
	c, err := Individuals(append(alternating(20), 13), 20)
	if err != nil {
		t.Fatal(err)
	}
	for _, mark := range [][]bool{nil, append(make([]bool, 20), true)} {
		l := Labels{Title: "part P", Unit: "loss_pct (%)", Mark: mark, MarkName: "this batch's points"}
		top, err := c.individualsPanel(l)
		if err != nil {
			t.Fatal(err)
		}
		bottom, err := c.rangePanel(l)
		if err != nil {
			t.Fatal(err)
		}
		for _, p := range []*plot.Plot{top, bottom} {
			label := p.X.Label.Text
			lines := strings.Split(label, "\n")
			if one := strings.Join(lines, "; "); len(lines) == 1 && p.X.Label.TextStyle.Width(one) > labelWidth {
				t.Errorf("label %q is one line, %v wide", one, p.X.Label.TextStyle.Width(one))
			}
			for _, line := range lines {
				if w := p.X.Label.TextStyle.Width(line); w > labelWidth {
					t.Errorf("line %q is %v wide, more than %v", line, w, labelWidth)
				}
			}
			if mark != nil && !strings.Contains(label, "rings:") {
				t.Errorf("label %q does not name the rings", label)
			}
			if !strings.HasSuffix(label, ")") {
				t.Errorf("label %q does not close its parenthesis", label)
			}
		}
		var b bytes.Buffer
		if err := c.Write(&b, "svg", l); err != nil {
			t.Fatal(err)
		}
		if n, fit := strings.Count(b.String(), "<text"), strings.Count(b.String(), "<text textLength="); n < 10 || fit != n {
			t.Errorf("%d of %d text elements carry their width", fit, n)
		}
	}
}

// pairs returns n points alternating a, b, a, ...
func pairs(n int, a, b float64) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = a
		if i%2 == 1 {
			v[i] = b
		}
	}
	return v
}

// TestNonNegativeLCL checks the clipping of the lower limit of a
// non-negative quantity (Montgomery 2013, §6.4 and §7: a computed LCL
// below zero is set to zero). Hand arithmetic for 0.2, 1.0, 0.2, ... (20
// points): X̄ = 0.6, every moving range 0.8, σ̂ = 0.8/1.128 = 0.709220,
// X̄ − 3σ̂ = 0.6 − 2.127660 = −1.527660, X̄ + 3σ̂ = 2.727660. The
// alternating 10.5/9.5 series (TestLimits) has X̄ − 3σ̂ = 7.340426 > 0, so
// declaring it non-negative changes nothing. Tolerance 1e-6 (the hand
// figures are rounded to 7 digits).
func TestNonNegativeLCL(t *testing.T) {
	for _, tc := range []struct {
		name                  string
		v                     []float64
		nonNeg, clipped       bool
		lcl, lclRaw, ucl, tol float64
	}{
		{"non-negative, clipped", pairs(20, 0.2, 1.0), true, true, 0, -1.527660, 2.727660, 1e-6},
		{"signed, not clipped", pairs(20, 0.2, 1.0), false, false, -1.527660, -1.527660, 2.727660, 1e-6},
		{"non-negative, LCL above 0", pairs(20, 10.5, 9.5), true, false, 7.340426, 7.340426, 12.659574, 1e-6},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, err := Build(tc.v, Spec{Baseline: 20, NonNegative: tc.nonNeg})
			if err != nil {
				t.Fatal(err)
			}
			if c.Clipped != tc.clipped {
				t.Errorf("clipped %v, want %v", c.Clipped, tc.clipped)
			}
			for _, f := range []struct {
				name      string
				got, want float64
			}{{"LCL", c.LCL, tc.lcl}, {"LCLRaw", c.LCLRaw, tc.lclRaw}, {"UCL", c.UCL, tc.ucl}} {
				if math.Abs(f.got-f.want) > tc.tol {
					t.Errorf("%s = %.7f, want %.7f ± %g", f.name, f.got, f.want, tc.tol)
				}
			}
		})
	}
}

// TestNonNegativeZones checks that clipping moves only the drawn limit and
// rule 1, not the zones of rules 2–4 (common practice, Montgomery 2013,
// §6.4: the zones are multiples of σ̂ about X̄). On the 0.2/1.0 baseline
// (X̄ = 0.6, σ̂ = 0.709220) a point at 0.1 is z = −0.705: inside 1σ̂, so
// no WE2 or WE3, however many follow; zones rebuilt from the clipped limit
// (σ' = (0.6 − 0)/3 = 0.2) would put it beyond 2σ' and fire WE2. Eight
// below the centre line fire WE4 at the eighth (point index 27).
func TestNonNegativeZones(t *testing.T) {
	for _, tc := range []struct {
		name string
		tail []float64
		want map[int][]Rule
	}{
		{"three low points", []float64{0.1, 0.1, 0.1}, nil},
		{"eight low points", []float64{0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1}, map[int][]Rule{27: {WE4}}},
		{"a zero is not beyond LCL 0", []float64{0}, nil},
		{"WE1 high", []float64{2.8}, map[int][]Rule{20: {WE1}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, err := Build(append(pairs(20, 0.2, 1.0), tc.tail...), Spec{Baseline: 20, NonNegative: true})
			if err != nil {
				t.Fatal(err)
			}
			for i, s := range c.Signals {
				if !slices.Equal(s, tc.want[i]) {
					t.Errorf("point %d: rules %v, want %v", i, s, tc.want[i])
				}
			}
		})
	}
	if _, err := Build([]float64{1, -0.1, 2}, Spec{Baseline: 2, NonNegative: true}); !errors.Is(err, ErrNegative) {
		t.Errorf("negative value in a non-negative chart: error %v, want ErrNegative", err)
	}
}

// TestClippedLabel checks that the drawn chart names both the clipped
// limit and X̄ − 3σ̂ (−1.527660 to 4 digits, from TestNonNegativeLCL).
func TestClippedLabel(t *testing.T) {
	for _, tc := range []struct {
		name   string
		nonNeg bool
		want   string
	}{
		{"clipped", true, "LCL 0 (clipped; mean - 3 sigma = -1.528)"},
		{"signed", false, "LCL -1.528"},
	} {
		c, err := Build(pairs(20, 0.2, 1.0), Spec{Baseline: 20, NonNegative: tc.nonNeg})
		if err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		if err := c.Write(&b, "svg", Labels{Title: "part P", Unit: "width"}); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(b.String(), tc.want) {
			t.Errorf("%s: SVG lacks %q", tc.name, tc.want)
		}
	}
}
