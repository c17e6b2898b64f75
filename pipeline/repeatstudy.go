package pipeline

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strings"

	"gapflux/pipeline/repeat"
)

// RepeatOptions says what a repeatability study ("gapflux repeat") reads.
type RepeatOptions struct {
	// Dir is a batch's output folder (its summary.json picks the scans and
	// their report.json under scans/), or any folder of report folders
	// (every report.json below it).
	Dir string
	// Manifest, when set, is a manifest CSV whose base_id column groups the
	// scans by physical base; scans without a base_id are left out. Without
	// it every report is of one base.
	Manifest string
	// AllowMixedJobs turns reports of one base analysed with different
	// jobs from an error into a warning.
	AllowMixedJobs bool
}

// RepeatFiles are the files WriteRepeat writes.
var RepeatFiles = []string{"repeat.csv", "repeat.json", "repeat.svg", "repeat.png"}

// Bounds of the study's input (ours: a repeatability study has tens of
// results; a report.json of a fine grid with its rings is well under a MB).
const (
	maxRepeatReports     = 10000
	maxRepeatReportBytes = 64 << 20
)

// repeatReport is one report of the study and the base it is of.
type repeatReport struct {
	name string // batch path or report folder, slash-separated
	file string // the report.json, for messages
	base string
	rep  *Report
}

// RepeatStudy reads the reports under opt.Dir, groups them by base and
// assesses the repeatability of every headline figure (package repeat).
// Every error means the input cannot give a study (a configuration error
// for the caller): a missing folder, fewer than two usable reports, a
// report that is not one or holds a number that is not finite, an
// unreadable manifest, or reports of one base from different jobs (their
// job hashes differ) unless opt.AllowMixedJobs. Reports of one base from
// different jobs break the repeatability conditions of ISO 5725-1 (one
// procedure): a changed water load, hob or material moves the heat figures
// by more than a re-scan does, and s_r would measure the change of job.
func RepeatStudy(ctx context.Context, opt RepeatOptions) (*repeat.Study, error) {
	if st, err := os.Stat(opt.Dir); err != nil || !st.IsDir() {
		return nil, configf("%s: not a folder; give a batch's output folder or a folder of report folders", opt.Dir)
	}
	reps, warnings, err := loadRepeatReports(ctx, opt.Dir)
	if err != nil {
		return nil, err
	}
	if opt.Manifest != "" {
		var w []string
		if reps, w, err = groupByManifest(reps, opt.Manifest); err != nil {
			return nil, err
		}
		warnings = append(warnings, w...)
	}
	if !twoOfOneBase(reps) {
		return nil, configf("%s: %d usable report(s) and no base with two of them; a repeatability study needs at least two reports of one base (scan the base again, run the batch, and give its output folder)", opt.Dir, len(reps))
	}
	w, err := checkRepeatJobs(reps, opt.AllowMixedJobs)
	if err != nil {
		return nil, err
	}
	warnings = append(warnings, w...)
	st, err := repeat.Assess(repeatFigureResults(reps), warnings)
	if err != nil {
		return nil, configf("%s: %v", opt.Dir, err)
	}
	return st, nil
}

// twoOfOneBase tells whether some base has two or more reports.
func twoOfOneBase(reps []repeatReport) bool {
	n := map[string]int{}
	for _, r := range reps {
		if n[r.base]++; n[r.base] == 2 {
			return true
		}
	}
	return false
}

// loadRepeatReports reads the reports of a batch output folder (when dir
// holds summary.json: the rows that have a report) or every report.json
// below dir, sorted by name. Rejected reports (no figures) are left out
// with a warning.
func loadRepeatReports(ctx context.Context, dir string) ([]repeatReport, []string, error) {
	files, names, warnings, err := repeatReportFiles(dir)
	if err != nil {
		return nil, nil, err
	}
	var reps []repeatReport
	rejected := 0
	for i, f := range files {
		if err := ctx.Err(); err != nil {
			return nil, nil, err
		}
		rep, err := readRepeatReport(dir, f)
		if err != nil {
			return nil, nil, err
		}
		if rep.Rejected() || rep.Geometry == nil {
			rejected++
			continue
		}
		reps = append(reps, repeatReport{name: names[i], file: f, rep: rep})
	}
	if rejected > 0 {
		warnings = append(warnings, fmt.Sprintf("%d report(s) rejected by the data-quality gate left out: they carry no figures", rejected))
	}
	return reps, warnings, nil
}

