package main

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gapflux/pipeline"
)

// gapflux runs the command line in-process.
func gapflux(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var o, e bytes.Buffer
	code = run(context.Background(), args, &o, &e)
	return code, o.String(), e.String()
}

func TestUsageAndHelp(t *testing.T) {
	tests := []struct {
		args []string
		code int
		out  string // expected in stdout+stderr
	}{
		{nil, exitUsage, "usage: gapflux"},
		{[]string{"help"}, exitOK, "analyze PAN"},
		{[]string{"version"}, exitOK, "gapflux "},
		{[]string{"frobnicate"}, exitUsage, `unknown command "frobnicate"`},
		{[]string{"analyze"}, exitUsage, "want exactly one scan file"},
		{[]string{"analyze", "--cell-mm", "-1", "x.stl"}, exitUsage, "grid.cell_mm must be 0 (automatic) or in [0.01, 10] mm (got -1"},
		{[]string{"analyze", "--nope", "x.stl"}, exitUsage, "unknown flag --nope"},
		{[]string{"analyze", "--fields", "zip", "x.stl"}, exitUsage, "outputs.fields"},
		{[]string{"analyze", "--offset-mm", "3", "x.stl"}, exitUsage, "want 2 comma-separated numbers"},
		{[]string{"analyze", "--help"}, exitOK, "--cell-mm"},
		{[]string{"analyze", "no-such-file.stl"}, exitUsage, "no-such-file.stl: not a readable scan file"},
		{[]string{"analyze", "--hob", "no-such-hob.xyz", "../../testdata/dish.stl"}, exitUsage, "no-such-hob.xyz"},
		{[]string{"batch", "no-such-dir", "--out", filepath.Join(t.TempDir(), "o")}, exitUsage, "not a readable folder"},
		{[]string{"batch", "somewhere"}, exitUsage, "--out OUT is missing"},
		{[]string{"batch", "no-such-dir", "--out", "x", "--shard", "4/3"}, exitUsage, "1 <= K <= N"},
		{[]string{"merge", "--out", "x"}, exitUsage, "want shard output folders"},
		{[]string{"merge", "no-such-shard", "--out", filepath.Join(t.TempDir(), "m")}, exitFail, "shard folder no-such-shard does not exist: give the --out folders of the shard batches"},
		{[]string{"synth"}, exitUsage, "--out is required"},
		{[]string{"synth", "--shape", "blob", "--out", filepath.Join(t.TempDir(), "a.xyz")}, exitUsage, "shape"},
		{[]string{"job"}, exitOK, "[interface]"},
		{[]string{"materials"}, exitOK, "glass-ceramic"},
	}
	for _, tc := range tests {
		t.Run(strings.Join(tc.args, " "), func(t *testing.T) {
			code, out, errOut := gapflux(t, tc.args...)
			if code != tc.code {
				t.Errorf("exit %d, want %d\nstdout: %s\nstderr: %s", code, tc.code, out, errOut)
			}
			if !strings.Contains(out+errOut, tc.out) {
				t.Errorf("output lacks %q:\n%s%s", tc.out, out, errOut)
			}
		})
	}
}

// TestHelpStatesExitCodes (issue 14, item 12): every command's --help
// states its exit codes and the out-of-memory caveat.
func TestHelpStatesExitCodes(t *testing.T) {
	for _, cmd := range []string{"analyze", "batch", "merge", "synth", "demo", "materials", "job"} {
		code, out, errOut := gapflux(t, cmd, "--help")
		if code != exitOK || !strings.Contains(out+errOut, "exit codes: 0 ") || !strings.Contains(out+errOut, "out of memory") {
			t.Errorf("%s --help: exit %d, no exit codes:\n%s%s", cmd, code, out, errOut)
		}
	}
	_, out, _ := gapflux(t, "help")
	if !strings.Contains(out, "2 usage or configuration error") || !strings.Contains(out, "out of memory") {
		t.Errorf("help lacks the exit codes:\n%s", out)
	}
}

