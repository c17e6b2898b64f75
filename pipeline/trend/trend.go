// Package trend draws the control charts of the history database: for each
// part number, the individuals and moving-range chart (package spc) of one
// figure over every batch recorded, as PNG, SVG and one CSV.
package trend

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"time"

	"gapflux/pipeline/history"
	"gapflux/pipeline/spc"
)

// Defaults of Options.
const (
	DefaultFigure   = "loss_pct"
	DefaultBaseline = 20 // points; common practice for individuals charts (Montgomery 2013, §6.4)
)

// Options selects what to chart.
type Options struct {
	History  string   // history database (must exist)
	Parts    []string // part numbers; nil charts every part the history holds
	Figure   string   // a history.Figures name; "" is DefaultFigure
	Baseline int      // points the limits come from; 0 is DefaultBaseline
}

// PartChart is one part number's chart.
type PartChart struct {
	Part   string
	Figure string
	Points []history.Point // in the order measured
	// Chart is nil when the part has fewer than 2 points (no moving range).
	Chart *spc.Chart
}

// Signals counts the points that break a rule or whose moving range is
// above its limit.
func (pc *PartChart) Signals() int {
	n := 0
	if pc.Chart != nil {
		for i := range pc.Chart.Signals {
			if len(pc.Chart.Signals[i]) > 0 || pc.Chart.MRSignals[i] {
				n++
			}
		}
	}
	return n
}

// Labels are the chart's title and axis label.
func (pc *PartChart) Labels() spc.Labels {
	return spc.Labels{Title: "part " + pc.Part + ": " + pc.Figure, Unit: pc.Figure}
}

// SVG draws the chart as an SVG document, for a page to inline; nil when
// there is no chart.
func (pc *PartChart) SVG() ([]byte, error) {
	if pc.Chart == nil {
		return nil, nil
	}
	var b bytes.Buffer
	err := pc.Chart.Write(&b, "svg", pc.Labels())
	return b.Bytes(), err
}

// Load reads the series of every chosen part from the history database and
// builds their charts, sorted by part number. An empty part number, a part
// the history does not hold, an unknown figure, or a baseline below 2 is an
// error.
func Load(ctx context.Context, opt Options) ([]PartChart, error) {
	if opt.Figure == "" {
		opt.Figure = DefaultFigure
	}
	if opt.Baseline == 0 {
		opt.Baseline = DefaultBaseline
	}
	if !history.IsFigure(opt.Figure) {
		return nil, fmt.Errorf("figure %q: %w; choose one of %s", opt.Figure, history.ErrUnknownFigure, strings.Join(history.Figures, ", "))
	}
	if opt.Baseline < 2 {
		return nil, fmt.Errorf("baseline of %d points: want at least 2", opt.Baseline)
	}
	st, err := history.OpenExisting(ctx, opt.History)
	if err != nil {
		return nil, err
	}
	defer st.Close()
	known, err := st.Parts(ctx)
	if err != nil {
		return nil, err
	}
	parts := opt.Parts
	if parts == nil {
		parts = known
	}
	for _, p := range parts {
		if strings.TrimSpace(p) == "" {
			return nil, errors.New("empty part number; give a part number the history holds, or no part to chart them all")
		}
		if !slices.Contains(known, p) {
			return nil, fmt.Errorf("part %q: no rows in %s; it holds %s", p, opt.History, listOrNone(known))
		}
	}
	parts = slices.Clone(parts)
	slices.Sort(parts)
	parts = slices.Compact(parts)
	var out []PartChart
	for _, p := range parts {
		pts, err := st.Series(ctx, p, opt.Figure)
		if err != nil {
			return nil, err
		}
		pc := PartChart{Part: p, Figure: opt.Figure, Points: pts}
		if len(pts) >= 2 {
			v := make([]float64, len(pts))
			for i, pt := range pts {
				v[i] = pt.Value
			}
			spec := spc.Spec{Baseline: opt.Baseline, NonNegative: history.NonNegative(opt.Figure)}
			if pc.Chart, err = spc.Build(v, spec); err != nil {
				return nil, fmt.Errorf("part %s: %w", p, err)
			}
		}
		out = append(out, pc)
	}
	return out, nil
}

func listOrNone(parts []string) string {
	if len(parts) == 0 {
		return "no part numbers (give part numbers in the batch's manifest.csv)"
	}
	return "the part numbers " + strings.Join(parts, ", ")
}

var unsafeName = regexp.MustCompile(`[^A-Za-z0-9._-]`)

