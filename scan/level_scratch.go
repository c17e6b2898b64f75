package scan

import (
	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/internal/hugemem"
)

// levelScratch holds the scratch buffers that Level's steps hand on to
// each other. Every buffer Level allocates is fresh memory (no collection
// runs within it), and on a 2 M-point scan touching fresh pages costs the
// kernel more than some passes of the work: a step done with a buffer
// returns it, and a later step takes it instead of allocating.
type levelScratch struct {
	floats pool[float64]
	vecs   pool[r3.Vec]
}

// pool is a free list of slices.
type pool[T any] struct{ free [][]T }

// get returns a slice of length n and capacity at least max(n, capHint),
// its contents undefined: the free slice of the least capacity that is
// enough, else a new one.
func (p *pool[T]) get(n, capHint int) []T {
	need := max(n, capHint)
	best := -1
	for i, b := range p.free {
		if cap(b) >= need && (best < 0 || cap(b) < cap(p.free[best])) {
			best = i
		}
	}
	if best < 0 {
		return hugemem.Make[T](n, need)
	}
	b := p.free[best]
	p.free = append(p.free[:best], p.free[best+1:]...)
	return b[:n]
}

// put hands slices back for later gets; the caller must not use them
// afterwards. Nil slices are ignored.
func (p *pool[T]) put(bufs ...[]T) {
	for _, b := range bufs {
		if cap(b) > 0 {
			p.free = append(p.free, b[:0])
		}
	}
}