// TestBatchConfigurationExitsTwo (issue 14, items 5, 10, 12): configuration
// errors of a batch exit 2 with a message saying what to do.
func TestBatchConfigurationExitsTwo(t *testing.T) {
	scans := func(t *testing.T, extra map[string]string) string {
		dir := t.TempDir()
		b, err := os.ReadFile("../../testdata/flat_noisy.xyz")
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(dir, "a.xyz"), b, 0o644)
		for name, c := range extra {
			os.WriteFile(filepath.Join(dir, name), []byte(c), 0o644)
		}
		return dir
	}
	t.Run("out is the scan folder", func(t *testing.T) {
		dir := scans(t, nil)
		code, _, errOut := gapflux(t, "batch", dir, "--out", dir)
		if code != exitUsage || !strings.Contains(errOut, "give the outputs a folder of their own") {
			t.Errorf("exit %d: %s", code, errOut)
		}
	})
	t.Run("manifest unreadable", func(t *testing.T) {
		dir := scans(t, map[string]string{"manifest.csv": "path,colour\na.xyz,red\n"})
		code, _, errOut := gapflux(t, "batch", dir, "--out", filepath.Join(t.TempDir(), "o"), "--quiet")
		if code != exitUsage || !strings.Contains(errOut, "not a known column") {
			t.Errorf("exit %d: %s", code, errOut)
		}
	})
	t.Run("job with an unknown material", func(t *testing.T) {
		dir := scans(t, map[string]string{"job.toml": "[hob]\nmaterial = \"unobtainium\"\n"})
		code, _, errOut := gapflux(t, "batch", dir, "--out", filepath.Join(t.TempDir(), "o"), "--quiet")
		if code != exitUsage || !strings.Contains(errOut, "unobtainium") {
			t.Errorf("exit %d: %s", code, errOut)
		}
		code, _, errOut = gapflux(t, "analyze", "--job", filepath.Join(dir, "job.toml"), filepath.Join(dir, "a.xyz"))
		if code != exitUsage || !strings.Contains(errOut, "unobtainium") {
			t.Errorf("analyze: exit %d: %s", code, errOut)
		}
	})
	t.Run("output in use", func(t *testing.T) {
		dir := scans(t, nil)
		out := t.TempDir()
		l, err := pipeline.LockOutput(out)
		if err != nil {
			t.Fatal(err)
		}
		defer l.Unlock()
		code, _, errOut := gapflux(t, "batch", dir, "--out", out)
		if code != exitUsage || !strings.Contains(errOut, "is in use by batch pid") || !strings.Contains(errOut, "wait for it or remove") {
			t.Errorf("exit %d: %s", code, errOut)
		}
	})
}

func TestJobCommandRoundTrips(t *testing.T) {
	code, out, _ := gapflux(t, "job")
	if code != exitOK {
		t.Fatal(code)
	}
	path := filepath.Join(t.TempDir(), "job.toml")
	if err := os.WriteFile(path, []byte(out), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := pipeline.ReadJobFile(path); err != nil {
		t.Errorf("the printed job does not read back: %v", err)
	}
	bad := filepath.Join(t.TempDir(), "bad.toml")
	os.WriteFile(bad, []byte("[pan]\nmas_kg = 1\n"), 0o644)
	code, _, errOut := gapflux(t, "analyze", "--job", bad, "x.stl")
	if code != exitUsage || !strings.Contains(errOut, `unknown key "pan.mas_kg"`) {
		t.Errorf("bad job: exit %d, %s", code, errOut)
	}
}

// TestAnalyzeJSON runs analyze on a committed sample (a 40 mm dish made by
// our generator, truth in testdata/dish.truth.json) and reads the report.
func TestAnalyzeJSON(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain")
	}
	out := t.TempDir()
	code, stdout, stderr := gapflux(t, "analyze", "../../testdata/dish.stl", "--cell-mm", "0.5", "--cutoff-mm", "4",
		"--mode", "temperature", "--json", "--out", out)
	if code != exitOK && code != exitFail {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var rep pipeline.Report
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil {
		t.Fatalf("stdout is not the report: %v\n%s", err, stdout)
	}
	// The generator's truth: a 0.1 mm dish on a 40 mm base.
	if g := rep.Geometry; math.Abs(g.ConcavityMM-0.1) > 0.02*0.1+3*0.005 || g.Shape != "dished" {
		t.Errorf("concavity %.4f mm (%s), want 0.1 mm dished", g.ConcavityMM, g.Shape)
	}
	if !strings.Contains(stderr, "concave (dished") {
		t.Errorf("the human summary went missing or lacks the shape word:\n%s", stderr)
	}
	for _, f := range []string{"report.json", "rings.csv", "gap.png", "flux.png", "rings.png", "gap.svg", "fields.vti"} {
		if st, err := os.Stat(filepath.Join(out, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s: %v", f, err)
		}
	}
}

// TestBatchCommand checks the batch's exit codes and summary, and that a
// second run does no work.
func TestBatchCommand(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain")
	}
	dir := t.TempDir()
	for _, f := range []string{"dish.stl", "flat_noisy.xyz"} {
		b, err := os.ReadFile(filepath.Join("../../testdata", f))
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(dir, f), b, 0o644)
	}
	os.WriteFile(filepath.Join(dir, "broken.ply"), []byte("ply\nformat ascii 1.0\nelement vertex 5\nproperty float x\nend_header\n1\n"), 0o644)
	// 1 kg of water: the 40 mm noisy sample base, rocking and losing half
	// its power, would take hours to heat 1.5 kg (or never get there).
	os.WriteFile(filepath.Join(dir, "job.toml"), []byte("[grid]\ncell_mm = 1.0\ncutoff_mm = 4.0\n[hob]\nmode = \"temperature\"\n[water]\nmass_kg = 1.0\n"), 0o644)
	out := filepath.Join(t.TempDir(), "out")
	code, stdout, stderr := gapflux(t, "batch", dir, "--out", out, "--workers", "2", "--progress", "lines")
	if code != exitFail {
		t.Errorf("exit %d with a broken file, want %d\n%s%s", code, exitFail, stdout, stderr)
	}
	if !strings.Contains(stdout, "3 scans:") || !strings.Contains(stdout, "1 failed") {
		t.Errorf("stdout: %s", stdout)
	}
	if !strings.Contains(stderr, "[3/3]") {
		t.Errorf("no progress lines: %s", stderr)
	}
	code2, stdout2, _ := gapflux(t, "batch", dir, "--out", out, "--quiet")
	if code2 != exitFail || stdout2 != "" {
		t.Errorf("quiet re-run: exit %d, stdout %q", code2, stdout2)
	}
	b, _ := os.ReadFile(filepath.Join(out, "run.log"))
	if !strings.Contains(string(b), "analysed") && !strings.Contains(string(b), "skipped 3") {
		t.Errorf("run log does not show the skipped re-run:\n%s", b)
	}
}

