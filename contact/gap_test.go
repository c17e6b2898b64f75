package contact

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestGap(t *testing.T) {
	pan := testDisc(21, cellTM, 10*mmM, func(x, y float64) float64 { return 1e-3*x + 0.2*mmM*(x*x+y*y)/(1e-4) })
	hob := mustRadial(pan, []float64{0, 10 * mmM}, []float64{0, -0.1 * mmM})
	pose := &Pose{PlaneM: [3]float64{1e-3, 0, -0.05 * mmM}}
	g := Gap(pan, hob, pose)
	for j := 0; j < pan.Ny; j++ {
		for i := 0; i < pan.Nx; i++ {
			k := pan.Index(i, j)
			x, y := pan.X(i), pan.Y(j)
			if !pan.InBase(k) {
				if !math.IsNaN(g[k]) {
					t.Fatalf("cell (%d, %d) outside the base: gap %g, want NaN", i, j, g[k])
				}
				continue
			}
			r := math.Hypot(x, y)
			// pan − hob − plane = 0.2 mm·r²/(10 mm)² + 0.1 mm·r/(10 mm) + 0.05 mm.
			want := 0.2*mmM*r*r/1e-4 + 0.1*mmM*r/(10*mmM) + 0.05*mmM
			if math.Abs(g[k]-want) > 1e-15 {
				t.Fatalf("cell (%d, %d): gap %.15g, want %.15g", i, j, g[k], want)
			}
		}
	}
	// A plane above part of the base: gaps there are clamped to 0.
	g = Gap(pan, nil, &Pose{PlaneM: [3]float64{0, 0, 0.1 * mmM}})
	if c := g[pan.Index(10, 10)]; c != 0 {
		t.Errorf("centre gap %g under a plane above it, want 0", c)
	}
	func() {
		defer func() {
			if recover() == nil {
				t.Error("Gap with a mismatched hob grid did not panic")
			}
		}()
		Gap(pan, FlatHob(testDisc(11, cellTM, 5*mmM, func(x, y float64) float64 { return 0 })), pose)
	}()
}

func BenchmarkGap1000(b *testing.B) {
	s := randomBase(rand.New(rand.NewPCG(1, 2)), 1000, 0.2*mmM)
	p, err := Rest(s, nil, RestOptions{})
	if err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for b.Loop() {
		Gap(s, nil, p)
	}
}
