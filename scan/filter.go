package scan

import (
	"errors"
	"fmt"
	"math"
)

// GaussianAlpha is the weighting constant α = sqrt(ln 2 / π) ≈ 0.4697 of
// the Gaussian filter of ISO 16610-21 and ISO 16610-61, which gives 50 %
// transmission at the cut-off wavelength.
var GaussianAlpha = math.Sqrt(math.Ln2 / math.Pi)

// FilterMethod names a form filter.
type FilterMethod string

// Form filters.
const (
	// FilterRobust is the robust areal Gaussian regression filter of ISO
	// 16610-71: Gaussian regression reweighted by Tukey's biweight of the
	// residuals until the weights settle, so outliers and steps do not
	// pull the form. The default.
	FilterRobust FilterMethod = "robust"
	// FilterGaussian is the linear areal Gaussian filter of ISO 16610-61
	// (as a regression filter: edge-corrected at the rim).
	FilterGaussian FilterMethod = "gaussian"
)

// FilterOrder is the degree of the local polynomial a regression filter
// fits at each cell.
type FilterOrder int

// Regression orders. OrderAuto is the default: first order for both
// filters. Wherever the window is full and its weights symmetric, first
// order equals the zeroth-order filter of ISO 16610-71; at the rim it keeps
// planes exact (our documented edge treatment). Second order keeps
// quadrics exact too, at about 2.5 times the cost.
const (
	OrderAuto FilterOrder = iota
	Order0                // local constant (normalised convolution)
	Order1                // local plane: exact on planes, also at the rim
	Order2                // local quadric: exact on quadrics
)

// FilterOptions sets up Filter.
type FilterOptions struct {
	// CutoffM is the cut-off wavelength λc, m; 0 turns the filter off.
	CutoffM float64
	// Method is FilterRobust (when empty) or FilterGaussian.
	Method FilterMethod
	// Order is the regression order; OrderAuto picks the method's default.
	Order FilterOrder
	// MaxIterations bounds the robust filter's reweighting passes; 0
	// means 20.
	MaxIterations int
}

// FilterResult is a form surface and what the filter removed.
type FilterResult struct {
	// Form is the filtered surface, on the same grid and with the same cell
	// states as the input.
	Form *Surface
	// CutoffM is the cut-off wavelength λc, m (0: filter off).
	CutoffM float64
	// Method and Order say which filter ran (Order as the polynomial
	// degree 0, 1 or 2); Iterations counts its regression passes.
	Method     FilterMethod
	Order      int
	Iterations int
	// NoiseM is the RMS of raw − filtered over the Measured cells the
	// filter gave weight (the robust filter's zero-weight cells are
	// outliers, not noise), m.
	NoiseM float64
	// ZeroWeightCells counts the Measured cells the robust filter gave no
	// weight in the end.
	ZeroWeightCells int
}

// FormFilter low-pass filters the base cells of raw with the linear areal
// Gaussian filter of ISO 16610-61 at the cut-off wavelength cutoffM (m), as
// a first-order regression filter. The weighting function is
//
//	s(x, y) = 1/(α λc)² · exp(−π (x² + y²)/(α λc)²),  α = sqrt(ln 2 / π),
//
// applied separably along x and y and truncated at ±λc, where it has fallen
// to 7e-7 of its peak. Its transmission is exp(−π (α λc/λ)²): 50 % at
// λ = λc.
//
// At the rim the window holds fewer base cells. The filter is then taken as
// a normalised convolution of first order over the base cells (Measured and
// Filled) only: at each cell it fits a plane to the base cells in the
// window by least squares weighted by s, and takes that plane's height at
// the cell. Away from the rim this is the plain Gaussian filter; at the rim
// it keeps planes exact and, unlike zero-order normalisation, does not pull
// a dished or domed rim toward the interior by the local slope times the
// window's off-centre shift.
//
// cutoffM = 0 returns a copy of raw (filter off, NoiseM 0). A positive
// cut-off must span at least 4 cells, so that the sampled kernel has no
// aliasing to speak of. FormFilter is Filter with FilterGaussian.
func FormFilter(raw *Surface, cutoffM float64) (*FilterResult, error) {
	return Filter(raw, FilterOptions{CutoffM: cutoffM, Method: FilterGaussian})
}

