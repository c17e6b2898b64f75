package pipeline

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gapflux/pipeline/repeat"
	"gapflux/scan/synth"
)

// fakeReport writes dir/name/report.json with the given concavity, job and
// pan hashes and, when u > 0, an uncertainty section for concavity_mm.
func fakeReport(t *testing.T, dir, name string, conc float64, job, pan string, u float64) {
	t.Helper()
	rep := Report{Schema: SchemaReport, Input: ReportInput{Pan: FileReport{SHA256: pan}, JobSHA256: job},
		Geometry: &GeometryReport{ConcavityMM: conc, FlatnessMZMM: 2 * conc}, Warnings: []string{}}
	if u > 0 {
		rep.Uncertainty = &UncertaintyReport{ConcavityMM: &FigureUncertainty{Value: conc, U: u, Low: conc - 2*u, High: conc + 2*u}}
	}
	b, err := json.Marshal(rep)
	if err != nil {
		t.Fatal(err)
	}
	writeRepeatFile(t, filepath.Join(dir, name, "report.json"), b)
}

func writeRepeatFile(t *testing.T, path string, b []byte) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

func figureOf(t *testing.T, st *repeat.Study, name string) repeat.Figure {
	t.Helper()
	for _, f := range st.Figures {
		if f.Name == name {
			return f
		}
	}
	t.Fatalf("no figure %s", name)
	return repeat.Figure{}
}

func TestRepeatStudyFolders(t *testing.T) {
	dir := t.TempDir()
	// 0.150, 0.151, 0.152, 0.153: s = 0.00129099 (Python statistics.stdev),
	// 3 dof; lower 95 % bound of σ = s·√(3/9.348404) = 0.000731333 (scipy
	// 1.10.1): u = 0.001 covers it.
	for i, c := range []float64{0.150, 0.151, 0.152, 0.153} {
		fakeReport(t, dir, fmt.Sprintf("b/scan%d", i), c, "job1", fmt.Sprintf("pan%d", i), 0.001)
	}
	st, err := RepeatStudy(context.Background(), RepeatOptions{Dir: dir})
	if err != nil {
		t.Fatal(err)
	}
	c := figureOf(t, st, "concavity_mm").Stats
	if c == nil || c.N != 4 || c.DOF != 3 || math.Abs(c.SR-0.00129099) > 1e-8 || c.Coverage != repeat.Covered ||
		c.Within != 4 || c.WithInterval != 4 || math.Abs(*c.Mean-0.1515) > 1e-12 {
		t.Errorf("concavity_mm: %+v", c)
	}
	if f := figureOf(t, st, "flatness_mz_mm").Stats; f == nil || f.Coverage != repeat.NoUncertainty || math.Abs(f.SR-2*0.00129099) > 2e-8 {
		t.Errorf("flatness_mz_mm (no uncertainty): %+v", f)
	}
	if f := figureOf(t, st, "loss_pct"); f.Stats != nil || f.Note == "" {
		t.Errorf("loss_pct (in no report): %+v", f)
	}
	if got := figureOf(t, st, "concavity_mm").Groups[0].Results[3].Name; got != "b/scan3" {
		t.Errorf("result name %q, want the report folder b/scan3", got)
	}
	out := t.TempDir()
	files, err := WriteRepeat(out, st)
	if err != nil || len(files) != len(RepeatFiles) {
		t.Fatalf("WriteRepeat: %v %v", files, err)
	}
	first, _ := os.ReadFile(files[1])
	st2, _ := RepeatStudy(context.Background(), RepeatOptions{Dir: dir})
	WriteRepeat(out, st2)
	if again, _ := os.ReadFile(files[1]); !bytes.Equal(first, again) {
		t.Error("repeat.json differs between two runs")
	}
}

