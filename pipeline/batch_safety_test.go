package pipeline

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"
)

// readSummaries returns summary.csv and summary.json of out.
func readSummaries(t *testing.T, out string) (csvB, jsonB []byte) {
	t.Helper()
	csvB, err := os.ReadFile(filepath.Join(out, "summary.csv"))
	if err != nil {
		t.Fatal(err)
	}
	jsonB, err = os.ReadFile(filepath.Join(out, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	return csvB, jsonB
}

// findFiles lists the files under root whose name satisfies match.
func findFiles(root string, match func(name string) bool) []string {
	var found []string
	filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err == nil && !d.IsDir() && match(d.Name()) {
			found = append(found, p)
		}
		return nil
	})
	return found
}

// TestBatchInterruptLeavesNotRun (issue 14, item 2): scans running when the
// batch is interrupted, and those not started, are not-run, never failed;
// nothing of them is recorded, the next run analyses them, and the resumed
// summary has the bytes of an uninterrupted run.
func TestBatchInterruptLeavesNotRun(t *testing.T) {
	files := demoContents(8)
	files["x/bad.stl"] = "bad"
	dir := makeScanDir(t, files)
	ref := filepath.Join(t.TempDir(), "ref")
	if _, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: ref, Job: DefaultJob(), Workers: 2,
		Analyze: (&fakeAnalyzer{}).analyze}); err != nil {
		t.Fatal(err)
	}
	refCSV, refJSON := readSummaries(t, ref)

	// The third and fourth scans to start block until the interrupt, then
	// fail with the context's error, as the solvers do.
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	fa := &fakeAnalyzer{}
	var mu sync.Mutex
	started, blocked := 0, 0
	analyze := func(ctx context.Context, task ScanTask, sha, jobSHA string) (*Report, error) {
		mu.Lock()
		started++
		block := started == 3 || started == 4
		if block {
			blocked++
			if blocked == 2 {
				cancel()
			}
		}
		mu.Unlock()
		if block {
			<-ctx.Done()
			return nil, fmt.Errorf("%s: plate solve: %w", task.Rel, ctx.Err())
		}
		return fa.analyze(ctx, task, sha, jobSHA)
	}
	out := filepath.Join(t.TempDir(), "out")
	res, err := RunBatch(ctx, BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 2, Analyze: analyze})
	if err != nil {
		t.Fatal(err)
	}
	c := res.Summary.Counts
	if !res.Interrupted || res.ExitCode() != 1 {
		t.Errorf("interrupted %v exit %d, want true 1", res.Interrupted, res.ExitCode())
	}
	if c[StatusNotRun] < 2 {
		t.Errorf("counts %v: want the two stopped scans (and those not started) not-run", c)
	}
	for _, r := range res.Summary.Rows {
		if r.Status == StatusFailed && r.Path != "x/bad.stl" {
			t.Errorf("interrupted scan recorded as failed: %+v", r)
		}
	}
	if recs := findFiles(out, func(n string) bool { return n == "error.json" }); len(recs) > 1 {
		t.Errorf("error records after the interrupt: %v (only x/bad.stl may have one)", recs)
	}

	// Resume: the not-run scans are analysed; the bytes match.
	calls := fa.calls.Load()
	res2, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 2,
		Analyze: fa.analyze})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := int(fa.calls.Load()-calls), c[StatusNotRun]; got != want {
		t.Errorf("resume analysed %d scans, want the %d not run", got, want)
	}
	gotCSV, gotJSON := readSummaries(t, out)
	if !bytes.Equal(gotCSV, refCSV) || !bytes.Equal(gotJSON, refJSON) {
		t.Errorf("resumed summary differs from an uninterrupted run:\n%s\n---\n%s", gotCSV, refCSV)
	}
	if res2.ExitCode() != 1 { // x/bad.stl fails for real
		t.Errorf("resume exit %d, want 1", res2.ExitCode())
	}
}

