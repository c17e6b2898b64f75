package pipeline

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"
)

// fakeAnalyzer stands in for the physics: it "measures" a concavity from
// the file's first byte and fails on files whose content starts with "bad".
type fakeAnalyzer struct {
	calls atomic.Int64
	delay time.Duration
}

func (f *fakeAnalyzer) analyze(ctx context.Context, t ScanTask, sha, jobSHA string) (*Report, error) {
	f.calls.Add(1)
	time.Sleep(f.delay)
	b, err := os.ReadFile(t.Path)
	if err != nil {
		return nil, err
	}
	if bytes.HasPrefix(b, []byte("bad")) {
		return nil, fmt.Errorf("%s: byte 3: unexpected EOF", t.Rel)
	}
	if bytes.HasPrefix(b, []byte("panic")) {
		panic("boom")
	}
	c := float64(b[0]%7) / 10
	rep := &Report{Schema: SchemaReport, Warnings: []string{}}
	rep.Input.Pan = FileReport{Path: t.Rel, SHA256: sha}
	rep.Input.JobSHA256 = jobSHA
	rep.Geometry = &GeometryReport{DiameterMM: 200, ConcavityMM: c, ConcavityPctOfDiameter: c / 2}
	rep.Verdict = verdict(t.Job, rep)
	res := &Result{Report: rep, Name: t.Rel}
	return rep, WriteOutputs(res, t.OutDir)
}

// makeScanDir writes files named in contents under a new folder.
func makeScanDir(t testing.TB, contents map[string]string) string {
	dir := t.TempDir()
	for p, c := range contents {
		full := filepath.Join(dir, filepath.FromSlash(p))
		if err := os.MkdirAll(filepath.Dir(full), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(full, []byte(c), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

func demoContents(n int) map[string]string {
	m := map[string]string{}
	for i := 0; i < n; i++ {
		m[fmt.Sprintf("line%d/pan%02d.xyz", i%3, i)] = strings.Repeat(string(rune('a'+i)), 5)
	}
	return m
}

func TestBatchRowsStatusesAndResume(t *testing.T) {
	files := demoContents(6)
	files["line0/zz-broken.stl"] = "bad"
	files["line1/zz-crash.ply"] = "panic"
	files["manifest.csv"] = "path,part_number,lot\nline0/pan00.xyz,SP-9,L1\n"
	dir := makeScanDir(t, files)
	out := filepath.Join(t.TempDir(), "out")
	fa := &fakeAnalyzer{}
	opt := BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 2, Analyze: fa.analyze}
	res, err := RunBatch(context.Background(), opt)
	if err != nil {
		t.Fatal(err)
	}
	if res.Total != 8 || res.Ran != 8 || res.Skipped != 0 {
		t.Errorf("total %d ran %d skipped %d, want 8 8 0", res.Total, res.Ran, res.Skipped)
	}
	c := res.Summary.Counts
	// 'a'%7=6 → 0.6 mm on 200 mm = 0.3 %: ok; the others by their first byte.
	if c[StatusFailed] != 2 || c["total"] != 8 {
		t.Errorf("counts %v, want 2 failed of 8", c)
	}
	if res.ExitCode() != 1 {
		t.Errorf("exit code %d, want 1 with failures", res.ExitCode())
	}
	var broken, crash, first SummaryRow
	for _, r := range res.Summary.Rows {
		switch r.Path {
		case "line0/zz-broken.stl":
			broken = r
		case "line1/zz-crash.ply":
			crash = r
		case "line0/pan00.xyz":
			first = r
		}
	}
	if broken.Status != StatusFailed || !strings.Contains(broken.Error, "line0/zz-broken.stl: byte 3") {
		t.Errorf("broken row %+v", broken)
	}
	if crash.Status != StatusFailed || !strings.Contains(crash.Error, "internal error") || strings.Contains(crash.Error, "goroutine") {
		t.Errorf("panic row %+v", crash)
	}
	if first.PartNumber != "SP-9" || first.Lot != "L1" {
		t.Errorf("manifest fields not carried: %+v", first)
	}
	sum1, err := os.ReadFile(filepath.Join(out, "summary.csv"))
	if err != nil {
		t.Fatal(err)
	}
	// Sorted by path.
	lines := strings.Split(strings.TrimSpace(string(sum1)), "\n")
	for i := 2; i < len(lines); i++ {
		if lines[i-1] > lines[i] && i > 1 {
			t.Errorf("rows not sorted: %q before %q", lines[i-1], lines[i])
		}
	}

	// A second run does no work and gives the same bytes.
	before := fa.calls.Load()
	res2, err := RunBatch(context.Background(), opt)
	if err != nil {
		t.Fatal(err)
	}
	if fa.calls.Load() != before || res2.Ran != 0 || res2.Skipped != 8 {
		t.Errorf("re-run analysed %d scans (ran %d, skipped %d), want none", fa.calls.Load()-before, res2.Ran, res2.Skipped)
	}
	sum2, _ := os.ReadFile(filepath.Join(out, "summary.csv"))
	if !bytes.Equal(sum1, sum2) {
		t.Errorf("re-run changed summary.csv:\n%s\n---\n%s", sum1, sum2)
	}

	// A changed scan is analysed again; --force re-runs everything.
	if err := os.WriteFile(filepath.Join(dir, "line2/pan02.xyz"), []byte("zzz"), 0o644); err != nil {
		t.Fatal(err)
	}
	res3, err := RunBatch(context.Background(), opt)
	if err != nil || res3.Ran != 1 {
		t.Errorf("after one change ran %d (err %v), want 1", res3.Ran, err)
	}
	opt.Force = true
	res4, err := RunBatch(context.Background(), opt)
	if err != nil || res4.Ran != 8 {
		t.Errorf("--force ran %d (err %v), want 8", res4.Ran, err)
	}
	// A changed job invalidates every report.
	opt.Force = false
	opt.Job.Water.MassKg = 2
	res5, err := RunBatch(context.Background(), opt)
	if err != nil || res5.Ran != 8 {
		t.Errorf("after a job change ran %d (err %v), want 8", res5.Ran, err)
	}
}

func TestBatchAllPassExitZero(t *testing.T) {
	dir := makeScanDir(t, map[string]string{"a.xyz": "a", "b.xyz": "a"}) // 'a' → 0.3 %: passes
	res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: t.TempDir(), Job: DefaultJob(),
		Workers: 1, Analyze: (&fakeAnalyzer{}).analyze})
	if err != nil {
		t.Fatal(err)
	}
	if res.ExitCode() != 0 {
		t.Errorf("exit %d, rows %+v", res.ExitCode(), res.Summary.Rows)
	}
}

func TestBatchCancelledListsNotRun(t *testing.T) {
	dir := makeScanDir(t, demoContents(6))
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	res, err := RunBatch(ctx, BatchOptions{Dir: dir, Out: t.TempDir(), Job: DefaultJob(), Workers: 1,
		Analyze: (&fakeAnalyzer{}).analyze})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Interrupted || res.Summary.Counts[StatusNotRun] != 6 || res.ExitCode() != 1 {
		t.Errorf("interrupted %v, not-run %d, exit %d", res.Interrupted, res.Summary.Counts[StatusNotRun], res.ExitCode())
	}
}

func TestShardsMergeEqualsSingleRun(t *testing.T) {
	files := demoContents(10)
	files["q/bad.stl"] = "bad"
	dir := makeScanDir(t, files)
	single := filepath.Join(t.TempDir(), "single")
	run := func(out string, s Shard) {
		t.Helper()
		if _, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 2,
			Shard: s, Analyze: (&fakeAnalyzer{}).analyze}); err != nil {
			t.Fatal(err)
		}
	}
	run(single, Shard{})
	base := t.TempDir()
	var outs []string
	for k := 1; k <= 3; k++ {
		o := filepath.Join(base, fmt.Sprintf("shard%d", k))
		run(o, Shard{K: k, N: 3})
		outs = append(outs, o)
	}
	merged := filepath.Join(base, "merged")
	if _, err := Merge(outs, merged); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"summary.csv", "summary.json"} {
		a, _ := os.ReadFile(filepath.Join(single, f))
		b, _ := os.ReadFile(filepath.Join(merged, f))
		if !bytes.Equal(a, b) {
			t.Errorf("%s differs between a single run and merged shards:\n%s\n---\n%s", f, a, b)
		}
	}
	if _, err := os.Stat(filepath.Join(ScanOutDir(merged, "line1/pan01.xyz"), "report.json")); err != nil {
		t.Errorf("merge did not copy per-scan outputs: %v", err)
	}
	// Overlapping shards are refused.
	if _, err := Merge([]string{outs[0], outs[0]}, filepath.Join(base, "m2")); err == nil {
		t.Errorf("merging a shard with itself was accepted")
	}
}

