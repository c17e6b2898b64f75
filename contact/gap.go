package contact

import (
	"math"

	"gapflux/scan"
)

// Gap returns the gap g = d − p, m, per cell of pan's grid for a pose found
// by Rest: NaN outside the base (or where hob is Outside), and never
// negative. Cells that were not support-eligible (filled, excluded) may lie
// below the plane; their gap is set to 0, as for any rounding below it.
// A nil hob is the ideal flat hob. Gap panics if hob's grid is not pan's.
func Gap(pan, hob *scan.Surface, pose *Pose) []float64 {
	if hob != nil {
		if err := sameGrid(pan, hob); err != nil {
			panic(err.Error())
		}
	}
	a, b, c0 := pose.PlaneM[0], pose.PlaneM[1], pose.PlaneM[2]
	g := make([]float64, pan.Nx*pan.Ny)
	for j := 0; j < pan.Ny; j++ {
		y := pan.Y(j)
		for i := 0; i < pan.Nx; i++ {
			k := j*pan.Nx + i
			if !pan.InBase(k) || (hob != nil && !hob.InBase(k)) {
				g[k] = math.NaN()
				continue
			}
			d := pan.ZM[k]
			if hob != nil {
				d -= hob.ZM[k]
			}
			v := d - (a*pan.X(i) + b*y + c0)
			if v < 0 {
				v = 0
			}
			g[k] = v // NaN stays NaN
		}
	}
	return g
}
