package scan

import (
	"errors"
	"fmt"
	"gapflux/internal/parallel"
	"math"
	"runtime"

	"gonum.org/v1/gonum/spatial/r3"
)

// sectorRim is one sector's result of the rim search: the rim radius (m,
// negative when none was found), the largest |height| inside it (m) and
// whether the base warps before it.
type sectorRim struct {
	edge, top float64
	warp      bool
}

// fitRim finds the base rim along radial profiles in angular sectors about
// (uc, vc) and fits a circle to it. r0 is a first guess of the radius.
// The sectors are searched in parts at once; their rim points are then
// gathered in sector order. Scratch comes from and goes back to sc.
func fitRim(pts []r3.Vec, f *frame, uc, vc, r0, rq, tanMax float64, sc *levelScratch) (rimFit, error) {
	rb, err := binRim(pts, f, uc, vc, r0, rq, sc)
	if err != nil {
		return rimFit{}, err
	}
	defer sc.floats.put(rb.ws)
	ns, dr := rb.ns, rb.dr
	kStart := int((0.6*r0 - rb.rlo) / dr)
	sr := make([]sectorRim, ns)
	parallel.Do(ns, min(runtime.GOMAXPROCS(0), ns), func(_, s0, s1 int) {
		sp := newProfile(rb.nb)
		for s := s0; s < s1; s++ {
			rb.profile(s, sp)
			trend := profileTrend(sp.prof, sp.pos, sp.valid, 0.6*r0, 0.9*r0)
			thr := sp.slopeLimit(trend, kStart, r0, tanMax)
			sr[s].edge, sr[s].top, sr[s].warp = sp.edge(trend, thr, kStart, rb.rlo, dr, r0)
		}
	})
	var eu, ev []float64
	var band float64
	var warped int
	for s, e := range sr {
		if e.edge < 0 {
			continue
		}
		if e.warp {
			warped++
		}
		band = max(band, e.top)
		th := -math.Pi + (float64(s)+0.5)*2*math.Pi/float64(ns)
		eu = append(eu, uc+e.edge*math.Cos(th))
		ev = append(ev, vc+e.edge*math.Sin(th))
	}
	res := rimFit{sectors: ns, dr: dr, band: band, warped: warped}
	if len(eu) < 3 {
		return res, fmt.Errorf("scan: level: base rim found in %d of %d sectors; cannot fit the footprint circle", len(eu), ns)
	}
	cu, cv, r, used, ok := robustCircle(eu, ev, dr)
	if !ok {
		return res, errors.New("scan: level: rim circle fit failed")
	}
	res.u, res.v, res.r, res.used = cu, cv, r, used
	return res, nil
}

// newProfile returns the scratch of one part's sector profiles, nb bins.
func newProfile(nb int) *rimProfile {
	return &rimProfile{
		prof:  make([]float64, nb), // median height per bin
		pos:   make([]float64, nb), // mean radius per bin
		valid: make([]bool, nb),
	}
}

// rimMinCount is the fewest points a (sector, radial bin) needs to count.
const rimMinCount = 4

// rimBins holds the points of the rim annulus sorted by (sector, radial
// bin): bin k of sector s holds ws[start[s*nb+k]:start[s*nb+k+1]]
// (heights, m, in point order); mean[s*nb+k] is the mean of their radii
// from the centre (m), summed in point order. Radial bins of width dr (m)
// start at radius rlo (m).
type rimBins struct {
	ns, nb   int
	rlo, dr  float64
	start    []int32
	ws, mean []float64
}

// annulus holds the points of the rim annulus: radius from the centre
// (m), height (m) and angular sector, in point order.
type annulus struct {
	r, w []float64
	sec  []uint8
	ns   int     // number of sectors, at most 255
	rho  float64 // point density of the inner disc, points per m²
}

// rimSectors returns the number of angular sectors of the rim search for
// a point density rho (points per m², thinned) and radius r0 (m), and the
// points per m of radius over all sectors.
func rimSectors(rho, r0 float64) (ns int, ring float64) {
	ring = rho * 2 * math.Pi * r0
	return min(72, max(24, int(ring*r0/400/20))), ring
}

