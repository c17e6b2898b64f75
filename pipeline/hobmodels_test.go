package pipeline

import (
	"math"
	"testing"

	"gapflux/contact"
	"gapflux/thermal"
)

// benchFixture solves a 200 mm, 4 mm aluminium base (the default job's)
// on a hob top held at topC (no power limit) with the base in full contact
// over the inner half of its area (r ≤ R/√2) and lifting linearly from
// there to rimGapM at the rim; rimGapM = 0 is the flat base. It returns the
// heat into the pan, W.
func benchFixture(t *testing.T, topC, rimGapM, cellM float64) float64 {
	t.Helper()
	job := DefaultJob()
	lib := contact.Materials()
	ip, err := interfaceParams(job, lib)
	if err != nil {
		t.Fatal(err)
	}
	const rM = 0.1
	n := int(math.Round(2*rM/cellM)) + 1
	g := thermal.Grid{Nx: n, Ny: n, CellM: cellM, X0M: -rM, Y0M: -rM}
	in := make([]bool, g.Len())
	gap := make([]float64, g.Len())
	mask := make([]bool, g.Len())
	rc := rM / math.Sqrt2
	var aC float64
	for k := range in {
		x, y := g.CentreM(k)
		r := math.Hypot(x, y)
		gap[k] = math.NaN()
		if r > rM {
			continue
		}
		in[k] = true
		gap[k] = 0
		if r > rc {
			gap[k] = rimGapM * (r - rc) / (rM - rc)
		}
		if gap[k] <= contact.ContactBandSigmas*ip.SigmaM {
			mask[k] = true
			aC += cellM * cellM
		}
	}
	load := (job.Pan.MassKg + job.Water.MassKg) * gravityMS2
	f, err := contact.NewField(ip, gap, mask, load/aC)
	if err != nil {
		t.Fatal(err)
	}
	layers, err := baseLayers(job, lib)
	if err != nil {
		t.Fatal(err)
	}
	p := &thermal.Problem{Grid: g, InBase: in, BaseLayers: layers, Interface: f,
		Water: waterSide(job, 2*rM), TWaterK: job.Water.SteadyC + kelvin,
		Temperature: &thermal.TemperatureHob{TopK: fillK(g.Len(), topC+kelvin)}}
	s, err := thermal.Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	return s.PowerW
}

func fillK(n int, v float64) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = v
	}
	return out
}

// TestBenchFixtureLoss: a fixture held at 307 °C (power limit off) under a
// 200 mm aluminium base in full contact over the inner half of its area
// and lifting linearly to 2.54 mm (0.1 in) and to 10.16 mm (0.4 in) at the
// rim. A recorded bench study of that shape measured about 29 % and 36 %
// less heat than a flat base (a fact of the trade, no source). Our model,
// with the default job's interface and water side, must give 30 % ± 8
// points for both (our tolerance: the bench study's water side and surface
// finish are unknown, and its two results differ by 7 points), and the
// higher lift must lose more.
func TestBenchFixtureLoss(t *testing.T) {
	if testing.Short() {
		t.Skip("three plate solves on a 200 mm base")
	}
	const cell = 0.002
	flat := benchFixture(t, 307, 0, cell)
	var prev float64
	for _, rim := range []float64{2.54e-3, 10.16e-3} {
		loss := 100 * (1 - benchFixture(t, 307, rim, cell)/flat)
		t.Logf("rim lift %.2f mm: loss %.2f %%", rim*1e3, loss)
		if math.Abs(loss-30) > 8 {
			t.Errorf("rim lift %.2f mm: loss %.2f %%, want 30 %% ± 8", rim*1e3, loss)
		}
		if loss <= prev {
			t.Errorf("rim lift %.2f mm: loss %.2f %% not above the smaller lift's %.2f %%", rim*1e3, loss, prev)
		}
		prev = loss
	}
}
