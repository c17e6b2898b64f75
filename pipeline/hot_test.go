package pipeline

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"gapflux/bow"
	"gapflux/contact"
)

// hotDisc is a 1 mm grid around a disc of radius rM at the origin, with a
// 3 mm stainless 304 base (values of contact.Materials(), MatWeb AISI 304)
// and a cold dish of depth dishM (centre raised).
func hotDisc(t *testing.T, rM, dishM float64) (bow.Grid, []bool, []float64, *bow.Solver) {
	t.Helper()
	const cell = 1e-3
	n := int(math.Ceil(2*rM/cell)) + 4
	g := bow.Grid{Nx: n, Ny: n, CellM: cell, X0M: -float64(n-1) / 2 * cell, Y0M: -float64(n-1) / 2 * cell}
	in := make([]bool, n*n)
	cold := make([]float64, n*n)
	for k := range in {
		x, y := g.X0M+float64(k%n)*cell, g.Y0M+float64(k/n)*cell
		r2 := x*x + y*y
		in[k] = r2 <= rM*rM
		cold[k] = math.NaN()
		if in[k] {
			cold[k] = dishM * (1 - r2/(rM*rM))
		}
	}
	s, err := bow.NewSolver(context.Background(), bow.Problem{Grid: g, InBase: in,
		Layers: []bow.Layer{{ThicknessM: 3e-3, ConductivityWMK: 16.2, YoungPa: 193e9, Poisson: 0.29, ExpansionPerK: 17.3e-6}}})
	if err != nil {
		t.Fatal(err)
	}
	return g, in, cold, s
}

// domeOf returns the mean height of the rim cells minus the height of the
// centre cell of z over the mask: positive when the base domes (centre
// down, towards the hob).
func domeOf(g bow.Grid, in []bool, z []float64) float64 {
	var rim float64
	n := 0
	for k, ok := range in {
		if ok && (!in[k-1] || !in[k+1] || !in[k-g.Nx] || !in[k+g.Nx]) {
			rim += z[k]
			n++
		}
	}
	return rim/float64(n) - z[g.Ny/2*g.Nx+g.Nx/2]
}

func TestSolveHotStateFixedPoint(t *testing.T) {
	// A fake chain with a uniform flux that falls as the base domes:
	// q = q0 (1 − s·S), S the hot dome height. The bow is linear in a uniform
	// q, w = q·w1, so S = S_cold + q S1 and the fixed point is
	// q* = q0 (1 − s S_cold) / (1 + s q0 S1).
	const q0, tRef = 60e3, 293.15
	g, in, cold, bend := hotDisc(t, 0.06, 50e-6)
	ones := make([]float64, len(in))
	temp := make([]float64, len(in))
	for k := range ones {
		ones[k], temp[k] = 1, tRef
	}
	w1, err := bend.Deflect(context.Background(), ones, temp, tRef, nil)
	if err != nil {
		t.Fatal(err)
	}
	w1 = append([]float64(nil), w1...)
	s1, sCold := domeOf(g, in, w1), domeOf(g, in, cold)
	for _, c := range []struct {
		name  string
		sPerM float64 // feedback strength s, 1/m
		relax float64
	}{
		{"mild feedback", 5e3, 0},
		{"strong feedback, first relaxation 1", 40e3, 1},
	} {
		t.Run(c.name, func(t *testing.T) {
			chain := func(ctx context.Context, z []float64) ([]float64, []float64, error) {
				q := max(0.05, 1-c.sPerM*domeOf(g, in, z)) * q0
				flux := make([]float64, len(z))
				for k := range flux {
					flux[k] = q
				}
				return flux, temp, nil
			}
			st, err := SolveHotState(context.Background(), cold, in, bend, chain, HotOptions{ScanTempK: tRef, TolM: 1e-9, Relax: c.relax})
			if err != nil {
				t.Fatal(err)
			}
			want := q0 * (1 - c.sPerM*sCold) / (1 + c.sPerM*q0*s1)
			got := st.FluxWM2[g.Ny/2*g.Nx+g.Nx/2]
			if !st.Converged || math.Abs(got-want) > 1e-4*want {
				t.Errorf("converged %v after %d iterations (change %.3g µm): flux %.2f W/m², want %.2f", st.Converged,
					st.Iterations, st.ChangeM*1e6, got, want)
			}
			for k, ok := range in {
				if ok && math.Abs(st.SurfaceZM[k]-cold[k]-want*w1[k]) > 1e-8 {
					t.Fatalf("cell %d: hot − cold = %.4f µm, want q*·w1 = %.4f µm", k, (st.SurfaceZM[k]-cold[k])*1e6, want*w1[k]*1e6)
				}
				if !ok && !math.IsNaN(st.SurfaceZM[k]) {
					t.Fatalf("cell %d outside the base: hot height %g, want NaN", k, st.SurfaceZM[k])
				}
			}
			t.Logf("%d iterations, final relaxation %.3g, flux %.1f W/m², hot dome %.2f µm (cold %.2f µm)", st.Iterations, st.Relax,
				got, domeOf(g, in, st.SurfaceZM)*1e6, sCold*1e6)
		})
	}
}

