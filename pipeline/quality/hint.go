package quality

import "math"

// metresPer is the length of one unit of each unit a scan may be read in,
// m (the inch is exactly 25.4 mm: international yard and pound agreement,
// 1959).
var metresPer = map[string]float64{"mm": 1e-3, "m": 1, "um": 1e-6, "in": 0.0254}

// hintOrder fixes the order candidates are tried in, for determinism.
var hintOrder = []string{"mm", "in", "m", "um"}

// unitWords names each unit in a sentence.
var unitWords = map[string]string{"mm": "millimetres", "m": "metres", "um": "micrometres", "in": "inches"}

// UnitsHint guesses the unit a scan's file was really written in, from its
// base diameter diameterM (m) as read in unit: it returns the unit ("mm",
// "m", "um" or "in") under which the diameter falls within the plausible
// range [l.DiameterWarnMinM, l.DiameterWarnMaxM], and false when none does
// or the diameter is plausible as read. Of several candidates it takes the
// one nearest the range's geometric middle. A 200 mm base written in inches
// and read as mm measures 7.87 mm; read as inches it measures 200 mm, so the
// hint is "in".
func UnitsHint(diameterM float64, unit string, l Limits) (string, bool) {
	from, ok := metresPer[unit]
	if !ok || !(diameterM > 0) || math.IsInf(diameterM, 0) {
		return "", false
	}
	lo, hi := l.DiameterWarnMinM, l.DiameterWarnMaxM
	if diameterM >= lo && diameterM <= hi {
		return "", false
	}
	mid := math.Log(math.Sqrt(lo * hi))
	best, bestDist := "", math.Inf(1)
	for _, u := range hintOrder {
		if u == unit {
			continue
		}
		d := diameterM * metresPer[u] / from
		if d < lo || d > hi {
			continue
		}
		if dist := math.Abs(math.Log(d) - mid); dist < bestDist {
			best, bestDist = u, dist
		}
	}
	return best, best != ""
}
