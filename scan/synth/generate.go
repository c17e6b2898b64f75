package synth

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/scan"
)

// Second words of the PCG seeds, one stream per random effect, so that
// changing the spike fraction leaves the noise untouched and so on.
const (
	streamNoise  = 0x6e6f697365 // "noise"
	streamSpikes = 0x7370696b65 // "spike"
	streamHoles  = 0x686f6c6573 // "holes"
	streamJitter = 0x6a69747472 // "jittr"
	streamStreak = 0x7374726b73 // "strks"
)

// surface is a scan under construction in the base frame.
type surface struct {
	pts   []r3.Vec
	nrm   []r3.Vec // unit normals out of the pan
	nBase int      // pts[:nBase] belong to the base disc
	tris  [][3]int32
}

// Generate builds the scan s describes: the exact form in the base frame,
// sampled on a square grid (cloud) or on polar rings (mesh), with the
// corner and wall, then noise and spikes along the local normal, holes
// removed, and the Face flip, rotation and offset into the scanner frame.
func Generate(s Spec) (*Scan, error) {
	s, err := s.withDefaults()
	if err != nil {
		return nil, err
	}
	f := form{shape: s.Shape, sag: s.SagM, rad: s.DiameterM / 2, r0: s.ConeStartM}
	if s.FormTurnDeg != 0 {
		f.turned = true
		f.sin, f.cos = math.Sincos(s.FormTurnDeg * math.Pi / 180)
	}
	var sf surface
	if s.Mesh {
		sf = meshBase(f, s.SpacingM)
	} else {
		var jit *rand.Rand
		if s.JitterFraction > 0 {
			jit = rand.New(rand.NewPCG(s.Seed, streamJitter))
		}
		sf = gridBase(f, s.SpacingM, s.JitterFraction, jit)
	}
	addRim(&sf, f, s.SpacingM, s.CornerRadiusM, s.WallHeightM, s.Mesh)

	addNoise(sf.pts, sf.nrm, s.NoiseM, rand.New(rand.NewPCG(s.Seed, streamNoise)))
	keep := cutHoles(sf.pts[:sf.nBase], len(sf.pts), f.rad, s.Holes, rand.New(rand.NewPCG(s.Seed, streamHoles)))
	cutListed(sf.pts[:sf.nBase], keep, s.HoleList)
	cutSectors(sf.pts, keep, s.Sectors)
	lifted := make([]bool, len(sf.pts))
	spikes := addSpikes(sf.pts, sf.nrm, keep, lifted, s.SpikeFraction, s.SpikeMinM, s.SpikeMaxM,
		rand.New(rand.NewPCG(s.Seed, streamSpikes)))
	streakPts := addStreaks(sf.pts[:sf.nBase], sf.nrm, keep, lifted, s.Streaks, s.StreakLengthM, s.SpacingM/2,
		s.SpikeMinM, s.SpikeMaxM, rand.New(rand.NewPCG(s.Seed, streamStreak)))
	outliers := liftedIndices(keep, lifted)
	sf.compact(keep)

	rot := scannerRotation(s.Face, s.RotationDeg)
	off := r3.Vec{X: s.OffsetM[0], Y: s.OffsetM[1], Z: s.OffsetM[2]}
	c := sf.toScanner(rot, off, s.Normals, s.Mesh)

	tr := Truth{
		Schema:         TruthSchema,
		Kind:           "pan-base",
		Name:           s.Name,
		Shape:          s.Shape,
		Face:           s.Face,
		DiameterMM:     mm(s.DiameterM),
		SagMM:          mm(s.SagM),
		ConcavityMM:    mm(f.concavity()),
		FlatnessMM:     mm(f.flatness()),
		NoiseUM:        um(s.NoiseM),
		Spikes:         spikes,
		Holes:          s.Holes,
		CornerRadiusMM: mm(s.CornerRadiusM),
		WallHeightMM:   mm(s.WallHeightM),
		SpacingMM:      mm(s.SpacingM),
		Points:         len(c.Points),
		Triangles:      len(c.Triangles),
		Mesh:           s.Mesh,
		Normals:        s.Normals,
		Seed:           s.Seed,
		RotationDeg:    s.RotationDeg,
		OffsetMM:       [3]float64{mm(s.OffsetM[0]), mm(s.OffsetM[1]), mm(s.OffsetM[2])},
	}
	tr.addArtefacts(s, streakPts)
	return &Scan{Cloud: c, Truth: tr, Outliers: outliers}, nil
}

