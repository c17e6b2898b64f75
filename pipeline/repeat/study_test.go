package repeat

import (
	"bytes"
	"math"
	"strings"
	"testing"
)

func f64(v float64) *float64 { return &v }

// results makes results named r1, r2, ... with the values v, each with
// standard uncertainty u and the interval value ± 2u (u < 0: none).
func results(u float64, v ...float64) []Result {
	rs := make([]Result, len(v))
	for i, x := range v {
		rs[i] = Result{Name: "r" + string(rune('1'+i)), Value: x}
		if u >= 0 {
			rs[i].U, rs[i].Low, rs[i].High = f64(u), f64(x-2*u), f64(x+2*u)
		}
	}
	return rs
}

func TestAssessCoverage(t *testing.T) {
	// 0 … 7: s = √6 = 2.449490, 7 dof; the lower 95 % bound of σ is
	// √6·√(7/χ²_0.975,7) = 1.6195393 (scipy 1.10.1).
	vals := []float64{0, 1, 2, 3, 4, 5, 6, 7}
	for _, tc := range []struct {
		name     string
		u        float64
		coverage string
		within   int
		ratio    float64
	}{
		// u just below the bound: understated; intervals ±3.2 hold the mean
		// 3.5 for the values 0.3 … 6.7: 1 … 6 (6 of 8).
		{"understated", 1.6, Understated, 6, 2.449490 / 1.6},
		{"covered", 1.62, Covered, 6, 2.449490 / 1.62},
		// A generous u: every interval holds the mean.
		{"generous", 10, Covered, 8, 2.449490 / 10},
	} {
		t.Run(tc.name, func(t *testing.T) {
			st, err := Assess([]Figure{{Name: "loss_pct", Unit: "%", Groups: []Group{{Results: results(tc.u, vals...)}}}}, nil)
			if err != nil {
				t.Fatal(err)
			}
			s := st.Figures[0].Stats
			if s == nil {
				t.Fatal("no stats")
			}
			if !near(s.SR, 2.44949, 1e-5) || s.DOF != 7 || s.N != 8 || s.Bases != 1 {
				t.Errorf("s_r %g dof %d n %d bases %d, want 2.44949, 7, 8, 1", s.SR, s.DOF, s.N, s.Bases)
			}
			if !near(s.R, 2.8*2.449490, 1e-4) || !near(s.SigmaLow, 1.61954, 1e-5) {
				t.Errorf("r %g sigma_low %g, want %g, 1.61954", s.R, s.SigmaLow, 2.8*2.449490)
			}
			if s.Mean == nil || *s.Mean != 3.5 {
				t.Errorf("mean %v, want 3.5", s.Mean)
			}
			if s.Coverage != tc.coverage || s.Within != tc.within || s.WithInterval != 8 {
				t.Errorf("coverage %s, within %d of %d; want %s, %d of 8", s.Coverage, s.Within, s.WithInterval, tc.coverage, tc.within)
			}
			if s.Ratio == nil || !near(*s.Ratio, tc.ratio, 1e-5) || s.URMS == nil || *s.URMS != tc.u {
				t.Errorf("ratio %v u_rms %v, want %g, %g", s.Ratio, s.URMS, tc.ratio, tc.u)
			}
		})
	}
}

func TestAssessPooledAndMissing(t *testing.T) {
	figs := []Figure{
		{Name: "concavity_mm", Unit: "mm", Groups: []Group{
			{Base: "B", Results: results(-1, 10, 14)},
			{Base: "A", Results: results(-1, 3, 1, 2)},
			{Base: "C", Results: results(-1, 100)},
		}},
		{Name: "tip_force_n", Unit: "N", Groups: []Group{{Base: "A", Results: results(-1, 5)}}},
		{Name: "loss_pct", Unit: "%", Groups: []Group{{Results: append(results(1, 1), results(-1, 2, 3)[1:]...)}}},
	}
	st, err := Assess(figs, nil)
	if err != nil {
		t.Fatal(err)
	}
	c := st.Figures[0]
	if c.Groups[0].Base != "A" || c.Groups[1].Base != "B" || c.Groups[0].Results[0].Name != "r1" {
		t.Errorf("groups not sorted by base and results by name: %+v", c.Groups[0])
	}
	// Analytic (TestPooled): s_r² = 10/3, 3 dof; the single result of C is
	// left out; several bases: no overall mean.
	s := c.Stats
	if !near(s.SR, math.Sqrt(10.0/3), 1e-5) || s.DOF != 3 || s.N != 5 || s.Bases != 2 || s.Mean != nil {
		t.Errorf("pooled %+v", s)
	}
	if s.Coverage != NoUncertainty || s.URMS != nil || s.WithInterval != 0 {
		t.Errorf("no uncertainty: %+v", s)
	}
	if g := c.Groups[1]; g.SD == nil || !near(*g.SD, 2*math.Sqrt2, 1e-5) || g.Mean != 12 {
		t.Errorf("base B: %+v", g)
	}
	if f := st.Figures[1]; f.Stats != nil || f.Note == "" {
		t.Errorf("one result: stats %+v note %q", f.Stats, f.Note)
	}
	if s := st.Figures[2].Stats; s == nil || s.Coverage != Partial {
		t.Errorf("some results with u: %+v", s)
	}
}