// Filter separates the form of raw's base cells from noise and outliers
// with the regression filter opt names (see FormFilter for the weighting
// function, the cut-off and the rim).
//
// The robust filter (the default) is the robust Gaussian regression
// filter of ISO 16610-71 (areal; ISO/TS 16610-31 for profiles), after
// Brinkmann, Bodschwinna & Lemke (2001, Int. J. Mach. Tools Manuf. 41,
// 2153–2161; from memory): a first regression pass with weights from a
// median reference (see medianStartWeights; the standard starts with unit
// weights), then passes with the weights δ = (1 − (r/c)²)² for |r| < c, else 0, where r
// is raw − form and c = 4.4 × the median absolute deviation of r over the
// Measured cells (floored at 4.4 × 0.6745 µm, below any scanner's noise),
// until c changes by less than 0.5 % between passes (our choice) or
// MaxIterations passes. A spike or a step then moves the form by a small
// fraction of what it moves the linear filter.
func Filter(raw *Surface, opt FilterOptions) (*FilterResult, error) {
	if raw == nil {
		return nil, errors.New("scan: filter: nil surface")
	}
	if err := checkSurface(raw); err != nil {
		return nil, fmt.Errorf("scan: filter: %w", err)
	}
	cutoffM := opt.CutoffM
	if math.IsNaN(cutoffM) || math.IsInf(cutoffM, 0) || cutoffM < 0 {
		return nil, fmt.Errorf("scan: filter: cut-off %g m is not a finite non-negative length", cutoffM)
	}
	method := opt.Method
	if method == "" {
		method = FilterRobust
	}
	if method != FilterRobust && method != FilterGaussian {
		return nil, fmt.Errorf("scan: filter: unknown method %q (want %q or %q)", method, FilterRobust, FilterGaussian)
	}
	order := opt.Order
	if order == OrderAuto {
		order = Order1
	}
	if order < Order0 || order > Order2 {
		return nil, fmt.Errorf("scan: filter: regression order %d, want 0, 1 or 2", int(order)-1)
	}
	maxIt := opt.MaxIterations
	if maxIt == 0 {
		maxIt = 20
	}
	if maxIt < 0 {
		return nil, fmt.Errorf("scan: filter: %d iterations", maxIt)
	}
	if cutoffM == 0 {
		return &FilterResult{Form: raw.Clone(), Method: method, Order: int(order) - 1}, nil
	}
	if cutoffM < 4*raw.CellM {
		return nil, fmt.Errorf("scan: filter: cut-off %.3g mm is under 4 grid cells (cell %.3g mm); raise the cut-off or refine the grid",
			cutoffM*1e3, raw.CellM*1e3)
	}
	n := raw.Nx * raw.Ny
	w := make([]float64, n)
	nBase := 0
	for k := range w {
		if raw.InBase(k) {
			w[k] = 1
			nBase++
		}
	}
	if nBase == 0 {
		return nil, errors.New("scan: filter: surface has no base cells")
	}
	reg := newGaussRegression(raw.Nx, raw.Ny, cutoffM/raw.CellM, int(order)-1)
	form := raw.Clone()
	if method == FilterRobust {
		medianStartWeights(raw, cutoffM, w, nBase)
	}
	reg.apply(w, raw.ZM, form.ZM, raw.InBase)
	res := &FilterResult{Form: form, CutoffM: cutoffM, Method: method, Order: int(order) - 1, Iterations: 1}
	if method == FilterRobust {
		fillUnweighted(raw, form)
		robustPasses(raw, form, w, reg, maxIt, res)
	}
	var ss float64
	nm := 0
	for p := range n {
		if raw.State[p] == Measured && w[p] > 0 {
			r := raw.ZM[p] - form.ZM[p]
			ss += r * r
			nm++
		} else if raw.State[p] == Measured {
			res.ZeroWeightCells++
		}
	}
	if nm > 0 {
		res.NoiseM = math.Sqrt(ss / float64(nm))
	}
	return res, nil
}