// addArtefacts fills the truth fields of the newer Spec options, leaving
// them empty (and out of the JSON) when unused.
func (tr *Truth) addArtefacts(s Spec, streakPts int) {
	if s.Shape == Cone {
		tr.ConeStartMM = mm(s.ConeStartM)
	}
	tr.FormTurnDeg = s.FormTurnDeg
	if s.Shape == Bend {
		a := math.Mod(s.FormTurnDeg+90, 180)
		if a < 0 {
			a += 180
		}
		tr.BendAxisDeg = &a
	}
	if s.SpikeMinM != spikeMinM || s.SpikeMaxM != spikeMaxM {
		tr.SpikeMinMM, tr.SpikeMaxMM = mm(s.SpikeMinM), mm(s.SpikeMaxM)
	}
	if s.Streaks > 0 {
		tr.Streaks, tr.StreakPoints, tr.StreakLengthMM = s.Streaks, streakPts, mm(s.StreakLengthM)
	}
	tr.JitterFraction = s.JitterFraction
	for _, h := range s.HoleList {
		tr.HoleList = append(tr.HoleList, HoleMM{XMM: mm(h.XM), YMM: mm(h.YM), DiameterMM: mm(h.DiameterM)})
	}
	for _, c := range s.Sectors {
		tr.Sectors = append(tr.Sectors, SectorMM{FromDeg: c.FromDeg, ToDeg: c.ToDeg, InnerMM: mm(c.InnerM)})
	}
}

// liftedIndices returns the indices, after compaction by keep, of the kept
// points marked lifted.
func liftedIndices(keep, lifted []bool) []int32 {
	var out []int32
	n := int32(0)
	for i, k := range keep {
		if !k {
			continue
		}
		if lifted[i] {
			out = append(out, n)
		}
		n++
	}
	return out
}

// baseNormal returns the unit normal of z = f(x, y) pointing toward −z.
func baseNormal(f form, x, y float64) r3.Vec {
	gx, gy := f.grad(x, y)
	return r3.Unit(r3.Vec{X: gx, Y: gy, Z: -1})
}

// gridBase samples the base disc r ≤ R on the square grid (i·h, j·h),
// rows in increasing y, columns in increasing x. With jitter > 0 each node
// moves by U(−jitter·h/2, jitter·h/2) in x and y (drawn from rng) before
// the disc test.
func gridBase(f form, h, jitter float64, rng *rand.Rand) surface {
	n := int(math.Floor(f.rad/h + 1e-9))
	if jitter > 0 {
		n++
	}
	r2 := f.rad * f.rad * (1 + 1e-12)
	var sf surface
	for j := -n; j <= n; j++ {
		for i := -n; i <= n; i++ {
			x, y := float64(i)*h, float64(j)*h
			if jitter > 0 {
				x += jitter * h * (rng.Float64() - 0.5)
				y += jitter * h * (rng.Float64() - 0.5)
			}
			if x*x+y*y > r2 {
				continue
			}
			sf.pts = append(sf.pts, r3.Vec{X: x, Y: y, Z: f.z(x, y)})
			sf.nrm = append(sf.nrm, baseNormal(f, x, y))
		}
	}
	sf.nBase = len(sf.pts)
	return sf
}

// ringCount is the number of points on a ring of radius rho at spacing h.
func ringCount(rho, h float64) int {
	return max(6, int(math.Round(2*math.Pi*rho/h)))
}

