package pipeline

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"runtime/debug"
	"strings"
	"testing"

	"gapflux/scan/synth"
)

// TestAuditJobRoundTrip writes jobs as the audit's job section and reads
// them back: the same Job (deep-equal) and the same JobHash, for the
// default job and one that sets layers, materials, arrays and profiles.
func TestAuditJobRoundTrip(t *testing.T) {
	custom := DefaultJob()
	custom.Grid.CellMM, custom.Grid.Units, custom.Grid.Face = 0.35, "in", "down"
	custom.Pan.Layers = []LayerJob{{"carbon-steel", 0.8}, {"alu-1050", 3.3}, {"ss-430", 0.6}}
	custom.Pan.OffsetMM = [2]float64{12.5, -0.1}
	custom.Pan.CentreOfMassMM = [2]float64{1e-3, 2.2250738585072014e-308 * 1e300}
	custom.Hob.PowerProfile = "profiles/power.csv"
	custom.Water.Evaporation = true
	custom.Limits.MaxPoints = 123_456_789
	custom.Materials = []MaterialJob{exampleMaterial(), {Name: "alu-1050", ConductivityWMK: 1.0 / 3}}
	tests := []struct {
		name string
		job  Job
	}{
		{"default", DefaultJob()},
		{"custom", custom},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			b, err := json.Marshal(AuditJob{Job: tc.job})
			if err != nil {
				t.Fatal(err)
			}
			var back AuditJob
			if err := json.Unmarshal(b, &back); err != nil {
				t.Fatalf("%v\n%s", err, b)
			}
			if !reflect.DeepEqual(back.Job, tc.job) {
				t.Errorf("read back\n%+v\nwant\n%+v", back.Job, tc.job)
			}
			h1, _ := JobHash(tc.job, "x")
			h2, _ := JobHash(back.Job, "x")
			if h1 != h2 {
				t.Errorf("job hash %s after the round trip, %s before", h2, h1)
			}
			// Keys in the job file's order: grid first, material last.
			if s := string(b); !strings.HasPrefix(s, `{"grid":{"cell_mm":`) || !strings.Contains(s, `,"material":`) {
				t.Errorf("layout is not the job file's: %.80s", s)
			}
		})
	}
}

