package pipeline

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
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
// a re-run can tell a known failure from new work. Only failures that belong
// to the scan are recorded; an interrupt or a fault of the machine (disk
// full, read-only, I/O error) never is (see IsEnvironmentError).
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

// AnalyzeFunc analyses one scan and writes its outputs into task.OutDir,
// report.json last. inputSHA and jobSHA are the hashes the report must
// carry. When ctx is cancelled it should return soon with ctx's error.
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
	// Log receives a copy of the run log (timestamps, durations, host),
	// which RunBatch appends to OUT/run.log; nil sends no copy.
	Log io.Writer
	// Analyze runs one scan; nil means AnalyzeScan.
	Analyze AnalyzeFunc
	// SummaryEvery bounds how often the summary is rewritten while running.
	SummaryEvery time.Duration
	// Override, when set, is applied to the job file a manifest row names
	// (the command line's job flags win over every job file; the row's own
	// columns win over both). Job has it applied already.
	Override func(Job) (Job, error)
	// History is the history database the batch's rows are appended to;
	// "" means OUT/history.sqlite (HistoryFile), HistoryOff none.
	History string
}

// BatchResult tells what a batch did.
type BatchResult struct {
	Summary     *Summary
	Total       int // scans in this shard
	Ran         int // analysed to the end in this run
	Skipped     int // outputs already current
	Interrupted bool
	// ConfigFailures counts the rows that failed because of a job file (the
	// batch's or one a manifest row names) rather than the scan.
	ConfigFailures int
	// HistoryErr is why the rows could not be added to the history
	// database (logged; it does not change the exit code).
	HistoryErr error
}

// ExitCode is 0 when every scan passed; 2 when a row failed because of a
// job file (a configuration error, though the other scans were analysed);
// else 1 when any scan failed, was out of tolerance, was rejected or was
// not run.
func (r *BatchResult) ExitCode() int {
	if r.ConfigFailures > 0 {
		return 2
	}
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

// ScansDir is the folder of a batch's output folder that holds one output
// folder per scan. The batch's own files (summary.csv, summary.json,
// run.log, the lock) sit beside it, so a scan named like one of them (a
// scan called summary.csv) never collides with them.
const ScansDir = "scans"

// OutputMarker is the file that marks a folder as a batch's output folder.
// Discovery never reads scans from a folder holding it, so an output folder
// kept inside the scan folder (this batch's or an older one's) is not
// analysed as scans.
const OutputMarker = ".gapflux-output"

// ScanOutDir is where a scan's outputs go: OUT/scans/<relative path>/, the
// relative path with its extension, so pan.stl and pan.ply do not collide.
func ScanOutDir(out, rel string) string {
	return filepath.Join(out, ScansDir, filepath.FromSlash(rel))
}

// RunBatch analyses every scan under opt.Dir into opt.Out: per-scan outputs
// under OUT/scans/, and summary.csv, summary.json and run.log in OUT.
//
// It holds OUT's lock (LockOutput) while it runs and removes the temporary
// files a killed run left under OUT. A scan is analysed again unless its
// outputs are current: report.json, which is written last and removed before
// a scan is analysed again, or error.json, carries the scan's SHA-256 and the
// hash of its effective job (JobHash: job values, hob file content, profile
// contents). One bad scan never stops the others. When ctx is cancelled no
// new scan starts, running scans stop, and every scan without a result is
// listed as not-run, never failed; nothing of it is recorded, so the next run
// analyses it. A failure of the machine rather than the scan (disk full,
// read-only, I/O error: IsEnvironmentError) gives a failed row this time but
// is not recorded either.
//
// Errors in the folders, the job, the manifest, or a lock held by another
// batch are *ConfigError and come before any scan is analysed.
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
	dir, out, err := batchFolders(opt.Dir, opt.Out)
	if err != nil {
		return nil, err
	}
	if err := CheckJob(opt.Job, "batch job"); err != nil {
		return nil, &ConfigError{Err: err}
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return nil, configf("output folder %s: %v", opt.Out, err)
	}
	lock, err := LockOutput(out)
	if err != nil {
		var le *LockedError
		if errors.As(err, &le) {
			le.Dir = opt.Out
		}
		return nil, &ConfigError{Err: err}
	}
	defer lock.Unlock()
	log, err := openRunLog(out, opt.Log)
	if err != nil {
		return nil, err
	}
	defer log.close()
	if err := prepareOutput(out, lock, log); err != nil {
		return nil, err
	}
	tasks, problemRows, input, err := planTasks(dir, out, opt, log)
	if err != nil {
		log.printf("batch not started: %v", err)
		return nil, err
	}
	return runTasks(ctx, opt, tasks, problemRows, input, dir, out, log)
}