// meshBase triangulates the base disc: a centre vertex and K rings at
// r_k = k·R/K, each with about 2π·r_k/h vertices, first vertex at θ = 0.
func meshBase(f form, h float64) surface {
	k := max(1, int(math.Ceil(f.rad/h-1e-9)))
	var sf surface
	sf.pts = append(sf.pts, r3.Vec{Z: f.z(0, 0)})
	sf.nrm = append(sf.nrm, baseNormal(f, 0, 0))
	prev, prevN := int32(0), 1
	for ring := 1; ring <= k; ring++ {
		r := f.rad * float64(ring) / float64(k)
		m := ringCount(r, h)
		start := int32(len(sf.pts))
		for j := range m {
			th := 2 * math.Pi * float64(j) / float64(m)
			x, y := r*math.Cos(th), r*math.Sin(th)
			sf.pts = append(sf.pts, r3.Vec{X: x, Y: y, Z: f.z(x, y)})
			sf.nrm = append(sf.nrm, baseNormal(f, x, y))
		}
		sf.tris = stitch(sf.tris, prev, prevN, start, m)
		prev, prevN = start, m
	}
	sf.nBase = len(sf.pts)
	return sf
}

// stitch appends the triangles joining ring a (na vertices from index a)
// to the next ring b outward along the profile (nb vertices from index b).
// Both rings start at θ = 0 and run counter-clockwise seen from +z. The
// winding (a_i, a_i+1, b_j), (a_i, b_j+1, b_j) makes (v1−v0)×(v2−v0) point
// along t_θ × t_u, out of the pan. A ring of one vertex is a fan centre.
func stitch(tris [][3]int32, a int32, na int, b int32, nb int) [][3]int32 {
	if na == 1 {
		for j := range nb {
			tris = append(tris, [3]int32{a, b + int32((j+1)%nb), b + int32(j)})
		}
		return tris
	}
	i, j := 0, 0
	for i < na || j < nb {
		// Compare the next angles exactly: (i+1)/na <= (j+1)/nb.
		if j == nb || (i < na && (i+1)*nb <= (j+1)*na) {
			tris = append(tris, [3]int32{a + int32(i%na), a + int32((i+1)%na), b + int32(j%nb)})
			i++
		} else {
			tris = append(tris, [3]int32{a + int32(i%na), b + int32((j+1)%nb), b + int32(j%nb)})
			j++
		}
	}
	return tris
}

// addRim adds the corner (a quarter circle of radius rc from r = R, z = 0 to
// r = R + rc, z = rc) and the vertical wall up to wallH above the base
// plane, both lifted by the base's rim height at each angle. In mesh mode
// the rings are stitched to the base's outer ring.
func addRim(sf *surface, f form, h, rc, wallH float64, mesh bool) {
	type ring struct{ rho, z, tr, tz float64 } // radius, height, profile tangent
	var rings []ring
	if rc > 0 {
		m := max(1, int(math.Ceil(math.Pi/2*rc/h-1e-9)))
		for i := 1; i <= m; i++ {
			phi := math.Pi / 2 * float64(i) / float64(m)
			rings = append(rings, ring{f.rad + rc*math.Sin(phi), rc * (1 - math.Cos(phi)), math.Cos(phi), math.Sin(phi)})
		}
	}
	if wallH > rc {
		m := max(1, int(math.Ceil((wallH-rc)/h-1e-9)))
		for i := 1; i <= m; i++ {
			rings = append(rings, ring{f.rad + rc, rc + (wallH-rc)*float64(i)/float64(m), 0, 1})
		}
	}
	if len(rings) == 0 {
		return
	}
	prevN := ringCount(f.rad, h)
	prev := int32(len(sf.pts) - prevN)
	for _, rg := range rings {
		m := ringCount(rg.rho, h)
		start := int32(len(sf.pts))
		for j := range m {
			th := 2 * math.Pi * float64(j) / float64(m)
			c, s := math.Cos(th), math.Sin(th)
			xr, yr := f.rad*c, f.rad*s
			gx, gy := f.grad(xr, yr)
			g := f.z(xr, yr)
			dg := f.rad * (-s*gx + c*gy) // dg/dθ of the rim height
			p := r3.Vec{X: rg.rho * c, Y: rg.rho * s, Z: rg.z + g}
			tu := r3.Vec{X: rg.tr * c, Y: rg.tr * s, Z: rg.tz}
			tt := r3.Vec{X: -rg.rho * s, Y: rg.rho * c, Z: dg}
			sf.pts = append(sf.pts, p)
			sf.nrm = append(sf.nrm, r3.Unit(r3.Cross(tt, tu)))
		}
		if mesh {
			sf.tris = stitch(sf.tris, prev, prevN, start, m)
		}
		prev, prevN = start, m
	}
}