func TestSolveHotStateErrors(t *testing.T) {
	g, in, cold, bend := hotDisc(t, 0.03, 0)
	flux := make([]float64, len(in))
	temp := make([]float64, len(in))
	for k := range flux {
		flux[k], temp[k] = 4e4, 400
	}
	good := func(ctx context.Context, z []float64) ([]float64, []float64, error) { return flux, temp, nil }
	boom := errors.New("plate solve failed")
	bad := func(ctx context.Context, z []float64) ([]float64, []float64, error) { return nil, nil, boom }
	opt := HotOptions{ScanTempK: 293}
	nanCold := append([]float64(nil), cold...)
	nanCold[g.Ny/2*g.Nx+g.Nx/2] = math.NaN()
	cancelled, cancel := context.WithCancel(context.Background())
	cancel()
	for _, c := range []struct {
		name  string
		ctx   context.Context
		cold  []float64
		chain HotChain
		opt   HotOptions
		want  string
	}{
		{"no scan temperature", context.Background(), cold, good, HotOptions{}, "scan temperature"},
		{"bad tolerance", context.Background(), cold, good, HotOptions{ScanTempK: 293, TolM: -1}, "tolerance"},
		{"bad relaxation", context.Background(), cold, good, HotOptions{ScanTempK: 293, Relax: 1.5}, "relaxation"},
		{"bad iterations", context.Background(), cold, good, HotOptions{ScanTempK: 293, MaxIter: -2}, "iterations"},
		{"short surface", context.Background(), cold[1:], good, opt, "cells"},
		{"NaN in the base", context.Background(), nanCold, good, opt, "finite"},
		{"no chain", context.Background(), cold, nil, opt, "no chain"},
		{"chain fails", context.Background(), cold, bad, opt, "plate solve failed"},
		{"cancelled", cancelled, cold, good, opt, "canceled"},
	} {
		if _, err := SolveHotState(c.ctx, c.cold, in, bend, c.chain, c.opt); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.want)
		}
	}
	// One iteration allowed: a result that says it did not converge.
	st, err := SolveHotState(context.Background(), cold, in, bend, good, HotOptions{ScanTempK: 293, MaxIter: 1})
	if err != nil {
		t.Fatal(err)
	}
	if st.Converged || st.Iterations != 1 || !(st.ChangeM > 1e-6) {
		t.Errorf("after 1 iteration: converged %v, iterations %d, change %.3g µm; want not converged, 1, > 1 µm",
			st.Converged, st.Iterations, st.ChangeM*1e6)
	}
}

func TestBendLayers(t *testing.T) {
	lib := []contact.Material{
		{Name: "ss-304", ConductivityWMK: 16.2, YoungPa: 193e9, Poisson: 0.29, ExpansionPerK: 17.3e-6},
		{Name: "mystery", ConductivityWMK: 50},
	}
	job := Job{Pan: PanJob{Layers: []LayerJob{{Material: "ss-304", ThicknessMM: 0.6}}}}
	got, err := bendLayers(job, lib)
	if err != nil {
		t.Fatal(err)
	}
	if want := (bow.Layer{ThicknessM: 0.6e-3, ConductivityWMK: 16.2, YoungPa: 193e9, Poisson: 0.29, ExpansionPerK: 17.3e-6}); len(got) != 1 || got[0] != want {
		t.Errorf("layers %+v, want [%+v]", got, want)
	}
	for _, c := range []struct{ material, want string }{{"mystery", "Young's modulus"}, {"unobtainium", "unknown material"}} {
		job.Pan.Layers[0].Material = c.material
		if _, err := bendLayers(job, lib); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one containing %q", c.material, err, c.want)
		}
	}
}
