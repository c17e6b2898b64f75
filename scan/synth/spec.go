package synth

import (
	"errors"
	"fmt"
	"math"

	"gapflux/scan"
)

// Shape names the form of a synthetic base.
type Shape string

// Base forms. In the base frame (+z into the pan), with R the base radius and
// S = Spec.SagM:
//
//	flat    z = 0
//	dish    z = S·(1 − r²/R²)      centre S above the rim: concave, concavity +S
//	dome    z = −S·(1 − r²/R²)     centre S below the rim: convex, concavity −S
//	saddle  z = S·(x² − y²)/R²     ±S at the rim along x and y, concavity 0
//	tilt    z = S·x/(2R)           rim height difference S along x, concavity 0
//	bend    z = S·x²/R²            one-way cylindrical bend, rim at x = ±R raised
//	                               by S, concavity −S/2
//	cone    z = S·max(0, r − r0)/(R − r0)
//	                               flat to r0 = Spec.ConeStartM, then a straight
//	                               lift to S at the rim (a warped outer ring)
//
// Spec.FormTurnDeg turns the form about z before sampling (x above is then
// measured along the turned direction), so a bend's axis, a saddle's or a
// tilt's direction can be set.
const (
	Flat   Shape = "flat"
	Dome   Shape = "dome"
	Dish   Shape = "dish"
	Saddle Shape = "saddle"
	Tilt   Shape = "tilt"
	Bend   Shape = "bend"
	Cone   Shape = "cone"
)

// Shapes lists the base forms in a fixed order.
var Shapes = []Shape{Flat, Dome, Dish, Saddle, Tilt, Bend, Cone}

// Defaults used when a Spec or HobSpec field is zero.
const (
	DefaultSpacingM    = 0.5e-3 // point or vertex spacing, m
	DefaultHobSideM    = 0.30   // glass-ceramic plate side, m
	DefaultHobSpacingM = 1e-3   // hob point spacing, m

	// MaxPoints bounds the points one Spec may generate.
	MaxPoints = 20_000_000
)

// Spike and hole sizes (our own choice; a few millimetres as seen on scans
// of shiny bases).
const (
	spikeMinM   = 0.2e-3
	spikeMaxM   = 2e-3
	holeMinRadM = 2e-3
	holeMaxRadM = 4e-3

	defaultStreakM = 3e-3 // streak length: a few millimetres of glare
)

// ErrSpec is wrapped by every error about an invalid Spec or HobSpec.
var ErrSpec = errors.New("synth: invalid spec")

// Spec describes one synthetic scan of a pan base. Lengths are in metres.
type Spec struct {
	// Name labels the scan (truth sidecar, STL header, PLY comment).
	Name string
	// Shape is the base form; "" means Flat.
	Shape Shape
	// DiameterM is the base (footprint) diameter, m.
	DiameterM float64
	// SagM is the form amplitude, m; see Shape for its meaning per form.
	// Its sign is kept: a dish with negative SagM is a dome.
	SagM float64
	// NoiseM is the σ of white Gaussian scanner noise along the local
	// surface normal, m (about 8e-6 for structured light, 60e-6 hand-held).
	NoiseM float64
	// SpikeFraction is the fraction of the kept points displaced along the
	// normal by ±(0.2 … 2) mm, uniform, random sign.
	SpikeFraction float64
	// Holes is the number of unmeasured round holes (radius 2 … 4 mm, at
	// most R/4) cut from the base.
	Holes int
	// CornerRadiusM is the radius of the quarter-circle corner rising into
	// the pan from r = R to R + CornerRadiusM, m; 0 = no corner.
	CornerRadiusM float64
	// WallHeightM is the height of the wall top above the base plane, m;
	// the wall is the vertical cylinder r = R + CornerRadiusM above the
	// corner. 0 (or not above the corner) = no wall.
	WallHeightM float64
	// SpacingM is the point or vertex spacing, m; 0 = DefaultSpacingM.
	SpacingM float64
	// Mesh asks for a triangulated surface (polar rings, consistent
	// winding, facet normals pointing out of the pan) instead of a point
	// cloud on a square grid.
	Mesh bool
	// Normals asks for one unit normal per point, pointing out of the pan
	// (toward the hob under the base).
	Normals bool
	// Face is "up" (outer face toward scanner +z: the pan lies upside down)
	// or "down" (outer face toward scanner −z); "" means "up".
	Face string
	// RotationDeg rotates the scan about the scanner x, y then z axes,
	// degrees, after the Face flip.
	RotationDeg [3]float64
	// OffsetM shifts the scan in the scanner frame, m, after the rotation.
	OffsetM [3]float64
	// Seed selects the noise, spikes and holes.
	Seed uint64

	// ConeStartM is r0 of the Cone form, m: the base is flat inside it
	// and lifts linearly to SagM at the rim; 0 means half the radius.
	ConeStartM float64
	// FormTurnDeg turns the form about z, counter-clockwise, degrees: a
	// bend with turn θ has its rim raised along the direction θ and its
	// (straight) bend axis at θ + 90°.
	FormTurnDeg float64
	// SpikeMinM and SpikeMaxM bound the spike and streak heights, m; zero
	// means 0.2 mm and 2 mm. Each spike or streak is lifted by a height
	// drawn uniformly from [SpikeMinM, SpikeMaxM] with a random sign.
	SpikeMinM, SpikeMaxM float64
	// Streaks is the number of streaks: all kept base points within half a
	// spacing of a straight segment StreakLengthM long (random place and
	// direction) lifted together along the normal, as a reflection makes.
	Streaks int
	// StreakLengthM is the streak length, m; 0 means 3 mm.
	StreakLengthM float64
	// JitterFraction moves every base point of a cloud by a uniform random
	// offset of up to ±JitterFraction·SpacingM/2 in x and in y (0 … 1),
	// so a cloud at a given spacing is not a perfect lattice. Points that
	// leave the base disc are dropped.
	JitterFraction float64
	// HoleList cuts round unmeasured holes of a given place and size from
	// the base (after the random Holes).
	HoleList []Hole
	// Sectors removes the points (base, corner and wall) in angular
	// sectors, as a scan that missed part of the rim.
	Sectors []Sector
}

