package pipeline

import (
	"context"
	"fmt"
	"gapflux/contact"
	"gapflux/scan"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
)

// canary is the content of files outside the folders a command is given;
// it must never appear in any output.
const canary = "CANARY-SECRET-7f3a"

// spyAnalyzer reads every file a task names and echoes their first lines in
// its error, as a careless reader would: if the batch handed it a file
// outside the batch folder, the canary would reach the outputs. It records
// the paths it was given.
type spyAnalyzer struct {
	mu    sync.Mutex
	paths []string
}

func (s *spyAnalyzer) analyze(ctx context.Context, t ScanTask, sha, jobSHA string) (*Report, error) {
	var lines []string
	for _, p := range []string{t.Path, t.HobPath} {
		if p == "" {
			continue
		}
		s.mu.Lock()
		s.paths = append(s.paths, p)
		s.mu.Unlock()
		b, _ := os.ReadFile(p)
		first, _, _ := strings.Cut(string(b), "\n")
		lines = append(lines, first)
	}
	return nil, fmt.Errorf("spy read: %s", strings.Join(lines, " | "))
}

// assertNoLeak checks that the canary appears in no file under out and that
// nothing outside out differs from the snapshot before.
func assertNoLeak(t *testing.T, base, out string, before map[string]string) {
	t.Helper()
	for p, c := range snapshot(t, out) {
		if strings.Contains(c, canary) {
			t.Errorf("%s holds the canary", p)
		}
	}
	after := snapshot(t, base)
	for p, c := range after {
		if strings.HasPrefix(p, out+string(filepath.Separator)) {
			continue
		}
		if b, ok := before[p]; !ok || b != c {
			t.Errorf("%s was written outside --out", p)
		}
	}
	for p := range before {
		if _, ok := after[p]; !ok && !strings.HasPrefix(p, out+string(filepath.Separator)) {
			t.Errorf("%s was removed", p)
		}
	}
}

