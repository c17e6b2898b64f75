package scan

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"strings"
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

// coarseCellSizeRef is coarseCellSize as it was: it picks the coarse cell edge: about 64 cells across the
// larger extent, but large enough for some 20 points per cell.
func coarseCellSizeRef(uvw [][3]float64) float64 {
	umin, umax := math.Inf(1), math.Inf(-1)
	vmin, vmax := math.Inf(1), math.Inf(-1)
	for _, p := range uvw {
		umin, umax = min(umin, p[0]), max(umax, p[0])
		vmin, vmax = min(vmin, p[1]), max(vmax, p[1])
	}
	ext := max(umax-umin, vmax-vmin)
	area := (umax - umin) * (vmax - vmin)
	return max(ext/64, math.Sqrt(20*area/float64(len(uvw))))
}

// newCoarseGridRef is newCoarseGrid as it was, one sequential pass.
func newCoarseGridRef(uvw [][3]float64, g float64) *coarseGrid {
	umin, umax := math.Inf(1), math.Inf(-1)
	vmin, vmax := math.Inf(1), math.Inf(-1)
	for _, p := range uvw {
		umin, umax = min(umin, p[0]), max(umax, p[0])
		vmin, vmax = min(vmin, p[1]), max(vmax, p[1])
	}
	cg := &coarseGrid{g: g, u0: umin, v0: vmin}
	cg.nu = int((umax-umin)/g) + 1
	cg.nv = int((vmax-vmin)/g) + 1
	nc := cg.nu * cg.nv
	type acc struct{ su, sv, sw, suu, suv, svv, suw, svw, sww float64 }
	sums := make([]acc, nc)
	cg.n = make([]int, nc)
	cg.cellOfPt = make([]int32, len(uvw))
	for i, p := range uvw {
		q := cg.cell(p[0], p[1])
		cg.cellOfPt[i] = int32(q)
		uc, vc := cg.centre(q)
		// Offsets in cell units keep the normal equations well scaled.
		du, dv, w := (p[0]-uc)/g, (p[1]-vc)/g, p[2]
		s := &sums[q]
		cg.n[q]++
		s.su += du
		s.sv += dv
		s.sw += w
		s.suu += du * du
		s.suv += du * dv
		s.svv += dv * dv
		s.suw += du * w
		s.svw += dv * w
		s.sww += w * w
	}
	cg.h = make([]float64, nc)
	cg.a = make([]float64, nc)
	cg.b = make([]float64, nc)
	cg.rms = make([]float64, nc)
	cg.fitted = make([]bool, nc)
	for q := range nc {
		cnt := float64(cg.n[q])
		if cg.n[q] < 6 {
			continue
		}
		s := sums[q]
		cuu := s.suu/cnt - (s.su/cnt)*(s.su/cnt)
		cvv := s.svv/cnt - (s.sv/cnt)*(s.sv/cnt)
		cuv := s.suv/cnt - (s.su/cnt)*(s.sv/cnt)
		if cuu < 0.01 || cvv < 0.01 || cuu*cvv-cuv*cuv < 1e-4 {
			continue
		}
		x, ok := solveSmall(3, []float64{cnt, s.su, s.sv, s.su, s.suu, s.suv, s.sv, s.suv, s.svv}, []float64{s.sw, s.suw, s.svw})
		if !ok {
			continue
		}
		cg.h[q], cg.a[q], cg.b[q] = x[0], x[1]/g, x[2]/g
		ssr := s.sww - x[0]*s.sw - x[1]*s.suw - x[2]*s.svw
		cg.rms[q] = math.Sqrt(max(ssr, 0) / cnt)
		cg.fitted[q] = true
	}
	return cg
}

