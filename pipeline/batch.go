package pipeline

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strings"
	"sync"
	"time"
)

// SchemaError names the version of the error record a failed scan leaves.
const SchemaError = "gapflux.error/1"

// ErrorRecord is written as error.json in a failed scan's output folder, so
// a re-run can tell a known failure from new work.
type ErrorRecord struct {
	Schema    string `json:"schema"`
	Path      string `json:"path"`
	SHA256    string `json:"sha256"`
	JobSHA256 string `json:"job_sha256"`
	Error     string `json:"error"`
}

// ScanTask is one scan of a batch with its effective settings.
type ScanTask struct {
	Path    string // file on disk
	Rel     string // slash path relative to the batch folder
	OutDir  string // the scan's output folder
	HobPath string // hob scan or profile on disk, "" for the job's hob
	Job     Job
	Meta    ManifestRow
}

// AnalyzeFunc analyses one scan and writes its outputs into task.OutDir.
// inputSHA and jobSHA are the hashes the report must carry.
type AnalyzeFunc func(ctx context.Context, task ScanTask, inputSHA, jobSHA string) (*Report, error)

// BatchOptions configures RunBatch.
type BatchOptions struct {
	Dir     string // folder of scans
	Out     string // output folder
	Job     Job    // defaults for every scan
	Workers int    // 0 = number of CPUs
	Force   bool   // re-run scans whose outputs are current
	Shard   Shard
	// Progress receives one call per finished scan; nil prints nothing.
	Progress Progress
	// Log receives the run log (timestamps, durations, host); nil discards.
	Log io.Writer
	// Analyze runs one scan; nil means AnalyzeScan.
	Analyze AnalyzeFunc
	// SummaryEvery bounds how often the summary is rewritten while running.
	SummaryEvery time.Duration
}

// BatchResult tells what a batch did.
type BatchResult struct {
	Summary     *Summary
	Total       int // scans in this shard
	Ran         int // analysed in this run
	Skipped     int // outputs already current
	Interrupted bool
}

// ExitCode is 0 when every scan passed, 1 when any failed, was out of
// tolerance or was not run.
func (r *BatchResult) ExitCode() int {
	for _, row := range r.Summary.Rows {
		if row.Status != StatusOK {
			return 1
		}
	}
	if r.Interrupted {
		return 1
	}
	return 0
}

// JobHash is the hash of the effective settings of one scan: the job, the
// hob file's content hash and the content of the profiles the job names.
// An invalid job (a value out of its range, ±Inf or NaN, which JSON cannot
// encode) is an error, never a panic.
func JobHash(job Job, hobSHA string) (string, error) {
	if err := job.Validate(); err != nil {
		return "", fmt.Errorf("job: %w", err)
	}
	// The profiles a job names count by content, not by path.
	var files []string
	for _, p := range job.files() {
		if *p == "" {
			continue
		}
		sha, err := FileSHA256(*p)
		if err != nil {
			sha = "unreadable" // Analyze reports the error itself
		}
		files = append(files, sha)
		*p = filepath.Base(*p)
	}
	b, err := json.Marshal(struct {
		Job   Job
		Hob   string
		Files []string
	}{job, hobSHA, files})
	if err != nil {
		return "", fmt.Errorf("job hash: %w", err)
	}
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:]), nil
}

