package pipeline

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// runShards runs a batch over dir as n shards (n = 0: one unsharded run)
// into base/shardK and returns the output folders.
func runShards(t *testing.T, dir, base string, n int) []string {
	t.Helper()
	var outs []string
	for k := 1; k <= max(n, 1); k++ {
		o := filepath.Join(base, fmt.Sprintf("shard%d", k))
		s := Shard{K: k, N: n}
		if n == 0 {
			s = Shard{}
		}
		if _, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: o, Job: DefaultJob(), Workers: 1,
			Shard: s, Analyze: (&fakeAnalyzer{}).analyze}); err != nil {
			t.Fatal(err)
		}
		outs = append(outs, o)
	}
	return outs
}

// snapshot maps every file under dir to its content (links to their
// target), to tell what a call changed.
func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	m := map[string]string{}
	filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return nil
		}
		switch {
		case d.Type()&fs.ModeSymlink != 0:
			l, _ := os.Readlink(p)
			m[p] = "->" + l
		case d.Type().IsRegular():
			b, _ := os.ReadFile(p)
			m[p] = string(b)
		}
		return nil
	})
	return m
}

// editSummary rewrites a shard's summary.json through f.
func editSummary(t *testing.T, out string, f func(s *Summary)) {
	t.Helper()
	name := filepath.Join(out, "summary.json")
	b, err := os.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	var s Summary
	if err := json.Unmarshal(b, &s); err != nil {
		t.Fatal(err)
	}
	f(&s)
	if err := WriteFileAtomic(name, s.WriteJSON); err != nil {
		t.Fatal(err)
	}
}

// TestMergeRefuses: merge checks its inputs before it writes anything, and
// says which shard is missing or doubled.
func TestMergeRefuses(t *testing.T) {
	files := demoContents(7)
	tests := []struct {
		name   string
		setup  func(t *testing.T, base string, outs []string) (inputs []string, out string)
		errHas string
	}{
		{"shard missing", func(t *testing.T, base string, o []string) ([]string, string) {
			return []string{o[0], o[2]}, filepath.Join(base, "m")
		}, "merge: shard 2/3 missing"},
		{"shard twice", func(t *testing.T, base string, o []string) ([]string, string) {
			return []string{o[0], o[1], o[2], o[1]}, filepath.Join(base, "m")
		}, "merge: shard 2/3 given twice"},
		{"out is an input", func(t *testing.T, base string, o []string) ([]string, string) {
			return o, o[1]
		}, "is also an input"},
		{"out is an input by another name", func(t *testing.T, base string, o []string) ([]string, string) {
			if err := os.Symlink(o[2], filepath.Join(base, "alias")); err != nil {
				t.Fatal(err)
			}
			return o, filepath.Join(base, "alias")
		}, "is also an input"},
		{"other batch", func(t *testing.T, base string, o []string) ([]string, string) {
			other := runShards(t, makeScanDir(t, demoContents(4)), filepath.Join(base, "other"), 3)
			return []string{o[0], o[1], other[2]}, filepath.Join(base, "m")
		}, "come from different batches"},
		{"older summary", func(t *testing.T, base string, o []string) ([]string, string) {
			editSummary(t, o[1], func(s *Summary) { s.Input = nil })
			return o, filepath.Join(base, "m")
		}, "records no shard"},
		{"folder missing", func(t *testing.T, base string, o []string) ([]string, string) {
			return []string{o[0], filepath.Join(base, "shard9"), o[2]}, filepath.Join(base, "m")
		}, "shard9 does not exist: give the --out folders of the shard batches"},
		{"a file", func(t *testing.T, base string, o []string) ([]string, string) {
			return []string{o[0], filepath.Join(o[1], "summary.csv"), o[2]}, filepath.Join(base, "m")
		}, "summary.csv is a file, not a shard's output folder"},
		{"no summary", func(t *testing.T, base string, o []string) ([]string, string) {
			return []string{o[0], filepath.Join(o[1], ScansDir), o[2]}, filepath.Join(base, "m")
		}, "holds no summary.json, so it is not a batch's output folder"},
		{"row removed", func(t *testing.T, base string, o []string) ([]string, string) {
			editSummary(t, o[1], func(s *Summary) { s.Rows = s.Rows[1:] })
			return o, filepath.Join(base, "m")
		}, "the shards hold 6 rows, but their batch listed 7 entries"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			base := t.TempDir()
			outs := runShards(t, makeScanDir(t, files), base, 3)
			inputs, out := tc.setup(t, base, outs)
			before := snapshot(t, base)
			_, err := Merge(inputs, out)
			if err == nil || !strings.Contains(err.Error(), tc.errHas) {
				t.Fatalf("error %v, want %q", err, tc.errHas)
			}
			if after := snapshot(t, base); len(after) != len(before) {
				t.Errorf("a refused merge wrote %d files", len(after)-len(before))
			}
		})
	}
}

