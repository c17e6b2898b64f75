package pipeline

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gapflux/pipeline/quality"
	"gapflux/scan/synth"
)

// unitBase is a 200 mm dished base scanned as a sparse cloud, for the unit
// tests: quick to read and level.
func unitBase() synth.Spec {
	return synth.Spec{Shape: synth.Dish, DiameterM: 0.2, SagM: 0.3e-3, NoiseM: 8e-6, SpacingM: 2e-3, Seed: 5}
}

// TestAnalyzeRejectsWrongUnits writes the same base in inches, metres and
// micrometres without a unit hint (no header), reads it as mm, and checks
// that the gate rejects it before pose and heat, naming the right unit.
func TestAnalyzeRejectsWrongUnits(t *testing.T) {
	tests := []struct {
		unit, words string
		diameterMM  float64 // as read
	}{
		{"in", "inches", 200 / 25.4},
		{"m", "metres", 0.2},
		{"um", "micrometres", 200000},
	}
	for _, tc := range tests {
		t.Run(tc.unit, func(t *testing.T) {
			res := analyzeSynth(t, unitBase(), synth.Encoding{Format: "xyz", Unit: tc.unit, NoHeader: true}, smallJob())
			rep := res.Report
			if !rep.Rejected() {
				t.Fatalf("quality %+v, want reject", rep.Quality)
			}
			if rep.Pose != nil || rep.Heat != nil || rep.Heatup != nil || rep.Verdict != nil {
				t.Error("a rejected scan went on to pose, heat or verdict")
			}
			c := rep.Quality.Checks[0]
			if c.Name != quality.Diameter || c.Status != quality.Reject {
				t.Fatalf("first check %+v, want %s rejected", c, quality.Diameter)
			}
			// The circle fit finds the rim within 1 % (sparse 2 mm cloud).
			if got := *c.Figure; got < 0.99*tc.diameterMM || got > 1.01*tc.diameterMM {
				t.Errorf("diameter %.4g mm as read, want %.4g ± 1 %%", got, tc.diameterMM)
			}
			want := "is the file in " + tc.words + "? try --units " + tc.unit
			if !strings.Contains(c.Message, want) {
				t.Errorf("message %q lacks %q", c.Message, want)
			}
			if s := HumanSummary(res); !strings.Contains(s, "quality: REJECTED") || !strings.Contains(s, want) {
				t.Errorf("printed summary lacks the rejection:\n%s", s)
			}
			if !strings.Contains(strings.Join(rep.Warnings, "\n"), "quality: "+c.Message) {
				t.Errorf("warnings %q lack the rejection", rep.Warnings)
			}
		})
	}
	// Read in the right unit, the same file passes the diameter check.
	job := smallJob()
	job.Grid.Units = "in"
	res := analyzeSynth(t, unitBase(), synth.Encoding{Format: "xyz", Unit: "in", NoHeader: true}, job)
	if q := res.Report.Quality; q == nil || q.Status == quality.Reject || q.Checks[0].Status != quality.OK {
		t.Errorf("read as inches: quality %+v, want the diameter ok", q)
	}
}

// TestBatchRejectedRow runs a batch over a sound scan and one written in
// inches: the summary shows the inches scan as rejected with its quality and
// warnings columns, the batch exits 1, and a second run keeps the row
// without analysing again.
func TestBatchRejectedRow(t *testing.T) {
	dir := t.TempDir()
	good := unitBase()
	good.DiameterM = 0.12
	writeSynth(t, dir, "good", good, synth.Encoding{Format: "xyz"})
	writeSynth(t, dir, "inches", unitBase(), synth.Encoding{Format: "xyz", Unit: "in", NoHeader: true})
	for _, f := range []string{"good.truth.json", "inches.truth.json"} {
		os.Remove(filepath.Join(dir, f))
	}
	job := smallJob()
	job.Grid.CellMM = 2
	out := t.TempDir()
	res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: job, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if res.ExitCode() != 1 {
		t.Errorf("exit code %d, want 1 for a rejected scan", res.ExitCode())
	}
	if n := res.Summary.Counts[StatusRejected]; n != 1 {
		t.Errorf("%d rejected, want 1: counts %v", n, res.Summary.Counts)
	}
	f, err := os.Open(filepath.Join(out, "summary.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	rows := map[string][]string{}
	for _, r := range recs[1:] {
		rows[r[col["path"]]] = r
	}
	in, ok := rows["inches.xyz"]
	if !ok {
		t.Fatalf("no inches.xyz row in %v", recs)
	}
	if in[col["status"]] != StatusRejected || in[col["quality"]] != quality.Reject {
		t.Errorf("inches.xyz: status %q, quality %q; want %q, %q", in[col["status"]], in[col["quality"]], StatusRejected, quality.Reject)
	}
	if !strings.Contains(in[col["reasons"]], "try --units in") {
		t.Errorf("inches.xyz reasons %q lack the units hint", in[col["reasons"]])
	}
	b, err := os.ReadFile(filepath.Join(ScanOutDir(out, "inches.xyz"), "report.json"))
	if err != nil {
		t.Fatal(err)
	}
	var rep Report
	if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	if got := in[col["warnings"]]; got != strconv.Itoa(len(rep.Warnings)) || len(rep.Warnings) == 0 {
		t.Errorf("warnings column %q, report has %d warnings", got, len(rep.Warnings))
	}
	g := rows["good.xyz"]
	if g[col["status"]] == StatusRejected || g[col["quality"]] == quality.Reject || g[col["quality"]] == "" {
		t.Errorf("good.xyz: status %q, quality %q; want it analysed", g[col["status"]], g[col["quality"]])
	}
	// Resume: the rejected scan's report is current, so nothing runs again
	// and the row stays rejected.
	res2, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: job, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if res2.Ran != 0 || res2.Summary.Counts[StatusRejected] != 1 {
		t.Errorf("second run: ran %d, rejected %d; want 0 and 1", res2.Ran, res2.Summary.Counts[StatusRejected])
	}
}

// TestDefaultQualityJob checks that the job's [quality] defaults are the
// gate's and that bad limits are job errors naming the table.
func TestDefaultQualityJob(t *testing.T) {
	if got, want := DefaultJob().Quality.limits(), quality.DefaultLimits(); got != want {
		t.Errorf("job limits %+v, want the gate's defaults %+v", got, want)
	}
	for _, tc := range []struct{ in, want string }{
		{"[quality]\ncoverage_reject_min_pct = 99\n", "coverage reject limit 99 % is above its warn limit 95 %"},
		{"[quality]\ndiameter_warn_min_mm = 10\n", "quality: diameter limits must be ordered"},
		{"[quality]\nfootprint_band_mm = 0\n", "quality.footprint_band_mm must be > 0"},
		{"[quality]\ncoverage_mm = 1\n", `unknown key "quality.coverage_mm"`},
	} {
		_, err := ReadJob(strings.NewReader(tc.in), "job.toml")
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: error %v, want it to contain %q", tc.in, err, tc.want)
		}
	}
}
