package stl

import (
	"math"
	"math/bits"

	"gonum.org/v1/gonum/spatial/r3"
)

// welder gives each distinct vertex one index, as a mesh's facets are
// read: an open-addressing hash table of int32 indices into the vertex
// list, kept at most half full (8 to 16 bytes per distinct vertex: 4-byte
// slots, between a half and a quarter of them used).
type welder struct {
	table []int32
	mask  uint64
	// recent maps a hash to the last vertex seen with it: a mesh file
	// names a vertex again within a few rows of facets, so most lookups
	// end here, in a table that stays in the processor's cache.
	recent [1 << 14]int32
}

// vertexKey returns the bits of v with −0 read as +0.
func vertexKey(v r3.Vec) [3]uint64 {
	return [3]uint64{math.Float64bits(v.X + 0), math.Float64bits(v.Y + 0), math.Float64bits(v.Z + 0)}
}

// hashVertex mixes a key into 64 bits (the multiply-xorshift finaliser of
// SplitMix64; common practice).
func hashVertex(k [3]uint64) uint64 {
	h := k[0]*0x9e3779b97f4a7c15 ^ bits.RotateLeft64(k[1], 21)*0xbf58476d1ce4e5b9 ^ bits.RotateLeft64(k[2], 42)*0x94d049bb133111eb
	h ^= h >> 31
	h *= 0xbf58476d1ce4e5b9
	return h ^ h>>29
}

// newWelder returns a welder sized for about n distinct vertices.
func newWelder(n int) *welder {
	w := &welder{}
	w.resize(1 << bits.Len(uint(max(2*n, 1024)-1)))
	for i := range w.recent {
		w.recent[i] = -1
	}
	return w
}

func (w *welder) resize(size int) {
	w.table = make([]int32, size)
	for i := range w.table {
		w.table[i] = -1
	}
	w.mask = uint64(size - 1)
}

// add returns the index in *vs of the vertex equal to v, appending v
// when it is new.
func (w *welder) add(vs *[]r3.Vec, v r3.Vec) int32 {
	if 2*(len(*vs)+1) > len(w.table) {
		w.resize(2 * len(w.table))
		for i, u := range *vs {
			w.insert(int32(i), vertexKey(u))
		}
	}
	key := vertexKey(v)
	hv := hashVertex(key)
	r := &w.recent[hv>>50] // the top 14 bits; the table uses the low ones
	if j := *r; j >= 0 && vertexKey((*vs)[j]) == key {
		return j
	}
	for h := hv & w.mask; ; h = (h + 1) & w.mask {
		j := w.table[h]
		if j < 0 {
			j = int32(len(*vs))
			w.table[h] = j
			*vs = append(*vs, v)
			*r = j
			return j
		}
		if vertexKey((*vs)[j]) == key {
			*r = j
			return j
		}
	}
}

// insert puts index i with key into the table (rehashing; keys distinct).
func (w *welder) insert(i int32, key [3]uint64) {
	for h := hashVertex(key) & w.mask; ; h = (h + 1) & w.mask {
		if w.table[h] < 0 {
			w.table[h] = i
			return
		}
	}
}