// TestNewCoarseGridMatchesReference checks that coarseCellSize and
// newCoarseGrid give the reference's cell edge, cells and plane fits to
// the bit on 1 to 3 processors. The sums and fits are the same
// expressions in the same order, so a build that fuses multiply-add
// fuses both alike.
func TestNewCoarseGridMatchesReference(t *testing.T) {
	f := levelRefFrame()
	for name, pts := range levelRefClouds() {
		uvw := make([][3]float64, len(pts))
		for i, p := range pts {
			u, v, w := f.coords(p)
			uvw[i] = [3]float64{u, v, w}
		}
		for _, procs := range []int{1, 2, 3} {
			prev := runtime.GOMAXPROCS(procs)
			g, wantG := coarseCellSize(uvw), coarseCellSizeRef(uvw)
			got, want := newCoarseGrid(uvw, wantG), newCoarseGridRef(uvw, wantG)
			runtime.GOMAXPROCS(prev)
			if math.Float64bits(g) != math.Float64bits(wantG) {
				t.Errorf("%s, %d procs: cell edge %v, want %v", name, procs, g, wantG)
			}
			if d := coarseGridDiff(got, want); d != "" {
				t.Errorf("%s, %d procs: %s", name, procs, d)
			}
		}
	}
}

// coarseGridDiff says where a and b differ in their bits, or returns "".
func coarseGridDiff(a, b *coarseGrid) string {
	if a.nu != b.nu || a.nv != b.nv || a.u0 != b.u0 || a.v0 != b.v0 || a.g != b.g {
		return fmt.Sprintf("grid %dx%d at (%v, %v) edge %v, want %dx%d at (%v, %v) edge %v", a.nu, a.nv, a.u0, a.v0, a.g, b.nu, b.nv, b.u0, b.v0, b.g)
	}
	if !slices.Equal(a.cellOfPt, b.cellOfPt) || !slices.Equal(a.n, b.n) || !slices.Equal(a.fitted, b.fitted) {
		return "cells of the points, counts or fitted cells differ"
	}
	for q := range a.h {
		for k, x := range [][2]float64{{a.h[q], b.h[q]}, {a.a[q], b.a[q]}, {a.b[q], b.b[q]}, {a.rms[q], b.rms[q]}} {
			if math.Float64bits(x[0]) != math.Float64bits(x[1]) {
				return fmt.Sprintf("cell %d: fit value %d is %v, want %v", q, k, x[0], x[1])
			}
		}
	}
	return ""
}

// normalsFaceRef is normalsFace as it was: it tells the outer face from facet normals, point normals or,
// for STL meshes without facet normals, the facet winding (counter-
// clockwise seen from outside): the outer face's normals point to the hob,
// against base +z. It returns +1 when base +z is along the frame's normal,
// −1 against it, 0 when there are no normals or they do not agree; detail
// names the evidence (or why it was not used).
func normalsFaceRef(c *Cloud, f *frame, radius float64) (sign float64, detail string) {
	sum, n, what := normalsCosinesRef(c, f, radius)
	if n == 0 {
		return 0, ""
	}
	mean := sum / float64(n)
	switch {
	case mean >= 0.5:
		return -1, what
	case mean <= -0.5:
		return 1, what
	}
	return 0, fmt.Sprintf("the %s on the base do not point one way (mean cosine %.2f); not used", what, mean)
}

// normalsCosinesRef is the summing part of normalsFaceRef, as normalsFace
// was (each facet's first corner tested on its own): it returns the sum of
// the cosines of the normals on the base, how many and what they were.
func normalsCosinesRef(c *Cloud, f *frame, radius float64) (sum float64, n int, what string) {
	r2 := radius * radius
	inBase := func(p r3.Vec) bool {
		u, v, _ := f.coords(p)
		du, dv := u, v
		return du*du+dv*dv <= r2
	}
	// cosine is the cosine of direction d to the frame's normal; ok is
	// false for a zero or non-finite d.
	cosine := func(d r3.Vec) (float64, bool) {
		l := r3.Norm(d)
		if l == 0 || math.IsNaN(l) || math.IsInf(l, 0) {
			return 0, false
		}
		return r3.Dot(d, f.e[2]) / l, true
	}
	switch {
	case len(c.FacetNormals) != 0 && hasNonZero(c.FacetNormals):
		what = "facet normals"
		sum, n = orderedSum(len(c.Triangles), func(t int) (float64, bool) {
			if !inBase(c.Points[c.Triangles[t][0]]) {
				return 0, false
			}
			return cosine(c.FacetNormals[t])
		})
	case len(c.Normals) != 0:
		what = "point normals"
		step := max(1, len(c.Points)/200000)
		sum, n = orderedSum((len(c.Points)+step-1)/step, func(k int) (float64, bool) {
			if !inBase(c.Points[k*step]) {
				return 0, false
			}
			return cosine(c.Normals[k*step])
		})
	case len(c.Triangles) != 0 && strings.HasPrefix(c.Format, "stl"):
		what = "STL facet winding"
		sum, n = orderedSum(len(c.Triangles), func(t int) (float64, bool) {
			tri := c.Triangles[t]
			p0 := c.Points[tri[0]]
			if !inBase(p0) {
				return 0, false
			}
			return cosine(r3.Cross(r3.Sub(c.Points[tri[1]], p0), r3.Sub(c.Points[tri[2]], p0)))
		})
	default:
		return 0, 0, ""
	}
	return sum, n, what
}

