package scan_test

import (
	"strings"
	"testing"

	"gapflux/scan"
	"gapflux/scan/synth"
)

// TestLevelTriangleSoupIsNoRepeat (issue 15, item 5): an STL lists each
// vertex once per facet; merging those shared vertices is no news, while
// the count of distinct vertices is what the report gives.
func TestLevelTriangleSoupIsNoRepeat(t *testing.T) {
	sc, err := synth.Generate(synth.Spec{Shape: synth.Dish, DiameterM: 0.1, SagM: 0.1e-3, SpacingM: 2e-3, Mesh: true, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	c := sc.Cloud
	shared := len(c.Points)
	// The soup: every facet its own three vertices, as an STL stores them.
	soup := &scan.Cloud{Unit: c.Unit}
	for _, tri := range c.Triangles {
		k := int32(len(soup.Points))
		for _, v := range tri {
			soup.Points = append(soup.Points, c.Points[v])
		}
		soup.Triangles = append(soup.Triangles, [3]int32{k, k + 1, k + 2})
	}
	l, err := scan.Level(soup, scan.LevelOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if got := 3*len(c.Triangles) - l.PointsMerged; got != shared {
		t.Errorf("%d distinct vertices, want the generator's %d", got, shared)
	}
	if w := strings.Join(l.Warnings, "; "); strings.Contains(w, "repeat another point") {
		t.Errorf("a triangle soup warned about repeats: %s", w)
	}
}
