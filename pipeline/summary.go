package pipeline

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"path"
	"sort"
	"strconv"
	"strings"
)

// SchemaSummary names the version of the batch summary contract.
const SchemaSummary = "gapflux.summary/1"

// Row statuses of a batch summary.
const (
	StatusOK     = "ok"
	StatusFailed = "failed"
	StatusOut    = "out-of-tolerance"
	StatusNotRun = "not-run"
	// StatusRejected: the data-quality gate stopped the scan before pose
	// and heat (report.json's quality section says why).
	StatusRejected = "rejected"
	// StatusInconclusive: under guarded acceptance a limit's 95 % interval
	// straddles it and none lies wholly beyond (report.json's verdict).
	StatusInconclusive = "inconclusive"
)

// SummaryRow is one scan's line in the batch summary. Figures are pointers so
// that a failed scan leaves them empty rather than zero.
type SummaryRow struct {
	Path                   string   `json:"path"`
	Status                 string   `json:"status"`
	Error                  string   `json:"error"`
	Quality                string   `json:"quality"`  // the data-quality gate: ok, warn or reject
	Warnings               *int     `json:"warnings"` // entries in the report's warnings
	PartNumber             string   `json:"part_number"`
	Lot                    string   `json:"lot"`
	DiameterMM             *float64 `json:"diameter_mm"`
	FlatnessMZMM           *float64 `json:"flatness_mz_mm"`
	FlatnessLSMM           *float64 `json:"flatness_ls_mm"`
	ConcavityMM            *float64 `json:"concavity_mm"`
	ConcavityPctOfDiameter *float64 `json:"concavity_pct_of_diameter"`
	Shape                  string   `json:"shape"`
	NoiseUM                *float64 `json:"noise_um"`
	CoveragePct            *float64 `json:"coverage_pct"`
	TiltDeg                *float64 `json:"tilt_deg"`
	Rocks                  *bool    `json:"rocks"`
	RockMM                 *float64 `json:"rock_mm"`
	ContactAreaPct         *float64 `json:"contact_area_pct"`
	MeanGapMM              *float64 `json:"mean_gap_mm"`
	MaxGapMM               *float64 `json:"max_gap_mm"`
	PowerW                 *float64 `json:"power_w"`
	FlatPowerW             *float64 `json:"flat_power_w"`
	LossPct                *float64 `json:"loss_pct"`
	GlassMaxC              *float64 `json:"glass_max_c"`
	TimeS                  *float64 `json:"time_s"`
	FlatTimeS              *float64 `json:"flat_time_s"`
	ExtraTimePct           *float64 `json:"extra_time_pct"`
	ExtraEnergyKJ          *float64 `json:"extra_energy_kj"`
	// The 95 % coverage intervals (uncertainty.mode not "off").
	LossPctLow      *float64 `json:"loss_pct_low"`
	LossPctHigh     *float64 `json:"loss_pct_high"`
	ConcavityMMLow  *float64 `json:"concavity_mm_low"`
	ConcavityMMHigh *float64 `json:"concavity_mm_high"`
	Pass            *bool    `json:"pass"`
	Reasons         string   `json:"reasons"`
}

// Summary is the batch summary: rows sorted by path, and counts derived from
// them. It holds no timestamps, durations or machine names, so the same
// folder gives the same bytes wherever it ran.
type Summary struct {
	Schema string         `json:"schema"`
	Input  *SummaryInput  `json:"input,omitempty"`
	Counts map[string]int `json:"counts"`
	Rows   []SummaryRow   `json:"rows"`
}

// SummaryInput identifies the batch a summary belongs to: its shard and the
// whole folder's entry list before sharding (count and hash), so that merge
// can tell a shard missing, given twice or from another folder. An unsharded
// run, and a merge, record shard 1 of 1.
type SummaryInput struct {
	ShardK        int    `json:"shard_k"`
	ShardN        int    `json:"shard_n"`
	Entries       int    `json:"entries"`        // scans and problem entries in the whole folder
	EntriesSHA256 string `json:"entries_sha256"` // SHA-256 of the sorted entry paths, each ended by a NUL byte
}

// NewSummary sorts rows by path and counts them by status.
func NewSummary(rows []SummaryRow) *Summary {
	rows = append([]SummaryRow(nil), rows...)
	sort.Slice(rows, func(i, j int) bool { return rows[i].Path < rows[j].Path })
	counts := map[string]int{StatusOK: 0, StatusFailed: 0, StatusOut: 0, StatusInconclusive: 0, StatusRejected: 0, StatusNotRun: 0, "total": len(rows)}
	for _, r := range rows {
		counts[r.Status]++
	}
	return &Summary{Schema: SchemaSummary, Counts: counts, Rows: rows}
}

