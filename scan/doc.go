// Package scan reads scans of a cookware base, puts them in the base frame,
// grids them into a height field and measures the base's form.
//
// Frames and units: inside this package every length is in metres. The base
// frame has its origin at the centre of the base footprint, the base plane at
// z = 0 and +z pointing into the pan (away from the hob). A scan's own frame
// (the scanner frame) is arbitrary; Level finds the transform.
//
// The file readers live in the sub-packages stl, ply and xyz; Read detects the
// format from the content and returns a Cloud in metres.
package scan
