package pipeline

import (
	"fmt"
	"math"

	"gapflux/scan"
)

// gridPlan is the extent of the square grids an analysis builds, known
// before any of them is allocated.
type gridPlan struct {
	baseHalfM  float64 // half-width of the base grid (the base radius), m; 0 = not known yet
	glassHalfM float64 // half-width of the heater's glass grid about the base centre, m; 0 = none
}

// planGrids returns the grids of the job for a base of radius radiusM (0
// when not known yet: the glass grid is then a lower bound).
func (j *Job) planGrids(radiusM float64) gridPlan {
	p := gridPlan{baseHalfM: radiusM}
	if j.heated() {
		off := math.Hypot(j.Pan.OffsetMM[0], j.Pan.OffsetMM[1]) / 1e3
		p.glassHalfM = off + glassRadiusM(j, off, radiusM)
	}
	return p
}

// glassRadiusM is the radius of the glass disc modelled in heater mode
// about the zone centre: the zone or the base, whichever reaches further,
// plus hob.margin_mm (DESIGN 5.3). A zone of 0 (fitted to the base) is the
// zone FitZoneMM gives the base, or while the base is not known (radiusM
// 0) its smallest, 120 mm, so the plan stays a lower bound.
func glassRadiusM(j *Job, offM, radiusM float64) float64 {
	zoneMM := j.Hob.ZoneDiameterMM
	if zoneMM == 0 {
		zoneMM = fitZoneMinMM
		if radiusM > 0 {
			zoneMM = FitZoneMM(2 * radiusM * 1e3)
		}
	}
	return math.Max(zoneMM/2e3, offM+radiusM) + j.Hob.MarginMM/1e3
}

// planCellMM is the cell edge the grids are planned with, mm: grid.cell_mm,
// or for the automatic cell (0) the smallest it can be (scan.AutoCellM's
// lower bound, or a quarter of the cut-off when that is smaller), so the
// plan is an upper bound of the grid.
func (j *Job) planCellMM() float64 {
	if j.Grid.CellMM > 0 {
		return j.Grid.CellMM
	}
	c := scan.MinAutoCellM * 1e3
	if j.Grid.CutoffMM > 0 {
		c = math.Min(c, j.Grid.CutoffMM/4)
	}
	return c
}

// check returns a *KeyError when a grid of the plan exceeds
// limits.max_cells, nil otherwise.
func (p gridPlan) check(j *Job) *KeyError {
	if p.glassHalfM > 0 {
		if e := squareGridLimit(j, "the heater-mode glass grid (zone, base and margin about the pan's offset)", p.glassHalfM,
			fmt.Sprintf("hob.zone_diameter_mm = %s, hob.margin_mm = %s, pan.offset_mm = [%s, %s]",
				fmtNum(j.Hob.ZoneDiameterMM), fmtNum(j.Hob.MarginMM), fmtNum(j.Pan.OffsetMM[0]), fmtNum(j.Pan.OffsetMM[1])),
			"hob.zone_diameter_mm", "hob.margin_mm", "pan.offset_mm"); e != nil {
			return e
		}
	}
	if p.baseHalfM > 0 {
		return squareGridLimit(j, "the base grid", p.baseHalfM, "the base diameter", "grid.diameter_mm")
	}
	return nil
}

// squareGridLimit returns a *KeyError when a square grid covering
// [−halfM, halfM]² at grid.cell_mm exceeds limits.max_cells: it names the
// grid (what), its span and the keys that set it (by), and the smallest
// cell that would fit.
func squareGridLimit(j *Job, what string, halfM float64, by string, also ...string) *KeyError {
	cellM := j.planCellMM() / 1e3
	side := 2*math.Ceil(halfM/cellM-1e-9) + 1 // float: no overflow for any input
	cells := side * side
	limit := float64(j.Limits.MaxCells)
	if cells <= limit {
		return nil
	}
	fit := math.Floor((math.Floor(math.Sqrt(limit)) - 1) / 2) // largest ceil(half/cell) that fits
	minCellMM := ceilSig(halfM/fit*1e3, 3)
	return &KeyError{Key: "grid.cell_mm", Also: append(also, "limits.max_cells"), Msg: fmt.Sprintf(
		"%s would be %.0f×%.0f cells (%s), above limits.max_cells = %d: grid.cell_mm = %s mm is too fine for its %.0f mm span (%s); use cell_mm ≥ %s or raise limits.max_cells",
		what, side, side, countText(cells), j.Limits.MaxCells, fmtNum(j.Grid.CellMM), 2*halfM*1e3, by, fmtNum(minCellMM))}
}

// checkFilter bounds the work of the form filter on an nx×ny grid (what
// names it): cells times kernel taps at most filterTapsPerCell times
// limits.max_cells.
func checkFilter(j *Job, what string, nx, ny int) *KeyError {
	if j.Grid.CutoffMM == 0 {
		return nil
	}
	taps := 2*math.Floor(j.Grid.CutoffMM/j.planCellMM()+1e-9) + 1
	work := float64(nx) * float64(ny) * math.Min(taps, float64(max(nx, ny)))
	limit := float64(filterTapsPerCell) * float64(j.Limits.MaxCells)
	if work <= limit {
		return nil
	}
	return &KeyError{Key: "grid.cutoff_mm", Also: []string{"grid.cell_mm", "limits.max_cells"}, Msg: fmt.Sprintf(
		"the form filter of %s would take %s cell-kernel products (%d×%d cells, grid.cutoff_mm = %s mm over grid.cell_mm = %s mm is a kernel of %.0f cells), above %d × limits.max_cells; use a larger cell_mm, a smaller cutoff_mm, or raise limits.max_cells",
		what, countText(work), nx, ny, fmtNum(j.Grid.CutoffMM), fmtNum(j.Grid.CellMM), taps, filterTapsPerCell)}
}

// countText writes a count for people: 23.0 M, 4.2 G, 150000.
func countText(n float64) string {
	switch {
	case n >= 1e12:
		return fmt.Sprintf("%.1f T", n/1e12)
	case n >= 1e9:
		return fmt.Sprintf("%.1f G", n/1e9)
	case n >= 1e6:
		return fmt.Sprintf("%.1f M", n/1e6)
	}
	return fmt.Sprintf("%.0f", n)
}

// ceilSig rounds v > 0 up to n significant digits.
func ceilSig(v float64, n int) float64 {
	if !(v > 0) || math.IsInf(v, 0) {
		return v
	}
	scale := math.Pow(10, float64(n)-math.Ceil(math.Log10(v)))
	return math.Ceil(v*scale-1e-9) / scale
}