// TestBatchEnvironmentFailuresNotRecorded (issue 14, item 2): a failure of
// the machine (disk full, quota, read-only, I/O error, deadline) gives a
// failed row this time but is not reused: the next run tries again.
func TestBatchEnvironmentFailuresNotRecorded(t *testing.T) {
	tests := []struct {
		name string
		err  error
	}{
		{"ENOSPC", &fs.PathError{Op: "write", Path: "gap.png", Err: syscall.ENOSPC}},
		{"EDQUOT", &fs.PathError{Op: "write", Path: "fields.vti", Err: syscall.EDQUOT}},
		{"EROFS", &fs.PathError{Op: "open", Path: "rings.csv", Err: syscall.EROFS}},
		{"EIO", fmt.Errorf("writing report.json: %w", &fs.PathError{Op: "write", Path: "report.json", Err: syscall.EIO})},
		{"deadline", fmt.Errorf("heat-up: %w", context.DeadlineExceeded)},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			dir := makeScanDir(t, map[string]string{"a.xyz": "a", "b.xyz": "a"})
			out := t.TempDir()
			fa := &fakeAnalyzer{}
			faulty := func(ctx context.Context, task ScanTask, sha, jobSHA string) (*Report, error) {
				if task.Rel == "a.xyz" {
					return nil, tc.err
				}
				return fa.analyze(ctx, task, sha, jobSHA)
			}
			res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 1, Analyze: faulty})
			if err != nil {
				t.Fatal(err)
			}
			if r := res.Summary.Rows[0]; r.Status != StatusFailed || !strings.Contains(r.Error, "next run tries") {
				t.Errorf("first run row %+v, want failed saying it is retried", r)
			}
			res2, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 1, Analyze: fa.analyze})
			if err != nil {
				t.Fatal(err)
			}
			if r := res2.Summary.Rows[0]; r.Status != StatusOK || res2.Ran != 1 || res2.Skipped != 1 {
				t.Errorf("after the fault cleared: row %+v, ran %d skipped %d; want a.xyz analysed again and ok", r, res2.Ran, res2.Skipped)
			}
		})
	}
	if IsEnvironmentError(errors.New("x.stl: byte 84: unexpected EOF")) {
		t.Errorf("a parse error counted as a fault of the machine")
	}
}

// TestBatchFolderLayouts (issue 14, item 5): the output folder may not be
// the scan folder (by any name) nor contain it; inside it, it is skipped,
// and so is any older output folder there.
func TestBatchFolderLayouts(t *testing.T) {
	fa := &fakeAnalyzer{}
	run := func(dir, out string) (*BatchResult, error) {
		return RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 2, Analyze: fa.analyze})
	}
	refused := []struct {
		name     string
		dir, out func(scans string) string
		want     string
	}{
		{"same folder", func(s string) string { return s }, func(s string) string { return s }, "is the scan folder itself"},
		{"same folder with a trailing ./", func(s string) string { return s }, func(s string) string { return s + "/./" }, "is the scan folder itself"},
		{"symlink to the scan folder", func(s string) string { return s }, func(s string) string {
			l := filepath.Join(t.TempDir(), "link")
			if err := os.Symlink(s, l); err != nil {
				t.Skip(err)
			}
			return l
		}, "is the scan folder itself"},
		{"scan folder inside the output folder", func(s string) string { return filepath.Join(s, "line0") },
			func(s string) string { return s }, "inside the output folder"},
		{"missing scan folder", func(s string) string { return filepath.Join(s, "nope") },
			func(s string) string { return filepath.Join(s, "out") }, "not a readable folder"},
	}
	for _, tc := range refused {
		t.Run(tc.name, func(t *testing.T) {
			scans := makeScanDir(t, demoContents(3))
			_, err := run(tc.dir(scans), tc.out(scans))
			if err == nil || !IsConfigError(err) || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("err %v, want a configuration error saying %q", err, tc.want)
			}
			for _, f := range []string{"summary.csv", "run.log", LockName} {
				if _, err := os.Stat(filepath.Join(scans, f)); err == nil {
					t.Errorf("a refused batch wrote %s into the scan folder", f)
				}
			}
		})
	}
	t.Run("output inside the scan folder", func(t *testing.T) {
		scans := makeScanDir(t, demoContents(4))
		for i, out := range []string{"results", "results", "results2"} {
			res, err := run(scans, filepath.Join(scans, out))
			if err != nil {
				t.Fatal(err)
			}
			if res.Total != 4 || res.Summary.Counts[StatusFailed] != 0 {
				t.Errorf("run %d into %s: %d scans, counts %v; want the 4 scans and no outputs read as scans",
					i+1, out, res.Total, res.Summary.Counts)
			}
		}
		if _, err := run(filepath.Join(scans, "results"), filepath.Join(scans, "x")); err == nil || !IsConfigError(err) {
			t.Errorf("an output folder given as the scan folder: err %v", err)
		}
	})
}