// TestAuditJobRefusesOtherJobs: a job section with a key missing, an
// unknown key or a value of the wrong type is refused, naming the key.
func TestAuditJobRefusesOtherJobs(t *testing.T) {
	good, err := json.Marshal(AuditJob{Job: DefaultJob()})
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name, from, to, want string
	}{
		{"missing", `"ring_mm":5,`, ``, "job.grid.ring_mm is missing"},
		{"unknown", `"ring_mm":5,`, `"ring_mm":5,"ring_count":3,`, "job.grid.ring_count is not a job key"},
		{"type", `"ring_mm":5,`, `"ring_mm":"5",`, "job.grid.ring_mm: want a float64"},
		{"layers", `"layers":[{"material":"alu-1050","thickness_mm":4}]`, `"layers":{"material":"alu-1050","thickness_mm":4}`, "job.pan.layers: want a list"},
		{"table", `"outputs":{"fields":"compressed"}`, `"outputs":["compressed"]`, "job.outputs: want an object"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s := strings.Replace(string(good), tc.from, tc.to, 1)
			if s == string(good) {
				t.Fatalf("test data: %q not in the job", tc.from)
			}
			var a AuditJob
			err := json.Unmarshal([]byte(s), &a)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

// TestJobKeyNamesCarryUnits: every job key with a unit ends in that unit's
// suffix, so the audit's job section (keys without a unit column) states
// every unit. A unit not in the table fails: add its suffix.
func TestJobKeyNamesCarryUnits(t *testing.T) {
	suffix := map[string]string{
		"mm": "_mm", "µm": "_um", "°": "_deg", "°C": "_c", "%": "_pct", "N": "_n", "W": "_w", "kg": "_kg",
		"MB": "_mb", "kPa": "_kpa", "MPa": "_mpa", "GPa": "_gpa", "kg/m³": "_kg_m3", "kW/m²": "_kw_m2",
		"K": "_k", "J/(kg·K)": "_j_kgk", "W/(m·K)": "_w_mk", "W/(m²·K)": "_w_m2k", "µm/(m·K)": "_um_mk",
	}
	for _, s := range jobKeys() {
		if s.unit == "" {
			continue
		}
		suf, ok := suffix[s.unit]
		if !ok {
			t.Errorf("%s: unit %q has no name suffix in this test's table", s.key, s.unit)
			continue
		}
		if !strings.HasSuffix(s.key, suf) {
			t.Errorf("%s has unit %s but its name does not end in %s", s.key, s.unit, suf)
		}
	}
}

// TestToolVersionOf: the module version and VCS stamps when the build has
// them, "devel" otherwise.
func TestToolVersionOf(t *testing.T) {
	yes, no := true, false
	tests := []struct {
		name string
		bi   *debug.BuildInfo
		ok   bool
		want ToolVersion
	}{
		{"none", nil, false, ToolVersion{Name: "gapflux", Version: "devel"}},
		{"devel", &debug.BuildInfo{Main: debug.Module{Version: "(devel)"}}, true, ToolVersion{Name: "gapflux", Version: "devel"}},
		{"stamped", &debug.BuildInfo{Main: debug.Module{Version: "v0.3.0"}, Settings: []debug.BuildSetting{
			{Key: "vcs", Value: "git"}, {Key: "vcs.revision", Value: "55141ae"}, {Key: "vcs.modified", Value: "true"}}}, true,
			ToolVersion{Name: "gapflux", Version: "v0.3.0", Revision: "55141ae", Modified: &yes}},
		{"clean", &debug.BuildInfo{Main: debug.Module{Version: ""}, Settings: []debug.BuildSetting{
			{Key: "vcs.revision", Value: "abc"}, {Key: "vcs.modified", Value: "false"}}}, true,
			ToolVersion{Name: "gapflux", Version: "devel", Revision: "abc", Modified: &no}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := toolVersionOf(tc.bi, tc.ok); !reflect.DeepEqual(got, tc.want) {
				t.Errorf("got %+v, want %+v", got, tc.want)
			}
		})
	}
}

// TestReportDifferences names the keys that differ, with list indices.
func TestReportDifferences(t *testing.T) {
	tests := []struct {
		a, b string
		want []string
	}{
		{`{"a":1,"b":[1,2]}`, `{"a":1,"b":[1,2]}`, nil},
		{`{"a":1,"b":[1,2]}`, `{"a":1, "b":[1,2]}`, []string{"(same values, different bytes: formatting)"}},
		{`{"a":{"x":1},"b":[1,2]}`, `{"a":{"x":2},"b":[1,3]}`, []string{"a.x", "b[1]"}},
		{`{"a":1}`, `{"a":1,"c":true}`, []string{"c"}},
		{`{"b":[1]}`, `{"b":[1,2]}`, []string{"b"}},
	}
	for _, tc := range tests {
		if got := ReportDifferences([]byte(tc.a), []byte(tc.b)); !reflect.DeepEqual(got, tc.want) {
			t.Errorf("%s vs %s: %q, want %q", tc.a, tc.b, got, tc.want)
		}
	}
}

// auditBatch writes a small batch: a.xyz on a hob scan with a per-scan
// job file (a power profile, a material override, 2 layers) and a manifest
// override; b.ply on the batch job's flat hob.
func auditBatch(t *testing.T) (dir string) {
	t.Helper()
	dir = t.TempDir()
	writeSynth(t, dir, "a", synth.Spec{Shape: synth.Dish, DiameterM: 0.12, SagM: 0.2e-3, NoiseM: 3e-6, SpacingM: 2e-3, Seed: 3},
		synth.Encoding{Format: "xyz"})
	for _, sub := range []string{"sub", "hobs"} {
		if err := os.MkdirAll(filepath.Join(dir, sub), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	writeSynth(t, filepath.Join(dir, "sub"), "b", synth.Spec{Shape: synth.Dome, DiameterM: 0.12, SagM: 0.1e-3, NoiseM: 3e-6, SpacingM: 2e-3, Seed: 4},
		synth.Encoding{Format: "ply", Binary: true})
	hob, err := synth.GenerateHob(synth.HobSpec{Shape: synth.Dome, SagM: 0.1e-3, NoiseM: 2e-6, SpacingM: 4e-3, Seed: 9})
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := synth.WriteFiles(filepath.Join(dir, "hobs"), "top", hob, synth.Encoding{Format: "xyz"}); err != nil {
		t.Fatal(err)
	}
	files := map[string]string{
		"jobs/power.profile": "r_mm,relative\n0,1.2\n60,1\n90,0.8\n",
		"jobs/a.toml": `[grid]
cell_mm = 2
[pan]
layers = [{ material = "ss-430", thickness_mm = 0.6 }, { material = "alu-1050", thickness_mm = 3 }]
[hob]
power_profile = "power.profile"
[[material]]
name = "alu-1050"
conductivity_w_mk = 210
source = "test: supplier sheet"
`,
		"job.toml":     "[grid]\ncell_mm = 2\n",
		"manifest.csv": "path,part_number,lot,hob,job,water_mass_kg\na.xyz,P-1,L7,hobs/top.xyz,jobs/a.toml,1.25\n",
	}
	for p, c := range files {
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

// TestRerunBatchReports runs a small batch, then re-runs each report from
// its audit alone (the job files and manifest deleted): byte-identical.
// A changed or missing scan, and a report without an audit, are clear
// errors.
func TestRerunBatchReports(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain")
	}
	dir := auditBatch(t)
	out := filepath.Join(t.TempDir(), "out")
	job, err := ReadJobFile(filepath.Join(dir, "job.toml"))
	if err != nil {
		t.Fatal(err)
	}
	res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: job, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range res.Summary.Rows {
		if r.Status == StatusFailed || r.Status == StatusNotRun {
			t.Fatalf("%s: %s %s", r.Path, r.Status, r.Error)
		}
	}
	repA := filepath.Join(ScanOutDir(out, "a.xyz"), "report.json")
	repB := filepath.Join(ScanOutDir(out, "sub/b.ply"), "report.json")

	// What the audit of a.xyz records.
	_, a, err := readReportFile(repA)
	if err != nil {
		t.Fatal(err)
	}
	au := a.Audit
	if au.Scan.Path != "a.xyz" || !strings.HasPrefix(au.Scan.FromReport, "../../../../") ||
		!strings.HasSuffix(au.Scan.FromReport, "/"+filepath.Base(dir)+"/a.xyz") {
		t.Errorf("scan recorded as %+v", au.Scan)
	}
	if au.Hob.Source != HobScan || au.Hob.Path != "hobs/top.xyz" || au.Hob.SHA256 == "" {
		t.Errorf("hob recorded as %+v", au.Hob)
	}
	if len(au.Profiles) != 1 || au.Profiles[0].Key != "hob.power_profile" || au.Profiles[0].Path != "jobs/power.profile" {
		t.Errorf("profiles recorded as %+v", au.Profiles)
	}
	j := au.Job.Job
	if j.Water.MassKg != 1.25 || j.Grid.CellMM != 2 || len(j.Pan.Layers) != 2 || j.Hob.PowerProfile != "jobs/power.profile" {
		t.Errorf("job recorded without the manifest row and job file: water %g kg, cell %g mm, %d layers, profile %q",
			j.Water.MassKg, j.Grid.CellMM, len(j.Pan.Layers), j.Hob.PowerProfile)
	}
	if au.PartNumber != "P-1" || au.Lot != "L7" {
		t.Errorf("part %q lot %q, want P-1 L7", au.PartNumber, au.Lot)
	}
	if len(au.Materials) != 3 || au.Materials[1].Name != "alu-1050" || au.Materials[1].Values.ConductivityWMK != 210 ||
		au.Materials[1].Sources.ConductivityWMK != "test: supplier sheet" || au.Materials[2].UsedAs[0] != "hob.material" {
		t.Errorf("materials recorded as %+v", au.Materials)
	}

	// The job files and the manifest are not needed to re-run.
	for _, p := range []string{"job.toml", "jobs/a.toml", "manifest.csv"} {
		if err := os.Remove(filepath.Join(dir, filepath.FromSlash(p))); err != nil {
			t.Fatal(err)
		}
	}
	for _, rp := range []string{repA, repB} {
		rr, err := RerunReport(context.Background(), rp)
		if err != nil {
			t.Fatalf("%s: %v", rp, err)
		}
		if !rr.Identical() {
			t.Errorf("%s: re-run differs in %q", rp, rr.Differences)
		}
		if rr.Result.PartNumber != au.PartNumber && rp == repA {
			t.Errorf("part number %q not carried to the re-run", rr.Result.PartNumber)
		}
	}

	// A report copied elsewhere finds its inputs by the recorded paths
	// from the working folder (the batch folder).
	elsewhere := filepath.Join(t.TempDir(), "report.json")
	b, err := os.ReadFile(repA)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(elsewhere, b, 0o644); err != nil {
		t.Fatal(err)
	}
	t.Chdir(dir)
	if rr, err := RerunReport(context.Background(), elsewhere); err != nil || !rr.Identical() {
		t.Errorf("re-run from the batch folder: %v %v", err, rr.Differences)
	}

	// Another build of gapflux: only the tool's version differs.
	other := filepath.Join(t.TempDir(), "report.json")
	ob := bytes.Replace(b, []byte(`"version": "devel"`), []byte(`"version": "v9.9.9"`), 1)
	if bytes.Equal(ob, b) {
		t.Fatal("test data: no devel version in the report")
	}
	if err := os.WriteFile(other, ob, 0o644); err != nil {
		t.Fatal(err)
	}
	rr, err := RerunReport(context.Background(), other)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(rr.Differences, []string{"audit.tool.version"}) || !rr.OnlyToolDiffers() {
		t.Errorf("another build: differences %q, want only audit.tool.version", rr.Differences)
	}

	// Bad inputs.
	noAudit := filepath.Join(t.TempDir(), "report.json")
	var rep map[string]json.RawMessage
	if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	delete(rep, "audit")
	nb, _ := json.Marshal(rep)
	os.WriteFile(noAudit, nb, 0o644)
	if err := os.WriteFile(filepath.Join(dir, "hobs", "top.xyz"), []byte("0 0 0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Remove(filepath.Join(dir, "sub", "b.ply")); err != nil {
		t.Fatal(err)
	}
	bad := []struct {
		name, report string
		want         []string
	}{
		{"hob changed", repA, []string{"the hob hobs/top.xyz changed since the report was written", "SHA-256"}},
		{"scan gone", repB, []string{"the scan sub/b.ply is not found", "looked at"}},
		{"no audit", noAudit, []string{"no audit section"}},
		{"no file", filepath.Join(dir, "nope.json"), []string{"nope.json"}},
	}
	for _, tc := range bad {
		t.Run(tc.name, func(t *testing.T) {
			_, err := RerunReport(context.Background(), tc.report)
			if err == nil || !IsConfigError(err) {
				t.Fatalf("error %v, want a configuration error", err)
			}
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q lacks %q", err, w)
				}
			}
		})
	}
}

// TestRerunAnalyzeReport: a single analysis written with its report
// folder known re-runs byte for byte, also on a hob profile named by the
// job and with the hob given as a profile CSV.
func TestRerunAnalyzeReport(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain")
	}
	dir := t.TempDir()
	pan := writeSynth(t, dir, "pan", synth.Spec{Shape: synth.Dish, DiameterM: 0.12, SagM: 0.15e-3, NoiseM: 3e-6, SpacingM: 2e-3, Seed: 5, Mesh: true},
		synth.Encoding{Format: "stl", Binary: true})
	prof := filepath.Join(dir, "hob.csv")
	if err := os.WriteFile(prof, []byte("r_mm,z_mm\n0,0.05\n100,0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name    string
		hob     string
		profile string
		source  string
	}{
		{"hob profile given", prof, "", HobProfile},
		{"job hob.profile", "", prof, HobJobProfile},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			job := smallJob()
			job.Grid.CellMM = 2
			job.Hob.Profile = tc.profile
			out := filepath.Join(t.TempDir(), "out")
			res, err := Analyze(context.Background(), ScanInput{PanPath: pan, Name: "pan.stl", HobPath: tc.hob, Job: job, ReportDir: out})
			if err != nil {
				t.Fatal(err)
			}
			if err := WriteOutputs(res, out); err != nil {
				t.Fatal(err)
			}
			if s := res.Report.Audit.Hob.Source; s != tc.source {
				t.Errorf("hob source %q, want %q", s, tc.source)
			}
			rr, err := RerunReport(context.Background(), filepath.Join(out, "report.json"))
			if err != nil {
				t.Fatal(err)
			}
			if !rr.Identical() {
				t.Errorf("re-run differs in %q", rr.Differences)
			}
			if !bytes.Contains(rr.Rerun, []byte(`"from_report": "../`)) {
				t.Errorf("no from_report path in the audit")
			}
		})
	}
}

// TestRerunRejectedReport: a scan the quality gate rejects (a base with
// two holes under a job that rejects below 100 % coverage) still carries
// its audit and re-runs byte for byte.
func TestRerunRejectedReport(t *testing.T) {
	dir := t.TempDir()
	pan := writeSynth(t, dir, "pan", synth.Spec{Shape: synth.Dish, DiameterM: 0.12, SagM: 0.15e-3, NoiseM: 3e-6, SpacingM: 2e-3, Holes: 2, Seed: 6},
		synth.Encoding{Format: "xyz"})
	out := filepath.Join(dir, "out")
	job := smallJob()
	job.Grid.CellMM = 2
	job.Quality.CoverageWarnMinPct, job.Quality.CoverageRejectMinPct = 100, 100
	res, err := Analyze(context.Background(), ScanInput{PanPath: pan, Name: "pan.xyz", Job: job, ReportDir: out})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Report.Rejected() || res.Report.Audit == nil {
		t.Fatalf("rejected %v, audit %v; want a rejected report with its audit", res.Report.Rejected(), res.Report.Audit != nil)
	}
	if err := WriteOutputs(res, out); err != nil {
		t.Fatal(err)
	}
	rr, err := RerunReport(context.Background(), filepath.Join(out, "report.json"))
	if err != nil {
		t.Fatal(err)
	}
	if !rr.Identical() {
		t.Errorf("re-run differs in %q", rr.Differences)
	}
	if got := rr.Result.Report.Audit.Scan.FromReport; got != "../pan.xyz" {
		t.Errorf("scan from the report folder %q, want ../pan.xyz", got)
	}
}
