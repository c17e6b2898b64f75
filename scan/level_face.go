package scan

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/internal/order"
	"gapflux/internal/parallel"
)

// normalsFace tells the outer face from facet normals, point normals or,
// for STL meshes without facet normals, the facet winding (counter-
// clockwise seen from outside): the outer face's normals point to the hob,
// against base +z. It returns +1 when base +z is along the frame's normal,
// −1 against it, 0 when there are no normals or they do not agree; detail
// names the evidence (or why it was not used).
func normalsFace(c *Cloud, f *frame, radius float64) (sign float64, detail string) {
	sum, n, what := normalsCosines(c, f, radius)
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

// normalsCosines returns the sum of the cosines to the frame's normal of
// the normals on the base (within radius, m, of the frame's axis): facet
// normals, point normals or facet windings, added in order; how many were
// added; and what they were (0 and "" when there are none).
func normalsCosines(c *Cloud, f *frame, radius float64) (sum float64, n int, what string) {
	r2 := radius * radius
	inBase := func(p r3.Vec) bool {
		u, v, _ := f.coords(p)
		du, dv := u, v
		return du*du+dv*dv <= r2
	}
	// A facet is on the base when its first corner is: the facet cases
	// mark the points on the base once (a point has some two facets).
	var onBase pointBits
	firstOnBase := func(t int) bool {
		i := c.Triangles[t][0]
		return onBase.bit(int(i)) != 0
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
		onBase = baseVertices(c.Points, inBase)
		sum, n = orderedSum(len(c.Triangles), func(t int) (float64, bool) {
			if !firstOnBase(t) {
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
		onBase = baseVertices(c.Points, inBase)
		sum, n = orderedSum(len(c.Triangles), func(t int) (float64, bool) {
			if !firstOnBase(t) {
				return 0, false
			}
			tri := c.Triangles[t]
			p0 := c.Points[tri[0]]
			return cosine(r3.Cross(r3.Sub(c.Points[tri[1]], p0), r3.Sub(c.Points[tri[2]], p0)))
		})
	default:
		return 0, 0, ""
	}
	return sum, n, what
}

// baseVertices returns the bit set of the points for which inBase holds:
// bit i%64 of word i/64 for point i. Parts of whole words are marked at
// once.
func baseVertices(pts []r3.Vec, inBase func(r3.Vec) bool) pointBits {
	bits := newPointBits(len(pts))
	parallelRows(len(bits), func(w0, w1 int) {
		for w := w0; w < w1; w++ {
			var word uint64
			for j, p := range pts[w*64 : min(len(pts), w*64+64)] {
				if inBase(p) {
					word |= 1 << j
				}
			}
			bits[w] = word
		}
	})
	return bits
}

// orderedSum returns the sum of value(i) over the i in [0, n) for which
// it is ok, added in index order, and how many there were. The values are
// computed block by block in parts at once and then added one after
// another, so the sum is bit for bit that of a sequential loop.
func orderedSum(n int, value func(i int) (float64, bool)) (sum float64, count int) {
	const block = 1 << 15
	vals := make([]float64, min(n, block))
	oks := make([]bool, min(n, block))
	for b0 := 0; b0 < n; b0 += block {
		m := min(block, n-b0)
		parallelRows(m, func(i0, i1 int) {
			for i := i0; i < i1; i++ {
				vals[i], oks[i] = value(b0 + i)
			}
		})
		for i, ok := range oks[:m] {
			if ok {
				sum += vals[i]
				count++
			}
		}
	}
	return sum, count
}

// hasNonZero reports whether any of v is not the zero vector; parts of v
// are looked at once.
func hasNonZero(v []r3.Vec) bool {
	_, ok := parallel.First(len(v), rowParts(len(v)), func(lo, hi int) (int, bool) {
		for i := lo; i < hi; i++ {
			if v[i] != (r3.Vec{}) {
				return i, true
			}
		}
		return 0, false
	})
	return ok
}

// wallFace tells the outer face from the points beyond the rim that rise
// clear of the base (the corner and the wall rise into the pan). It
// returns +1 when they lie along the frame's normal, −1 against it, 0 when
// there are too few or they lie on both sides. Up to 500 000 of the points
// are looked at, in parts at once; the heights each part collects at its
// own start are packed in order afterwards.
func wallFace(pts []r3.Vec, f *frame, radius, dr float64, sc *levelScratch) float64 {
	step := max(1, len(pts)/500000)
	nTake := (len(pts) + step - 1) / step
	rimW, outer := sc.floats.get(nTake, 0), sc.floats.get(nTake, 0)
	defer func() { sc.floats.put(rimW, outer) }()
	parts := rowParts(nTake)
	nRim, nOuter, nBases := make([]int, parts), make([]int, parts), make([]int, parts)
	parallel.Do(nTake, parts, func(k, t0, t1 int) {
		r, o, nb := t0, t0, 0 // nb is local: parts writing next to each other would share a cache line
		for t := t0; t < t1; t++ {
			u, v, w := f.coords(pts[t*step])
			rr := math.Sqrt(u*u + v*v)
			switch {
			case rr <= radius:
				nb++
				if rr >= 0.9*radius {
					rimW[r] = math.Abs(w)
					r++
				}
			case rr > radius+2*dr && rr < 2*radius:
				outer[o] = w
				o++
			}
		}
		nRim[k], nOuter[k], nBases[k] = r-t0, o-t0, nb
	})
	rimW = rimW[:packBlocks(rimW, nTake, nRim)[parts]]
	outer = outer[:packBlocks(outer, nTake, nOuter)[parts]]
	nBase := sumInts(nBases)
	if len(rimW) == 0 || len(outer) == 0 {
		return 0
	}
	k := min(len(rimW)-1, int(0.99*float64(len(rimW))))
	hb := order.Select(rimW, k)
	lim := hb + 0.01*radius
	pos, neg := 0, 0
	for _, w := range outer {
		switch {
		case w > lim:
			pos++
		case w < -lim:
			neg++
		}
	}
	tot := pos + neg
	if tot < max(20, nBase/1000) {
		return 0
	}
	switch {
	case float64(pos) >= 0.8*float64(tot):
		return 1
	case float64(neg) >= 0.8*float64(tot):
		return -1
	}
	return 0
}