// addNoise displaces every point along its normal by N(0, sigma²).
func addNoise(pts, nrm []r3.Vec, sigma float64, rng *rand.Rand) {
	if sigma == 0 {
		return
	}
	for i := range pts {
		pts[i] = r3.Add(pts[i], r3.Scale(sigma*rng.NormFloat64(), nrm[i]))
	}
}

// cutHoles marks as dropped the base points inside n random round holes of
// radius 2 … 4 mm (at most R/4) lying wholly inside the base disc. It
// returns the keep mask over all total points.
func cutHoles(base []r3.Vec, total int, rad float64, n int, rng *rand.Rand) []bool {
	keep := make([]bool, total)
	for i := range keep {
		keep[i] = true
	}
	for range n {
		hr := holeMinRadM + (holeMaxRadM-holeMinRadM)*rng.Float64()
		hr = min(hr, rad/4)
		cr := (rad - hr) * math.Sqrt(rng.Float64())
		th := 2 * math.Pi * rng.Float64()
		cx, cy := cr*math.Cos(th), cr*math.Sin(th)
		for i, p := range base {
			dx, dy := p.X-cx, p.Y-cy
			if dx*dx+dy*dy < hr*hr {
				keep[i] = false
			}
		}
	}
	return keep
}

// cutListed marks as dropped the base points inside the listed holes.
func cutListed(base []r3.Vec, keep []bool, holes []Hole) {
	for _, h := range holes {
		r2 := h.DiameterM * h.DiameterM / 4
		for i, p := range base {
			dx, dy := p.X-h.XM, p.Y-h.YM
			if dx*dx+dy*dy < r2 {
				keep[i] = false
			}
		}
	}
}

// cutSectors marks as dropped every point in one of the sectors.
func cutSectors(pts []r3.Vec, keep []bool, sectors []Sector) {
	for _, c := range sectors {
		for i, p := range pts {
			if math.Hypot(p.X, p.Y) < c.InnerM {
				continue
			}
			a := math.Atan2(p.Y, p.X) * 180 / math.Pi
			// Bring a into [FromDeg, FromDeg + 360).
			a = c.FromDeg + math.Mod(math.Mod(a-c.FromDeg, 360)+360, 360)
			if a < c.ToDeg {
				keep[i] = false
			}
		}
	}
}

// addStreaks lifts, n times, every kept base point within halfWidth of a
// segment of length length (centre at a random kept base point, random
// direction) along its normal by a common ±U(lo, hi) height, marking them
// in lifted. It returns the number of distinct points lifted by streaks.
func addStreaks(base, nrm []r3.Vec, keep, lifted []bool, n int, length, halfWidth, lo, hi float64, rng *rand.Rand) int {
	if n == 0 {
		return 0
	}
	var idx []int
	for i := range base {
		if keep[i] {
			idx = append(idx, i)
		}
	}
	if len(idx) == 0 {
		return 0
	}
	bk := newBuckets(base, idx, length)
	count := 0
	for range n {
		c := base[idx[rng.IntN(len(idx))]]
		sn, cs := math.Sincos(math.Pi * rng.Float64())
		d := lo + (hi-lo)*rng.Float64()
		if rng.IntN(2) == 0 {
			d = -d
		}
		bk.near(c.X, c.Y, length/2+halfWidth, func(i int) {
			dx, dy := base[i].X-c.X, base[i].Y-c.Y
			along := dx*cs + dy*sn
			across := -dx*sn + dy*cs
			if math.Abs(along) > length/2 || math.Abs(across) > halfWidth {
				return
			}
			base[i] = r3.Add(base[i], r3.Scale(d, nrm[i]))
			if !lifted[i] {
				lifted[i] = true
				count++
			}
		})
	}
	return count
}