// Hole is a round unmeasured hole at a given place, in the base frame.
type Hole struct {
	XM, YM    float64 // centre, m
	DiameterM float64 // diameter, m
}

// Sector is the set of points with polar angle in [FromDeg, ToDeg)
// (counter-clockwise from +x in the base frame, degrees, taken modulo 360)
// and radius at least InnerM (0: the whole slice from the centre).
type Sector struct {
	FromDeg, ToDeg float64
	InnerM         float64
}

// Scan is a generated scan and what it should measure as.
type Scan struct {
	// Cloud holds the points (and triangles, normals) in the scanner
	// frame, metres. Format is "synth" and Unit "m".
	Cloud *scan.Cloud
	// Truth is the exact description, written as the JSON sidecar.
	Truth Truth
	// Outliers lists, in increasing order, the indices into Cloud.Points
	// of the points displaced by spikes and streaks (not in the sidecar).
	Outliers []int32
}

// Truth is the exact form and the scan conditions of a synthetic scan, in
// the units its JSON names carry. It is the .truth.json sidecar.
type Truth struct {
	// Schema is "gapflux.synth-truth/1".
	Schema string `json:"schema"`
	// Kind is "pan-base" or "hob-top".
	Kind  string `json:"kind"`
	Name  string `json:"name,omitempty"`
	Shape Shape  `json:"shape"`
	// Face is "up" or "down" (see Spec.Face); always "up" for a hob top.
	Face string `json:"face"`
	// DiameterMM is the base diameter (pan bases), mm.
	DiameterMM float64 `json:"diameter_mm,omitempty"`
	// SideMM is the plate side (hob tops), mm.
	SideMM float64 `json:"side_mm,omitempty"`
	// SagMM is Spec.SagM (or HobSpec.SagM) in mm.
	SagMM float64 `json:"sag_mm"`
	// ConcavityMM is −c3·R² of the least-squares paraboloid over the base
	// disc of the exact form (DESIGN.md section 3), mm; pan bases only.
	ConcavityMM float64 `json:"concavity_mm"`
	// CrownMM is the height of a hob top's centre above its inscribed
	// circle, in the hob frame (+z up), mm: positive for a domed top.
	CrownMM float64 `json:"crown_mm,omitempty"`
	// FlatnessMM is the minimum-zone flatness of the exact form over the
	// base disc (or the hob plate), mm. For every shape here it equals the
	// peak-to-valley about the least-squares plane.
	FlatnessMM float64 `json:"flatness_mm"`
	// NoiseUM is the noise σ, µm.
	NoiseUM float64 `json:"noise_um"`
	// Spikes is the number of spike points in the scan.
	Spikes int `json:"spikes"`
	// Holes is the number of holes cut from the base.
	Holes int `json:"holes"`
	// ConeStartMM is the Cone form's flat radius r0, mm.
	ConeStartMM float64 `json:"cone_start_mm,omitempty"`
	// FormTurnDeg is Spec.FormTurnDeg; BendAxisDeg is a bend's axis
	// direction, degrees in [0, 180).
	FormTurnDeg float64  `json:"form_turn_deg,omitempty"`
	BendAxisDeg *float64 `json:"bend_axis_deg,omitempty"`
	// SpikeMinMM and SpikeMaxMM bound the spike heights, mm (when set).
	SpikeMinMM float64 `json:"spike_min_mm,omitempty"`
	SpikeMaxMM float64 `json:"spike_max_mm,omitempty"`
	// Streaks is the number of streaks and StreakPoints the points they
	// lifted; StreakLengthMM their length, mm.
	Streaks        int     `json:"streaks,omitempty"`
	StreakPoints   int     `json:"streak_points,omitempty"`
	StreakLengthMM float64 `json:"streak_length_mm,omitempty"`
	// JitterFraction is Spec.JitterFraction.
	JitterFraction float64 `json:"jitter_fraction,omitempty"`
	// HoleList and Sectors echo the Spec's, in mm and degrees.
	HoleList       []HoleMM   `json:"hole_list,omitempty"`
	Sectors        []SectorMM `json:"sectors,omitempty"`
	CornerRadiusMM float64    `json:"corner_radius_mm"`
	WallHeightMM   float64    `json:"wall_height_mm"`
	SpacingMM      float64    `json:"spacing_mm"`
	// Points and Triangles count what the scan holds.
	Points    int  `json:"points"`
	Triangles int  `json:"triangles"`
	Mesh      bool `json:"mesh"`
	Normals   bool `json:"normals"`
	// Seed is the Spec's seed.
	Seed        uint64     `json:"seed"`
	RotationDeg [3]float64 `json:"rotation_deg"`
	OffsetMM    [3]float64 `json:"offset_mm"`
	// Format and Unit name the file encoding (e.g. "stl-binary", "mm");
	// empty until the scan is written.
	Format string `json:"format,omitempty"`
	Unit   string `json:"unit,omitempty"`
}