// repeatReportFiles lists the report.json files to read and their names.
func repeatReportFiles(dir string) (files, names, warnings []string, err error) {
	sumPath := filepath.Join(dir, "summary.json")
	if b, rerr := readRepeatFile(dir, sumPath, maxRepeatReportBytes); rerr == nil {
		var s Summary
		if err := json.Unmarshal(b, &s); err != nil || s.Schema != SchemaSummary {
			return nil, nil, nil, configf("%s: not a batch summary (%s); give the batch's output folder as the batch wrote it", sumPath, jsonProblem(err, s.Schema))
		}
		skipped := 0
		for _, r := range s.Rows {
			if r.Status == StatusFailed || r.Status == StatusNotRun || r.Status == StatusRejected {
				skipped++
				continue
			}
			if clean, err := LocalPath(r.Path); err != nil || clean != r.Path {
				return nil, nil, nil, configf("%s: row path %q leaves the output folder or is not clean; give the batch's output folder as the batch wrote it", sumPath, r.Path)
			}
			files = append(files, filepath.Join(ScanOutDir(dir, r.Path), "report.json"))
			names = append(names, r.Path)
		}
		if skipped > 0 {
			warnings = append(warnings, fmt.Sprintf("%d scan(s) of the batch failed, were rejected or were not run: left out", skipped))
		}
		return files, names, warnings, nil
	} else if !errors.Is(rerr, fs.ErrNotExist) {
		return nil, nil, nil, &ConfigError{Err: rerr}
	}
	// A report.json that is a symbolic link is listed too, so that one
	// leading out of dir is refused by name (readRepeatFile) rather than
	// left out unseen; WalkDir does not descend into linked folders.
	err = filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.Name() != "report.json" || !(d.Type().IsRegular() || d.Type()&fs.ModeSymlink != 0) {
			return nil
		}
		if len(files) == maxRepeatReports {
			return fmt.Errorf("more than %d reports: give the folder of one study", maxRepeatReports)
		}
		rel, err := filepath.Rel(dir, filepath.Dir(p))
		if err != nil {
			return err
		}
		files, names = append(files, p), append(names, filepath.ToSlash(rel))
		return nil
	})
	if err != nil {
		return nil, nil, nil, configf("%s: %v", dir, err)
	}
	return files, names, nil, nil // WalkDir visits in lexical order: sorted
}

func jsonProblem(err error, schema string) string {
	if err != nil {
		return err.Error()
	}
	return fmt.Sprintf("schema %q, want %q", schema, SchemaSummary)
}

// readRepeatFile reads the file name inside the folder root (the folder
// the study was given), of at most max bytes. Nothing outside root is
// read: a name that leads through a symbolic link to outside root is
// refused with an error matching ErrPathOutside (checked by
// ResolveInside, then opened through os.OpenInRoot so a link swapped in
// between is refused too); a missing file gives an error matching
// fs.ErrNotExist.
func readRepeatFile(root, name string, max int64) ([]byte, error) {
	rel, err := filepath.Rel(root, name)
	if err != nil {
		return nil, fmt.Errorf("%s: not inside %s: %w", name, root, ErrPathNotLocal)
	}
	if _, err := ResolveInside(root, filepath.ToSlash(rel)); err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		return nil, fmt.Errorf("%s: not read: %w (gapflux repeat reads only files inside the folder it is given, %s)", name, err, root)
	}
	f, err := os.OpenInRoot(root, rel)
	if err != nil {
		return nil, fmt.Errorf("%s: not read (gapflux repeat reads only files inside the folder it is given, %s): %w", name, root, err)
	}
	defer f.Close()
	b, err := readAtMost(f, max)
	if errors.Is(err, errTooLarge) {
		return nil, fmt.Errorf("%s: larger than %d MB: not a file gapflux wrote", name, max>>20)
	}
	if err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	return b, nil
}

// readRepeatReport reads one report.json, the file name inside the folder
// root (readRepeatFile).
func readRepeatReport(root, name string) (*Report, error) {
	b, err := readRepeatFile(root, name, maxRepeatReportBytes)
	if errors.Is(err, fs.ErrNotExist) {
		return nil, configf("%v; run the batch again to write the missing report", err)
	}
	if err != nil {
		return nil, &ConfigError{Err: err}
	}
	var rep Report
	if err := json.Unmarshal(b, &rep); err != nil {
		return nil, configf("%s: not a report of this gapflux version (%v): a report from an earlier version lacks the newer job keys; run the batch again (it re-analyses scans whose job changed) or analyse the scan again", name, err)
	}
	if rep.Schema != SchemaReport {
		return nil, configf("%s: schema %q, want %q: written by another version; analyse the scan again", name, rep.Schema, SchemaReport)
	}
	return &rep, nil
}

// groupByManifest sets each report's base from the manifest's base_id
// column (keyed by the scan's path) and leaves out, with a warning, the
// reports whose scan has no base_id or whose manifest row is unusable.
func groupByManifest(reps []repeatReport, name string) ([]repeatReport, []string, error) {
	f, err := os.Open(name)
	if err != nil {
		return nil, nil, configf("manifest %s: %w", name, err)
	}
	defer f.Close()
	m, err := ReadManifest(io.LimitReader(f, maxRepeatReportBytes), name)
	if err != nil {
		return nil, nil, &ConfigError{Err: err}
	}
	var warnings []string
	for _, p := range m.Problems {
		warnings = append(warnings, "manifest row left out: "+p.Err.Error())
	}
	var out []repeatReport
	var without []string
	for _, r := range reps {
		row, ok := m.Rows[r.name]
		if !ok || row.BaseID == "" {
			without = append(without, r.name)
			continue
		}
		r.base = row.BaseID
		out = append(out, r)
	}
	if len(without) > 0 {
		warnings = append(warnings, fmt.Sprintf("%d report(s) without a base_id in %s left out: %s", len(without), name, listSome(without, 5)))
	}
	return out, warnings, nil
}