// buckets is a square-cell index of points in x-y.
type buckets struct {
	cell   float64
	x0, y0 float64
	nx, ny int
	start  []int32
	sorted []int32
}

func newBuckets(pts []r3.Vec, idx []int, cell float64) *buckets {
	b := &buckets{cell: cell}
	xmin, ymin, xmax, ymax := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for _, i := range idx {
		xmin, xmax = min(xmin, pts[i].X), max(xmax, pts[i].X)
		ymin, ymax = min(ymin, pts[i].Y), max(ymax, pts[i].Y)
	}
	b.x0, b.y0 = xmin, ymin
	b.nx = int((xmax-xmin)/cell) + 1
	b.ny = int((ymax-ymin)/cell) + 1
	b.start = make([]int32, b.nx*b.ny+1)
	key := func(i int) int {
		return int((pts[i].Y-b.y0)/cell)*b.nx + int((pts[i].X-b.x0)/cell)
	}
	for _, i := range idx {
		b.start[key(i)+1]++
	}
	for k := range b.nx * b.ny {
		b.start[k+1] += b.start[k]
	}
	fill := append([]int32(nil), b.start[:b.nx*b.ny]...)
	b.sorted = make([]int32, len(idx))
	for _, i := range idx {
		k := key(i)
		b.sorted[fill[k]] = int32(i)
		fill[k]++
	}
	return b
}

// near calls f for every indexed point in the buckets overlapping the
// square of half side r around (x, y).
func (b *buckets) near(x, y, r float64, f func(i int)) {
	i0 := max(0, int(math.Floor((x-r-b.x0)/b.cell)))
	i1 := min(b.nx-1, int(math.Floor((x+r-b.x0)/b.cell)))
	j0 := max(0, int(math.Floor((y-r-b.y0)/b.cell)))
	j1 := min(b.ny-1, int(math.Floor((y+r-b.y0)/b.cell)))
	for j := j0; j <= j1; j++ {
		for i := i0; i <= i1; i++ {
			k := j*b.nx + i
			for _, p := range b.sorted[b.start[k]:b.start[k+1]] {
				f(int(p))
			}
		}
	}
}

// addSpikes displaces round(frac·kept) distinct kept points along their
// normal by ±U(lo, hi), marks them in lifted and returns how many.
func addSpikes(pts, nrm []r3.Vec, keep, lifted []bool, frac, lo, hi float64, rng *rand.Rand) int {
	if frac == 0 {
		return 0
	}
	idx := make([]int, 0, len(pts))
	for i, k := range keep {
		if k {
			idx = append(idx, i)
		}
	}
	n := int(math.Round(frac * float64(len(idx))))
	// Partial Fisher–Yates: the first n of idx become the spikes.
	for k := range n {
		j := k + rng.IntN(len(idx)-k)
		idx[k], idx[j] = idx[j], idx[k]
		d := lo + (hi-lo)*rng.Float64()
		if rng.IntN(2) == 0 {
			d = -d
		}
		i := idx[k]
		pts[i] = r3.Add(pts[i], r3.Scale(d, nrm[i]))
		if lifted != nil {
			lifted[i] = true
		}
	}
	return n
}

