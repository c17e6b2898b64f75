package repeat

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"strconv"
)

// CSVHeader is the header of repeat.csv. The figure's unit is in the
// figure's name and in the unit column; mean, s_r, r, sigma_r_low,
// sigma_r_high and u_rms are in that unit, s_r_over_u has none.
var CSVHeader = []string{"figure", "unit", "bases", "n", "mean", "s_r", "dof", "r", "sigma_r_low", "sigma_r_high",
	"u_rms", "s_r_over_u", "coverage", "within_interval", "with_interval", "value_outside_interval", "note"}

// CSV is repeat.csv: one row per figure, in the study's order. A figure
// without repeatability leaves its numbers empty and says why in note; mean
// is empty when several bases are pooled (repeat.json has each base's).
func (st *Study) CSV() ([]byte, error) {
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	if err := w.Write(CSVHeader); err != nil {
		return nil, err
	}
	for _, f := range st.Figures {
		rec := []string{f.Name, f.Unit}
		if s := f.Stats; s != nil {
			rec = append(rec, strconv.Itoa(s.Bases), strconv.Itoa(s.N), optNum(s.Mean), num(s.SR), strconv.Itoa(s.DOF), num(s.R),
				num(s.SigmaLow), num(s.SigmaHigh), optNum(s.URMS), optNum(s.Ratio), s.Coverage,
				strconv.Itoa(s.Within), strconv.Itoa(s.WithInterval), strconv.Itoa(s.ValueOutside), f.Note)
		} else {
			rec = append(rec, "", "", "", "", "", "", "", "", "", "", "", "", "", "", f.Note)
		}
		if err := w.Write(rec); err != nil {
			return nil, err
		}
	}
	w.Flush()
	return b.Bytes(), w.Error()
}

// JSON is repeat.json, indented, ending in a newline; ">=" and the like
// are written as they are, not as HTML escapes.
func (st *Study) JSON() ([]byte, error) {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(st); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

// num formats a number with 6 significant digits, the shortest way.
func num(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }

func optNum(v *float64) string {
	if v == nil {
		return ""
	}
	return num(*v)
}