// TestNormalsFaceMatchesReference checks that normalsCosines gives the
// reference's sum (to the bit) and count, and normalsFace its sign and
// detail, for facet normals, facet winding and point normals, agreeing
// and not, on base radii that take none, some or all of the facets, on 1
// to 3 processors. Both compute each cosine and the in-base test with the
// same expressions, so a build that fuses multiply-add fuses both alike.
func TestNormalsFaceMatchesReference(t *testing.T) {
	const R = 0.06
	up := newScanner(FaceUp, 7, 30, 15, r3.Vec{X: 0.02, Y: -0.01, Z: 0.3})
	sbMesh := synthBase{R: R, Shape: dish(0.2e-3, R), CornerM: 4e-3, WallM: 8e-3, Mesh: true, StepM: 1.5e-3, Normals: true, Seed: 11}
	mesh := up.apply(sbMesh.build())
	mesh.Format = "stl"
	winding := *mesh
	winding.FacetNormals = nil
	// Facet normals of random directions: the mean cosine is printed.
	mixed := *mesh
	rng := rand.New(rand.NewPCG(8, 9))
	mixed.FacetNormals = make([]r3.Vec, len(mesh.FacetNormals))
	for i := range mixed.FacetNormals {
		mixed.FacetNormals[i] = r3.Vec{X: rng.NormFloat64(), Y: rng.NormFloat64(), Z: rng.NormFloat64() + 0.3}
	}
	mixed.FacetNormals[3] = r3.Vec{}
	sbCloud := synthBase{R: R, Shape: dish(0.2e-3, R), CornerM: 5e-3, WallM: 12e-3, NoiseM: 12e-6, N: 30000, Normals: true, Seed: 21}
	cloud := up.apply(sbCloud.build())
	var mean r3.Vec
	for _, p := range mesh.Points {
		mean = r3.Add(mean, p)
	}
	f := newFrame(r3.Scale(1/float64(len(mesh.Points)), mean), up.dir(r3.Vec{Z: 1}))
	for name, c := range map[string]*Cloud{"facet normals": mesh, "winding": &winding, "mixed": &mixed, "point normals": cloud} {
		for _, radius := range []float64{1e-4, 0.02, R, 2 * R} {
			for _, procs := range []int{1, 2, 3} {
				prev := runtime.GOMAXPROCS(procs)
				sum, n, what := normalsCosines(c, &f, radius)
				wantSum, wantN, wantWhat := normalsCosinesRef(c, &f, radius)
				sign, detail := normalsFace(c, &f, radius)
				wantSign, wantDetail := normalsFaceRef(c, &f, radius)
				runtime.GOMAXPROCS(prev)
				if math.Float64bits(sum) != math.Float64bits(wantSum) || n != wantN || what != wantWhat {
					t.Errorf("%s, radius %v, %d procs: cosines sum %v over %d %s, want %v over %d %s", name, radius, procs, sum, n, what, wantSum, wantN, wantWhat)
				}
				if sign != wantSign || detail != wantDetail {
					t.Errorf("%s, radius %v, %d procs: %v %q, want %v %q", name, radius, procs, sign, detail, wantSign, wantDetail)
				}
			}
		}
	}
}

