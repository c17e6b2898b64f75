package scan

import (
	"math"
	"math/bits"
	"math/rand/v2"

	"gonum.org/v1/gonum/spatial/r3"
)

// dupProbe is how many points mayHaveRepeats looks at, and dupFull the
// cloud size up to which repeats are always searched in full.
const (
	dupProbe = 1 << 13
	dupFull  = 4 * dupProbe
)

// pointKey returns the bits of p with −0 read as +0, so that equal
// coordinates give equal keys.
func pointKey(p r3.Vec) [3]uint64 {
	return [3]uint64{math.Float64bits(p.X + 0), math.Float64bits(p.Y + 0), math.Float64bits(p.Z + 0)}
}

// hashKey mixes a point key into 64 bits (the multiply-xorshift finaliser
// of SplitMix64, common practice).
func hashKey(k [3]uint64) uint64 {
	h := k[0]*0x9e3779b97f4a7c15 ^ bits.RotateLeft64(k[1], 21)*0xbf58476d1ce4e5b9 ^ bits.RotateLeft64(k[2], 42)*0x94d049bb133111eb
	h ^= h >> 31
	h *= 0xbf58476d1ce4e5b9
	return h ^ h>>29
}

// mayHaveRepeats reports whether a seeded, stratified sample of dupProbe
// distinct points of pts holds two equal points. A cloud of n points
// written k times over shows about dupProbe²·(k−1)/n such pairs in the
// sample (some 27 for a 2.5 million point file written twice); a cloud
// without repeats none. Small clouds are always reported as possible.
func mayHaveRepeats(pts []r3.Vec) bool {
	n := len(pts)
	if n <= dupFull {
		return true
	}
	rng := rand.New(rand.NewPCG(uint64(n), 0xd0b1e))
	const mask = 2*dupProbe - 1
	var table [2 * dupProbe]int32
	for i := range table {
		table[i] = -1
	}
	for k := range dupProbe {
		lo, hi := k*n/dupProbe, (k+1)*n/dupProbe
		i := lo + rng.IntN(hi-lo)
		key := pointKey(pts[i])
		for h := hashKey(key) & mask; ; h = (h + 1) & mask {
			j := table[h]
			if j < 0 {
				table[h] = int32(i)
				break
			}
			if pointKey(pts[j]) == key {
				return true
			}
		}
	}
	return false
}

// findRepeats returns, for each point, the index of the first point equal
// to it (itself when it is the first), and how many points repeat an
// earlier one. rep is nil when there are none. It uses an open-addressing
// hash table of int32 indices, 8 bytes per point at most.
func findRepeats(pts []r3.Vec) (rep []int32, merged int) {
	if !mayHaveRepeats(pts) {
		return nil, 0
	}
	n := len(pts)
	size := 1 << bits.Len(uint(2*n))
	mask := uint64(size - 1)
	table := make([]int32, size)
	for i := range table {
		table[i] = -1
	}
	for i, p := range pts {
		key := pointKey(p)
		first := int32(i)
		for h := hashKey(key) & mask; ; h = (h + 1) & mask {
			j := table[h]
			if j < 0 {
				table[h] = int32(i)
				break
			}
			if pointKey(pts[j]) == key {
				first = j
				break
			}
		}
		if first != int32(i) && rep == nil {
			rep = make([]int32, n)
			for k := range i {
				rep[k] = int32(k)
			}
		}
		if rep != nil {
			rep[i] = first
		}
		if first != int32(i) {
			merged++
		}
	}
	return rep, merged
}

// uniquePoints returns the points that are their own representative.
func uniquePoints(pts []r3.Vec, rep []int32, merged int) []r3.Vec {
	u := make([]r3.Vec, 0, len(pts)-merged)
	for i, p := range pts {
		if rep[i] == int32(i) {
			u = append(u, p)
		}
	}
	return u
}

// trimFar returns the points of pts no further from their coordinate-wise
// median than 4 times the median such distance: a first robust cut that
// keeps a base with its corner and wall (whose points lie within about
// 1.5 median distances) and drops stray points far from the scan, which
// would otherwise tilt a principal-components plane and stretch the coarse
// grid. The median as a location and scale estimate with a 50 % breakdown
// point is common practice (Rousseeuw & Leroy 1987, Robust Regression and
// Outlier Detection, ch. 1; from memory). pts is not changed; the result
// aliases it when nothing is dropped.
func trimFar(pts []r3.Vec) []r3.Vec {
	if len(pts) < 8 {
		return pts
	}
	// The medians from up to 16 384 of the points.
	step := max(1, len(pts)/16384)
	w := make([]float64, 0, len(pts)/step+1)
	var m [3]float64
	for k := range 3 {
		w = w[:0]
		for i := 0; i < len(pts); i += step {
			w = append(w, [3]float64{pts[i].X, pts[i].Y, pts[i].Z}[k])
		}
		m[k] = medianInPlace(w)
	}
	centre := r3.Vec{X: m[0], Y: m[1], Z: m[2]}
	d := make([]float64, len(pts))
	w = w[:0]
	for i, p := range pts {
		d[i] = r3.Norm2(r3.Sub(p, centre))
		if i%step == 0 {
			w = append(w, d[i])
		}
	}
	lim := 16 * medianInPlace(w) // (4 × median distance)²
	far := 0
	for _, x := range d {
		if x > lim {
			far++
		}
	}
	if far == 0 {
		return pts
	}
	out := make([]r3.Vec, 0, len(pts)-far)
	for i, p := range pts {
		if d[i] <= lim {
			out = append(out, p)
		}
	}
	return out
}