// FileSHA256 hashes a file's bytes.
func FileSHA256(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// ScanOutDir is where a scan's outputs go: the scan's relative path (with
// its extension, so pan.stl and pan.ply do not collide) under out.
func ScanOutDir(out, rel string) string { return filepath.Join(out, filepath.FromSlash(rel)) }

// RunBatch analyses every scan under opt.Dir into opt.Out, skipping scans
// whose outputs already match their input and job hashes, and writes
// summary.csv and summary.json. One bad scan never stops the others. When ctx
// is cancelled no new scan starts; running ones finish, and the summary lists
// the rest as not-run.
func RunBatch(ctx context.Context, opt BatchOptions) (*BatchResult, error) {
	if opt.Analyze == nil {
		opt.Analyze = AnalyzeScan
	}
	if opt.Workers <= 0 {
		opt.Workers = runtime.NumCPU()
	}
	if opt.SummaryEvery <= 0 {
		opt.SummaryEvery = 5 * time.Second
	}
	logw := opt.Log
	if logw == nil {
		logw = io.Discard
	}
	dir, err := filepath.Abs(opt.Dir)
	if err != nil {
		return nil, err
	}
	out, err := filepath.Abs(opt.Out)
	if err != nil {
		return nil, err
	}
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return nil, fmt.Errorf("batch folder %s: not a readable folder", opt.Dir)
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return nil, fmt.Errorf("output folder: %w", err)
	}
	skipOut := func(p string) bool { return p == out }
	disc, err := Discover(dir, skipOut)
	if err != nil {
		return nil, err
	}
	for _, n := range disc.Notes {
		fmt.Fprintln(logw, n)
	}
	input := disc.Input(opt.Shard)
	var tasks []ScanTask
	var problemRows []SummaryRow // entries listed as failed without analysis
	for i, e := range disc.Entries {
		if !opt.Shard.Has(i) {
			continue
		}
		if e.Problem != "" {
			problemRows = append(problemRows, SummaryRow{Path: e.Path, Status: StatusFailed, Error: oneLine(e.Problem)})
			continue
		}
		meta := disc.Manifest[e.Path]
		meta.Path = e.Path
		tasks = append(tasks, ScanTask{
			Path:   filepath.Join(dir, filepath.FromSlash(e.Path)),
			Rel:    e.Path,
			OutDir: ScanOutDir(out, e.Path),
			Meta:   meta,
		})
	}
	res := &BatchResult{Total: len(tasks)}
	rows := make([]SummaryRow, len(tasks), len(tasks)+len(problemRows))
	for i, t := range tasks {
		rows[i] = SummaryRow{Path: t.Rel, Status: StatusNotRun, PartNumber: t.Meta.PartNumber, Lot: t.Meta.Lot}
	}
	rows = append(rows, problemRows...)
	host, _ := os.Hostname()
	fmt.Fprintf(logw, "%s batch start: %d scans (shard %s) from %s on %s, %d workers\n",
		time.Now().Format(time.RFC3339), len(tasks), opt.Shard, dir, host, opt.Workers)
	if opt.Progress != nil {
		opt.Progress.Start(len(tasks))
	}

	var mu sync.Mutex
	lastWrite := time.Now()
	writeSummary := func(force bool) error {
		if !force && time.Since(lastWrite) < opt.SummaryEvery {
			return nil
		}
		lastWrite = time.Now()
		s := NewSummary(rows)
		s.Input = input
		return writeSummaryFiles(out, s)
	}

	jobs := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < opt.Workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				t0 := time.Now()
				row, skipped := runOne(ctx, opt, tasks[i], dir)
				mu.Lock()
				rows[i] = row
				if skipped {
					res.Skipped++
				} else {
					res.Ran++
				}
				if err := writeSummary(false); err != nil {
					fmt.Fprintf(logw, "writing summary: %v\n", err)
				}
				fmt.Fprintf(logw, "%s %s %s %.2fs%s\n", time.Now().Format(time.RFC3339), row.Status, row.Path,
					time.Since(t0).Seconds(), map[bool]string{true: " (current, skipped)", false: ""}[skipped])
				if opt.Progress != nil {
					opt.Progress.Done(row, skipped)
				}
				mu.Unlock()
			}
		}()
	}
dispatch:
	for i := range tasks {
		select {
		case <-ctx.Done():
			res.Interrupted = true
			break dispatch
		case jobs <- i:
		}
	}
	close(jobs)
	wg.Wait()
	if opt.Progress != nil {
		opt.Progress.Finish()
	}
	res.Summary = NewSummary(rows)
	res.Summary.Input = input
	if err := writeSummaryFiles(out, res.Summary); err != nil {
		return res, fmt.Errorf("writing summary: %w", err)
	}
	if err := WriteIndexHTML(out, res.Summary); err != nil {
		return res, fmt.Errorf("writing index.html: %w", err)
	}
	fmt.Fprintf(logw, "%s batch end: ran %d, skipped %d, not run %d, interrupted %v\n",
		time.Now().Format(time.RFC3339), res.Ran, res.Skipped, res.Summary.Counts[StatusNotRun], res.Interrupted)
	return res, nil
}