// RowFromReport builds a summary row from a scan's report.
func RowFromReport(rel string, rep *Report) SummaryRow {
	row := SummaryRow{Path: rel, Status: StatusOK}
	f := func(v float64) *float64 { return &v }
	b := func(v bool) *bool { return &v }
	nw := len(rep.Warnings)
	row.Warnings = &nw
	if q := rep.Quality; q != nil {
		row.Quality = q.Status
		if rep.Rejected() {
			row.Status, row.Reasons = StatusRejected, q.first()
		}
	}
	if g := rep.Geometry; g != nil {
		row.DiameterMM, row.FlatnessMZMM, row.FlatnessLSMM = f(g.DiameterMM), f(g.FlatnessMZMM), f(g.FlatnessLSMM)
		row.ConcavityMM, row.ConcavityPctOfDiameter = f(g.ConcavityMM), f(g.ConcavityPctOfDiameter)
		row.Shape, row.NoiseUM, row.CoveragePct = g.Shape, f(g.NoiseUM), f(g.CoveragePct)
	}
	if p := rep.Pose; p != nil {
		row.TiltDeg, row.Rocks, row.RockMM = f(p.TiltDeg), b(p.Rocks), f(p.RockMM)
	}
	if g := rep.Gap; g != nil {
		row.ContactAreaPct, row.MeanGapMM, row.MaxGapMM = f(g.ContactAreaPct), f(g.MeanGapMM), f(g.MaxGapMM)
	}
	if h := rep.Heat; h != nil {
		row.PowerW, row.FlatPowerW, row.LossPct = f(h.PowerW), f(h.FlatPowerW), f(h.LossPct)
		row.GlassMaxC = h.GlassMaxC
	}
	if h := rep.Heatup; h != nil {
		row.TimeS, row.FlatTimeS = f(h.TimeS), f(h.FlatTimeS)
		row.ExtraTimePct, row.ExtraEnergyKJ = f(h.ExtraTimePct), f(h.ExtraEnergyKJ)
	}
	if u := rep.Uncertainty; u != nil {
		if l := u.LossPct; l != nil {
			row.LossPctLow, row.LossPctHigh = f(l.Low), f(l.High)
		}
		if c := u.ConcavityMM; c != nil {
			row.ConcavityMMLow, row.ConcavityMMHigh = f(c.Low), f(c.High)
		}
	}
	if v := rep.Verdict; v != nil {
		row.Pass = b(v.Pass)
		row.Reasons = strings.Join(v.Reasons, "; ")
		switch {
		case v.Result == ResultInconclusive:
			row.Status = StatusInconclusive
		case !v.Pass:
			row.Status = StatusOut
		}
	}
	return row
}

// summaryColumns are the CSV columns, in the order a spreadsheet reads
// best: identity (path, part_number, lot), status and a short reason,
// verdict, data quality, then the figures (each header with its unit), and
// last the full error and verdict texts.
var summaryColumns = []string{
	"path", "part_number", "lot", "status", "reason", "pass", "quality", "warnings",
	"diameter_mm", "flatness_mz_mm", "flatness_ls_mm", "concavity_mm", "concavity_pct_of_diameter", "shape",
	"noise_um", "coverage_pct", "tilt_deg", "rocks", "rock_mm",
	"contact_area_pct", "mean_gap_mm", "max_gap_mm",
	"power_w", "flat_power_w", "loss_pct", "glass_max_c",
	"time_s", "flat_time_s", "extra_time_pct", "extra_energy_kj",
	"loss_pct_low", "loss_pct_high", "concavity_mm_low", "concavity_mm_high",
	"error", "reasons",
}

// reasonRunes bounds the short reason column.
const reasonRunes = 80

// ShortReason is a row's reason in a few words for the summary's reason
// column: empty for an ok row; else the error (failed), the data-quality
// finding (rejected), the first tolerance missed and how many more
// (out-of-tolerance), or that the batch was interrupted (not-run); at most
// 80 characters, without the scan's name the row already gives. The full texts stay in the error and reasons columns.
func (r SummaryRow) ShortReason() string {
	var s string
	switch r.Status {
	case StatusOK:
		return ""
	case StatusFailed:
		// The row names the scan already.
		s = strings.TrimPrefix(r.Error, path.Base(r.Path)+": ")
		s = strings.TrimPrefix(s, r.Path+": ")
	case StatusNotRun:
		s = "interrupted: run the same batch again"
	default:
		parts := strings.Split(r.Reasons, "; ")
		s = parts[0]
		if len(parts) > 1 {
			more := fmt.Sprintf(" (+%d more)", len(parts)-1)
			return clipRunes(s, reasonRunes-len(more)) + more
		}
	}
	return clipRunes(s, reasonRunes)
}