// TestBatchManifestJobAndHob: a manifest row's job file and hob are used
// for that scan only, and the hob file is not analysed as a scan.
func TestBatchManifestJobAndHob(t *testing.T) {
	dir := makeScanDir(t, map[string]string{
		"a.xyz": "a", "b.xyz": "a", "hobs/top.xyz": "hob",
		"heavy.toml":   "[water]\nmass_kg = 3.5\n",
		"manifest.csv": "path,job,hob,water_mass_kg\na.xyz,heavy.toml,hobs/top.xyz,\nb.xyz,,,2.25\n",
	})
	seen := map[string]ScanTask{}
	var mu sync.Mutex
	fa := &fakeAnalyzer{}
	analyze := func(ctx context.Context, task ScanTask, sha, jobSHA string) (*Report, error) {
		mu.Lock()
		seen[task.Rel] = task
		mu.Unlock()
		return fa.analyze(ctx, task, sha, jobSHA)
	}
	res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: t.TempDir(), Job: DefaultJob(), Workers: 2, Analyze: analyze})
	if err != nil {
		t.Fatal(err)
	}
	if res.Total != 2 {
		t.Fatalf("%d scans, want 2 (the hob is not a scan)", res.Total)
	}
	if a := seen["a.xyz"]; a.Job.Water.MassKg != 3.5 || filepath.Base(a.HobPath) != "top.xyz" {
		t.Errorf("a.xyz: water %.2f kg, hob %q", a.Job.Water.MassKg, a.HobPath)
	}
	if b := seen["b.xyz"]; b.Job.Water.MassKg != 2.25 || b.HobPath != "" {
		t.Errorf("b.xyz: water %.2f kg, hob %q", b.Job.Water.MassKg, b.HobPath)
	}
}