// runOne analyses one task, or reuses its outputs when they are current. It
// never panics: a panic in the analysis becomes a failed row.
func runOne(ctx context.Context, opt BatchOptions, t ScanTask, dir string) (row SummaryRow, skipped bool) {
	row = SummaryRow{Path: t.Rel, Status: StatusFailed, PartNumber: t.Meta.PartNumber, Lot: t.Meta.Lot}
	fail := func(err error, sha, jobSHA string) (SummaryRow, bool) {
		// Paths in the summary are relative to the batch folder.
		msg := strings.ReplaceAll(err.Error(), dir+string(filepath.Separator), "")
		row.Status, row.Error = StatusFailed, oneLine(msg)
		rec := ErrorRecord{Schema: SchemaError, Path: t.Rel, SHA256: sha, JobSHA256: jobSHA, Error: row.Error}
		if b, jerr := json.MarshalIndent(rec, "", "  "); jerr == nil {
			_ = os.Remove(filepath.Join(t.OutDir, "report.json"))
			_ = WriteBytesAtomic(filepath.Join(t.OutDir, "error.json"), append(b, '\n'))
		}
		return row, false
	}
	job := opt.Job
	if t.Meta.Job != "" {
		j, err := ReadJobFile(filepath.Join(dir, filepath.FromSlash(t.Meta.Job)))
		if err != nil {
			return fail(err, "", "")
		}
		job = j
	}
	job, err := t.Meta.Apply(job)
	if err != nil {
		return fail(err, "", "")
	}
	t.Job = job
	if t.Meta.Hob != "" {
		t.HobPath = filepath.Join(dir, filepath.FromSlash(t.Meta.Hob))
	}
	sha, err := FileSHA256(t.Path)
	if err != nil {
		return fail(err, "", "")
	}
	hobSHA := ""
	if t.HobPath != "" {
		if hobSHA, err = FileSHA256(t.HobPath); err != nil {
			return fail(fmt.Errorf("hob: %w", err), sha, "")
		}
	}
	jobSHA, err := JobHash(job, hobSHA)
	if err != nil {
		return fail(err, sha, "")
	}
	if !opt.Force {
		if r, ok := currentRow(t, sha, jobSHA); ok {
			return r, true
		}
	}
	rep, stack, err := safeAnalyze(ctx, opt.Analyze, t, sha, jobSHA)
	if stack != "" && opt.Log != nil {
		fmt.Fprintf(opt.Log, "panic while analysing %s:\n%s\n", t.Rel, stack)
	}
	if err != nil {
		return fail(err, sha, jobSHA)
	}
	_ = os.Remove(filepath.Join(t.OutDir, "error.json"))
	r := RowFromReport(t.Rel, rep)
	r.PartNumber, r.Lot = t.Meta.PartNumber, t.Meta.Lot
	return r, false
}

// safeAnalyze runs f, turning a panic into an error; the stack goes to the
// run log, not into the summary.
func safeAnalyze(ctx context.Context, f AnalyzeFunc, t ScanTask, sha, jobSHA string) (rep *Report, stack string, err error) {
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("internal error (please report it with the scan): %v", p)
			stack = firstLines(string(debug.Stack()), 40)
		}
	}()
	rep, err = f(ctx, t, sha, jobSHA)
	return rep, "", err
}

// currentRow returns the summary row of a scan whose outputs already match
// its hashes: a report (ok or out of tolerance) or a recorded failure.
func currentRow(t ScanTask, sha, jobSHA string) (SummaryRow, bool) {
	if b, err := os.ReadFile(filepath.Join(t.OutDir, "report.json")); err == nil {
		var rep Report
		if json.Unmarshal(b, &rep) == nil && rep.Schema == SchemaReport &&
			rep.Input.Pan.SHA256 == sha && rep.Input.JobSHA256 == jobSHA {
			r := RowFromReport(t.Rel, &rep)
			r.PartNumber, r.Lot = t.Meta.PartNumber, t.Meta.Lot
			return r, true
		}
	}
	if b, err := os.ReadFile(filepath.Join(t.OutDir, "error.json")); err == nil {
		var rec ErrorRecord
		if json.Unmarshal(b, &rec) == nil && rec.Schema == SchemaError && rec.SHA256 == sha && rec.JobSHA256 == jobSHA {
			return SummaryRow{Path: t.Rel, Status: StatusFailed, Error: rec.Error,
				PartNumber: t.Meta.PartNumber, Lot: t.Meta.Lot}, true
		}
	}
	return SummaryRow{}, false
}

func writeSummaryFiles(out string, s *Summary) error {
	if err := WriteFileAtomic(filepath.Join(out, "summary.csv"), s.WriteCSV); err != nil {
		return err
	}
	return WriteFileAtomic(filepath.Join(out, "summary.json"), s.WriteJSON)
}

func oneLine(s string) string {
	s = strings.ReplaceAll(s, "\r", " ")
	return strings.ReplaceAll(s, "\n", " | ")
}

func firstLines(s string, n int) string {
	lines := strings.SplitN(s, "\n", n+1)
	if len(lines) > n {
		lines = lines[:n]
	}
	return strings.Join(lines, "\n")
}