// batchFolders resolves the scan and output folders (absolute, symbolic
// links evaluated) and refuses the layouts that would mix them: the output
// folder being the scan folder, or containing it. An output folder inside
// the scan folder is fine; discovery skips it.
func batchFolders(dirArg, outArg string) (dir, out string, err error) {
	dir, err = resolvePath(dirArg)
	if err != nil {
		return "", "", configf("scan folder %s: %v", dirArg, err)
	}
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return "", "", configf("scan folder %s: not a readable folder; check the path", dirArg)
	}
	if _, err := os.Lstat(filepath.Join(dir, OutputMarker)); err == nil {
		return "", "", configf("%s is the output folder of a batch (it holds %s), not a folder of scans; give the folder the scans are in",
			dirArg, OutputMarker)
	}
	out, err = resolvePath(outArg)
	if err != nil {
		return "", "", configf("output folder %s: %v", outArg, err)
	}
	switch {
	case out == dir:
		return "", "", configf("the output folder %s is the scan folder itself; give the outputs a folder of their own, e.g. %s-results (it may be inside the scan folder)",
			outArg, strings.TrimRight(dirArg, `/\`))
	case isWithin(dir, out):
		return "", "", configf("the scan folder %s is inside the output folder %s; choose an output folder that does not contain the scans",
			dirArg, outArg)
	}
	return dir, out, nil
}

// resolvePath makes p absolute and evaluates the symbolic links of the part
// of it that exists, so two names of one folder compare equal.
func resolvePath(p string) (string, error) {
	abs, err := filepath.Abs(p)
	if err != nil {
		return "", err
	}
	var rest []string
	for cur := abs; ; {
		r, err := filepath.EvalSymlinks(cur)
		if err == nil {
			return filepath.Join(append([]string{r}, rest...)...), nil
		}
		if !errors.Is(err, fs.ErrNotExist) {
			return "", err
		}
		parent := filepath.Dir(cur)
		if parent == cur {
			return abs, nil
		}
		rest = append([]string{filepath.Base(cur)}, rest...)
		cur = parent
	}
}

// isWithin reports whether path lies strictly inside folder (both clean and
// absolute).
func isWithin(path, folder string) bool {
	rel, err := filepath.Rel(folder, path)
	return err == nil && rel != "." && rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator))
}

// prepareOutput runs once the lock is held: it logs a stale lock taken
// over, removes the temporary files a killed run left under out and marks
// out as an output folder.
func prepareOutput(out string, lock *OutputLock, log *runLog) error {
	if lock.Stale != nil {
		log.printf("took over the lock left by %s, which no longer runs", *lock.Stale)
	}
	n, err := RemoveTempFiles(out)
	if err != nil {
		return fmt.Errorf("removing temporary files under %s: %w", out, err)
	}
	if n > 0 {
		log.printf("removed %s (%s*) left under %s by an interrupted run", counted(n, "temporary file", "temporary files"), TempPrefix, out)
	}
	marker := filepath.Join(out, OutputMarker)
	if _, err := os.Lstat(marker); err != nil {
		msg := "This folder holds the outputs of gapflux batch; a batch never reads scans from it.\n"
		if err := WriteBytesAtomic(marker, []byte(msg)); err != nil {
			return fmt.Errorf("marking the output folder: %w", err)
		}
	}
	return nil
}

// planTasks discovers the scans (Discover: manifest, folder walk) and lists
// this shard's tasks, the rows of entries with a problem (failed without
// analysis) and the batch's input identity. Output folders (this batch's
// and any other holding OutputMarker) are skipped.
func planTasks(dir, out string, opt BatchOptions, log *runLog) ([]ScanTask, []SummaryRow, *SummaryInput, error) {
	outInfo, err := os.Stat(out)
	if err != nil {
		return nil, nil, nil, err
	}
	skip := func(p string) bool {
		if p == dir {
			return false
		}
		fi, err := os.Lstat(p)
		if err != nil || !fi.IsDir() {
			return false
		}
		if os.SameFile(fi, outInfo) {
			return true
		}
		if _, err := os.Lstat(filepath.Join(p, OutputMarker)); err == nil {
			log.printf("not reading scans from %s: it is the output folder of a batch", p)
			return true
		}
		return false
	}
	disc, err := Discover(dir, skip, opt.Job.FilePaths())
	if err != nil {
		return nil, nil, nil, &ConfigError{Err: err}
	}
	for _, n := range disc.Notes {
		log.printf("%s", n)
	}
	var tasks []ScanTask
	var problemRows []SummaryRow
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
	return tasks, problemRows, disc.Input(opt.Shard), nil
}

// runTasks runs the tasks on opt.Workers workers, rewriting the summary at
// most every opt.SummaryEvery while it runs and once at the end.
func runTasks(ctx context.Context, opt BatchOptions, tasks []ScanTask, problemRows []SummaryRow, input *SummaryInput,
	dir, out string, log *runLog) (*BatchResult, error) {
	res := &BatchResult{Total: len(tasks) + len(problemRows)}
	rows := make([]SummaryRow, len(tasks), len(tasks)+len(problemRows))
	for i, t := range tasks {
		rows[i] = notRunRow(t)
	}
	rows = append(rows, problemRows...) // entries failed without analysis
	summary := func() *Summary {
		s := NewSummary(rows)
		s.Input = input
		return s
	}
	started := time.Now()
	host, _ := os.Hostname()
	log.printf("batch start: %s (shard %s) from %s into %s on %s, pid %d, %s",
		counted(len(tasks), "scan", "scans"), opt.Shard, dir, out, host, os.Getpid(), counted(opt.Workers, "worker", "workers"))
	if opt.Progress != nil {
		opt.Progress.Start(len(tasks))
	}
	var mu sync.Mutex
	lastWrite := time.Now()
	jobs := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < opt.Workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				t0 := time.Now()
				oc := runOne(ctx, opt, tasks[i], dir, log)
				mu.Lock()
				rows[i] = oc.row
				res.add(oc)
				if time.Since(lastWrite) >= opt.SummaryEvery {
					lastWrite = time.Now()
					if err := writeSummaryFiles(out, summary()); err != nil {
						log.printf("writing summary: %v", err)
					}
				}
				log.printf("%s %s %.2fs%s", oc.row.Status, oc.row.Path, time.Since(t0).Seconds(), oc.note())
				if opt.Progress != nil {
					opt.Progress.Done(oc.row, oc.skipped)
				}
				mu.Unlock()
			}
		}()
	}
	if dispatch(ctx, len(tasks), jobs) {
		mu.Lock() // the workers' res.add may set it too
		res.Interrupted = true
		mu.Unlock()
	}
	close(jobs)
	wg.Wait()
	if opt.Progress != nil {
		opt.Progress.Finish()
	}
	res.Summary = summary()
	if err := writeSummaryFiles(out, res.Summary); err != nil {
		log.printf("writing summary: %v", err)
		return res, fmt.Errorf("writing the summary into %s: %w; the scans' outputs are kept: fix that and run the same command again", opt.Out, err)
	}
	// The history first, so that index.html charts tonight's rows too.
	tr := logHistory(ctx, opt, out, res, started, log)
	if err := WriteIndexHTML(ctx, out, res.Summary, tr); err != nil {
		log.printf("writing index.html: %v", err)
		return res, fmt.Errorf("writing index.html into %s: %w", opt.Out, err)
	}
	log.printf("batch end: ran %d, skipped %d, not run %d, interrupted %v",
		res.Ran, res.Skipped, res.Summary.Counts[StatusNotRun], res.Interrupted)
	return res, nil
}

// dispatch hands out task indices until all are taken or ctx is cancelled;
// it reports whether it stopped early.
func dispatch(ctx context.Context, n int, jobs chan<- int) (stopped bool) {
	for i := 0; i < n; i++ {
		if ctx.Err() != nil {
			return true
		}
		select {
		case <-ctx.Done():
			return true
		case jobs <- i:
		}
	}
	return false
}

// outcome is what runOne did with one task.
type outcome struct {
	row     SummaryRow
	skipped bool // outputs were current
	notRun  bool // interrupted before a result
	config  bool // failed because of a job file
	envErr  bool // failed because of the machine; not recorded
}

func (oc outcome) note() string {
	switch {
	case oc.skipped:
		return " (current, skipped)"
	case oc.notRun:
		return " (interrupted; the next run analyses it)"
	case oc.envErr:
		return " (not recorded; the next run tries again)"
	case oc.config:
		return " (job file error)"
	}
	return ""
}

func (r *BatchResult) add(oc outcome) {
	switch {
	case oc.skipped:
		r.Skipped++
	case oc.notRun:
		r.Interrupted = true
	default:
		r.Ran++
	}
	if oc.config {
		r.ConfigFailures++
	}
}

func notRunRow(t ScanTask) SummaryRow {
	return SummaryRow{Path: t.Rel, Status: StatusNotRun, PartNumber: t.Meta.PartNumber, Lot: t.Meta.Lot}
}

// runOne analyses one task, or reuses its outputs when they are current. It
// never panics: a panic in the analysis becomes a failed row.
func runOne(ctx context.Context, opt BatchOptions, t ScanTask, dir string, log *runLog) outcome {
	if ctx.Err() != nil {
		return outcome{row: notRunRow(t), notRun: true}
	}
	// fail makes a failed row; only a failure that belongs to the scan is
	// recorded in error.json, so that the next run reuses it.
	fail := func(err error, sha, jobSHA string) outcome {
		oc := outcome{row: notRunRow(t), config: IsConfigError(err), envErr: IsEnvironmentError(err)}
		// Paths in the summary are relative to the batch folder.
		msg := strings.ReplaceAll(err.Error(), dir+string(filepath.Separator), "")
		oc.row.Status, oc.row.Error = StatusFailed, oneLine(msg)
		if oc.envErr {
			oc.row.Error += " (not recorded: the next run tries this scan again)"
		}
		if oc.config || oc.envErr || sha == "" || jobSHA == "" {
			return oc
		}
		rec := ErrorRecord{Schema: SchemaError, Path: t.Rel, SHA256: sha, JobSHA256: jobSHA, Error: oc.row.Error}
		if b, jerr := json.MarshalIndent(rec, "", "  "); jerr == nil {
			if werr := WriteBytesAtomic(filepath.Join(t.OutDir, "error.json"), append(b, '\n')); werr != nil {
				log.printf("recording the failure of %s: %v", t.Rel, werr)
			}
		}
		return oc
	}
	t, sha, jobSHA, err := effectiveTask(t, opt.Job, dir, opt.Override)
	if err != nil {
		return fail(err, sha, "")
	}
	if !opt.Force {
		if r, ok := currentRow(t, sha, jobSHA); ok {
			return outcome{row: r, skipped: true}
		}
	}
	// Old results go before the new analysis starts: a report.json present
	// always belongs to the outputs beside it.
	for _, name := range []string{"report.json", "error.json"} {
		if err := os.Remove(filepath.Join(t.OutDir, name)); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return fail(err, sha, jobSHA)
		}
	}
	rep, stack, err := safeAnalyze(ctx, opt.Analyze, t, sha, jobSHA)
	if stack != "" {
		log.printf("panic while analysing %s:\n%s", t.Rel, stack)
	}
	if err != nil {
		if ctx.Err() != nil {
			// Whatever went wrong, the interrupt came first: not a result.
			return outcome{row: notRunRow(t), notRun: true}
		}
		return fail(err, sha, jobSHA)
	}
	r := RowFromReport(t.Rel, rep)
	r.PartNumber, r.Lot = t.Meta.PartNumber, t.Meta.Lot
	return outcome{row: r}
}

// effectiveTask applies the manifest row (its job file, overrides and hob)
// to t and hashes the scan and its effective job. Job errors are *JobError.
func effectiveTask(t ScanTask, job Job, dir string, override func(Job) (Job, error)) (ScanTask, string, string, error) {
	if t.Meta.Job != "" {
		j, err := ReadJobFile(filepath.Join(dir, filepath.FromSlash(t.Meta.Job)))
		if err != nil {
			return t, "", "", err
		}
		if override != nil {
			if j, err = override(j); err != nil {
				return t, "", "", &JobError{Name: t.Meta.Job, Msg: err.Error()}
			}
		}
		job = j
	}
	job, err := t.Meta.Apply(job)
	if err != nil {
		return t, "", "", &JobError{Name: "manifest.csv", Msg: err.Error()}
	}
	name := "batch job with the manifest row of " + t.Rel
	if t.Meta.Job != "" {
		name = t.Meta.Job
	}
	if err := CheckJob(job, name); err != nil {
		return t, "", "", err
	}
	t.Job = job
	if t.Meta.Hob != "" {
		t.HobPath = filepath.Join(dir, filepath.FromSlash(t.Meta.Hob))
	}
	sha, err := FileSHA256(t.Path)
	if err != nil {
		return t, "", "", err
	}
	hobSHA := ""
	if t.HobPath != "" {
		if hobSHA, err = FileSHA256(t.HobPath); err != nil {
			return t, sha, "", fmt.Errorf("hob: %w", err)
		}
	}
	jobSHA, err := JobHash(job, hobSHA)
	if err != nil {
		return t, sha, "", err
	}
	return t, sha, jobSHA, nil
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

// runLog appends whole lines, each stamped with the time, to OUT/run.log
// (and a copy to BatchOptions.Log); workers share it.
type runLog struct {
	mu sync.Mutex
	w  io.Writer
	f  *os.File
}

// openRunLog opens OUT/run.log for appending. A log that a killed run left
// without its final newline gets one first.
func openRunLog(out string, copyTo io.Writer) (*runLog, error) {
	path := filepath.Join(out, "run.log")
	f, err := os.OpenFile(path, os.O_CREATE|os.O_APPEND|os.O_RDWR, 0o644)
	if err != nil {
		return nil, configf("run log: %v", err)
	}
	if st, err := f.Stat(); err == nil && st.Size() > 0 {
		var last [1]byte
		if _, err := f.ReadAt(last[:], st.Size()-1); err == nil && last[0] != '\n' {
			f.Write([]byte{'\n'})
		}
	}
	l := &runLog{w: f, f: f}
	if copyTo != nil {
		l.w = io.MultiWriter(f, copyTo)
	}
	return l, nil
}

// printf writes one record ending in a newline, in one write.
func (l *runLog) printf(format string, a ...any) {
	s := time.Now().Format(time.RFC3339) + " " + strings.TrimRight(fmt.Sprintf(format, a...), "\n") + "\n"
	l.mu.Lock()
	defer l.mu.Unlock()
	io.WriteString(l.w, s)
}

func (l *runLog) close() error { return l.f.Close() }

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