// TestMergeRecordsInput: a single run and merged shards record the same
// input (shard 1/1, the folder's entry count and hash).
func TestMergeRecordsInput(t *testing.T) {
	dir := makeScanDir(t, demoContents(5))
	base := t.TempDir()
	single := runShards(t, dir, filepath.Join(base, "single"), 0)[0]
	outs := runShards(t, dir, base, 2)
	s, err := Merge(outs, filepath.Join(base, "merged"))
	if err != nil {
		t.Fatal(err)
	}
	if s.Input == nil || s.Input.ShardK != 1 || s.Input.ShardN != 1 || s.Input.Entries != 5 || len(s.Input.EntriesSHA256) != 64 {
		t.Errorf("merged input %+v", s.Input)
	}
	for _, f := range []string{"summary.json", "summary.csv"} {
		a, _ := os.ReadFile(filepath.Join(single, f))
		b, _ := os.ReadFile(filepath.Join(base, "merged", f))
		if !bytes.Equal(a, b) {
			t.Errorf("%s: merged differs from a single run:\n%s\n---\n%s", f, a, b)
		}
	}
}

// TestNonUTF8NamesSurviveMerge: a scan whose name is not UTF-8 is a failed
// row asking for a rename; its path is the same escaped text in summary.csv
// and summary.json, and merged shards keep it exactly as a single run does.
func TestNonUTF8NamesSurviveMerge(t *testing.T) {
	files := demoContents(4)
	files["line0/b\xff.xyz"] = "x"
	dir := makeScanDir(t, files)
	base := t.TempDir()
	single := runShards(t, dir, filepath.Join(base, "single"), 0)[0]
	outs := runShards(t, dir, base, 2)
	if _, err := Merge(outs, filepath.Join(base, "merged")); err != nil {
		t.Fatal(err)
	}
	const want = `line0/b\xFF.xyz`
	for _, o := range []string{single, filepath.Join(base, "merged")} {
		js, _ := os.ReadFile(filepath.Join(o, "summary.json"))
		cs, _ := os.ReadFile(filepath.Join(o, "summary.csv"))
		var s Summary
		if err := json.Unmarshal(js, &s); err != nil {
			t.Fatal(err)
		}
		found := false
		for _, r := range s.Rows {
			if r.Path == want {
				found = r.Status == StatusFailed && strings.Contains(r.Error, "not valid UTF-8: rename it")
			}
		}
		if !found || !bytes.Contains(cs, []byte("\n"+want+",,,failed,")) || bytes.Contains(js, []byte("\ufffd")) {
			t.Errorf("%s: no failed row %s in both summaries:\n%s\n%s", o, want, cs, js)
		}
	}
	for _, f := range []string{"summary.json", "summary.csv"} {
		a, _ := os.ReadFile(filepath.Join(single, f))
		b, _ := os.ReadFile(filepath.Join(base, "merged", f))
		if !bytes.Equal(a, b) {
			t.Errorf("%s: merged differs from a single run", f)
		}
	}
}