// binRimRef is binRim as it was, its bins' heights in a buffer of their own, on annulusPointsRef.
func binRimRef(pts []r3.Vec, f *frame, uc, vc, r0, rq float64, sc *levelScratch) (*rimBins, error) {
	rlo, rhi := 0.55*r0, max(1.35*r0, min(3*r0, 1.02*rq))
	a := annulusPointsRef(pts, f, uc, vc, r0, rlo, rhi, sc)
	defer sc.floats.put(a.r, a.w)
	ns, ring := rimSectors(a.rho, r0)
	dr := max(r0/400, 20*float64(ns)/ring)
	var nb int
	var bins []int32 // each annulus point's bin, reused as the bins widen
	for try := 0; ; try++ {
		nb = int(math.Ceil((rhi - rlo) / dr))
		if nb < 8 {
			return nil, errors.New("scan: level: too few points near the rim")
		}
		bins = a.bins(nb, rlo, dr, bins)
		if binsFullEnough(binTotals(bins, ns*nb), ns, nb, int((0.6*r0-rlo)/dr), int((0.9*r0-rlo)/dr)) || try == 5 {
			break
		}
		dr *= 1.5
	}
	rb := &rimBins{ns: ns, nb: nb, rlo: rlo, dr: dr, ws: sc.floats.get(len(a.r), 0)}
	var order []int32
	order, rb.start = sortByCell(bins, ns*nb)
	parallelRows(len(order), func(k0, k1 int) {
		for k := k0; k < k1; k++ {
			rb.ws[k] = a.w[order[k]]
		}
	})
	rb.mean = a.binMeans(bins, rb)
	return rb, nil
}

// TestBinRimMatchesReference checks that binRim's bins, mean radii and
// heights match the reference's to the bit, with the scratch pool empty
// and already holding buffers, on 1 to 3 processors.
func TestBinRimMatchesReference(t *testing.T) {
	f := levelRefFrame()
	for name, pts := range levelRefClouds() {
		for _, procs := range []int{1, 2, 3} {
			for _, warm := range []bool{false, true} {
				prev := runtime.GOMAXPROCS(procs)
				sc := &levelScratch{}
				if warm {
					sc.floats.put(make([]float64, 10), make([]float64, len(pts)))
				}
				got, err := binRim(pts, &f, 0.001, -0.002, 0.1, 0.14, sc)
				want, wantErr := binRimRef(pts, &f, 0.001, -0.002, 0.1, 0.14, &levelScratch{})
				runtime.GOMAXPROCS(prev)
				if (err != nil) != (wantErr != nil) {
					t.Fatalf("%s: error %v, want %v", name, err, wantErr)
				}
				if err != nil {
					continue
				}
				if d := rimBinsDiff(got, want); d != "" {
					t.Errorf("%s, %d procs, warm %v: %s", name, procs, warm, d)
				}
			}
		}
	}
}

// rimBinsDiff says where a and b differ in their bits, or returns "".
func rimBinsDiff(a, b *rimBins) string {
	if a.ns != b.ns || a.nb != b.nb || a.rlo != b.rlo || a.dr != b.dr || !slices.Equal(a.start, b.start) {
		return fmt.Sprintf("bins %d×%d from %v by %v, want %d×%d from %v by %v, or their starts differ", a.ns, a.nb, a.rlo, a.dr, b.ns, b.nb, b.rlo, b.dr)
	}
	for _, x := range [][2][]float64{{a.ws, b.ws}, {a.mean, b.mean}} {
		if len(x[0]) != len(x[1]) {
			return fmt.Sprintf("%d values, want %d", len(x[0]), len(x[1]))
		}
		for i := range x[0] {
			if math.Float64bits(x[0][i]) != math.Float64bits(x[1][i]) {
				return fmt.Sprintf("value %d is %v, want %v", i, x[0][i], x[1][i])
			}
		}
	}
	return ""
}