// HoleMM is a Hole in millimetres.
type HoleMM struct {
	XMM        float64 `json:"x_mm"`
	YMM        float64 `json:"y_mm"`
	DiameterMM float64 `json:"diameter_mm"`
}

// SectorMM is a Sector with its inner radius in millimetres.
type SectorMM struct {
	FromDeg float64 `json:"from_deg"`
	ToDeg   float64 `json:"to_deg"`
	InnerMM float64 `json:"inner_mm"`
}

// TruthSchema is the schema name written into every Truth.
const TruthSchema = "gapflux.synth-truth/1"

// form is an exact height field z = f(x, y) in the base frame.
type form struct {
	shape Shape
	sag   float64 // S, m
	rad   float64 // R, m
	r0    float64 // cone start radius, m
	// cos, sin of the form turn; the zero value (no turn) is read as 1, 0.
	turned   bool
	cos, sin float64
}

// local turns (x, y) into the form's own axes.
func (f form) local(x, y float64) (float64, float64) {
	if !f.turned {
		return x, y
	}
	return f.cos*x + f.sin*y, -f.sin*x + f.cos*y
}

// z returns the height at (x, y), m.
func (f form) z(x, y float64) float64 {
	x, y = f.local(x, y)
	s, r2 := f.sag, f.rad*f.rad
	switch f.shape {
	case Cone:
		r := math.Hypot(x, y)
		if r <= f.r0 {
			return 0
		}
		return s * (r - f.r0) / (f.rad - f.r0)
	case Dish:
		return s * (1 - (x*x+y*y)/r2)
	case Dome:
		return -s * (1 - (x*x+y*y)/r2)
	case Saddle:
		return s * (x*x - y*y) / r2
	case Tilt:
		return s * x / (2 * f.rad)
	case Bend:
		return s * x * x / r2
	}
	return 0
}

// grad returns ∂z/∂x and ∂z/∂y at (x, y).
func (f form) grad(x, y float64) (gx, gy float64) {
	lx, ly := f.localGrad(f.local(x, y))
	if !f.turned {
		return lx, ly
	}
	return f.cos*lx - f.sin*ly, f.sin*lx + f.cos*ly
}

// localGrad returns the gradient in the form's own axes.
func (f form) localGrad(x, y float64) (gx, gy float64) {
	s, r2 := f.sag, f.rad*f.rad
	switch f.shape {
	case Cone:
		r := math.Hypot(x, y)
		if r <= f.r0 || r == 0 {
			return 0, 0
		}
		k := s / (f.rad - f.r0) / r
		return k * x, k * y
	case Dish:
		return -2 * s * x / r2, -2 * s * y / r2
	case Dome:
		return 2 * s * x / r2, 2 * s * y / r2
	case Saddle:
		return 2 * s * x / r2, -2 * s * y / r2
	case Tilt:
		return s / (2 * f.rad), 0
	case Bend:
		return 2 * s * x / r2, 0
	}
	return 0, 0
}

