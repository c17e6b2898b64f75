package contact

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"gapflux/scan"
)

// Hob surfaces on the pan's grid. A hob surface has the pan's grid and
// base frame: z = hob top height, m, +z up (into the pan). Its cells are
// Measured where the pan's are in the base (Filled where a resampled hob
// scan had only filled data) and Outside elsewhere, with NaN heights there.

// FlatHob returns the ideal flat hob z = 0 on like's grid: height 0 and
// State Measured on every base cell of like, Outside elsewhere.
func FlatHob(like *scan.Surface) *scan.Surface {
	h := scan.NewSurface(like.Nx, like.Ny, like.CellM, like.X0M, like.Y0M)
	for k, st := range like.State {
		if st != scan.Outside {
			h.ZM[k] = 0
			h.State[k] = scan.Measured
		}
	}
	return h
}

// RadialHob returns a rotationally symmetric hob on like's grid: the hob
// top height z(r), m, interpolated linearly in the profile (rM, zM), with r
// the distance from the hob's centre. The pan's centre sits at offsetM from
// the hob's centre, so the hob's centre is at −offsetM in the pan's base
// frame. Before the first and beyond the last profile radius z holds the
// end value. rM must start at r ≥ 0 and increase strictly; all values must
// be finite.
func RadialHob(like *scan.Surface, rM, zM []float64, offsetM [2]float64) (*scan.Surface, error) {
	if err := checkProfile(rM, zM); err != nil {
		return nil, err
	}
	if !finite64(offsetM[0]) || !finite64(offsetM[1]) {
		return nil, fmt.Errorf("contact: radial hob: offset (%g, %g) m is not finite", offsetM[0], offsetM[1])
	}
	h := scan.NewSurface(like.Nx, like.Ny, like.CellM, like.X0M, like.Y0M)
	for j := 0; j < like.Ny; j++ {
		y := like.Y(j) + offsetM[1]
		for i := 0; i < like.Nx; i++ {
			k := j*like.Nx + i
			if like.State[k] == scan.Outside {
				continue
			}
			h.ZM[k] = interpProfile(rM, zM, math.Hypot(like.X(i)+offsetM[0], y))
			h.State[k] = scan.Measured
		}
	}
	return h, nil
}

func checkProfile(rM, zM []float64) error {
	if len(rM) != len(zM) {
		return fmt.Errorf("contact: radial hob: %d radii and %d heights", len(rM), len(zM))
	}
	if len(rM) == 0 {
		return errors.New("contact: radial hob: empty profile")
	}
	for i := range rM {
		switch {
		case !finite64(rM[i]) || !finite64(zM[i]):
			return fmt.Errorf("contact: radial hob: point %d (r %g m, z %g m) is not finite", i, rM[i], zM[i])
		case rM[i] < 0:
			return fmt.Errorf("contact: radial hob: point %d: negative radius %g m", i, rM[i])
		case i > 0 && rM[i] <= rM[i-1]:
			return fmt.Errorf("contact: radial hob: point %d: radius %g m does not increase (previous %g m)", i, rM[i], rM[i-1])
		}
	}
	return nil
}

// interpProfile interpolates z(r) linearly, holding the end values outside.
func interpProfile(rM, zM []float64, r float64) float64 {
	n := len(rM)
	if r <= rM[0] {
		return zM[0]
	}
	if r >= rM[n-1] {
		return zM[n-1]
	}
	lo, hi := 0, n-1 // rM[lo] < r < rM[hi]
	for hi-lo > 1 {
		m := (lo + hi) / 2
		if rM[m] <= r {
			lo = m
		} else {
			hi = m
		}
	}
	t := (r - rM[lo]) / (rM[hi] - rM[lo])
	return zM[lo] + t*(zM[hi]-zM[lo])
}

// ReadRadialProfile reads a radial hob profile: CSV with the header
// "r_mm,z_mm" (case and surrounding spaces ignored) and one r, z pair per
// line, in mm; blank lines and lines starting with '#' are skipped. It
// returns the profile in metres. Radii must be finite, non-negative and
// strictly increasing. Errors name the input (name) and the line.
func ReadRadialProfile(r io.Reader, name string) (rM, zM []float64, err error) {
	rM, zMM, err := ReadProfile(r, name, "z_mm")
	for i := range zMM {
		zMM[i] *= 1e-3
	}
	return rM, zMM, err
}

