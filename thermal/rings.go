package thermal

import (
	"errors"
	"fmt"
	"math"
)

// Ring is one annulus of the base, RInM ≤ r < ROutM from the base centre,
// reduced from the cells whose centres fall in it. Means are over those
// cells (all cells have the same area, so they are area means). A ring with
// no cells has zero means.
type Ring struct {
	RInM, ROutM float64 // inner and outer radius, m
	AreaM2      float64 // summed area of the ring's cells, m²
	Cells       int     // number of base cells in the ring

	ContactFrac float64 // fraction of the ring's cells in contact
	MeanGapM    float64 // mean gap, m
	MaxGapM     float64 // largest gap, m

	// Mean interface conductance and its parts, W/(m²·K), from the scan's
	// solution.
	HWM2K, SolidWM2K, GasWM2K, RadWM2K float64

	FluxWM2 float64 // PowerW/AreaM2, W/m²
	PowerW  float64 // Σ flux·A over the ring's cells, W

	FlatPowerW  float64 // the flat reference's ring power, W
	FlatFluxWM2 float64 // FlatPowerW/AreaM2, W/m²
}

// RingInput is what Rings reduces. Every per-cell slice is indexed like the
// grid (length Grid.Len()); GapM, Contact, Scan and Flat may be nil, and the
// fields that need them are then left zero.
type RingInput struct {
	Grid    Grid
	InBase  []bool
	CentreM [2]float64 // base centre (x, y), m
	WidthM  float64    // ring width, m

	GapM    []float64 // gap per cell, m
	Contact []bool    // contact cells

	Scan, Flat *Solution // solutions for the scanned base and its flat twin
}

// Rings cuts the base into annuli [k·w, (k+1)·w) about in.CentreM, k = 0, 1,
// ..., until the one holding the outermost base cell, and reduces each cell
// to the ring that holds its centre. Ring power sums cell power flux·A in
// the same order as the cells, so Σ ring power equals Solution.PowerW to
// rounding and Σ ring area is the base area.
func Rings(in RingInput) ([]Ring, error) {
	g := in.Grid
	n := g.Len()
	switch {
	case g.Nx <= 0 || g.Ny <= 0:
		return nil, fmt.Errorf("thermal: rings: grid %d×%d is empty", g.Nx, g.Ny)
	case !(g.CellM > 0) || math.IsInf(g.CellM, 0):
		return nil, fmt.Errorf("thermal: rings: cell size %g m is not positive and finite", g.CellM)
	case !(in.WidthM > 0) || math.IsInf(in.WidthM, 0):
		return nil, fmt.Errorf("thermal: rings: width %g m is not positive and finite", in.WidthM)
	case len(in.InBase) != n:
		return nil, fmt.Errorf("thermal: rings: base mask has %d cells, grid %d", len(in.InBase), n)
	case in.GapM != nil && len(in.GapM) != n:
		return nil, fmt.Errorf("thermal: rings: gap field has %d cells, grid %d", len(in.GapM), n)
	case in.Contact != nil && len(in.Contact) != n:
		return nil, fmt.Errorf("thermal: rings: contact mask has %d cells, grid %d", len(in.Contact), n)
	}
	if err := checkRingSolution("scan", in.Scan, n); err != nil {
		return nil, err
	}
	if err := checkRingSolution("flat", in.Flat, n); err != nil {
		return nil, err
	}

	var rings []Ring
	cellA := g.CellM * g.CellM
	cx, cy := in.CentreM[0], in.CentreM[1]
	for j := range g.Ny {
		dy := g.Y0M + float64(j)*g.CellM - cy
		for i := range g.Nx {
			k := j*g.Nx + i
			if !in.InBase[k] {
				continue
			}
			dx := g.X0M + float64(i)*g.CellM - cx
			f := math.Floor(math.Sqrt(dx*dx+dy*dy) / in.WidthM)
			if !(f < maxRings) {
				return nil, fmt.Errorf("thermal: rings: width %g m gives more than %d rings", in.WidthM, maxRings)
			}
			ri := int(f)
			if ri >= len(rings) {
				rings = append(rings, make([]Ring, ri+1-len(rings))...)
			}
			rg := &rings[ri]
			rg.Cells++
			if in.Contact != nil && in.Contact[k] {
				rg.ContactFrac++
			}
			if in.GapM != nil {
				rg.MeanGapM += in.GapM[k]
				if rg.Cells == 1 || in.GapM[k] > rg.MaxGapM {
					rg.MaxGapM = in.GapM[k]
				}
			}
			if s := in.Scan; s != nil {
				so, ga, ra := s.SolidWM2K[k], s.GasWM2K[k], s.RadWM2K[k]
				rg.SolidWM2K += so
				rg.GasWM2K += ga
				rg.RadWM2K += ra
				rg.HWM2K += so + ga + ra
				rg.PowerW += s.FluxWM2[k] * cellA
			}
			if in.Flat != nil {
				rg.FlatPowerW += in.Flat.FluxWM2[k] * cellA
			}
		}
	}
	if len(rings) == 0 {
		return nil, errors.New("thermal: rings: the base has no cells")
	}
	for i := range rings {
		rg := &rings[i]
		rg.RInM = float64(i) * in.WidthM
		rg.ROutM = float64(i+1) * in.WidthM
		if rg.Cells == 0 {
			continue
		}
		c := float64(rg.Cells)
		rg.AreaM2 = c * cellA
		rg.ContactFrac /= c
		rg.MeanGapM /= c
		rg.HWM2K /= c
		rg.SolidWM2K /= c
		rg.GasWM2K /= c
		rg.RadWM2K /= c
		rg.FluxWM2 = rg.PowerW / rg.AreaM2
		rg.FlatFluxWM2 = rg.FlatPowerW / rg.AreaM2
	}
	return rings, nil
}

// maxRings bounds the number of rings Rings makes.
const maxRings = 100000

func checkRingSolution(name string, s *Solution, n int) error {
	if s == nil {
		return nil
	}
	if len(s.FluxWM2) != n {
		return fmt.Errorf("thermal: rings: %s solution has %d flux cells, grid %d", name, len(s.FluxWM2), n)
	}
	if name == "flat" {
		return nil
	}
	if len(s.SolidWM2K) != n || len(s.GasWM2K) != n || len(s.RadWM2K) != n {
		return fmt.Errorf("thermal: rings: %s solution has %d/%d/%d conductance cells, grid %d",
			name, len(s.SolidWM2K), len(s.GasWM2K), len(s.RadWM2K), n)
	}
	return nil
}
