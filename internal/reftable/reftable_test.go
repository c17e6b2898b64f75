package reftable

import (
	"math"
	"strings"
	"testing"
)

// planckSeries is F(0→λT) by the series 15/π⁴·Σ e^(−nx)/n·(x³ + 3x²/n +
// 6x/n² + 6/n³), x = c₂/λT (Siegel & Howell, Thermal Radiation Heat
// Transfer, the series for the blackbody fraction; from memory [M]), an
// implementation independent of the table's quadrature.
func planckSeries(lambdaTUmK float64) float64 {
	const c2 = 14387.76877 // µm·K, CODATA 2018
	x := c2 / lambdaTUmK
	s := 0.0
	for n := 1.0; n <= 100; n++ {
		s += math.Exp(-n*x) / n * (x*x*x + 3*x*x/n + 6*x/(n*n) + 6/(n*n*n))
	}
	return 15 / math.Pow(math.Pi, 4) * s
}

// recorder is a testing.TB that counts errors instead of failing.
type recorder struct {
	testing.TB
	errors int
}

func (r *recorder) Errorf(string, ...any) { r.errors++ }
func (r *recorder) Helper()               {}

func TestCheckBlackbodyFraction(t *testing.T) {
	// The Planck table (scipy 1.10.1 quadrature) against an independent
	// series: the quadrature's stated error is < 1e-10, the table prints 10
	// decimals.
	if worst := CheckBlackbodyFraction(t, planckSeries, 2e-10); worst > 2e-10 {
		t.Errorf("worst %g", worst)
	}
	// The helper must catch a wrong function: c₂ 1 % off.
	r := &recorder{TB: t}
	CheckBlackbodyFraction(r, func(lt float64) float64 { return planckSeries(lt * 1.01) }, 1e-4)
	if r.errors == 0 {
		t.Error("a fraction with c₂ 1 % off passed")
	}
}

func TestBlackbodyTableAgainstIncropera(t *testing.T) {
	// Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass
	// Transfer, 6th ed., Table 12.1, rows as read in Example 12.9 (p. 766:
	// 3000, 5000, 20000 µm·K) and Example 12.10 (p. 768: 6000 µm·K), printed
	// to 3 decimals [S]; tolerance half a unit of the last digit.
	tab := MustLoad(t, BlackbodyTable)
	lt, f := tab.MustCol(t, "lambda_t_umk"), tab.MustCol(t, "fraction")
	want := map[float64]float64{3000: 0.273, 5000: 0.634, 6000: 0.738, 20000: 0.986}
	for i := range lt {
		if w, ok := want[lt[i]]; ok {
			if math.Abs(f[i]-w) > 0.0005 {
				t.Errorf("F(0→%g) = %.6f, Incropera prints %.3f", lt[i], f[i], w)
			}
			delete(want, lt[i])
		}
	}
	if len(want) != 0 {
		t.Errorf("rows missing from the table: %v", want)
	}
}

func TestLoad(t *testing.T) {
	for _, name := range []string{"water_iapws.csv", "air_lemmon.csv", BlackbodyTable, "erfcinv_scipy.csv"} {
		tab := MustLoad(t, name)
		if !strings.Contains(tab.Source(), "python3-scipy 1.10.1") {
			t.Errorf("%s: header does not name the package versions: %q", name, tab.Source())
		}
		if len(tab.Rows) < 10 {
			t.Errorf("%s: %d rows", name, len(tab.Rows))
		}
	}
	if _, err := Load("no-such.csv"); err == nil || !strings.Contains(err.Error(), "gen.py") {
		t.Errorf("missing table: %v", err)
	}
	tab := MustLoad(t, "air_lemmon.csv")
	if _, err := tab.Col("no_such_col"); err == nil || !strings.Contains(err.Error(), "air_lemmon.csv") {
		t.Errorf("missing column: %v", err)
	}
}

func TestParseBadInput(t *testing.T) {
	tests := []struct{ in, want string }{
		{"# h\na,b\n1,2\n3\n", "x.csv:4: 1 fields, want 2"},
		{"a,b\n1,zz\n", "x.csv:2: column b"},
		{"a,b\n1,NaN\n", "not a finite number"},
		{"# only a header\na,b\n", "no rows"},
	}
	for _, tt := range tests {
		_, err := parse("x.csv", strings.NewReader(tt.in))
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("parse(%q) = %v, want %q", tt.in, err, tt.want)
		}
	}
}
