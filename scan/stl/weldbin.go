package stl

import (
	"math"
	"math/bits"
	"slices"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/internal/hugemem"
)

// A binary file is welded one read chunk at a time in three steps, so
// that most of the work runs on all processors and the result is the one
// a single pass in file order gives (vertices numbered by their first
// occurrence in the file):
//
//  1. each part of the chunk (a contiguous run of facets) is decoded on
//     its own goroutine, and its vertices welded within the part: the
//     part's distinct vertices in order of first occurrence, and each
//     facet's corners as indices into them;
//  2. the parts' distinct vertices are welded into the mesh in file order
//     (part by part, each in its own order), which numbers the mesh's
//     vertices by first occurrence in the file, since a vertex first seen
//     in a part comes after every vertex of the earlier parts;
//  3. each part's corner indices are translated to the mesh's.
//
// Steps 2 and 3 of a chunk run on the reading goroutine while the next
// chunk goes through step 1 (weldchunks.go). A scanner's mesh names each
// vertex about six times, mostly within a few rows of facets, so step 2,
// the only sequential one, sees about one vertex in six.

// vkey is a vertex as the bit patterns of its three float32 coordinates,
// with −0 read as +0: two finite vertices of a binary file are equal
// exactly when their keys are (NaN and infinities are rejected before).
// Twelve bytes compare faster than three float64s.
type vkey [3]uint32

// keyBits returns the key of the vertex with coordinate bits x, y, z.
func keyBits(x, y, z uint32) vkey {
	return vkey{plusZero(x), plusZero(y), plusZero(z)}
}

// plusZero returns the bits of a float32, −0 turned into +0.
func plusZero(u uint32) uint32 {
	if u == 1<<31 {
		return 0
	}
	return u
}

// hashKey mixes a key into 64 bits: two multiplies by odd constants (the
// golden-ratio constant of Fibonacci hashing and a SplitMix64 multiplier;
// common practice), whose high bits depend on every
// bit of the key, then the high half folded into the low. The tables
// take their slot from the high bits; a part's table keeps the low 32 as
// a tag, the mesh table the high 32.
func hashKey(k vkey) uint64 {
	h := (uint64(k[0])|uint64(k[1])<<32)*0x9e3779b97f4a7c15 ^ uint64(k[2])*0xbf58476d1ce4e5b9
	return h ^ h>>32
}

// f64 returns the float32 with bits u as a float64 (exactly).
func f64(u uint32) float64 { return float64(math.Float32frombits(u)) }

// partWelder welds the vertices of one part of a chunk (step 1) and keeps
// the translation of its indices into the mesh's (steps 2 and 3). It is
// reused from chunk to chunk.
type partWelder struct {
	// slots is an open-addressing table of the part's distinct
	// vertices, kept at most half full: stamp<<32 | tag, the tag being
	// the low half of the hash, which settles almost every probe without
	// a look at the key.
	slots []uint64
	shift uint     // 64 − log2(len(slots)): the slot is hash>>shift
	base  uint32   // stamp of the current run: its slots hold base + index + 1
	keys  []vkey   // the distinct vertices' keys, in order of first occurrence
	hash  []uint64 // hashKey of keys
	verts []r3.Vec // the distinct vertices as first read (−0 kept as read)
	mesh  []int32  // index in the mesh of each distinct vertex (step 2)
}

// reset empties the part for a new run of facets, with a table for
// about refs/4 distinct vertices (a mesh has about refs/6) or as many as
// the table has grown to before. The table is not cleared: slots of
// earlier runs hold stamps up to base, and read as empty.
func (p *partWelder) reset(refs int) {
	size := 1 << bits.Len(uint(max(refs/2, 1024)-1))
	p.base += uint32(len(p.hash))
	if len(p.slots) < size || p.base > math.MaxUint32-uint32(refs) {
		p.slots = hugemem.Make[uint64](size, 0)
		p.base = 0
	}
	p.shift = uint(64 - bits.TrailingZeros(uint(len(p.slots))))
	p.keys, p.hash, p.verts = p.keys[:0], p.hash[:0], p.verts[:0]
}

// add returns the part's index of the vertex with coordinate bits x, y,
// z and key k, adding it when it is new.
func (p *partWelder) add(k vkey, x, y, z uint32) int32 {
	h := hashKey(k)
	mask := uint64(len(p.slots) - 1)
	tag := uint32(h)
	for s := h >> p.shift; ; s = (s + 1) & mask {
		e := p.slots[s]
		stamp := uint32(e >> 32)
		if stamp <= p.base {
			j := int32(len(p.hash))
			p.slots[s] = uint64(p.base+uint32(j)+1)<<32 | uint64(tag)
			p.keys = append(p.keys, k)
			p.hash = append(p.hash, h)
			p.verts = append(p.verts, r3.Vec{X: f64(x), Y: f64(y), Z: f64(z)})
			if 2*len(p.hash) > len(p.slots) {
				p.grow()
			}
			return j
		}
		if uint32(e) == tag {
			if j := int32(stamp - p.base - 1); p.keys[j] == k {
				return j
			}
		}
	}
}

// grow doubles the part's table.
func (p *partWelder) grow() {
	p.slots = hugemem.Make[uint64](2*len(p.slots), 0)
	p.shift--
	mask := uint64(len(p.slots) - 1)
	for j, h := range p.hash {
		s := h >> p.shift
		for uint32(p.slots[s]>>32) > p.base {
			s = (s + 1) & mask
		}
		p.slots[s] = uint64(p.base+uint32(j)+1)<<32 | uint64(uint32(h))
	}
}