func TestRepeatStudyBadInput(t *testing.T) {
	for _, tc := range []struct {
		name   string
		make   func(t *testing.T, dir string)
		opt    RepeatOptions
		errHas string // "" : no error
		warn   string
	}{
		{"one report", func(t *testing.T, dir string) { fakeReport(t, dir, "a", 0.1, "j", "p1", 0) }, RepeatOptions{}, "at least two reports", ""},
		{"empty folder", func(t *testing.T, dir string) {}, RepeatOptions{}, "at least two reports", ""},
		{"mixed jobs", func(t *testing.T, dir string) {
			fakeReport(t, dir, "a", 0.1, "j1", "p1", 0)
			fakeReport(t, dir, "b", 0.1, "j2", "p2", 0)
		}, RepeatOptions{}, "different jobs", ""},
		{"mixed jobs allowed", func(t *testing.T, dir string) {
			fakeReport(t, dir, "a", 0.1, "j1", "p1", 0)
			fakeReport(t, dir, "b", 0.1, "j2", "p2", 0)
		}, RepeatOptions{AllowMixedJobs: true}, "", "different jobs"},
		{"same scan twice", func(t *testing.T, dir string) {
			fakeReport(t, dir, "a", 0.1, "j", "p1", 0)
			fakeReport(t, dir, "b", 0.1, "j", "p1", 0)
		}, RepeatOptions{}, "", "same scan file analysed more than once (a = b)"},
		{"number out of range", func(t *testing.T, dir string) {
			fakeReport(t, dir, "a", 0.1, "j", "p1", 0)
			writeRepeatFile(t, filepath.Join(dir, "b", "report.json"), []byte(`{"schema":"gapflux.report/1","geometry":{"concavity_mm":1e999}}`))
		}, RepeatOptions{}, filepath.Join("b", "report.json") + ": not a report", ""},
		{"other schema", func(t *testing.T, dir string) {
			fakeReport(t, dir, "a", 0.1, "j", "p1", 0)
			writeRepeatFile(t, filepath.Join(dir, "b", "report.json"), []byte(`{"schema":"gapflux.compare/1"}`))
		}, RepeatOptions{}, "schema", ""},
		{"interval reversed", func(t *testing.T, dir string) {
			fakeReport(t, dir, "a", 0.1, "j", "p1", 0)
			writeRepeatFile(t, filepath.Join(dir, "b", "report.json"), []byte(`{"schema":"gapflux.report/1","input":{"job_sha256":"j"},`+
				`"geometry":{"concavity_mm":0.1},"uncertainty":{"concavity_mm":{"value":0.1,"u":0.01,"low":0.2,"high":0.1}}}`))
		}, RepeatOptions{}, "concavity_mm: b: the 95 % interval", ""},
		{"damaged summary", func(t *testing.T, dir string) {
			writeRepeatFile(t, filepath.Join(dir, "summary.json"), []byte(`{"schema":"gapflux.report/1"}`))
		}, RepeatOptions{}, "not a batch summary", ""},
		{"summary row leaving the folder", func(t *testing.T, dir string) {
			writeRepeatFile(t, filepath.Join(dir, "summary.json"), []byte(`{"schema":"gapflux.summary/1","rows":[{"path":"../../x","status":"ok"}]}`))
		}, RepeatOptions{}, "leaves the output folder", ""},
		{"summary row without its report", func(t *testing.T, dir string) {
			writeRepeatFile(t, filepath.Join(dir, "summary.json"), []byte(`{"schema":"gapflux.summary/1","rows":[{"path":"x.ply","status":"ok"},{"path":"y.ply","status":"failed"}]}`))
		}, RepeatOptions{}, "run the batch again", ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			tc.make(t, dir)
			opt := tc.opt
			opt.Dir = dir
			st, err := RepeatStudy(context.Background(), opt)
			if tc.errHas != "" {
				if err == nil || !strings.Contains(err.Error(), tc.errHas) || !IsConfigError(err) {
					t.Fatalf("err = %v, want a configuration error containing %q", err, tc.errHas)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if !strings.Contains(strings.Join(st.Warnings, "\n"), tc.warn) {
				t.Errorf("warnings %q, want one containing %q", st.Warnings, tc.warn)
			}
		})
	}
}

func TestRepeatStudyManifestBaseID(t *testing.T) {
	dir := t.TempDir()
	// Base A: 1, 2, 3 (s² = 1, 2 dof); base B: 10, 14 (s² = 8, 1 dof);
	// pooled s_r = √(10/3) (analytic); c.ply has no base_id, d.ply no row.
	for _, r := range []struct {
		name string
		c    float64
	}{{"a1.ply", 1}, {"a2.ply", 2}, {"a3.ply", 3}, {"b1.ply", 10}, {"b2.ply", 14}, {"c.ply", 50}, {"d.ply", 60}} {
		fakeReport(t, filepath.Join(dir, ScansDir), r.name, r.c, "j", r.name, 0)
	}
	var rows []string
	for _, n := range []string{"a1", "a2", "a3", "b1", "b2", "c", "d"} {
		rows = append(rows, fmt.Sprintf(`{"path":"%s.ply","status":"ok"}`, n))
	}
	writeRepeatFile(t, filepath.Join(dir, "summary.json"), []byte(`{"schema":"gapflux.summary/1","rows":[`+strings.Join(rows, ",")+`]}`))
	man := filepath.Join(t.TempDir(), "manifest.csv")
	writeRepeatFile(t, man, []byte("path,base_id,lot\na1.ply,A,1\na2.ply,A,1\na3.ply,A,2\nb1.ply,B,\nb2.ply,B,\nc.ply,,\n"))
	st, err := RepeatStudy(context.Background(), RepeatOptions{Dir: dir, Manifest: man})
	if err != nil {
		t.Fatal(err)
	}
	f := figureOf(t, st, "concavity_mm")
	if s := f.Stats; s == nil || s.Bases != 2 || s.N != 5 || s.DOF != 3 || math.Abs(s.SR-math.Sqrt(10.0/3)) > 1e-5 || s.Mean != nil {
		t.Errorf("pooled: %+v", s)
	}
	if len(f.Groups) != 2 || f.Groups[0].Base != "A" || f.Groups[1].Mean != 12 {
		t.Errorf("groups: %+v", f.Groups)
	}
	if w := strings.Join(st.Warnings, "\n"); !strings.Contains(w, "2 report(s) without a base_id") || !strings.Contains(w, "c.ply, d.ply") {
		t.Errorf("warnings %q, want the two scans without base_id named", st.Warnings)
	}
}

func TestManifestBaseID(t *testing.T) {
	long := strings.Repeat("x", 101)
	for _, tc := range []struct {
		name, csv, want string
		bad             bool
	}{
		{"plain", "path,base_id\na.ply,SN-0042\n", "SN-0042", false},
		{"trimmed", "path,base_id\na.ply, pan 7 \n", "pan 7", false},
		{"absent", "path\na.ply\n", "", false},
		{"control character", "path,base_id\na.ply,\"x\ty\"\n", "", true},
		{"too long", "path,base_id\na.ply," + long + "\n", "", true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, err := ReadManifest(strings.NewReader(tc.csv), "manifest.csv")
			if err != nil {
				t.Fatal(err)
			}
			if tc.bad {
				if len(m.Problems) != 1 || !strings.Contains(m.Problems[0].Err.Error(), "manifest.csv:2:") || !strings.Contains(m.Problems[0].Err.Error(), "base_id") {
					t.Errorf("problems %v, want one naming line 2 and base_id", m.Problems)
				}
				return
			}
			if got := m.Rows["a.ply"].BaseID; got != tc.want || len(m.Problems) != 0 {
				t.Errorf("base_id %q (problems %v), want %q", got, m.Problems, tc.want)
			}
		})
	}
}

