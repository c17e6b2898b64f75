package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gapflux/pipeline"
)

func TestDesignCommand(t *testing.T) {
	for _, tc := range []struct {
		args []string
		code int
		out  string
	}{
		{[]string{"design"}, exitUsage, "want --cold-mm FROM:TO:STEP"},
		{[]string{"design", "--cold-mm", "0.5:0:0.1"}, exitUsage, "TO is below FROM"},
		{[]string{"design", "--cold-mm", "0:1:0"}, exitUsage, "STEP must be above 0"},
		{[]string{"design", "--cold-mm", "0:0.1:0.1", "--diameter-mm", "5"}, exitUsage, "want 10 to 1000 mm"},
		{[]string{"design", "--cold-mm", "0:0.1:0.1", "--job", "no-such-job.toml"}, exitUsage, "no-such-job.toml"},
		{[]string{"design", "--help"}, exitOK, "--cold-mm"},
	} {
		code, o, e := gapflux(t, tc.args...)
		if code != tc.code || !strings.Contains(o+e, tc.out) {
			t.Errorf("%q: exit %d, output %q; want exit %d and %q", tc.args, code, o+e, tc.code, tc.out)
		}
	}
	if testing.Short() {
		t.Skip("a design run solves the hot state")
	}
	out := t.TempDir()
	code, o, e := gapflux(t, "design", "--cold-mm", "0:0.1:0.1", "--diameter-mm", "160", "--out", out)
	if code != exitOK {
		t.Fatalf("exit %d: %s%s", code, o, e)
	}
	b, err := os.ReadFile(filepath.Join(out, "design.json"))
	if err != nil {
		t.Fatal(err)
	}
	var tab pipeline.DesignTable
	if err := json.Unmarshal(b, &tab); err != nil {
		t.Fatal(err)
	}
	if tab.DiameterMM != 160 || len(tab.Rows) != 2 || !strings.Contains(o, tab.Statement) {
		t.Errorf("diameter %g mm, %d rows, statement %q; output:\n%s", tab.DiameterMM, len(tab.Rows), tab.Statement, o)
	}
	// The same command gives the same bytes.
	out2 := t.TempDir()
	if code, _, e := gapflux(t, "design", "--cold-mm", "0:0.1:0.1", "--diameter-mm", "160", "--out", out2); code != exitOK {
		t.Fatal(e)
	}
	for _, f := range []string{"design.csv", "design.json", "design.svg"} {
		a, _ := os.ReadFile(filepath.Join(out, f))
		b, _ := os.ReadFile(filepath.Join(out2, f))
		if len(a) == 0 || string(a) != string(b) {
			t.Errorf("%s: two runs differ (or empty)", f)
		}
	}
}
