package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestAnalyzeFromReport: a report written by analyze --out is re-run by
// analyze --from-report byte for byte (exit code as the verdict's), and
// the flags --from-report cannot take are usage errors.
func TestAnalyzeFromReport(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain")
	}
	out := filepath.Join(t.TempDir(), "out")
	code, stdout, stderr := gapflux(t, "analyze", "--cell-mm", "2", "--water-c", "55", "--out", out, "../../testdata/dish.stl")
	if code == exitUsage {
		t.Fatalf("analyze: exit %d\n%s%s", code, stdout, stderr)
	}
	report := filepath.Join(out, "report.json")
	before, err := os.ReadFile(report)
	if err != nil {
		t.Fatal(err)
	}
	again := filepath.Join(t.TempDir(), "again")
	code2, stdout2, stderr2 := gapflux(t, "analyze", "--from-report", report, "--out", again)
	if code2 != code {
		t.Errorf("re-run exit %d, the analysis exited %d\n%s%s", code2, code, stdout2, stderr2)
	}
	if !strings.Contains(stdout2, "byte for byte") {
		t.Errorf("re-run does not say it reproduced the report:\n%s%s", stdout2, stderr2)
	}
	after, err := os.ReadFile(filepath.Join(again, "report.json"))
	if err != nil {
		t.Fatal(err)
	}
	if string(after) != string(before) {
		t.Errorf("re-run's report.json differs from the original")
	}
	if !strings.Contains(string(before), `"steady_c": 55`) {
		t.Errorf("the flag --water-c 55 is not in the recorded job")
	}

	bad := []struct {
		args []string
		want string
	}{
		{[]string{"analyze", "--from-report", report, "--cell-mm", "1"}, "--cell-mm cannot be combined with --from-report"},
		{[]string{"analyze", "--from-report", report, "--hob", "h.xyz"}, "--hob cannot be combined"},
		{[]string{"analyze", "--from-report", report, "pan.stl"}, "takes no scan argument"},
		{[]string{"analyze", "--from-report", filepath.Join(out, "rings.csv")}, "not a gapflux report.json"},
		{[]string{"analyze", "--from-report", filepath.Join(out, "none.json")}, "none.json"},
	}
	for _, tc := range bad {
		code, o, e := gapflux(t, tc.args...)
		if code != exitUsage || !strings.Contains(o+e, tc.want) {
			t.Errorf("%v: exit %d, output %q; want exit %d and %q", tc.args, code, o+e, exitUsage, tc.want)
		}
	}
}
