package scan

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/internal/hugemem"
	"gapflux/internal/parallel"
)

// keepBase keeps the points of pts (all the cloud's points) inside the
// base cylinder (radius m, height within far of the plane), each repeated
// point once, moves them and the cloud's normals and triangles into the
// base frame bf, and records the drops in out. band (m) is the rim
// search's largest base height. With reuse the cloud's storage is reused
// and c is emptied.
func keepBase(c *Cloud, pts []r3.Vec, rep []int32, merged int, bf *frame, radius, band float64, reuse bool, out *Levelled) (*Levelled, error) {
	far := max(0.1*radius, 1.5*band+0.02*radius)
	level := 1.5*band + 0.005*radius // base height, for the drop report
	lc := &Cloud{Format: c.Format, Unit: c.Unit, UnitSource: c.UnitSource}
	cut := &baseCut{pts: pts, normals: nonEmpty(c.Normals), rep: rep, bf: bf, r2: radius * radius, far: far, level: level}
	var idx []int32 // output index of each point, for the triangles
	if len(c.Triangles) != 0 {
		idx = hugemem.Make[int32](len(pts), 0)
	}
	drop := cut.run(lc, idx, reuse)
	keepTriangles(lc, c, rep, idx, bf, reuse)
	out.Cloud = lc
	out.PointsDropped = len(pts) - len(lc.Points) - merged
	out.DroppedFraction = float64(out.PointsDropped) / float64(len(pts)-merged)
	out.DroppedBeyondRim, out.DroppedAtBaseHeight, out.DroppedOffPlane = drop.beyond, drop.level, drop.offPlane
	out.DroppedBySector = drop.sector
	if out.DroppedFraction > DropReportFraction {
		out.DropReason = drop.reason(len(pts)-merged, level, far)
	}
	if reuse {
		*c = Cloud{} // its storage now belongs to the output
	}
	if len(lc.Points) < 3 {
		return nil, errors.New("scan: level: fewer than 3 points left on the base")
	}
	return out, nil
}

// baseCut keeps the points that are not a repeat and lie within the base
// cylinder: within radius (r2 = radius², m²) of the axis and within far
// (m) of the plane of frame bf. It tallies the dropped ones against the
// base height level (m).
type baseCut struct {
	pts, normals   []r3.Vec // input points, m, and their normals (or nil)
	rep            []int32  // first occurrence of each point, or nil
	bf             *frame
	r2, far, level float64
}

// part handles points [i0, i1): the kept ones, moved into the base frame,
// go in order to dst[o:] (normals, rotated, to dstN[o:] when there are
// normals) and their output index to idx (−1 for a dropped point; idx may
// be nil). With dst nil it only counts. Dropped points are counted in
// tally unless it is nil. It returns the number kept. dst may be pts
// itself with o ≤ i0 (kept points only move down), and dstN normals.
func (b *baseCut) part(i0, i1 int, dst, dstN []r3.Vec, o int, idx []int32, tally *dropTally) int {
	n := 0
	for i := i0; i < i1; i++ {
		if b.rep != nil && b.rep[i] != int32(i) {
			if idx != nil {
				idx[i] = -1
			}
			continue
		}
		// coords are the rotated point of the output: Rotation·(p − o).
		u, v, w := b.bf.coords(b.pts[i])
		if out := u*u+v*v > b.r2; out || math.Abs(w) > b.far {
			if idx != nil {
				idx[i] = -1
			}
			if tally != nil {
				tally.add(u, v, w, out, b.level)
			}
			continue
		}
		if dst != nil {
			dst[o+n] = r3.Vec{X: u, Y: v, Z: w}
			if b.normals != nil {
				dstN[o+n] = b.bf.rotate(b.normals[i])
			}
		}
		if idx != nil {
			idx[i] = int32(o + n)
		}
		n++
	}
	return n
}

