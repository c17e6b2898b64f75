package bow_test

import (
	"context"
	"fmt"
	"math"

	"gapflux/bow"
)

// A flat 3 mm stainless 304 base of 200 mm on a 1 mm grid, 50 kW/m² flowing
// in from the hob: free, it domes by α q R²/(2k) (267 µm at R = 100 mm; the
// rim cells' centres lie half a cell inside); held by a 1 mm stainless wall
// (WallStiffnessN), by about 0.57 of that; clamped, not at all.
func ExampleSolver_Deflect() {
	const cell, radius = 1e-3, 0.1
	n := 204
	g := bow.Grid{Nx: n, Ny: n, CellM: cell, X0M: -float64(n-1) / 2 * cell, Y0M: -float64(n-1) / 2 * cell}
	in := make([]bool, n*n)
	flux, temp := make([]float64, n*n), make([]float64, n*n)
	for k := range in {
		x, y := g.X0M+float64(k%n)*cell, g.Y0M+float64(k/n)*cell
		in[k] = math.Hypot(x, y) <= radius
		flux[k], temp[k] = 50e3, 273.15+180
	}
	steel := bow.Layer{ThicknessM: 3e-3, ConductivityWMK: 16.2, YoungPa: 193e9, Poisson: 0.29, ExpansionPerK: 17.3e-6}
	wall, _ := bow.WallStiffnessN(1e-3, radius, steel.YoungPa, steel.Poisson)
	for _, edge := range []bow.Edge{{Kind: bow.EdgeFree}, {Kind: bow.EdgeWall, RotStiffnessN: wall}, {Kind: bow.EdgeClamped}} {
		s, err := bow.NewSolver(context.Background(), bow.Problem{Grid: g, InBase: in, Layers: []bow.Layer{steel}, Edge: edge})
		if err != nil {
			fmt.Println(err)
			return
		}
		w, err := s.Deflect(context.Background(), flux, temp, 273.15+20, nil)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("%-7s edge: centre %.0f µm below the rim (%.0f mm bending cells)\n", edge.Kind,
			math.Round(-w[n/2*n+n/2]*1e6)+0, s.Info().BendCellM*1e3)
	}
	// Output:
	// free    edge: centre 265 µm below the rim (5 mm bending cells)
	// wall    edge: centre 152 µm below the rim (5 mm bending cells)
	// clamped edge: centre 0 µm below the rim (5 mm bending cells)
}