// compact removes the points keep marks false and the triangles that use
// them, renumbering the rest in order.
func (sf *surface) compact(keep []bool) {
	newIdx := make([]int32, len(sf.pts))
	n := 0
	for i, k := range keep {
		if !k {
			newIdx[i] = -1
			continue
		}
		newIdx[i] = int32(n)
		sf.pts[n], sf.nrm[n] = sf.pts[i], sf.nrm[i]
		n++
	}
	if n == len(sf.pts) {
		return
	}
	sf.pts, sf.nrm = sf.pts[:n], sf.nrm[:n]
	t := sf.tris[:0]
	for _, tri := range sf.tris {
		a, b, c := newIdx[tri[0]], newIdx[tri[1]], newIdx[tri[2]]
		if a >= 0 && b >= 0 && c >= 0 {
			t = append(t, [3]int32{a, b, c})
		}
	}
	sf.tris = t
}

// mat3 is a row-major 3×3 matrix.
type mat3 [3][3]float64

func (m mat3) apply(v r3.Vec) r3.Vec {
	return r3.Vec{
		X: m[0][0]*v.X + m[0][1]*v.Y + m[0][2]*v.Z,
		Y: m[1][0]*v.X + m[1][1]*v.Y + m[1][2]*v.Z,
		Z: m[2][0]*v.X + m[2][1]*v.Y + m[2][2]*v.Z,
	}
}

func (m mat3) mul(n mat3) mat3 {
	var p mat3
	for i := range 3 {
		for j := range 3 {
			for k := range 3 {
				p[i][j] += m[i][k] * n[k][j]
			}
		}
	}
	return p
}

// scannerRotation returns Rz·Ry·Rx·F, where F is the identity for face
// "down" and the half-turn about x, (x, y, z) → (x, −y, −z), for face "up",
// which turns the outer face's normal (−z in the base frame) to +z.
func scannerRotation(face string, deg [3]float64) mat3 {
	f := mat3{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	if face == "up" {
		f = mat3{{1, 0, 0}, {0, -1, 0}, {0, 0, -1}}
	}
	sa, ca := math.Sincos(deg[0] * math.Pi / 180)
	sb, cb := math.Sincos(deg[1] * math.Pi / 180)
	sg, cg := math.Sincos(deg[2] * math.Pi / 180)
	rx := mat3{{1, 0, 0}, {0, ca, -sa}, {0, sa, ca}}
	ry := mat3{{cb, 0, sb}, {0, 1, 0}, {-sb, 0, cb}}
	rz := mat3{{cg, -sg, 0}, {sg, cg, 0}, {0, 0, 1}}
	return rz.mul(ry).mul(rx).mul(f)
}

// toScanner moves the surface to the scanner frame as a scan.Cloud.
func (sf *surface) toScanner(rot mat3, off r3.Vec, normals, mesh bool) *scan.Cloud {
	c := &scan.Cloud{Points: make([]r3.Vec, len(sf.pts)), Format: "synth", Unit: "m"}
	for i, p := range sf.pts {
		c.Points[i] = r3.Add(rot.apply(p), off)
	}
	if normals {
		c.Normals = make([]r3.Vec, len(sf.nrm))
		for i, n := range sf.nrm {
			c.Normals[i] = rot.apply(n)
		}
	}
	if mesh {
		c.Triangles = sf.tris
		c.FacetNormals = facetNormals(c.Points, c.Triangles)
	}
	return c
}

// facetNormals returns the unit normal (v1−v0)×(v2−v0) of each triangle,
// or the zero vector for a degenerate one.
func facetNormals(pts []r3.Vec, tris [][3]int32) []r3.Vec {
	out := make([]r3.Vec, len(tris))
	for i, t := range tris {
		a, b, c := pts[t[0]], pts[t[1]], pts[t[2]]
		n := r3.Cross(r3.Sub(b, a), r3.Sub(c, a))
		if l := r3.Norm(n); l > 0 {
			out[i] = r3.Scale(1/l, n)
		}
	}
	return out
}
