package synth

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/spatial/r3"
)

// HobSpec describes a synthetic scan of a hob's glass-ceramic top: a square
// plate, top face up (toward the scanner's +z), in the hob frame of
// DESIGN.md section 3 (+z up, toward the pan). Lengths are in metres.
type HobSpec struct {
	Name string
	// SideM is the plate side, m; 0 = DefaultHobSideM.
	SideM float64
	// Shape is Flat, Dome or Dish; "" means Flat. With a = SideM/2 and
	// S = SagM, a dome is z = S·(1 − r²/a²) (centre S above the inscribed
	// circle) and a dish its negative. Flat with SagM = 0 is z = 0; Flat
	// with a non-zero SagM is the dome of that sag, and its Truth says
	// "dome".
	Shape Shape
	SagM  float64
	// NoiseM is the σ of white Gaussian noise along the normal, m.
	NoiseM float64
	// SpikeFraction is the fraction of points displaced by ±(0.2 … 2) mm.
	SpikeFraction float64
	// SpacingM is the point spacing, m; 0 = DefaultHobSpacingM.
	SpacingM float64
	// Mesh asks for a triangulated grid (facet normals up) instead of a
	// point cloud; Normals for one unit normal (up) per point.
	Mesh, Normals bool
	// RotationDeg and OffsetM move the plate in the scanner frame (about
	// x, y then z, degrees; then the offset, m).
	RotationDeg [3]float64
	OffsetM     [3]float64
	Seed        uint64
}

// GenerateHob builds the hob-top scan h describes: the plate sampled on a
// square grid at the spacing (both edges included), noise and spikes along
// the normal, then rotated and offset into the scanner frame. Its Truth has
// Kind "hob-top", SideMM and CrownMM (+S for a dome, −S for a dish).
func GenerateHob(h HobSpec) (*Scan, error) {
	h, n, err := h.withDefaults()
	if err != nil {
		return nil, err
	}
	crown := h.SagM
	if h.Shape == Dish {
		crown = -crown
	}
	sf := hobSurface(h, n, crown)
	addNoise(sf.pts, sf.nrm, h.NoiseM, rand.New(rand.NewPCG(h.Seed, streamNoise)))
	keep := make([]bool, len(sf.pts))
	for i := range keep {
		keep[i] = true
	}
	spikes := addSpikes(sf.pts, sf.nrm, keep, nil, h.SpikeFraction, spikeMinM, spikeMaxM, rand.New(rand.NewPCG(h.Seed, streamSpikes)))

	rot := scannerRotation("down", h.RotationDeg) // no flip: the top already faces +z
	off := r3.Vec{X: h.OffsetM[0], Y: h.OffsetM[1], Z: h.OffsetM[2]}
	c := sf.toScanner(rot, off, h.Normals, h.Mesh)
	tr := Truth{
		Schema:      TruthSchema,
		Kind:        "hob-top",
		Name:        h.Name,
		Shape:       h.Shape,
		Face:        "up",
		SideMM:      mm(h.SideM),
		SagMM:       mm(h.SagM),
		CrownMM:     mm(crown),
		FlatnessMM:  2 * mm(math.Abs(h.SagM)), // z runs from S (centre) to −S (corners, r² = 2a²)
		NoiseUM:     um(h.NoiseM),
		Spikes:      spikes,
		SpacingMM:   mm(h.SpacingM),
		Points:      len(c.Points),
		Triangles:   len(c.Triangles),
		Mesh:        h.Mesh,
		Normals:     h.Normals,
		Seed:        h.Seed,
		RotationDeg: h.RotationDeg,
		OffsetMM:    [3]float64{mm(h.OffsetM[0]), mm(h.OffsetM[1]), mm(h.OffsetM[2])},
	}
	return &Scan{Cloud: c, Truth: tr}, nil
}

// withDefaults fills h's zero fields, checks it, and returns the number of
// points along a side.
func (h HobSpec) withDefaults() (HobSpec, int, error) {
	if h.Shape == "" {
		h.Shape = Flat
	}
	if h.Shape == Flat && h.SagM != 0 {
		h.Shape = Dome // the sag asked for wins over the word; the truth says so
	}
	if h.SideM == 0 {
		h.SideM = DefaultHobSideM
	}
	if h.SpacingM == 0 {
		h.SpacingM = DefaultHobSpacingM
	}
	badHob := func(format string, a ...any) (HobSpec, int, error) {
		return h, 0, fmt.Errorf("%w: hob: %s", ErrSpec, fmt.Sprintf(format, a...))
	}
	switch {
	case h.Shape != Flat && h.Shape != Dome && h.Shape != Dish:
		return badHob("shape %q, want flat, dome or dish", h.Shape)
	case !finite(h.SideM, h.SagM, h.NoiseM, h.SpikeFraction, h.SpacingM,
		h.RotationDeg[0], h.RotationDeg[1], h.RotationDeg[2], h.OffsetM[0], h.OffsetM[1], h.OffsetM[2]):
		return badHob("non-finite value")
	case h.SideM <= 0:
		return badHob("side %g mm, want > 0", mm(h.SideM))
	case h.SpacingM <= 0 || h.SpacingM > h.SideM/4:
		return badHob("spacing %g mm, want > 0 and at most a quarter of the side (%g mm)", mm(h.SpacingM), mm(h.SideM/4))
	case h.NoiseM < 0:
		return badHob("noise %g µm, want >= 0", um(h.NoiseM))
	case h.SpikeFraction < 0 || h.SpikeFraction > 0.5:
		return badHob("spike fraction %g, want 0 … 0.5", h.SpikeFraction)
	case math.Abs(h.SagM) > h.SideM/4:
		return badHob("sag %g mm is more than a quarter of the side (%g mm)", mm(h.SagM), mm(h.SideM/4))
	}
	n := int(math.Round(h.SideM/h.SpacingM)) + 1
	if float64(n)*float64(n) > MaxPoints {
		return badHob("%d×%d points, more than %d: give a larger spacing or a smaller side", n, n, MaxPoints)
	}
	return h, n, nil
}

// hobSurface returns the hob top's n×n grid of points with their normals
// (and its triangles when h.Mesh), in the hob frame with +z up: the Dish
// form with the signed crown as its sag, z = crown·(1 − r²/a²).
func hobSurface(h HobSpec, n int, crown float64) surface {
	a := h.SideM / 2
	f := form{shape: Dish, sag: crown, rad: a}
	var sf surface
	for j := range n {
		y := -a + h.SideM*float64(j)/float64(n-1)
		for i := range n {
			x := -a + h.SideM*float64(i)/float64(n-1)
			gx, gy := f.grad(x, y)
			sf.pts = append(sf.pts, r3.Vec{X: x, Y: y, Z: f.z(x, y)})
			sf.nrm = append(sf.nrm, r3.Unit(r3.Vec{X: -gx, Y: -gy, Z: 1}))
		}
	}
	sf.nBase = len(sf.pts)
	if h.Mesh {
		sf.tris = make([][3]int32, 0, 2*(n-1)*(n-1))
		for j := range n - 1 {
			for i := range n - 1 {
				p := int32(j*n + i)
				q := p + int32(n)
				// Counter-clockwise seen from +z: normals up.
				sf.tris = append(sf.tris, [3]int32{p, p + 1, q + 1}, [3]int32{p, q + 1, q})
			}
		}
	}
	return sf
}