// ReadProfile reads a two-column radial profile: CSV with the header
// "r_mm,<col>" (case and surrounding spaces ignored), then one r, value
// pair per line; blank lines and lines starting with '#' are skipped. It
// returns the radii in metres and the values as written. Radii must be
// finite, non-negative and strictly increasing. Errors name the input
// (name) and the line.
func ReadProfile(r io.Reader, name, col string) (rM, v []float64, err error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	header := true
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, nil, fmt.Errorf("%s:%d: %w", name, pe.Line, pe.Err)
			}
			return nil, nil, fmt.Errorf("%s: %w", name, err)
		}
		line, _ := cr.FieldPos(0)
		if len(rec) != 2 {
			return nil, nil, fmt.Errorf("%s:%d: %d fields, want 2 (r_mm, %s)", name, line, len(rec), col)
		}
		if header {
			header = false
			if !strings.EqualFold(strings.TrimSpace(rec[0]), "r_mm") || !strings.EqualFold(strings.TrimSpace(rec[1]), col) {
				// The message never repeats the file's content.
				return nil, nil, fmt.Errorf("%s:%d: header is not \"r_mm,%s\": name the columns so", name, line, col)
			}
			continue
		}
		var x [2]float64
		for f := range rec {
			x[f], err = strconv.ParseFloat(strings.TrimSpace(rec[f]), 64)
			if err != nil || !finite64(x[f]) {
				c := [2]string{"r_mm", col}[f]
				return nil, nil, fmt.Errorf("%s:%d: %s is not a finite number", name, line, c)
			}
		}
		if x[0] < 0 {
			return nil, nil, fmt.Errorf("%s:%d: negative radius %g mm", name, line, x[0])
		}
		if n := len(rM); n > 0 && x[0]*1e-3 <= rM[n-1] {
			return nil, nil, fmt.Errorf("%s:%d: radius %g mm does not increase (previous %g mm)", name, line, x[0], rM[n-1]*1e3)
		}
		rM = append(rM, x[0]*1e-3)
		v = append(v, x[1])
	}
	if header {
		return nil, nil, fmt.Errorf("%s: empty profile: no \"r_mm,%s\" header", name, col)
	}
	if len(rM) == 0 {
		return nil, nil, fmt.Errorf("%s: profile has a header but no points", name)
	}
	return rM, v, nil
}

// ResampleHob resamples a hob height field (a scan of the hob in its own
// frame, top up) onto like's grid by bilinear interpolation. The pan's
// centre sits at offsetM in the hob's frame, so pan point (x, y) is hob
// point (x + offsetM[0], y + offsetM[1]). A resampled cell is Measured when
// every hob cell it draws on is Measured, else Filled. It returns an error
// if any base cell of like falls outside the hob's grid or draws on a hob
// cell that is Outside.
func ResampleHob(hob *scan.Surface, like *scan.Surface, offsetM [2]float64) (*scan.Surface, error) {
	if err := checkSurface("hob", hob); err != nil {
		return nil, err
	}
	if !finite64(offsetM[0]) || !finite64(offsetM[1]) {
		return nil, fmt.Errorf("contact: resample hob: offset (%g, %g) m is not finite", offsetM[0], offsetM[1])
	}
	out := scan.NewSurface(like.Nx, like.Ny, like.CellM, like.X0M, like.Y0M)
	// Positions within a millionth of a cell of the hob grid's edge count as on it.
	slack := 1e-6
	for j := 0; j < like.Ny; j++ {
		y := like.Y(j) + offsetM[1]
		for i := 0; i < like.Nx; i++ {
			k := j*like.Nx + i
			if like.State[k] == scan.Outside {
				continue
			}
			x := like.X(i) + offsetM[0]
			fx := (x - hob.X0M) / hob.CellM
			fy := (y - hob.Y0M) / hob.CellM
			if fx < -slack || fy < -slack || fx > float64(hob.Nx-1)+slack || fy > float64(hob.Ny-1)+slack {
				return nil, fmt.Errorf("contact: resample hob: pan cell (%d, %d) at (%.3f, %.3f) mm lies outside the hob scan",
					i, j, like.X(i)*1e3, like.Y(j)*1e3)
			}
			i0 := min(max(int(math.Floor(fx)), 0), max(hob.Nx-2, 0))
			j0 := min(max(int(math.Floor(fy)), 0), max(hob.Ny-2, 0))
			tx := min(max(fx-float64(i0), 0), 1)
			ty := min(max(fy-float64(j0), 0), 1)
			if hob.Nx == 1 {
				tx = 0
			}
			if hob.Ny == 1 {
				ty = 0
			}
			var z float64
			st := scan.Measured
			for c := 0; c < 4; c++ {
				ii, jj := i0+c%2, j0+c/2
				w := [2]float64{1 - tx, tx}[c%2] * [2]float64{1 - ty, ty}[c/2]
				if w == 0 {
					continue
				}
				kk := jj*hob.Nx + ii
				switch hob.State[kk] {
				case scan.Outside:
					return nil, fmt.Errorf("contact: resample hob: pan cell (%d, %d) at (%.3f, %.3f) mm needs hob cell (%d, %d), which the hob scan does not cover",
						i, j, like.X(i)*1e3, like.Y(j)*1e3, ii, jj)
				case scan.Filled:
					st = scan.Filled
				}
				z += w * hob.ZM[kk]
			}
			if !finite64(z) {
				return nil, fmt.Errorf("contact: resample hob: pan cell (%d, %d): hob height is not finite", i, j)
			}
			out.ZM[k] = z
			out.State[k] = st
		}
	}
	return out, nil
}