// TestRepeatBatchRescans is the end-to-end check of issue 10 part 5: six
// re-scans of one dished base (new noise, a new frame, a turned form),
// batched with uncertainty off, then "repeat" over the batch's output. The
// s_r of concavity must agree within a factor of 2 with the noise-driven
// spread observed directly: the RMS deviation of the re-scans' concavity
// from that of the same base scanned without noise.
func TestRepeatBatchRescans(t *testing.T) {
	if testing.Short() {
		t.Skip("seven analyses: about half a minute")
	}
	scans, out := t.TempDir(), t.TempDir()
	job := DefaultJob()
	job.Hob.Mode = "temperature"
	job.Grid.CellMM = 1
	job.Uncertainty.Mode = "off"
	const n = 6
	spec := func(i int, noise float64) synth.Spec {
		return synth.Spec{Shape: synth.Dish, DiameterM: 0.16, SagM: 0.3e-3, NoiseM: noise, SpacingM: 1e-3,
			Seed: uint64(200 + i), FormTurnDeg: 23 * float64(i), RotationDeg: [3]float64{0.2 * float64(i), -0.3 * float64(i), 41 * float64(i)}}
	}
	var man strings.Builder
	man.WriteString("path,base_id\n")
	for i := range n {
		writeSynth(t, scans, fmt.Sprintf("dish%d", i), spec(i, 8e-6), synth.Encoding{Format: "ply", Binary: true})
		fmt.Fprintf(&man, "dish%d.ply,pan-1\n", i)
	}
	// The batch reads the manifest with its base_id column (and ignores it).
	writeRepeatFile(t, filepath.Join(scans, ManifestName), []byte(man.String()))
	res, err := RunBatch(context.Background(), BatchOptions{Dir: scans, Out: out, Job: job, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if res.Summary.Counts[StatusOK]+res.Summary.Counts[StatusOut] != n {
		t.Fatalf("batch counts %v, want %d analysed", res.Summary.Counts, n)
	}
	// The same base without noise, analysed directly.
	ref := writeSynth(t, t.TempDir(), "dish-exact", spec(0, 0), synth.Encoding{Format: "ply", Binary: true})
	exact, err := Analyze(context.Background(), ScanInput{PanPath: ref, Name: filepath.Base(ref), Job: job})
	if err != nil {
		t.Fatal(err)
	}
	c0 := exact.Report.Geometry.ConcavityMM
	var ss float64
	for _, r := range res.Summary.Rows {
		d := *r.ConcavityMM - c0
		ss += d * d
	}
	spread := math.Sqrt(ss / n)

	for _, manifest := range []string{"", filepath.Join(scans, ManifestName)} {
		st, err := RepeatStudy(context.Background(), RepeatOptions{Dir: out, Manifest: manifest})
		if err != nil {
			t.Fatal(err)
		}
		f := figureOf(t, st, "concavity_mm")
		s := f.Stats
		if s == nil || s.N != n || s.DOF != n-1 || s.Bases != 1 || s.Coverage != repeat.NoUncertainty || s.WithInterval != 0 {
			t.Fatalf("manifest %q: concavity_mm %+v", manifest, s)
		}
		t.Logf("concavity: mean %.6f mm, s_r %.3g mm, noise-free %.6f mm, RMS deviation from it %.3g mm (ratio %.2f)",
			*s.Mean, s.SR, c0, spread, s.SR/spread)
		if r := s.SR / spread; r < 0.5 || r > 2 {
			t.Errorf("s_r %.3g mm is not within a factor of 2 of the observed noise-driven spread %.3g mm", s.SR, spread)
		}
		for _, name := range []string{"flatness_mz_mm", "contact_area_pct", "loss_pct", "extra_time_pct"} {
			if g := figureOf(t, st, name); g.Stats == nil || g.Stats.N != n {
				t.Errorf("%s: %+v", name, g.Stats)
			} else {
				t.Logf("%s: mean %.4g, s_r %.3g, r %.3g", name, *g.Stats.Mean, g.Stats.SR, g.Stats.R)
			}
		}
		if manifest != "" && f.Groups[0].Base != "pan-1" {
			t.Errorf("base %q, want pan-1 from the manifest", f.Groups[0].Base)
		}
	}
	st, _ := RepeatStudy(context.Background(), RepeatOptions{Dir: out})
	files, err := WriteRepeat(filepath.Join(out, "repeat"), st)
	if err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(files[0])
	if lines := strings.Count(string(b), "\n"); lines != 1+figRocks {
		t.Errorf("repeat.csv has %d lines, want a header and %d figures:\n%s", lines, figRocks, b)
	}
}