// decode decodes the facets in b into their normals ns (zero when not
// finite) and their corners, as indices into the part's distinct
// vertices, into faces (step 1). It returns -1, or the index (12 per
// facet) of the first vertex coordinate that is not finite.
//
// A mesh file names most vertices again in the next facet or the one
// after (a strip or a fan), so a corner is looked for among the last two
// facets' before the table, which is cheaper.
func (p *partWelder) decode(ns []r3.Vec, faces [][3]int32, b []byte) int {
	p.reset(3 * len(ns))
	prev, prev2 := noCorners(), noCorners()
	for f := range ns {
		var u [12]uint32
		if bad := facetWords(&u, b, f); bad >= 0 {
			return 12*f + bad
		}
		ns[f] = normalBits(u[0], u[1], u[2])
		var cur corners
		for c := range 3 {
			x, y, z := u[3+3*c], u[4+3*c], u[5+3*c]
			k := keyBits(x, y, z)
			j := prev.find(k)
			if j < 0 {
				j = prev2.find(k)
			}
			if j < 0 {
				j = p.add(k, x, y, z)
			}
			cur.keys[c], cur.idx[c] = k, j
		}
		prev, prev2 = cur, prev
		faces[f] = cur.idx
	}
	return -1
}

// corners holds a facet's corners: their keys and their indices.
type corners struct {
	keys [3]vkey
	idx  [3]int32
}

// noCorners returns corners that match no vertex (their keys are NaNs).
func noCorners() corners {
	nan := vkey{math.MaxUint32, math.MaxUint32, math.MaxUint32}
	return corners{keys: [3]vkey{nan, nan, nan}}
}

// find returns the index of the corner with key k, or -1.
func (c *corners) find(k vkey) int32 {
	switch k {
	case c.keys[0]:
		return c.idx[0]
	case c.keys[1]:
		return c.idx[1]
	case c.keys[2]:
		return c.idx[2]
	}
	return -1
}

// normalBits returns the normal with coordinate bits x, y, z, or zero
// when a coordinate is not finite.
func normalBits(x, y, z uint32) r3.Vec {
	const exp = 0x7f800000
	if x&exp == exp || y&exp == exp || z&exp == exp {
		return r3.Vec{}
	}
	return r3.Vec{X: f64(x), Y: f64(y), Z: f64(z)}
}

// translate replaces the part's indices in faces by the mesh's (step 3).
func (p *partWelder) translate(faces [][3]int32) {
	m := p.mesh
	for f := range faces {
		t := &faces[f]
		t[0], t[1], t[2] = m[t[0]], m[t[1]], m[t[2]]
	}
}

// meshWelder gives each distinct vertex of the mesh one index (step 2):
// an open-addressing table of tag<<32 | index+1 (0: empty), kept at most
// half full (16 to 64 bytes per distinct vertex: 8-byte slots, between
// a half and an eighth of them used). The tag is the high half
// of the hash, whose top bits are also the slot: the tag settles almost
// every probe without a look at the vertex, and gives an entry's slot in
// a larger table, so that a rehash reads the table in order and writes
// the new one nearly in order, and reads no vertex.
type meshWelder struct {
	table []uint64
	shift uint // 64 − log2(len(table)): the slot is hash>>shift
}

// newMeshWelder returns a welder sized for about n distinct vertices: a
// table of the least power of 2 that is at least 2n and 1024.
func newMeshWelder(n int) *meshWelder {
	size := 1 << bits.Len(uint(max(2*n, 1024)-1))
	return &meshWelder{table: hugemem.Make[uint64](size, 0), shift: uint(64 - bits.Len(uint(size)-1))}
}

// merge welds the part's distinct vertices into *vs, in their order,
// and records their indices in p.mesh.
func (w *meshWelder) merge(vs *[]r3.Vec, p *partWelder) {
	if cap(p.mesh) < len(p.hash) {
		p.mesh = make([]int32, len(p.hash), cap(p.hash))
	}
	p.mesh = p.mesh[:len(p.hash)]
	for u, h := range p.hash {
		p.mesh[u] = w.index(vs, p.verts[u], h)
	}
}

// index returns the index in *vs of the vertex equal to v, whose hash is
// h, appending v when it is new. Vertices compare as float64s, for which
// −0 == +0.
func (w *meshWelder) index(vs *[]r3.Vec, v r3.Vec, h uint64) int32 {
	if 2*(len(*vs)+1) > len(w.table) {
		w.grow(4 * len(w.table)) // fewer rehashes of a stream's mesh
	}
	tag := h >> 32
	mask := uint64(len(w.table) - 1)
	for s := h >> w.shift; ; s = (s + 1) & mask {
		e := w.table[s]
		if e == 0 {
			j := int32(len(*vs))
			w.table[s] = tag<<32 | uint64(j+1)
			if len(*vs) == cap(*vs) {
				*vs = slices.Grow(*vs, len(*vs)) // double: a stream's mesh grows far
			}
			*vs = append(*vs, v)
			return j
		}
		if e>>32 == tag {
			if j := int32(uint32(e)) - 1; (*vs)[j] == v {
				return j
			}
		}
	}
}

// grow moves the entries into a table of size slots (a power of 2 up to
// 2³²), each to the slot its tag names or the next free one.
func (w *meshWelder) grow(size int) {
	old := w.table
	w.table = hugemem.Make[uint64](size, 0)
	w.shift = uint(64 - bits.Len(uint(size)-1))
	mask := uint64(size - 1)
	for _, e := range old {
		if e == 0 {
			continue
		}
		s := e >> 32 >> (w.shift - 32)
		for w.table[s] != 0 {
			s = (s + 1) & mask
		}
		w.table[s] = e
	}
}
