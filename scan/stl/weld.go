package stl

import (
	"math"
	"math/bits"

	"gonum.org/v1/gonum/spatial/r3"
)

// weldVertex returns the index in *vs of the vertex equal to v, appending
// v when it is new: the ASCII reader's way into the binary reader's
// meshWelder, with a hash of v's float64 bits instead of float32 ones.
func weldVertex(w *meshWelder, vs *[]r3.Vec, v r3.Vec) int32 {
	return w.index(vs, v, hashVertex(vertexKey(v)))
}

// vertexKey returns the bits of v with −0 read as +0, so that the two
// zeros, which compare equal, hash alike.
func vertexKey(v r3.Vec) [3]uint64 {
	return [3]uint64{math.Float64bits(v.X + 0), math.Float64bits(v.Y + 0), math.Float64bits(v.Z + 0)}
}

// hashVertex mixes a key into 64 bits (the multiply-xorshift finaliser of
// SplitMix64; common practice). meshWelder takes its slot and tag from
// the high bits, which the finaliser mixes from every input bit.
func hashVertex(k [3]uint64) uint64 {
	h := k[0]*0x9e3779b97f4a7c15 ^ bits.RotateLeft64(k[1], 21)*0xbf58476d1ce4e5b9 ^ bits.RotateLeft64(k[2], 42)*0x94d049bb133111eb
	h ^= h >> 31
	h *= 0xbf58476d1ce4e5b9
	return h ^ h>>29
}