// listSome joins up to n items and says how many more there are.
func listSome(s []string, n int) string {
	if len(s) <= n {
		return strings.Join(s, ", ")
	}
	return strings.Join(s[:n], ", ") + fmt.Sprintf(" and %d more", len(s)-n)
}

// checkRepeatJobs checks that the reports of each base come from one job
// (see RepeatStudy) and warns about a scan file analysed twice (the same
// pan hash within a base: not a re-scan, it adds a zero difference).
func checkRepeatJobs(reps []repeatReport, allowMixed bool) ([]string, error) {
	type seen struct{ jobs, pans map[string][]string }
	bases := map[string]*seen{}
	var order []string
	for _, r := range reps {
		s := bases[r.base]
		if s == nil {
			s = &seen{jobs: map[string][]string{}, pans: map[string][]string{}}
			bases[r.base] = s
			order = append(order, r.base)
		}
		s.jobs[r.rep.Input.JobSHA256] = append(s.jobs[r.rep.Input.JobSHA256], r.name)
		s.pans[r.rep.Input.Pan.SHA256] = append(s.pans[r.rep.Input.Pan.SHA256], r.name)
	}
	sort.Strings(order)
	var warnings []string
	for _, b := range order {
		s := bases[b]
		label := "the base"
		if b != "" {
			label = "base " + b
		}
		if len(s.jobs) > 1 {
			var groups []string
			for _, names := range s.jobs {
				groups = append(groups, names[0])
			}
			sort.Strings(groups)
			msg := fmt.Sprintf("the reports of %s come from %d different jobs (job hashes differ; e.g. %s): s_r would include the change of job", label, len(s.jobs), listSome(groups, 3))
			if !allowMixed {
				return nil, configf("%s; analyse every scan with one job, or give --allow-mixed-jobs", msg)
			}
			warnings = append(warnings, msg)
		}
		var dups []string
		for pan, names := range s.pans {
			if len(names) > 1 && pan != "" {
				dups = append(dups, strings.Join(names, " = "))
			}
		}
		sort.Strings(dups)
		for _, d := range dups {
			warnings = append(warnings, fmt.Sprintf("%s: the same scan file analysed more than once (%s): not a re-scan; it pulls s_r down", label, d))
		}
	}
	return warnings, nil
}

// repeatFigureResults turns the reports into the figures' results by base.
func repeatFigureResults(reps []repeatReport) []repeat.Figure {
	figs := make([]repeat.Figure, figRocks)
	for j := range figs {
		groups := map[string]*repeat.Group{}
		var order []string
		for _, r := range reps {
			v, ok := r.rep.figure(j)
			if !ok {
				continue
			}
			res := repeat.Result{Name: r.name, Value: v}
			if u := r.rep.Uncertainty; u != nil {
				if fu := u.figure(j); fu != nil {
					res.U, res.Low, res.High = &fu.U, &fu.Low, &fu.High
				}
			}
			g := groups[r.base]
			if g == nil {
				g = &repeat.Group{Base: r.base}
				groups[r.base] = g
				order = append(order, r.base)
			}
			g.Results = append(g.Results, res)
		}
		figs[j] = repeat.Figure{Name: figNames[j], Unit: figUnits[j]}
		for _, b := range order {
			figs[j].Groups = append(figs[j].Groups, *groups[b])
		}
		if len(order) == 0 {
			figs[j].Note = "no report carries this figure"
			figs[j].Groups = []repeat.Group{}
		}
	}
	return figs
}

// WriteRepeat writes repeat.csv, repeat.json, repeat.svg and repeat.png into out
// (created if missing), each atomically, and returns their paths.
func WriteRepeat(out string, st *repeat.Study) ([]string, error) {
	if err := os.MkdirAll(out, 0o755); err != nil {
		return nil, fmt.Errorf("output folder %s: %w", out, err)
	}
	enc := []func() ([]byte, error){st.CSV, st.JSON, st.SVG, st.PNG}
	var paths []string
	for i, name := range RepeatFiles {
		b, err := enc[i]()
		if err != nil {
			return paths, fmt.Errorf("%s: %w", path.Join(out, name), err)
		}
		p := filepath.Join(out, name)
		if err := WriteBytesAtomic(p, b); err != nil {
			return paths, err
		}
		paths = append(paths, p)
	}
	return paths, nil
}