// concavity returns −c3·R² of the least-squares fit
// z = c0 + c1·x + c2·y + c3·r² over the disc r ≤ R (continuous), m.
// Over the disc, x² − y² and x are orthogonal to 1 and r², and
// x² = r²/2 + (x² − y²)/2, so a bend S·x²/R² has c3 = S/(2R²).
func (f form) concavity() float64 {
	switch f.shape {
	case Dish:
		return f.sag
	case Dome:
		return -f.sag
	case Bend:
		return -f.sag / 2
	case Cone:
		// t = r²/R² is uniform over the disc; the fit is a + b·t with
		// b = 12·(E[z·t] − E[z]/2), and concavity = −b. With q = r0/R:
		// E[z] = S/(1−q)·(2/3·(1−q³) − q·(1−q²)),
		// E[z·t] = S/(1−q)·(2/5·(1−q⁵) − q/2·(1−q⁴)).
		q := f.r0 / f.rad
		k := f.sag / (1 - q)
		ez := k * (2.0/3*(1-q*q*q) - q*(1-q*q))
		ezt := k * (2.0/5*(1-math.Pow(q, 5)) - q/2*(1-math.Pow(q, 4)))
		return -12 * (ezt - ez/2)
	}
	return 0
}

// flatness returns the minimum-zone flatness of the form over the disc, m.
// Dish, dome, saddle, bend and cone are even in (x, y), so the optimal zone
// is horizontal and MZ = LS peak-to-valley = max − min; a tilt is a plane.
func (f form) flatness() float64 {
	s := math.Abs(f.sag)
	switch f.shape {
	case Dish, Dome, Bend, Cone:
		return s
	case Saddle:
		return 2 * s
	}
	return 0
}

// shapeList lists the shapes for a message: "flat, dome, ... or cone".
func shapeList() string {
	var b []byte
	for i, k := range Shapes {
		switch {
		case i == len(Shapes)-1:
			b = append(b, " or "...)
		case i > 0:
			b = append(b, ", "...)
		}
		b = append(b, k...)
	}
	return string(b)
}

func knownShape(s Shape) bool {
	for _, k := range Shapes {
		if s == k {
			return true
		}
	}
	return false
}

