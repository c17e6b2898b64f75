package scan

import (
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/internal/parallel"
)

// The functions below are Level's steps as they were before they were
// restructured for speed; the tests check that the new ones give the same
// bits.

// annulusPointsRef is annulusPoints as it was: it returns the points between radii rlo and rhi (m) about
// (uc, vc), thinned to some 30 points per bin of r0/400 in 72 sectors,
// and the point density of the inner disc (radius 0.9 r0) after thinning.
// Parts of the points are handled at once: each counts its inner and
// annulus points, then writes its annulus points at its offset, in point
// order.
func annulusPointsRef(pts []r3.Vec, f *frame, uc, vc, r0, rlo, rhi float64, sc *levelScratch) *annulus {
	in2, lo2, hi2 := 0.81*r0*r0, rlo*rlo, rhi*rhi
	rr := func(p r3.Vec) (du, dv, w, rr float64) {
		u, v, w := f.coords(p)
		du, dv = u-uc, v-vc
		return du, dv, w, du*du + dv*dv
	}
	n := len(pts)
	parts := rowParts(n)
	nIn, nAnn := make([]int, parts), make([]int, parts)
	parallel.Do(n, parts, func(k, i0, i1 int) {
		for _, p := range pts[i0:i1] {
			_, _, _, r2 := rr(p)
			if r2 < in2 {
				nIn[k]++
			}
			if r2 >= lo2 && r2 < hi2 {
				nAnn[k]++
			}
		}
	})
	nInner, nAnnulus := sumInts(nIn), sumInts(nAnn)
	// Some 30 points per bin of r0/400 in 72 sectors are plenty: thin out
	// denser scans.
	step := max(1, nAnnulus/(30*72*int(400*(rhi-rlo)/r0)))
	a := &annulus{rho: float64(nInner/step) / (math.Pi * 0.81 * r0 * r0)}
	a.ns, _ = rimSectors(a.rho, r0)
	nTake := (n + step - 1) / step
	cnt := nAnn // unthinned, the parts and their counts are those above
	if step > 1 {
		parts = rowParts(nTake)
		cnt = make([]int, parts)
		parallel.Do(nTake, parts, func(k, t0, t1 int) {
			for t := t0; t < t1; t++ {
				if _, _, _, r2 := rr(pts[t*step]); r2 >= lo2 && r2 < hi2 {
					cnt[k]++
				}
			}
		})
	}
	off := blockOffsets(cnt)
	a.r, a.w, a.sec = sc.floats.get(off[parts], 0), sc.floats.get(off[parts], 0), make([]uint8, off[parts])
	fns := float64(a.ns)
	parallel.Do(nTake, parts, func(k, t0, t1 int) {
		o := off[k]
		for t := t0; t < t1; t++ {
			du, dv, w, r2 := rr(pts[t*step])
			if r2 < lo2 || r2 >= hi2 {
				continue
			}
			th := math.Atan2(dv, du)
			s := int((th + math.Pi) / (2 * math.Pi) * fns)
			a.r[o], a.w[o], a.sec[o] = math.Sqrt(r2), w, uint8(min(a.ns-1, max(0, s)))
			o++
		}
	})
	return a
}

// levelRefClouds returns point sets for the reference checks: a dense and
// a sparse disc with a rising wall, tilted and off centre, a few stray
// points, and sizes that do not fill whole words of a bit set.
func levelRefClouds() map[string][]r3.Vec {
	cloud := func(n int, seed uint64) []r3.Vec {
		rng := rand.New(rand.NewPCG(seed, 3))
		pts := make([]r3.Vec, n)
		for i := range pts {
			r := 0.14 * math.Sqrt(rng.Float64())
			th := 2 * math.Pi * rng.Float64()
			z := 1e-5 * rng.NormFloat64()
			if r > 0.1 {
				z += 3 * (r - 0.1)
			}
			x, y := 0.01+r*math.Cos(th), -0.02+r*math.Sin(th)
			pts[i] = r3.Vec{X: x, Y: y + 0.05*z, Z: 0.3 + z + 0.02*x}
		}
		for i := 0; i < n; i += 97 {
			pts[i].Z += 0.5
		}
		return pts
	}
	return map[string][]r3.Vec{
		"dense":  cloud(300001, 1),
		"middle": cloud(40000, 2),
		"sparse": cloud(1237, 3),
		"tiny":   cloud(101, 4),
	}
}

// levelRefFrame is a frame for the reference checks, slightly tilted.
func levelRefFrame() frame {
	return newFrame(r3.Vec{X: 0.012, Y: -0.019, Z: 0.3}, r3.Vec{X: -0.02, Y: 0.001, Z: 1})
}

// TestAnnulusPointsMatchesReference checks that annulusPoints gives the
// reference's points, heights, sectors and density to the bit, thinned
// and not, on 1 to 3 processors. Both compute each point's coordinates
// with frame.coords and the same expressions, so a build that fuses
// multiply-add fuses both alike.
func TestAnnulusPointsMatchesReference(t *testing.T) {
	f := levelRefFrame()
	for name, pts := range levelRefClouds() {
		for _, procs := range []int{1, 2, 3} {
			for _, tc := range []struct{ r0, rlo, rhi float64 }{{0.1, 0.055, 0.135}, {0.1, 0.055, 0.3}, {0.05, 0.0275, 0.0675}, {1, 0.05, 0.14}, {0.5, 0.02, 0.14}} {
				prev := runtime.GOMAXPROCS(procs)
				want := annulusPointsRef(pts, &f, 0.001, -0.002, tc.r0, tc.rlo, tc.rhi, &levelScratch{})
				got := annulusPoints(pts, &f, 0.001, -0.002, tc.r0, tc.rlo, tc.rhi, &levelScratch{})
				runtime.GOMAXPROCS(prev)
				if !sameAnnulus(got, want) {
					t.Errorf("%s, %d procs, %+v: annulus differs from the reference (%d points, want %d)", name, procs, tc, len(got.r), len(want.r))
				}
			}
		}
	}
}

// sameAnnulus reports whether a and b hold the same bits.
func sameAnnulus(a, b *annulus) bool {
	if a.ns != b.ns || math.Float64bits(a.rho) != math.Float64bits(b.rho) || len(a.r) != len(b.r) || len(a.w) != len(b.w) || len(a.sec) != len(b.sec) {
		return false
	}
	for i := range a.r {
		if math.Float64bits(a.r[i]) != math.Float64bits(b.r[i]) || math.Float64bits(a.w[i]) != math.Float64bits(b.w[i]) || a.sec[i] != b.sec[i] {
			return false
		}
	}
	return true
}