// TestBatchLock (issue 14, item 10): a second batch on the same output
// folder stops at once naming the first; a lock left by a killed process is
// taken over; the lock is released at the end.
func TestBatchLock(t *testing.T) {
	dir := makeScanDir(t, demoContents(6))
	t.Run("concurrent batches", func(t *testing.T) {
		out := t.TempDir()
		fa := &fakeAnalyzer{delay: 30 * time.Millisecond}
		var wg sync.WaitGroup
		errs := make([]error, 2)
		for i := range errs {
			wg.Add(1)
			go func() {
				defer wg.Done()
				_, errs[i] = RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 2, Analyze: fa.analyze})
			}()
		}
		wg.Wait()
		var le *LockedError
		nLocked := 0
		for _, err := range errs {
			if errors.As(err, &le) && IsConfigError(err) {
				nLocked++
			} else if err != nil {
				t.Errorf("unexpected error %v", err)
			}
		}
		// Either the second found the lock, or it started after the first
		// ended and found every output current.
		if n := fa.calls.Load(); n != 6 || (nLocked != 1 && nLocked != 0) {
			t.Errorf("%d analyses for 6 scans, %d batches refused; want 6 analyses", n, nLocked)
		}
		if _, err := os.Stat(filepath.Join(out, LockName)); !errors.Is(err, fs.ErrNotExist) {
			t.Errorf("lock not released: %v", err)
		}
	})
	t.Run("held", func(t *testing.T) {
		out := t.TempDir()
		l, err := LockOutput(out)
		if err != nil {
			t.Fatal(err)
		}
		_, err = RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Analyze: (&fakeAnalyzer{}).analyze})
		want := out + " is in use by batch pid " + strconv.Itoa(os.Getpid())
		if err == nil || !IsConfigError(err) || !strings.Contains(err.Error(), want) ||
			!strings.Contains(err.Error(), "remove "+filepath.Join(out, LockName)+" if that process is gone") {
			t.Errorf("err %v, want %q and what to do", err, want)
		}
		if err := l.Unlock(); err != nil {
			t.Fatal(err)
		}
		if _, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Analyze: (&fakeAnalyzer{}).analyze}); err != nil {
			t.Errorf("after unlock: %v", err)
		}
	})
	t.Run("stale", func(t *testing.T) {
		out := t.TempDir()
		stale := "pid=999999\nhost=gone-host\nstarted=2026-01-01T00:00:00Z\n"
		if err := os.WriteFile(filepath.Join(out, LockName), []byte(stale), 0o644); err != nil {
			t.Fatal(err)
		}
		res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Analyze: (&fakeAnalyzer{}).analyze})
		if err != nil || res.Ran != 6 {
			t.Fatalf("stale lock: %v", err)
		}
		log, _ := os.ReadFile(filepath.Join(out, "run.log"))
		if !strings.Contains(string(log), "took over the lock left by batch pid 999999 on gone-host") {
			t.Errorf("run.log does not tell of the stale lock:\n%s", log)
		}
		if _, err := os.Stat(filepath.Join(out, LockName)); !errors.Is(err, fs.ErrNotExist) {
			t.Errorf("lock not released: %v", err)
		}
	})
}

