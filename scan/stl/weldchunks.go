package stl

import (
	"gapflux/internal/parallel"
)

// binWelder holds what welding a binary file keeps from chunk to chunk:
// the mesh's table and two sets of partWelders, one for the chunk being
// decoded and one for the chunk being welded into the mesh.
type binWelder struct {
	mesh *meshWelder
	sets [2][]partWelder
}

// chunkJob is a chunk whose facets are being decoded (step 1 of
// weldbin.go) on other goroutines.
type chunkJob struct {
	first int64        // its first facet, in the file and in the mesh
	k     int          // its number of facets
	parts []partWelder // one per part, in order
	done  chan int     // -1, or the first non-finite coordinate (12 per facet)
}

// weldChunks reads the n facets of a binary file into m, welded, one
// chunk at a time: while the facets of a chunk are decoded and welded
// within their parts (in parallel), the parts of the chunk before are
// welded into the mesh (steps 2 and 3 of weldbin.go), so that the
// sequential step runs beside the parallel one. At most one chunk is
// being decoded at a time, and it is waited for on every return. Errors
// are those of a sequential reading: a non-finite coordinate of a chunk
// before a read error in a later one.
func (d *decoder) weldChunks(m *Mesh, n int64) error {
	w := &binWelder{mesh: newMeshWelder(cap(m.Vertices))}
	var bufs [2][]byte
	var job *chunkJob
	for i, c := int64(0), 0; i < n; c = 1 - c {
		k := min(n-i, chunkFacets)
		if bufs[c] == nil {
			bufs[c] = make([]byte, min(n, chunkFacets)*facetLen)
		}
		b := bufs[c][:k*facetLen]
		rerr := d.readChunk(b, i, n)
		if err := d.finish(job); err != nil {
			return err
		}
		if rerr != nil {
			return rerr
		}
		// After finish: growing may move m.Faces and m.Normals, which the
		// chunk before wrote; before weld, which reads m.Faces.
		growFacets(m, int(k), n, true)
		next := w.start(m, b, i, c)
		if job != nil {
			w.weld(m, job)
		}
		i, job = i+k, next
	}
	if err := d.finish(job); err != nil {
		return err
	}
	if job != nil {
		w.weld(m, job)
	}
	return nil
}

// finish waits for job (nil: none) to be decoded and returns the error of
// a non-finite coordinate in it, or nil.
func (d *decoder) finish(job *chunkJob) error {
	if job == nil {
		return nil
	}
	if j := <-job.done; j >= 0 {
		return d.notFinite(job.first, j)
	}
	return nil
}

// start appends room for the facets in b, which start at facet i, to m
// and decodes them into it, in parts, with partWelder set c, on other
// goroutines (step 1).
func (w *binWelder) start(m *Mesh, b []byte, i int64, c int) *chunkJob {
	k := len(b) / facetLen
	m.Normals, m.Faces = m.Normals[:i+int64(k)], m.Faces[:i+int64(k)]
	ns, faces := m.Normals[i:], m.Faces[i:]
	parts := chunkParts(k)
	for len(w.sets[c]) < parts {
		w.sets[c] = append(w.sets[c], partWelder{})
	}
	job := &chunkJob{first: i, k: k, parts: w.sets[c][:parts], done: make(chan int, 1)}
	go func() {
		bad, ok := parallel.FirstPart(k, parts, func(t, f0, f1 int) (int, bool) {
			j := job.parts[t].decode(ns[f0:f1], faces[f0:f1], b[f0*facetLen:f1*facetLen])
			return j + 12*f0, j >= 0
		})
		if !ok {
			bad = -1
		}
		job.done <- bad
	}()
	return job
}

// weld welds the decoded parts of job into the mesh in file order and
// translates its facets' corners into the mesh's indices (steps 2 and 3).
func (w *binWelder) weld(m *Mesh, job *chunkJob) {
	faces := m.Faces[job.first : job.first+int64(job.k)]
	for t := range job.parts {
		p := &job.parts[t]
		w.mesh.merge(&m.Vertices, p)
		f0, f1 := parallel.Range(job.k, len(job.parts), t)
		p.translate(faces[f0:f1])
	}
}
