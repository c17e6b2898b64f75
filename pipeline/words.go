package pipeline

import "fmt"

// counted writes n with the singular or plural noun: "1 check", "3 checks".
func counted(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}

// inputCounts describes what a scan file holds, for people: a mesh's
// triangles and its distinct vertices (an STL lists each vertex once per
// facet), or a cloud's points, with repeats said when there are any.
func inputCounts(f FileReport) string {
	distinct := f.DistinctPoints
	if distinct == 0 || distinct > f.Points {
		distinct = f.Points
	}
	if f.Triangles > 0 {
		return fmt.Sprintf("%s, %s", counted(f.Triangles, "triangle", "triangles"), counted(distinct, "distinct vertex", "distinct vertices"))
	}
	if distinct < f.Points {
		return fmt.Sprintf("%s, %d distinct", counted(f.Points, "point", "points"), distinct)
	}
	return counted(f.Points, "point", "points")
}