func TestAssessBadInput(t *testing.T) {
	for _, tc := range []struct {
		name string
		r    Result
		msg  string
	}{
		{"NaN value", Result{Name: "a", Value: math.NaN()}, "value"},
		{"Inf u", Result{Name: "a", Value: 1, U: f64(math.Inf(1))}, "standard uncertainty"},
		{"negative u", Result{Name: "a", Value: 1, U: f64(-1)}, "standard uncertainty"},
		{"one end", Result{Name: "a", Value: 1, Low: f64(0)}, "one end"},
		{"reversed", Result{Name: "a", Value: 1, Low: f64(2), High: f64(0)}, "not an interval"},
		{"NaN end", Result{Name: "a", Value: 1, Low: f64(0), High: f64(math.NaN())}, "not an interval"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			figs := []Figure{{Name: "rock_mm", Groups: []Group{{Results: []Result{{Name: "b", Value: 1}, tc.r}}}}}
			_, err := Assess(figs, nil)
			if err == nil || !strings.Contains(err.Error(), tc.msg) || !strings.Contains(err.Error(), "rock_mm: a:") {
				t.Errorf("err = %v, want one naming rock_mm, result a and %q", err, tc.msg)
			}
		})
	}
}

func TestOutputsDeterministic(t *testing.T) {
	mk := func() *Study {
		st, err := Assess([]Figure{
			{Name: "concavity_mm", Unit: "mm", Groups: []Group{{Results: results(0.0004, 0.1495, 0.1502, 0.1499, 0.1497)}}},
			{Name: "tip_force_n", Unit: "N", Groups: []Group{{Results: results(-1, 7)}}},
		}, []string{"a warning"})
		if err != nil {
			t.Fatal(err)
		}
		return st
	}
	a, b := mk(), mk()
	for _, enc := range []struct {
		name string
		f    func(*Study) ([]byte, error)
	}{{"csv", (*Study).CSV}, {"json", (*Study).JSON}, {"svg", (*Study).SVG}, {"png", (*Study).PNG}} {
		x, err := enc.f(a)
		if err != nil {
			t.Fatalf("%s: %v", enc.name, err)
		}
		y, _ := enc.f(b)
		if !bytes.Equal(x, y) || len(x) == 0 {
			t.Errorf("%s: not the same bytes twice (%d, %d bytes)", enc.name, len(x), len(y))
		}
	}
	csv, _ := a.CSV()
	// Python 3 statistics and scipy 1.10.1: mean 0.149825, s =
	// 0.0002986079, r = 2.8 s = 0.000836102, σ bounds (3 dof) 0.000169158 …
	// 0.00111337, s/u = 0.746520.
	want := "figure,unit,bases,n,mean,s_r,dof,r,sigma_r_low,sigma_r_high,u_rms,s_r_over_u,coverage,within_interval,with_interval,value_outside_interval,note\n" +
		"concavity_mm,mm,1,4,0.149825,0.000298608,3,0.000836102,0.000169158,0.00111337,0.0004,0.74652,covered,4,4,0,\n" +
		"tip_force_n,N,,,,,,,,,,,,,,,no base has two results of this figure: no repeatability\n"
	if string(csv) != want {
		t.Errorf("repeat.csv:\n%s\nwant:\n%s", csv, want)
	}
	js, _ := a.JSON()
	for _, w := range []string{`"schema": "gapflux.repeat/1"`, `"s_r": 0.000298608`, `"dof": 3`, `"coverage": "covered"`, "u_rms >= sigma_r_low", `"warnings": [
    "a warning"
  ]`} {
		if !bytes.Contains(js, []byte(w)) {
			t.Errorf("repeat.json lacks %q", w)
		}
	}
}

// TestValueOutside: intervals shifted off their values (a biased Monte
// Carlo) are counted even when u_rms covers the spread.
func TestValueOutside(t *testing.T) {
	rs := results(1, 0, 1, 2, 3)
	for i := range rs[:3] { // shift three intervals up by 2.5 u: value below low
		*rs[i].Low += 2.5
		*rs[i].High += 2.5
	}
	st, err := Assess([]Figure{{Name: "loss_pct", Unit: "%", Groups: []Group{{Results: rs}}}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	// s = 1.29 (3 dof), σ lower bound 0.731 (scipy 1.10.1): u = 1 covers.
	// Mean 1.5: intervals [0.5,4.5] [1.5,5.5] [2.5,6.5] [1,5] → 3 hold it.
	s := st.Figures[0].Stats
	if s.Coverage != Covered || s.ValueOutside != 3 || s.Within != 3 || s.WithInterval != 4 {
		t.Errorf("coverage %s, value outside %d, within %d of %d; want covered, 3, 3 of 4", s.Coverage, s.ValueOutside, s.Within, s.WithInterval)
	}
}

// TestIntervalBar: a value outside its own interval keeps the interval's
// ends in the picture's error bar (gonum draws |offsets| from the anchor).
func TestIntervalBar(t *testing.T) {
	v := intervals{{x: 1, lo: 23.119, hi: 28.524}} // loss_pct 22.055 of a biased re-scan
	_, y := v.XY(0)
	lo, hi := v.YError(0)
	if !near(y-lo, 23.119, 1e-12) || !near(y+hi, 28.524, 1e-12) {
		t.Errorf("bar %g … %g, want 23.119 … 28.524", y-lo, y+hi)
	}
}