// robustPasses reweights and refits form until the biweight scale settles
// (see Filter), leaving the final weights in w.
func robustPasses(raw, form *Surface, w []float64, reg *gaussRegression, maxIt int, res *FilterResult) {
	n := len(w)
	r := make([]float64, 0, n)
	cPrev := 0.0
	for res.Iterations < maxIt {
		r = r[:0]
		for p := range n {
			if raw.State[p] == Measured {
				r = append(r, raw.ZM[p]-form.ZM[p])
			}
		}
		c := BiweightC * max(madOf(r), outlierSigmaFloorM/madToSigma)
		if cPrev > 0 && math.Abs(c-cPrev) <= 5e-3*cPrev {
			break
		}
		cPrev = c
		parallelRows(n, func(p0, p1 int) { // each cell's weight on its own
			for p := p0; p < p1; p++ {
				if raw.InBase(p) {
					w[p] = biweight(raw.ZM[p]-form.ZM[p], c)
				}
			}
		})
		reg.apply(w, raw.ZM, form.ZM, raw.InBase)
		res.Iterations++
		fillUnweighted(raw, form)
	}
}

// fillUnweighted gives a base cell whose whole window lost its weight
// (form NaN) the raw height.
func fillUnweighted(raw, form *Surface) {
	parallelRows(len(form.ZM), func(p0, p1 int) {
		for p := p0; p < p1; p++ {
			if raw.InBase(p) && math.IsNaN(form.ZM[p]) {
				form.ZM[p] = raw.ZM[p]
			}
		}
	})
}

// medianStartWeights sets the robust filter's first weights: the biweight,
// with twice the usual c, of each base cell's residual from a median
// reference (the median of the cells in 1/8-cut-off blocks, then of those
// block medians over 7×7 blocks, interpolated bilinearly; see refStart).
// A median keeps steps and ignores spikes, so the first regression pass
// does not smear them (a documented departure from ISO 16610-71's linear
// first pass, which a step or a cluster of outliers can trap). nBase is
// the number of base cells.
func medianStartWeights(raw *Surface, cutoffM float64, w []float64, nBase int) {
	x, y, z := make([]float64, 0, nBase), make([]float64, 0, nBase), make([]float64, 0, nBase)
	for p := range w {
		if raw.InBase(p) {
			x = append(x, raw.X(p%raw.Nx))
			y = append(y, raw.Y(p/raw.Nx))
			z = append(z, raw.ZM[p])
		}
	}
	g := newRefGrid(x, y, max(cutoffM/refCellsPerCutoff, raw.CellM))
	cellOf := make([]int32, len(z))
	for i := range z {
		cellOf[i] = int32(g.cell(x[i], y[i]))
	}
	byCell, start := samplesByCell(cellOf, g.nx*g.ny)
	f := refStart(g, byCell, start, z)
	r := make([]float64, len(z))
	residuals(g, f, x, y, z, r)
	c := 2 * BiweightC * max(madOf(r), outlierSigmaFloorM/madToSigma)
	t := 0
	for p := range w {
		if raw.InBase(p) {
			w[p] = 0
			if !math.IsNaN(r[t]) {
				w[p] = biweight(r[t], c)
			}
			t++
		}
	}
}

// checkSurface reports a malformed surface (sizes, cell length).
func checkSurface(s *Surface) error {
	if s.Nx <= 0 || s.Ny <= 0 || len(s.ZM) != s.Nx*s.Ny || len(s.State) != s.Nx*s.Ny {
		return fmt.Errorf("malformed surface (%d×%d cells, %d heights, %d states)", s.Nx, s.Ny, len(s.ZM), len(s.State))
	}
	if !(s.CellM > 0) || math.IsInf(s.CellM, 0) {
		return fmt.Errorf("cell length %g m is not positive and finite", s.CellM)
	}
	return nil
}
