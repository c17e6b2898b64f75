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

// FilterResult is a form surface and what the filter removed.
type FilterResult struct {
	// Form is the filtered surface, on the same grid and with the same cell
	// states as the input.
	Form *Surface
	// CutoffM is the cut-off wavelength λc, m (0: filter off).
	CutoffM float64
	// NoiseM is the RMS of raw − filtered over the Measured cells, m.
	NoiseM float64
}

// FormFilter low-pass filters the base cells of raw with the areal Gaussian
// filter of ISO 16610-61 at the cut-off wavelength cutoffM (m). The
// weighting function is
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
// aliasing to speak of.
func FormFilter(raw *Surface, cutoffM float64) (*FilterResult, error) {
	if raw == nil {
		return nil, errors.New("scan: filter: nil surface")
	}
	if err := checkSurface(raw); err != nil {
		return nil, fmt.Errorf("scan: filter: %w", err)
	}
	if math.IsNaN(cutoffM) || math.IsInf(cutoffM, 0) || cutoffM < 0 {
		return nil, fmt.Errorf("scan: filter: cut-off %g m is not a finite non-negative length", cutoffM)
	}
	if cutoffM == 0 {
		return &FilterResult{Form: raw.Clone()}, nil
	}
	if cutoffM < 4*raw.CellM {
		return nil, fmt.Errorf("scan: filter: cut-off %.3g mm is under 4 grid cells (cell %.3g mm); raise the cut-off or refine the grid",
			cutoffM*1e3, raw.CellM*1e3)
	}
	nx, ny := raw.Nx, raw.Ny
	nBase := 0
	for k := range raw.State {
		if raw.InBase(k) {
			nBase++
		}
	}
	if nBase == 0 {
		return nil, errors.New("scan: filter: surface has no base cells")
	}

	// Kernel in cell units: g0 = w(k), g1 = k·w(k), g2 = k²·w(k).
	half := int(math.Floor(cutoffM/raw.CellM + 1e-9))
	g0 := make([]float64, 2*half+1)
	g1 := make([]float64, 2*half+1)
	g2 := make([]float64, 2*half+1)
	scale := raw.CellM / (GaussianAlpha * cutoffM)
	for k := -half; k <= half; k++ {
		u := float64(k) * scale
		w := math.Exp(-math.Pi * u * u)
		g0[k+half] = w
		g1[k+half] = float64(k) * w
		g2[k+half] = float64(k*k) * w
	}

	n := nx * ny
	m := make([]float64, n)
	mz := make([]float64, n)
	for k := range m {
		if raw.InBase(k) {
			m[k] = 1
			mz[k] = raw.ZM[k]
		}
	}
	// Row pass: moments along x.
	r0, r1, r2 := make([]float64, n), make([]float64, n), make([]float64, n)
	rz0, rz1 := make([]float64, n), make([]float64, n)
	for j := range ny {
		row := j * nx
		for i := range nx {
			lo, hi := max(-half, -i), min(half, nx-1-i)
			var s0, s1, s2, sz0, sz1 float64
			for k := lo; k <= hi; k++ {
				q := row + i + k
				if m[q] == 0 {
					continue
				}
				t := k + half
				s0 += g0[t]
				s1 += g1[t]
				s2 += g2[t]
				sz0 += g0[t] * mz[q]
				sz1 += g1[t] * mz[q]
			}
			p := row + i
			r0[p], r1[p], r2[p], rz0[p], rz1[p] = s0, s1, s2, sz0, sz1
		}
	}
	// Column pass: M_pq = Σ w dx^p dy^q over base cells, Z_p = Σ w d^p z.
	m00, m10, m01 := make([]float64, n), make([]float64, n), make([]float64, n)
	m20, m11, m02 := make([]float64, n), make([]float64, n), make([]float64, n)
	z00, z10, z01 := make([]float64, n), make([]float64, n), make([]float64, n)
	for j := range ny {
		out := j * nx
		lo, hi := max(-half, -j), min(half, ny-1-j)
		for k := lo; k <= hi; k++ {
			t := k + half
			w0, w1, w2 := g0[t], g1[t], g2[t]
			in := (j + k) * nx
			a0, a1, a2 := r0[in:in+nx], r1[in:in+nx], r2[in:in+nx]
			b0, b1 := rz0[in:in+nx], rz1[in:in+nx]
			o00, o10, o01 := m00[out:out+nx], m10[out:out+nx], m01[out:out+nx]
			o20, o11, o02 := m20[out:out+nx], m11[out:out+nx], m02[out:out+nx]
			q00, q10, q01 := z00[out:out+nx], z10[out:out+nx], z01[out:out+nx]
			for i := range nx {
				if a0[i] == 0 {
					continue
				}
				o00[i] += w0 * a0[i]
				o01[i] += w1 * a0[i]
				o02[i] += w2 * a0[i]
				o10[i] += w0 * a1[i]
				o11[i] += w1 * a1[i]
				o20[i] += w0 * a2[i]
				q00[i] += w0 * b0[i]
				q01[i] += w1 * b0[i]
				q10[i] += w0 * b1[i]
			}
		}
	}

	form := raw.Clone()
	var ss float64
	nm := 0
	for p := range n {
		if !raw.InBase(p) {
			continue
		}
		v := z00[p] / m00[p]
		// Weighted plane fit z ≈ β0 + β1 dx + β2 dy: solve for β0.
		a, b, c := m00[p], m10[p], m01[p]
		d, e, f := m20[p], m11[p], m02[p]
		c00 := d*f - e*e
		c01 := c*e - b*f
		c02 := b*e - c*d
		det := a*c00 + b*c01 + c*c02
		if det > 1e-9*a*d*f {
			v = (z00[p]*c00 + z10[p]*c01 + z01[p]*c02) / det
		}
		form.ZM[p] = v
		if raw.State[p] == Measured {
			r := raw.ZM[p] - v
			ss += r * r
			nm++
		}
	}
	res := &FilterResult{Form: form, CutoffM: cutoffM}
	if nm > 0 {
		res.NoiseM = math.Sqrt(ss / float64(nm))
	}
	return res, nil
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