// TestBatchPathTraversal: manifest paths, hobs and jobs, and links in the
// batch folder cannot make the batch read outside the folder or write outside
// --out; each hostile entry is a failed row saying why.
func TestBatchPathTraversal(t *testing.T) {
	long := strings.Repeat("d/", 3000) + "x.xyz"
	tests := []struct {
		name     string
		files    map[string]string // under in/; "->" makes a link
		manifest string            // rows after "path,hob,job"
		row      string            // the summary row that must fail
		errHas   string
	}{
		{"hob ../", nil, "a.xyz,../outside/canary.xyz,", "a.xyz", "manifest.csv:2:7: hob: path is absolute or climbs out"},
		{"hob deep ../", nil, "a.xyz,hobs/../../../../../../../../outside/canary.xyz,", "a.xyz", "hob: path is absolute or climbs out"},
		{"hob absolute", nil, "a.xyz,@canary,", "a.xyz", "hob: path is absolute or climbs out"},
		{"hob windows ..", nil, `a.xyz,..\outside\canary.xyz,`, "a.xyz", `hob: path uses \ as a separator`},
		{"hob NUL", nil, "a.xyz,hob\x00.xyz,", "a.xyz", "hob: path holds a NUL byte"},
		{"hob link out", map[string]string{"hob.xyz": "->../outside/canary.xyz"}, "a.xyz,hob.xyz,", "a.xyz", "hob: path leads through a symbolic link to outside"},
		{"hob link in a linked folder", map[string]string{"h": "->../outside"}, "a.xyz,h/canary.xyz,", "a.xyz", "hob: path leads through a symbolic link to outside"},
		{"hob link loop", map[string]string{"h1.xyz": "->h2.xyz", "h2.xyz": "->h1.xyz"}, "a.xyz,h1.xyz,", "a.xyz", "hob: path cannot be resolved"},
		{"hob is the scan", nil, "a.xyz,a.xyz,", "a.xyz", "hob names the scan itself"},
		{"hob very long", nil, "a.xyz," + long + ",", "a.xyz", "hob: no such file in the batch folder"},
		{"job ../", nil, "a.xyz,,../outside/canary.toml", "a.xyz", "job: path is absolute or climbs out"},
		{"job absolute", nil, "a.xyz,,@canary.toml", "a.xyz", "job: path is absolute or climbs out"},
		{"job link out", map[string]string{"j.toml": "->../outside/canary.toml"}, "a.xyz,,j.toml", "a.xyz", "job: path leads through a symbolic link"},
		{"path ../", nil, "../outside/canary.xyz,,", "manifest.csv line 2", "path: path is absolute or climbs out"},
		{"path absolute", nil, "@canary,,", "manifest.csv line 2", "path: path is absolute or climbs out"},
		{"path very long", nil, long + ",,", long, "names no scan under the batch folder"},
		{"scan link out", map[string]string{"b.xyz": "->../outside/canary.xyz"}, "", "b.xyz", "skipped: symlink points outside the batch folder"},
		{"folder link out", map[string]string{"ext": "->../outside"}, "", "ext/", "skipped: symlink points outside the batch folder"},
		{"scan link loop", map[string]string{"l.xyz": "->l.xyz"}, "", "l.xyz", "skipped: symbolic link cannot be resolved"},
		{"manifest link out", map[string]string{ManifestName: "->../outside/canary.csv"}, "", "", "manifest.csv: path leads through a symbolic link"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			base := t.TempDir()
			outside := filepath.Join(base, "outside")
			in := filepath.Join(base, "in")
			out := filepath.Join(base, "out")
			writeTree(t, base, map[string]string{"outside/canary.xyz": canary + " 1 2 3\n", "outside/canary.toml": canary + " = 1\n",
				"outside/canary.csv": "path\n" + canary + "\n", "in/a.xyz": "1 2 3\n", "in/z.xyz": "4 5 6\n"})
			writeTree(t, in, tc.files)
			if tc.manifest != "" {
				m := strings.ReplaceAll("path,hob,job\n"+tc.manifest+"\n", "@", outside+"/")
				writeTree(t, in, map[string]string{ManifestName: m})
			}
			before := snapshot(t, base)
			spy := &spyAnalyzer{}
			res, err := RunBatch(context.Background(), BatchOptions{Dir: in, Out: out, Job: DefaultJob(), Workers: 2, Analyze: spy.analyze})
			if tc.row == "" { // a configuration error
				if err == nil || !strings.Contains(err.Error(), tc.errHas) || strings.Contains(err.Error(), canary) {
					t.Errorf("error %v, want %q", err, tc.errHas)
				}
			} else {
				if err != nil {
					t.Fatal(err)
				}
				found := false
				for _, r := range res.Summary.Rows {
					if r.Path == tc.row {
						found = true
						if r.Status != StatusFailed || !strings.Contains(r.Error, tc.errHas) {
							t.Errorf("row %s: %s %q, want failed with %q", r.Path, r.Status, r.Error, tc.errHas)
						}
					}
				}
				if !found {
					t.Errorf("no row %s in %v", tc.row, res.Summary.Rows)
				}
				if len(res.Summary.Rows) < 2 {
					t.Errorf("the other scans were not listed: %v", res.Summary.Rows)
				}
			}
			realIn, _ := filepath.EvalSymlinks(in)
			for _, p := range spy.paths {
				if r, err := filepath.EvalSymlinks(p); err != nil || !isInside(realIn, r) {
					t.Errorf("the analyser was given %s, outside the batch folder", p)
				}
			}
			assertNoLeak(t, base, out, before)
		})
	}
}