// TestFlagsOverrideJob: only the flags given change the job; the rest keep
// the job file's (here the default) values.
func TestFlagsOverrideJob(t *testing.T) {
	fs := newFlags("analyze", "", &bytes.Buffer{})
	jf := addJobFlags(fs, "job file")
	if err := parse(fs, []string{"--cell-mm", "1.5", "--mode", "temperature", "--offset-mm", "3,-4", "--units", "in", "--water-c", "45"}); err != nil {
		t.Fatal(err)
	}
	job, err := jf.job("")
	if err != nil {
		t.Fatal(err)
	}
	d := pipeline.DefaultJob()
	if job.Grid.CellMM != 1.5 || job.Hob.Mode != "temperature" || job.Pan.OffsetMM != [2]float64{3, -4} ||
		job.Grid.Units != "in" || job.Water.SteadyC != 45 {
		t.Errorf("flags not applied: %+v %+v %+v", job.Grid, job.Hob.Mode, job.Pan.OffsetMM)
	}
	if job.Grid.CutoffMM != d.Grid.CutoffMM || job.Grid.RockMM != d.Grid.RockMM || job.Limits.MaxPoints != d.Limits.MaxPoints {
		t.Errorf("unset flags changed the job: %+v", job.Grid)
	}
}

// TestAnalyzeRejectedExitsOne: a scan written in inches and read as mm is
// rejected by the data-quality gate, with the units hint and exit code 1.
func TestAnalyzeRejectedExitsOne(t *testing.T) {
	pan := filepath.Join(t.TempDir(), "pan.xyz")
	if code, _, stderr := gapflux(t, "synth", "--shape", "dish", "--spacing-mm", "2", "--unit", "in", "--out", pan); code != exitOK {
		t.Fatalf("synth: exit %d: %s", code, stderr)
	}
	code, stdout, stderr := gapflux(t, "analyze", pan, "--units", "mm")
	if code != exitFail {
		t.Errorf("exit %d, want %d\n%s%s", code, exitFail, stdout, stderr)
	}
	if !strings.Contains(stdout, "quality: REJECTED") || !strings.Contains(stdout, "is the file in inches? try --units in") {
		t.Errorf("printed summary lacks the rejection and hint:\n%s", stdout)
	}
}