// annulusPoints returns the points between radii rlo and rhi (m) about
// (uc, vc), thinned to some 30 points per bin of r0/400 in 72 sectors,
// and the point density of the inner disc (radius 0.9 r0) after thinning.
// Parts of the points are handled at once: a first pass counts the inner
// and annulus points and marks the annulus points in a bit set; each part
// then counts its marked points of the thinned set and writes them at its
// offset, in point order.
func annulusPoints(pts []r3.Vec, f *frame, uc, vc, r0, rlo, rhi float64, sc *levelScratch) *annulus {
	n := len(pts)
	m := annulusMarks{f: f, uc: uc, vc: vc, in2: 0.81 * r0 * r0, lo2: rlo * rlo, hi2: rhi * rhi, bits: newPointBits(n)}
	// The parts cover whole words of the bit set, so that no two write
	// to the same word.
	wparts := rowParts(len(m.bits))
	nIn, nAnn := make([]int, wparts), make([]int, wparts)
	parallel.Do(len(m.bits), wparts, func(k, w0, w1 int) {
		nIn[k], nAnn[k] = m.mark(pts, w0, w1)
	})
	nInner, nAnnulus := sumInts(nIn), sumInts(nAnn)
	// Some 30 points per bin of r0/400 in 72 sectors are plenty: thin out
	// denser scans.
	step := max(1, nAnnulus/(30*72*int(400*(rhi-rlo)/r0)))
	a := &annulus{rho: float64(nInner/step) / (math.Pi * 0.81 * r0 * r0)}
	a.ns, _ = rimSectors(a.rho, r0)
	nTake := (n + step - 1) / step
	parts := rowParts(nTake)
	cnt := make([]int, parts)
	parallel.Do(nTake, parts, func(k, t0, t1 int) {
		c := 0
		for t := t0; t < t1; t++ {
			c += int(m.has(t * step))
		}
		cnt[k] = c
	})
	off := blockOffsets(cnt)
	a.r, a.w, a.sec = sc.floats.get(off[parts], 0), sc.floats.get(off[parts], 0), make([]uint8, off[parts])
	parallel.Do(nTake, parts, func(k, t0, t1 int) {
		m.fill(a, pts, step, t0, t1, off[k])
	})
	return a
}

// annulusMarks finds the points of an annulus about (uc, vc) in frame f:
// in2, lo2 and hi2 are the squared radii (m²) of the inner disc and of the
// annulus's bounds; bit i%64 of bits[i/64] says point i is in the annulus.
type annulusMarks struct {
	f             *frame
	uc, vc        float64
	in2, lo2, hi2 float64
	bits          pointBits
}

// radius2 returns the offsets (m) of p from the centre in the plane, its
// height (m) and its squared distance from the centre (m²).
func (m *annulusMarks) radius2(p r3.Vec) (du, dv, w, rr float64) {
	u, v, w := m.f.coords(p)
	du, dv = u-m.uc, v-m.vc
	return du, dv, w, du*du + dv*dv
}

// mark sets the bits of words [w0, w1) for the points in the annulus and
// returns how many of those points lie in the inner disc and how many in
// the annulus.
func (m *annulusMarks) mark(pts []r3.Vec, w0, w1 int) (inner, ann int) {
	for w := w0; w < w1; w++ {
		var word uint64
		for j, p := range pts[w*64 : min(len(pts), w*64+64)] {
			_, _, _, r2 := m.radius2(p)
			if r2 < m.in2 {
				inner++
			}
			if r2 >= m.lo2 && r2 < m.hi2 {
				ann++
				word |= 1 << j
			}
		}
		m.bits[w] = word
	}
	return inner, ann
}

// has returns 1 when point i is in the annulus, else 0.
func (m *annulusMarks) has(i int) uint64 { return m.bits.bit(i) }

// fill writes the annulus points among pts[t·step] for t in [t0, t1) to
// a's radii (m), heights (m) and angular sectors (a.ns of equal angle,
// the first starting at −π) from index o on, in point order.
func (m *annulusMarks) fill(a *annulus, pts []r3.Vec, step, t0, t1, o int) {
	fns := float64(a.ns)
	for t := t0; t < t1; t++ {
		if m.has(t*step) == 0 {
			continue
		}
		du, dv, w, r2 := m.radius2(pts[t*step])
		th := math.Atan2(dv, du)
		s := int((th + math.Pi) / (2 * math.Pi) * fns)
		a.r[o], a.w[o], a.sec[o] = math.Sqrt(r2), w, uint8(min(a.ns-1, max(0, s)))
		o++
	}
}