// FileBase is the file name stem of a part's chart: trend-<part>-<figure>,
// the part's characters outside [A-Za-z0-9._-] replaced by '_' and, when
// any were, 8 hex digits of the part's SHA-256 added so two parts never
// share a file.
func FileBase(part, figure string) string {
	safe := unsafeName.ReplaceAllString(part, "_")
	if safe != part || strings.HasPrefix(safe, ".") {
		sum := sha256.Sum256([]byte(part))
		safe += "-" + hex.EncodeToString(sum[:4])
	}
	return "trend-" + safe + "-" + figure
}

// Write writes each chart as out/<FileBase>.png and .svg, and every point
// of every part into out/trend-<figure>.csv; it returns the files written.
// Each file is written whole to a temporary name and then renamed.
func Write(out string, charts []PartChart, figure string) ([]string, error) {
	if err := os.MkdirAll(out, 0o755); err != nil {
		return nil, fmt.Errorf("output folder %s: %w", out, err)
	}
	var files []string
	for i := range charts {
		pc := &charts[i]
		if pc.Chart == nil {
			continue
		}
		for _, ext := range []string{"png", "svg"} {
			name := filepath.Join(out, FileBase(pc.Part, pc.Figure)+"."+ext)
			if err := writeAtomic(name, func(w io.Writer) error { return pc.Chart.Write(w, ext, pc.Labels()) }); err != nil {
				return files, err
			}
			files = append(files, name)
		}
	}
	name := filepath.Join(out, "trend-"+figure+".csv")
	if err := writeAtomic(name, func(w io.Writer) error { return WriteCSV(w, charts, figure) }); err != nil {
		return files, err
	}
	return append(files, name), nil
}

// WriteCSV writes one line per point: the part, its place in the series,
// the batch it came from, the value, its moving range, the limits, whether
// it is in the baseline, the rules it breaks (space-separated, e.g.
// "WE1 WE2"; "MR" when its moving range is above the limit) and the
// unclipped lower limit X̄ − 3σ̂ (equal to the lcl column unless the figure
// is non-negative and the limit was clipped to 0). Limits are empty for a
// part with fewer than 2 points.
func WriteCSV(w io.Writer, charts []PartChart, figure string) error {
	cw := csv.NewWriter(w)
	head := []string{"part_number", "point", "run_id", "run_started_utc", "path", "lot", "status",
		figure, "moving_range_" + figure, "centre_" + figure, "lcl_" + figure, "ucl_" + figure,
		"mr_centre_" + figure, "mr_ucl_" + figure, "in_baseline", "rules", "lcl_unclipped_" + figure}
	if err := cw.Write(head); err != nil {
		return err
	}
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', 8, 64) }
	for _, pc := range charts {
		for i, p := range pc.Points {
			rec := []string{pc.Part, strconv.Itoa(i + 1), strconv.FormatInt(p.RunID, 10), p.Started.UTC().Format(time.RFC3339),
				p.Path, p.Lot, p.Status, num(p.Value), "", "", "", "", "", "", "", "", ""}
			if c := pc.Chart; c != nil {
				if i > 0 {
					rec[8] = num(c.MR[i])
				}
				rec[9], rec[10], rec[11], rec[12], rec[13] = num(c.Centre), num(c.LCL), num(c.UCL), num(c.MRCentre), num(c.MRUCL)
				rec[14] = strconv.FormatBool(i < c.Baseline)
				var rules []string
				for _, r := range c.Signals[i] {
					rules = append(rules, r.String())
				}
				if c.MRSignals[i] {
					rules = append(rules, "MR")
				}
				rec[15] = strings.Join(rules, " ")
				rec[16] = num(c.LCLRaw)
			}
			if err := cw.Write(rec); err != nil {
				return err
			}
		}
	}
	cw.Flush()
	return cw.Error()
}

// writeAtomic writes name through a temporary file in the same folder.
func writeAtomic(name string, f func(io.Writer) error) error {
	tmp, err := os.CreateTemp(filepath.Dir(name), ".trend-*")
	if err != nil {
		return fmt.Errorf("writing %s: %w", name, err)
	}
	defer os.Remove(tmp.Name())
	if err := tmp.Chmod(0o644); err != nil {
		tmp.Close()
		return fmt.Errorf("writing %s: %w", name, err)
	}
	if err := f(tmp); err != nil {
		tmp.Close()
		return fmt.Errorf("writing %s: %w", name, err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("writing %s: %w", name, err)
	}
	if err := os.Rename(tmp.Name(), name); err != nil {
		return fmt.Errorf("writing %s: %w", name, err)
	}
	return nil
}