// TestMergePathTraversal: rows and links in shard outputs cannot make merge
// read outside its inputs or write outside --out.
func TestMergePathTraversal(t *testing.T) {
	tests := []struct {
		name   string
		attack func(t *testing.T, base string, outs []string, out string)
		errHas string
	}{
		{"row ../", func(t *testing.T, base string, o []string, out string) {
			editSummary(t, o[0], func(s *Summary) { s.Rows[0].Path = "../outside" })
		}, "path is absolute or climbs out"},
		{"row deep ../", func(t *testing.T, base string, o []string, out string) {
			editSummary(t, o[0], func(s *Summary) { s.Rows[0].Path = "line0/../../../outside" })
		}, "path is absolute or climbs out"},
		{"row absolute", func(t *testing.T, base string, o []string, out string) {
			editSummary(t, o[0], func(s *Summary) { s.Rows[0].Path = filepath.Join(base, "outside") })
		}, "path is absolute or climbs out"},
		{"row NUL", func(t *testing.T, base string, o []string, out string) {
			editSummary(t, o[0], func(s *Summary) { s.Rows[0].Path = "a\x00b" })
		}, "path holds a NUL byte"},
		{"row windows ..", func(t *testing.T, base string, o []string, out string) {
			editSummary(t, o[0], func(s *Summary) { s.Rows[0].Path = `..\outside` })
		}, "but their batch listed"}, // a plain name on Unix; the entry hash catches the edit
		{"row very long", func(t *testing.T, base string, o []string, out string) {
			editSummary(t, o[0], func(s *Summary) { s.Rows[0].Path = strings.Repeat("d/", 3000) })
		}, "but their batch listed"},
		{"scan folder is a link out", func(t *testing.T, base string, o []string, out string) {
			p := ScanOutDir(o[0], "line0/pan00.xyz")
			if err := os.RemoveAll(p); err != nil {
				t.Fatal(err)
			}
			if err := os.Symlink(filepath.Join(base, "outside"), p); err != nil {
				t.Fatal(err)
			}
		}, "path escapes"},
		{"parent folder is a link out", func(t *testing.T, base string, o []string, out string) {
			p := filepath.Dir(ScanOutDir(o[0], "line0/pan00.xyz"))
			if err := os.RemoveAll(p); err != nil {
				t.Fatal(err)
			}
			if err := os.Symlink(filepath.Join(base, "outside"), p); err != nil {
				t.Fatal(err)
			}
		}, "path escapes"},
		{"out holds a link out", func(t *testing.T, base string, o []string, out string) {
			writeTree(t, out, map[string]string{ScansDir + "/line0": "->../../outside"})
		}, "path escapes"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			base := t.TempDir()
			writeTree(t, base, map[string]string{"outside/report.json": canary, "outside/pan00.xyz/report.json": canary})
			outs := runShards(t, makeScanDir(t, demoContents(6)), base, 2)
			out := filepath.Join(base, "merged")
			tc.attack(t, base, outs, out)
			before := snapshot(t, base)
			_, err := Merge(outs, out)
			if err == nil || !strings.Contains(err.Error(), tc.errHas) {
				t.Errorf("error %v, want %q", err, tc.errHas)
			}
			if err != nil && strings.Contains(err.Error(), canary) {
				t.Errorf("error echoes the canary: %v", err)
			}
			assertNoLeak(t, base, out, before)
		})
	}
}

// TestReadersDoNotEchoContent: the errors of the scan, profile and
// manifest readers name the file, the position and what is wrong, never
// the bytes they found, so a file read by mistake cannot leak into a summary.
func TestReadersDoNotEchoContent(t *testing.T) {
	const s = canary
	scans := map[string]string{
		"text header":         s + ":x:19000:0:99999:7:::\n",
		"text value":          "1 2 3\n4 5 " + s + "\n",
		"text inf":            "1 2 3\n4 5 inf" + s + "\n",
		"text header columns": "x,y," + s + "\n1,2,3\n",
		"stl keyword":         "solid x\nfacet normal 0 0 1\n outer " + s + "\n",
		"stl number":          "solid x\nfacet normal 0 0 1\nouter loop\nvertex 1 2 " + s + "\n",
		"stl start":           "solid x\n" + s + "\n",
		"ply keyword":         "ply\nformat ascii 1.0\n" + s + " vertex 1\nend_header\n",
		"ply encoding":        "ply\nformat " + s + " 1.0\nend_header\n",
		"ply version":         "ply\nformat ascii " + s + "\nend_header\n",
		"ply count":           "ply\nformat ascii 1.0\nelement vertex " + s + "\nend_header\n",
		"ply type":            "ply\nformat ascii 1.0\nelement vertex 1\nproperty " + s + " x\nend_header\n",
		"ply value": "ply\nformat ascii 1.0\nelement vertex 1\nproperty float x\nproperty float y\nproperty float z\nend_header\n" +
			"1 2 " + s + "\n",
		"ply extra": "ply\nformat ascii 1.0\nelement vertex 1\nproperty float x\nproperty float y\nproperty float z\nend_header\n" +
			"1 2 3 " + s + "\n",
	}
	for name, in := range scans {
		_, err := scan.Read(strings.NewReader(in), scan.ReadOptions{Name: "f"})
		if err == nil || strings.Contains(err.Error(), s) {
			t.Errorf("scan %s: error %v, want one without the file's content", name, err)
		}
	}
	profiles := map[string]string{
		"header": s + "\n0,0\n",
		"value":  "r_mm,z_mm\n0," + s + "\n",
		"nan":    "r_mm,z_mm\nNaN" + s + ",0\n",
	}
	for name, in := range profiles {
		_, _, err := contact.ReadProfile(strings.NewReader(in), "f", "z_mm")
		if err == nil || strings.Contains(err.Error(), s) {
			t.Errorf("profile %s: error %v, want one without the file's content", name, err)
		}
	}
}