// clipRunes cuts s to at most n runes, ending it with "…" when cut.
func clipRunes(s string, n int) string {
	rs := []rune(s)
	if len(rs) <= n {
		return s
	}
	return strings.TrimSpace(string(rs[:n-1])) + "…"
}

// WriteCSV writes the summary as CSV with a header row.
func (s *Summary) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(summaryColumns); err != nil {
		return err
	}
	for _, r := range s.Rows {
		warnings := ""
		if r.Warnings != nil {
			warnings = strconv.Itoa(*r.Warnings)
		}
		rec := []string{r.Path, r.PartNumber, r.Lot, r.Status, r.ShortReason(), fbool(r.Pass), r.Quality, warnings,
			fnum(r.DiameterMM, 3), fnum(r.FlatnessMZMM, 4), fnum(r.FlatnessLSMM, 4), fnum(r.ConcavityMM, 4),
			fnum(r.ConcavityPctOfDiameter, 4), r.Shape,
			fnum(r.NoiseUM, 2), fnum(r.CoveragePct, 2), fnum(r.TiltDeg, 4), fbool(r.Rocks), fnum(r.RockMM, 4),
			fnum(r.ContactAreaPct, 3), fnum(r.MeanGapMM, 4), fnum(r.MaxGapMM, 4),
			fnum(r.PowerW, 2), fnum(r.FlatPowerW, 2), fnum(r.LossPct, 3), fnum(r.GlassMaxC, 2),
			fnum(r.TimeS, 1), fnum(r.FlatTimeS, 1), fnum(r.ExtraTimePct, 3), fnum(r.ExtraEnergyKJ, 3),
			fnum(r.LossPctLow, 3), fnum(r.LossPctHigh, 3), fnum(r.ConcavityMMLow, 4), fnum(r.ConcavityMMHigh, 4),
			r.Error, r.Reasons,
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// WriteJSON writes the summary as indented JSON.
func (s *Summary) WriteJSON(w io.Writer) error {
	b, err := json.MarshalIndent(s, "", "  ")
	if err != nil {
		return err
	}
	_, err = w.Write(append(b, '\n'))
	return err
}

// ReadSummaryJSON decodes a summary written by WriteJSON.
func ReadSummaryJSON(r io.Reader, name string) (*Summary, error) {
	var s Summary
	dec := json.NewDecoder(r)
	dec.DisallowUnknownFields()
	if err := dec.Decode(&s); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	if s.Schema != SchemaSummary {
		return nil, fmt.Errorf("%s: schema %q, want %q", name, s.Schema, SchemaSummary)
	}
	return &s, nil
}

// Table renders the summary as a fixed-width text table for a terminal.
func (s *Summary) Table() string {
	var buf bytes.Buffer
	fmt.Fprintf(&buf, "%-28s %-16s %-7s %8s %9s %8s %6s %8s %7s %9s %s\n",
		"scan", "status", "quality", "diam_mm", "concav_mm", "mz_mm", "rocks", "loss_pct", "glass_c", "extra_pct", "note")
	for _, r := range s.Rows {
		note := r.ShortReason()
		fmt.Fprintf(&buf, "%-28s %-16s %-7s %8s %9s %8s %6s %8s %7s %9s %s\n",
			clip(r.Path, 28), r.Status, r.Quality, fnum(r.DiameterMM, 1), fnum(r.ConcavityMM, 3), fnum(r.FlatnessMZMM, 3),
			fbool(r.Rocks), fnum(r.LossPct, 1), fnum(r.GlassMaxC, 0), fnum(r.ExtraTimePct, 1), note)
	}
	return buf.String()
}

func clip(s string, n int) string {
	if len(s) <= n {
		return s
	}
	return "…" + s[len(s)-n+1:]
}

func fnum(v *float64, prec int) string {
	if v == nil || math.IsNaN(*v) || math.IsInf(*v, 0) {
		return ""
	}
	return num(*v, prec)
}

func fbool(v *bool) string {
	if v == nil {
		return ""
	}
	return strconv.FormatBool(*v)
}

// roundTo rounds x to prec decimals, turning -0 into 0.
func roundTo(x float64, prec int) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return x
	}
	p := math.Pow(10, float64(prec))
	r := math.Round(x*p) / p
	if r == 0 {
		return 0
	}
	return r
}

// roundSig rounds x to n significant digits.
func roundSig(x float64, n int) float64 {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return x
	}
	return roundTo(x, n-1-int(math.Floor(math.Log10(math.Abs(x)))))
}