// run fills lc's points (and normals) with the kept points in input order,
// in the base frame, and idx (when not nil) with each point's output index
// or −1, and returns the drop tally. Parts of the points are handled at
// once. With reuse the output takes the input's storage: each part packs
// its kept points at its own start, then the parts' blocks move down in
// order; else a counting pass sizes the output and a second pass fills it.
// The tallies are counts, so their sum does not depend on the parts.
func (b *baseCut) run(lc *Cloud, idx []int32, reuse bool) dropTally {
	n := len(b.pts)
	parts := rowParts(n)
	cnt := make([]int, parts)
	tallies := make([]dropTally, parts)
	if reuse {
		parallel.Do(n, parts, func(k, i0, i1 int) {
			var tally dropTally // local: the parts' tallies would share cache lines
			cnt[k] = b.part(i0, i1, b.pts, b.normals, i0, idx, &tally)
			tallies[k] = tally
		})
		off := packBlocks(b.pts, n, cnt)
		lc.Points = b.pts[:off[parts]]
		if b.normals != nil {
			packBlocks(b.normals, n, cnt)
			lc.Normals = b.normals[:off[parts]]
		}
		if idx != nil {
			shiftIndices(idx, n, off)
		}
	} else {
		parallel.Do(n, parts, func(k, i0, i1 int) {
			var tally dropTally
			cnt[k] = b.part(i0, i1, nil, nil, 0, nil, &tally)
			tallies[k] = tally
		})
		off := blockOffsets(cnt)
		lc.Points = hugemem.Make[r3.Vec](off[parts], 0)
		if b.normals != nil {
			lc.Normals = hugemem.Make[r3.Vec](off[parts], 0)
		}
		parallel.Do(n, parts, func(k, i0, i1 int) {
			b.part(i0, i1, lc.Points, lc.Normals, off[k], idx, nil)
		})
	}
	var drop dropTally
	for k := range tallies {
		drop.merge(&tallies[k])
	}
	return drop
}

// blockOffsets returns where each part's items start in the packed output:
// the prefix sums of cnt, with the total last.
func blockOffsets(cnt []int) []int {
	off := make([]int, len(cnt)+1)
	for k, c := range cnt {
		off[k+1] = off[k] + c
	}
	return off
}

// packBlocks moves, in order, the cnt[k] items at the start of part k of
// s (parts of [0, n) as parallel.Do splits it) to their packed offset,
// and returns the offsets (blockOffsets). A block moves down, never over
// a later block's items.
func packBlocks[T any](s []T, n int, cnt []int) []int {
	off := blockOffsets(cnt)
	p := len(cnt)
	for k := range p {
		i0 := k * n / p
		copy(s[off[k]:off[k+1]], s[i0:i0+cnt[k]])
	}
	return off
}

// shiftIndices moves the output indices of part k (numbered from the
// part's own start) by the part's packed offset, parts at once.
func shiftIndices(idx []int32, n int, off []int) {
	parallel.Do(n, len(off)-1, func(k, i0, i1 int) {
		d := int32(off[k] - i0)
		if d == 0 {
			return
		}
		for i := i0; i < i1; i++ {
			if idx[i] >= 0 {
				idx[i] += d
			}
		}
	})
}

// keepTriangles fills lc's triangles (and facet normals, rotated into
// frame bf) with c's triangles whose three vertices are kept, re-indexed
// through rep (repeats to their first occurrence) and idx (output
// indices), in input order. With reuse the output takes c's storage, as
// baseCut.run does.
func keepTriangles(lc, c *Cloud, rep, idx []int32, bf *frame, reuse bool) {
	n := len(c.Triangles)
	if n == 0 {
		if reuse {
			lc.Triangles = c.Triangles[:0]
		}
		return
	}
	tris, fns := c.Triangles, nonEmpty(c.FacetNormals)
	part := func(t0, t1 int, dst [][3]int32, dstN []r3.Vec, o int) int {
		m := 0
		for t := t0; t < t1; t++ {
			tri := tris[t]
			if rep != nil {
				tri = [3]int32{rep[tri[0]], rep[tri[1]], rep[tri[2]]}
			}
			a, b, d := idx[tri[0]], idx[tri[1]], idx[tri[2]]
			if a < 0 || b < 0 || d < 0 {
				continue
			}
			if dst != nil {
				dst[o+m] = [3]int32{a, b, d}
				if fns != nil {
					dstN[o+m] = bf.rotate(fns[t])
				}
			}
			m++
		}
		return m
	}
	parts := rowParts(n)
	cnt := make([]int, parts)
	if reuse {
		parallel.Do(n, parts, func(k, t0, t1 int) { cnt[k] = part(t0, t1, tris, fns, t0) })
		off := packBlocks(tris, n, cnt)
		lc.Triangles = tris[:off[parts]]
		if fns != nil {
			packBlocks(fns, n, cnt)
			lc.FacetNormals = fns[:off[parts]]
		}
		return
	}
	parallel.Do(n, parts, func(k, t0, t1 int) { cnt[k] = part(t0, t1, nil, nil, 0) })
	off := blockOffsets(cnt)
	if off[parts] == 0 {
		return
	}
	lc.Triangles = hugemem.Make[[3]int32](off[parts], 0)
	if fns != nil {
		lc.FacetNormals = hugemem.Make[r3.Vec](off[parts], 0)
	}
	parallel.Do(n, parts, func(k, t0, t1 int) { part(t0, t1, lc.Triangles, lc.FacetNormals, off[k]) })
}

// nonEmpty returns v, or nil when it is empty.
func nonEmpty(v []r3.Vec) []r3.Vec {
	if len(v) == 0 {
		return nil
	}
	return v
}
