// Package synth makes synthetic scans of invented cookware bases and hob
// tops: exact form (flat, dome, dish, saddle, tilt, one-way bend at any axis
// angle, cone: a flat centre with a lifted outer ring) with an optional
// corner radius and wall, scanner noise, spikes and streaks of a chosen
// height range, clouds at any spacing (optionally jittered), random or
// placed holes and missing sectors, seen from an arbitrary scanner frame,
// and written as STL, PLY or XYZ/CSV in mm, m, µm or inches with a JSON
// truth sidecar. Scan.Outliers lists the spiked and streaked points.
//
// Frames and units: the geometry is built in the base frame of package scan
// (origin at the footprint centre, base plane z = 0 at the rim, +z into the
// pan) and then moved to the scanner frame. Every length in Spec, HobSpec and
// scan.Cloud is in metres; Truth, the sidecar, carries millimetres and
// micrometres with the unit in each name.
//
// Concavity follows DESIGN.md section 3: the least-squares paraboloid
// z = c0 + c1·x + c2·y + c3·r² over the base disc gives concavity = −c3·R²,
// positive for a dished (concave) base and negative for a domed one.
//
// Everything is seeded: the same Spec gives the same points and, through
// Encode, the same bytes.
package synth

//go:generate go run ../../internal/gentestdata -out ../../testdata