// TestAtomicTempNames: temporary files carry TempPrefix, so a batch can
// find what a killed run left.
func TestAtomicTempNames(t *testing.T) {
	dir := t.TempDir()
	var seen []string
	err := WriteFileAtomic(filepath.Join(dir, "report.json"), func(w io.Writer) error {
		ents, _ := os.ReadDir(dir)
		for _, e := range ents {
			seen = append(seen, e.Name())
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(seen) != 1 || !strings.HasPrefix(seen[0], TempPrefix+"report.json-") {
		t.Errorf("temporary files %q, want one named %sreport.json-*", seen, TempPrefix)
	}
}

// TestBatchRemovesTempLeftovers (issue 14, item 10): a batch start removes
// the temporary files a killed run left under OUT, and nothing else, and
// nothing outside OUT.
func TestBatchRemovesTempLeftovers(t *testing.T) {
	dir := makeScanDir(t, map[string]string{"a.xyz": "a"})
	base := t.TempDir()
	out := filepath.Join(base, "out")
	outside := filepath.Join(base, "elsewhere")
	plant := map[string]bool{ // path → must survive
		filepath.Join(out, TempPrefix+"summary.csv-123"):                       false,
		filepath.Join(ScanOutDir(out, "a.xyz"), TempPrefix+"gap.png-456"):      false,
		filepath.Join(ScanOutDir(out, "old/b.xyz"), TempPrefix+"fields.vti-7"): false,
		filepath.Join(out, "notes.txt"):                                        true,
		filepath.Join(out, ".gapflux-tmp"):                                     true, // not the pattern: no dash
		filepath.Join(outside, TempPrefix+"x-1"):                               true,
		filepath.Join(dir, TempPrefix+"y-2"):                                   true,
	}
	for p := range plant {
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte("partial"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.Symlink(outside, filepath.Join(out, "link")); err != nil {
		t.Log(err)
	}
	if _, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Analyze: (&fakeAnalyzer{}).analyze}); err != nil {
		t.Fatal(err)
	}
	for p, keep := range plant {
		_, err := os.Stat(p)
		if kept := err == nil; kept != keep {
			t.Errorf("%s: kept %v, want %v", p, kept, keep)
		}
	}
	log, _ := os.ReadFile(filepath.Join(out, "run.log"))
	if !strings.Contains(string(log), "removed 3 temporary files") {
		t.Errorf("run.log does not count the removed files:\n%s", log)
	}
}

// TestBatchScanNamedLikeBatchFiles (issue 14, item 14): scans named like
// the batch's own files get their own folders; the summary is written.
func TestBatchScanNamedLikeBatchFiles(t *testing.T) {
	dir := makeScanDir(t, map[string]string{"summary.csv": "a", "scans/summary.csv": "a", "run.log.xyz": "a", "scans.xyz": "a"})
	out := t.TempDir()
	res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 2, Analyze: (&fakeAnalyzer{}).analyze})
	if err != nil {
		t.Fatal(err)
	}
	if res.Total != 4 || res.Summary.Counts[StatusOK] != 4 {
		t.Errorf("%d scans, counts %v, want 4 ok", res.Total, res.Summary.Counts)
	}
	csvB, _ := readSummaries(t, out)
	if !bytes.HasPrefix(csvB, []byte("path,part_number,lot,status,reason,")) {
		t.Errorf("summary.csv is not the summary: %.60q", csvB)
	}
	for _, rel := range []string{"summary.csv", "scans/summary.csv", "run.log.xyz", "scans.xyz"} {
		if _, err := os.Stat(filepath.Join(ScanOutDir(out, rel), "report.json")); err != nil {
			t.Errorf("%s: %v", rel, err)
		}
	}
}

// TestRunLogLines (issue 14, item 6): run.log is whole lines, each ending
// in a newline, even after a run killed mid-line.
func TestRunLogLines(t *testing.T) {
	dir := makeScanDir(t, map[string]string{"a.xyz": "a", "b.stl": "bad", "c.ply": "panic"})
	out := t.TempDir()
	if err := os.WriteFile(filepath.Join(out, "run.log"), []byte("2026-12-01T00:00:00Z ok a.xyz 0.1"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 2, Analyze: (&fakeAnalyzer{}).analyze}); err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(filepath.Join(out, "run.log"))
	s := string(b)
	if !strings.HasSuffix(s, "\n") || !strings.HasPrefix(s, "2026-12-01T00:00:00Z ok a.xyz 0.1\n2") {
		t.Errorf("run.log does not end lines properly:\n%q", s)
	}
	for _, want := range []string{"batch start: 3 scans", "failed b.stl", "panic while analysing c.ply", "batch end: ran 3"} {
		if !strings.Contains(s, want) {
			t.Errorf("run.log lacks %q:\n%s", want, s)
		}
	}
}

// TestBatchJobErrors (issue 14, item 12): an invalid batch job stops the
// batch before any analysis with a configuration error; a bad job file named
// by a manifest row fails that row only, and the batch exits 2; a manifest
// that cannot be parsed is a configuration error.
func TestBatchJobErrors(t *testing.T) {
	fa := &fakeAnalyzer{}
	t.Run("batch job", func(t *testing.T) {
		dir := makeScanDir(t, demoContents(2))
		job := DefaultJob()
		job.Pan.Layers[0].Material = "unobtainium"
		_, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: t.TempDir(), Job: job, Analyze: fa.analyze})
		if err == nil || !IsConfigError(err) || !strings.Contains(err.Error(), "unobtainium") || fa.calls.Load() != 0 {
			t.Errorf("err %v after %d analyses, want a configuration error naming the material before any", err, fa.calls.Load())
		}
	})
	t.Run("manifest row job", func(t *testing.T) {
		dir := makeScanDir(t, map[string]string{"a.xyz": "a", "b.xyz": "a", "bad.toml": "[pan]\nmas_kg = 1\n",
			"manifest.csv": "path,job\na.xyz,bad.toml\n"})
		res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: t.TempDir(), Job: DefaultJob(), Analyze: fa.analyze})
		if err != nil {
			t.Fatal(err)
		}
		if r := res.Summary.Rows; r[0].Status != StatusFailed || !strings.Contains(r[0].Error, "mas_kg") || r[1].Status != StatusOK {
			t.Errorf("rows %+v", r)
		}
		if res.ConfigFailures != 1 || res.ExitCode() != 2 {
			t.Errorf("config failures %d, exit %d; want 1, 2", res.ConfigFailures, res.ExitCode())
		}
	})
	t.Run("manifest unreadable", func(t *testing.T) {
		dir := makeScanDir(t, map[string]string{"a.xyz": "a", "manifest.csv": "path,colour\na.xyz,red\n"})
		_, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: t.TempDir(), Job: DefaultJob(), Analyze: fa.analyze})
		if err == nil || !IsConfigError(err) {
			t.Errorf("err %v, want a configuration error", err)
		}
	})
}