// TestBatchManifestFaults: a BOM, a duplicate row and a bad row end neither
// the batch nor its summary; the rows concerned fail, the others run.
func TestBatchManifestFaults(t *testing.T) {
	files := demoContents(4) // line0/pan00.xyz line1/pan01.xyz line2/pan02.xyz line0/pan03.xyz
	files[ManifestName] = "\xEF\xBB\xBFpath,lot,pan_mass_kg\nline0/pan00.xyz,L1,\nline1/pan01.xyz,L2,inf\n" +
		"line2/pan02.xyz,L3,\nline2/pan02.xyz,L4,\n"
	dir := makeScanDir(t, files)
	res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: filepath.Join(t.TempDir(), "out"),
		Job: DefaultJob(), Workers: 2, Analyze: (&fakeAnalyzer{}).analyze})
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]string{
		"line0/pan00.xyz": "L1", "line0/pan03.xyz": "",
		"line1/pan01.xyz": "failed: manifest.csv:3:20: pan_mass_kg is not a number in (0, 100]",
		"line2/pan02.xyz": "failed: manifest.csv:4: lines 4, 5 all name the same scan",
	}
	if len(res.Summary.Rows) != len(want) || res.ExitCode() != 1 {
		t.Fatalf("rows %v, exit %d", res.Summary.Rows, res.ExitCode())
	}
	for _, r := range res.Summary.Rows {
		w := want[r.Path]
		if msg, failed := strings.CutPrefix(w, "failed: "); failed {
			if r.Status != StatusFailed || !strings.HasPrefix(r.Error, msg) {
				t.Errorf("%s: %s %q, want failed %q", r.Path, r.Status, r.Error, msg)
			}
		} else if r.Status == StatusFailed || r.Lot != w {
			t.Errorf("%s: %s lot %q, want it analysed with lot %q", r.Path, r.Status, r.Lot, w)
		}
	}
}

// TestMergeWritesIndex: the merged folder has an index.html with one row
// per scan, the same table as a single run over the folder (links into the
// merged folder resolve), and a trend section of one line saying that a
// merge records no history.
func TestMergeWritesIndex(t *testing.T) {
	files := demoContents(5)
	files["line0/bad.xyz"] = "bad"
	dir := makeScanDir(t, files)
	base := t.TempDir()
	single := runShards(t, dir, filepath.Join(base, "single"), 0)[0]
	outs := runShards(t, dir, base, 2)
	merged := filepath.Join(base, "merged")
	s, err := Merge(outs, merged)
	if err != nil {
		t.Fatal(err)
	}
	table := func(out string) string {
		b, err := os.ReadFile(filepath.Join(out, "index.html"))
		if err != nil {
			t.Fatal(err)
		}
		page := string(b)
		i, j := strings.Index(page, "<table"), strings.Index(page, "</table>")
		if i < 0 || j < i {
			t.Fatalf("%s: index.html has no table", out)
		}
		return page[i:j]
	}
	got := table(merged)
	if n := strings.Count(got, `<tr class="row status-`); n != 6 || len(s.Rows) != 6 {
		t.Errorf("merged index: %d rows, summary %d, want 6", n, len(s.Rows))
	}
	if got != table(single) {
		t.Error("merged index table differs from a single run's")
	}
	for _, m := range regexp.MustCompile(`href="([^"]+)"`).FindAllStringSubmatch(got, -1) {
		if _, err := os.Stat(filepath.Join(merged, filepath.FromSlash(m[1]))); err != nil {
			t.Errorf("merged index links to %s: %v", m[1], err)
		}
	}
	b, _ := os.ReadFile(filepath.Join(merged, "index.html"))
	if !strings.Contains(string(b), "No trend chart for a merge") {
		t.Error("merged index does not say that a merge records no history")
	}
	if _, err := os.Stat(filepath.Join(merged, HistoryFile)); err == nil {
		t.Error("merge wrote a history database")
	}
}