func finite(vs ...float64) bool {
	for _, v := range vs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// withDefaults validates s and fills its zero fields.
func (s Spec) withDefaults() (Spec, error) {
	if s.Shape == "" {
		s.Shape = Flat
	}
	if s.SpacingM == 0 {
		s.SpacingM = DefaultSpacingM
	}
	if s.Face == "" {
		s.Face = "up"
	}
	bad := func(format string, a ...any) (Spec, error) {
		return s, fmt.Errorf("%w: %s", ErrSpec, fmt.Sprintf(format, a...))
	}
	switch {
	case !knownShape(s.Shape):
		return bad("unknown shape %q, want %s", s.Shape, shapeList())
	case s.Face != "up" && s.Face != "down":
		return bad("face %q, want up or down", s.Face)
	case !finite(s.DiameterM, s.SagM, s.NoiseM, s.SpikeFraction, s.CornerRadiusM, s.WallHeightM, s.SpacingM,
		s.RotationDeg[0], s.RotationDeg[1], s.RotationDeg[2], s.OffsetM[0], s.OffsetM[1], s.OffsetM[2]):
		return bad("non-finite value")
	case s.DiameterM <= 0:
		return bad("diameter %g mm, want > 0", mm(s.DiameterM))
	case s.SpacingM <= 0 || s.SpacingM > s.DiameterM/4:
		return bad("spacing %g mm, want > 0 and at most a quarter of the diameter (%g mm)", mm(s.SpacingM), mm(s.DiameterM/4))
	case s.NoiseM < 0:
		return bad("noise %g µm, want >= 0", um(s.NoiseM))
	case s.SpikeFraction < 0 || s.SpikeFraction > 0.5:
		return bad("spike fraction %g, want 0 … 0.5", s.SpikeFraction)
	case s.Holes < 0 || s.Holes > 1000:
		return bad("holes %d, want 0 … 1000", s.Holes)
	case s.CornerRadiusM < 0 || s.WallHeightM < 0:
		return bad("corner radius and wall height must be >= 0")
	case math.Abs(s.SagM) > s.DiameterM/4:
		return bad("sag %g mm is more than a quarter of the diameter (%g mm)", mm(s.SagM), mm(s.DiameterM/4))
	}
	if err := s.checkArtefacts(); err != nil {
		return s, err
	}
	r := s.DiameterM / 2
	n := math.Pi * r * r / (s.SpacingM * s.SpacingM)
	n += 2 * math.Pi * (r + s.CornerRadiusM) * (math.Pi/2*s.CornerRadiusM + s.WallHeightM) / (s.SpacingM * s.SpacingM)
	if n > MaxPoints {
		return bad("about %.3g points at %g mm spacing on a %g mm base, more than %d: give a larger spacing or a smaller diameter", n, mm(s.SpacingM), mm(s.DiameterM), MaxPoints)
	}
	return s, nil
}

// mm converts metres to millimetres rounded to 1e-9 mm, so that the truth
// reads 0.12 rather than 0.12000000000000001.
func mm(m float64) float64 { return math.Round(m*1e12) / 1e9 }

// um converts metres to micrometres rounded to 1e-6 µm.
func um(m float64) float64 { return math.Round(m*1e12) / 1e6 }

// checkArtefacts validates the fields that shape the scan's defects and
// fills their defaults.
func (s *Spec) checkArtefacts() error {
	bad := func(format string, a ...any) error {
		return fmt.Errorf("%w: %s", ErrSpec, fmt.Sprintf(format, a...))
	}
	if !finite(s.ConeStartM, s.FormTurnDeg, s.SpikeMinM, s.SpikeMaxM, s.StreakLengthM, s.JitterFraction) {
		return bad("non-finite value")
	}
	r := s.DiameterM / 2
	if s.Shape == Cone && s.ConeStartM == 0 {
		s.ConeStartM = r / 2
	}
	if s.SpikeMinM == 0 {
		s.SpikeMinM = spikeMinM
	}
	if s.SpikeMaxM == 0 {
		s.SpikeMaxM = max(spikeMaxM, s.SpikeMinM)
	}
	if s.StreakLengthM == 0 {
		s.StreakLengthM = defaultStreakM
	}
	switch {
	case s.ConeStartM < 0 || s.ConeStartM >= r:
		return bad("cone start %g mm, want 0 … the radius (%g mm)", mm(s.ConeStartM), mm(r))
	case math.Abs(s.FormTurnDeg) > 360:
		return bad("form turn %g°, want −360 … 360", s.FormTurnDeg)
	case s.SpikeMinM < 0 || s.SpikeMaxM < s.SpikeMinM || s.SpikeMaxM > 0.1:
		return bad("spike heights %g … %g mm, want 0 ≤ min ≤ max ≤ 100 mm", mm(s.SpikeMinM), mm(s.SpikeMaxM))
	case s.Streaks < 0 || s.Streaks > 100000:
		return bad("streaks %d, want 0 … 100000", s.Streaks)
	case s.StreakLengthM < 0 || s.StreakLengthM > max(r, defaultStreakM):
		return bad("streak length %g mm, want 0 … the radius (%g mm)", mm(s.StreakLengthM), mm(max(r, defaultStreakM)))
	case s.JitterFraction < 0 || s.JitterFraction > 1:
		return bad("jitter fraction %g, want 0 … 1", s.JitterFraction)
	case len(s.HoleList) > 1000 || len(s.Sectors) > 1000:
		return bad("at most 1000 listed holes and 1000 sectors")
	}
	for i, h := range s.HoleList {
		if !finite(h.XM, h.YM, h.DiameterM) || h.DiameterM <= 0 || math.Hypot(h.XM, h.YM) > r {
			return bad("hole %d: centre (%g, %g) mm, diameter %g mm; want a positive diameter and the centre inside the base", i, mm(h.XM), mm(h.YM), mm(h.DiameterM))
		}
		if math.Hypot(h.XM, h.YM)+r <= h.DiameterM/2 {
			return bad("hole %d: a %g mm hole at (%g, %g) mm covers the whole %g mm base; want a smaller hole", i, mm(h.DiameterM), mm(h.XM), mm(h.YM), mm(s.DiameterM))
		}
	}
	for i, c := range s.Sectors {
		if !finite(c.FromDeg, c.ToDeg, c.InnerM) || c.InnerM < 0 || c.ToDeg <= c.FromDeg || c.ToDeg-c.FromDeg > 360 {
			return bad("sector %d: %g° … %g° from %g mm; want from < to, at most 360° apart, inner radius >= 0", i, c.FromDeg, c.ToDeg, mm(c.InnerM))
		}
	}
	return nil
}