// pointBits is a set of point indices: bit i%64 of word i/64 for point i.
// Parts that write whole words never share one.
type pointBits []uint64

// newPointBits returns an empty set for n points.
func newPointBits(n int) pointBits { return make(pointBits, (n+63)/64) }

// bit returns 1 when point i is in the set, else 0.
func (b pointBits) bit(i int) uint64 { return b[i>>6] >> (i & 63) & 1 }

// sumInts returns the sum of a.
func sumInts(a []int) int {
	s := 0
	for _, x := range a {
		s += x
	}
	return s
}

// binRim sorts the points of the annulus about (uc, vc) that may hold the
// rim (r0 is the first guess of the radius, rq the scan's extent, m) into
// angular sectors and radial bins. The sector count follows the point
// density; the bins are widened while more than a fifth of the inner ones
// (0.6–0.9 r0) are empty (structured meshes and scan lines leave regular
// gaps). The annulus's scratch goes back to sc, and rb.ws comes from it
// (the buffer of the annulus radii, once the bins' mean radii are taken).
func binRim(pts []r3.Vec, f *frame, uc, vc, r0, rq float64, sc *levelScratch) (*rimBins, error) {
	rlo, rhi := 0.55*r0, max(1.35*r0, min(3*r0, 1.02*rq))
	a := annulusPoints(pts, f, uc, vc, r0, rlo, rhi, sc)
	defer func() { sc.floats.put(a.r, a.w) }()
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
	rb := &rimBins{ns: ns, nb: nb, rlo: rlo, dr: dr}
	var order []int32
	order, rb.start = sortByCell(bins, ns*nb)
	rb.mean = a.binMeans(bins, rb)
	// The radii are done with: their buffer (memory already touched)
	// takes the heights in bin order.
	sc.floats.put(a.r)
	a.r = nil
	rb.ws = sc.floats.get(len(a.w), 0)
	parallelRows(len(order), func(k0, k1 int) {
		for k := k0; k < k1; k++ {
			rb.ws[k] = a.w[order[k]]
		}
	})
	return rb, nil
}

// bin returns the (sector, radial bin) index of annulus point i for nb
// radial bins of width dr (m) from rlo (m).
func (a *annulus) bin(i, nb int, rlo, dr float64) int {
	return int(a.sec[i])*nb + min(nb-1, int((a.r[i]-rlo)/dr))
}

// bins returns the (sector, radial bin) of every annulus point for nb
// radial bins of width dr (m) from rlo (m), in buf's storage when large
// enough; ranges of points at once.
func (a *annulus) bins(nb int, rlo, dr float64, buf []int32) []int32 {
	if cap(buf) < len(a.r) {
		buf = make([]int32, len(a.r))
	}
	buf = buf[:len(a.r)]
	parallelRows(len(a.r), func(i0, i1 int) {
		for i := i0; i < i1; i++ {
			buf[i] = int32(a.bin(i, nb, rlo, dr))
		}
	})
	return buf
}

// binTotals returns where each of nsb bins would start in the points
// sorted by bin (prefix sums of the points per bin, the total last), for
// the points' bins.
func binTotals(bins []int32, nsb int) []int32 {
	start := make([]int32, nsb+1)
	for _, b := range bins {
		start[b+1]++
	}
	for k := range nsb {
		start[k+1] += start[k]
	}
	return start
}

// binsFullEnough reports whether at least four fifths of the radial bins
// k0 … k1−1 of all ns sectors hold rimMinCount points or more.
func binsFullEnough(start []int32, ns, nb, k0, k1 int) bool {
	full, all := 0, 0
	for s := range ns {
		for bb := k0; bb < k1; bb++ {
			all++
			if start[s*nb+bb+1]-start[s*nb+bb] >= rimMinCount {
				full++
			}
		}
	}
	return 5*full >= 4*all
}

// binMeans returns the mean radius (m) of the annulus points in each of
// rb's bins (bins[i] the bin of point i), summed in point order (0 for an
// empty bin). The sums are one sequential pass, so that each bin's sum is
// that of its points in order.
func (a *annulus) binMeans(bins []int32, rb *rimBins) []float64 {
	mean := make([]float64, rb.ns*rb.nb)
	for i, r := range a.r {
		mean[bins[i]] += r
	}
	for k := range mean {
		if c := rb.start[k+1] - rb.start[k]; c > 0 {
			mean[k] /= float64(c)
		}
	}
	return mean
}
