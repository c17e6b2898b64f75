package contact

import (
	"math"
	"strings"
	"testing"
)

func rel(got, want float64) float64 { return math.Abs(got-want) / math.Abs(want) }

func TestCombined(t *testing.T) {
	// PHYSICS-REFERENCES.md 1.1 [C] and the 1.5 cases [N].
	tests := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"σ SS/SS 1+1 µm", CombinedRoughnessM(1e-6, 1e-6), 1.41421356e-6, 1e-8},
		{"σ 0.8+0.4 µm (4.4)", CombinedRoughnessM(0.8e-6, 0.4e-6), 0.894427e-6, 1e-6},
		{"σ 1.2+0.9 µm (job default) = 1.5 µm", CombinedRoughnessM(1.2e-6, 0.9e-6), 1.5e-6, 1e-12},
		{"m 0.1+0.1", CombinedSlope(0.1, 0.1), 0.141421356, 1e-8},
		{"k_s SS/SS", HarmonicConductivityWMK(16.2, 16.2), 16.2, 1e-12},
		{"k_s Al 200/glass 1.6 (1.5)", HarmonicConductivityWMK(200, 1.6), 3.175, 2e-4},
		{"E′ SS304/SS304 193 GPa ν 0.29 (1.5)", EffectiveModulusPa(193e9, 0.29, 193e9, 0.29), 1.0536e11, 1e-4},
		{"γ", DeformationIndex(600e6, 44e9, 0.15), 600e6 / (44e9 * 0.15), 1e-12},
	}
	for _, tt := range tests {
		if e := rel(tt.got, tt.want); e > tt.tol {
			t.Errorf("%s = %.8g, want %.8g (rel %.2g)", tt.name, tt.got, tt.want, e)
		}
	}
}

func TestSlopeCorrelations(t *testing.T) {
	// PHYSICS-REFERENCES.md 2, check values [N] printed to 4 decimals.
	tests := []struct {
		sigmaUM     float64
		ant, lf, tf float64
	}{
		{0.4, 0.0865, 0.0472, 0.1054},
		{1.0, 0.1250, 0.0760, 0.1520},
		{2.0, 0.1652, 0.1090, 0.2006},
	}
	for _, tt := range tests {
		for _, c := range []struct {
			corr SlopeCorrelation
			want float64
		}{{Antonetti, tt.ant}, {LambertFletcher, tt.lf}, {TannerFahoum, tt.tf}} {
			got, _ := c.corr.Slope(tt.sigmaUM * 1e-6)
			if math.Abs(got-c.want) > 0.5e-4 {
				t.Errorf("%v(%g µm) = %.5f, want %.4f", c.corr, tt.sigmaUM, got, c.want)
			}
		}
	}
}

func TestSlopeRange(t *testing.T) {
	// Antonetti's stated range 0.216–9.6 µm (PHYSICS-REFERENCES.md 2 [M]).
	tests := []struct {
		corr    SlopeCorrelation
		sigmaM  float64
		inRange bool
	}{
		{Antonetti, 0.2e-6, false},
		{Antonetti, 0.216e-6, true},
		{Antonetti, 1.5e-6, true},
		{Antonetti, 9.6e-6, true},
		{Antonetti, 10e-6, false},
		{LambertFletcher, 20e-6, true}, // no stated range
		{TannerFahoum, 0.05e-6, true},  // no stated range
	}
	for _, tt := range tests {
		m, ok := tt.corr.Slope(tt.sigmaM)
		if ok != tt.inRange || !(m > 0) {
			t.Errorf("%v.Slope(%g) = %g, %v; want in range %v", tt.corr, tt.sigmaM, m, ok, tt.inRange)
		}
	}
	for _, bad := range []float64{0, -1e-6, math.NaN()} {
		if m, ok := Antonetti.Slope(bad); !math.IsNaN(m) || ok {
			t.Errorf("Slope(%g) = %g, %v; want NaN, false", bad, m, ok)
		}
	}
	if m, ok := SlopeCorrelation(7).Slope(1e-6); !math.IsNaN(m) || ok {
		t.Errorf("unknown correlation: %g, %v", m, ok)
	}
}

func TestParseSlopeCorrelation(t *testing.T) {
	for _, c := range []SlopeCorrelation{Antonetti, LambertFletcher, TannerFahoum} {
		got, err := ParseSlopeCorrelation(c.String())
		if err != nil || got != c {
			t.Errorf("Parse(%q) = %v, %v", c.String(), got, err)
		}
	}
	if got, err := ParseSlopeCorrelation(""); err != nil || got != Antonetti {
		t.Errorf("Parse(\"\") = %v, %v; want antonetti", got, err)
	}
	_, err := ParseSlopeCorrelation("Antonetti ")
	if err == nil || !strings.Contains(err.Error(), "lambert-fletcher") {
		t.Errorf("Parse of a bad name: %v", err)
	}
	if s := SlopeCorrelation(9).String(); s != "SlopeCorrelation(9)" {
		t.Errorf("String = %q", s)
	}
}
