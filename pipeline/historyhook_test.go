package pipeline

import (
	"context"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"gapflux/pipeline/history"
	"gapflux/pipeline/trend"
)

// Two nights over one folder whose scans changed in between: the history
// holds both nights, a night re-run over unchanged scans adds nothing, and
// the trend of the part has a point per distinct scan content.
func TestHistoryTwoNights(t *testing.T) {
	manifest := "path,part_number,lot\na.xyz,P-1,L1\nb.xyz,P-1,L1\nbroken.xyz,P-1,L1\n"
	dir := makeScanDir(t, map[string]string{"manifest.csv": manifest, "a.xyz": "a1", "b.xyz": "c1", "broken.xyz": "bad"})
	out := t.TempDir()
	run := func() *BatchResult {
		t.Helper()
		res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 2,
			Analyze: (&fakeAnalyzer{}).analyze})
		if err != nil || res.HistoryErr != nil {
			t.Fatalf("batch: %v; history: %v", err, res.HistoryErr)
		}
		return res
	}
	run()
	// Night 2: a.xyz rescanned (its first byte, so its concavity, changed).
	if err := os.WriteFile(filepath.Join(dir, "a.xyz"), []byte("d2"), 0o644); err != nil {
		t.Fatal(err)
	}
	run()
	run() // a re-run over unchanged scans: every output current
	db := filepath.Join(out, HistoryFile)
	st, err := history.OpenExisting(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	runs, rows, err := st.Counts(context.Background())
	st.Close()
	// Rows: a (night 1), b, broken (failed, recorded in error.json), a (night 2).
	if err != nil || runs != 3 || rows != 4 {
		t.Fatalf("history: %d runs, %d rows (%v); want 3 runs, 4 rows", runs, rows, err)
	}
	charts, err := trend.Load(context.Background(), trend.Options{History: db, Figure: "concavity_mm"})
	if err != nil {
		t.Fatal(err)
	}
	if len(charts) != 1 || charts[0].Part != "P-1" || charts[0].Chart == nil {
		t.Fatalf("charts %+v, want one chart of P-1", charts)
	}
	var got []float64
	for _, p := range charts[0].Points {
		got = append(got, p.Value)
	}
	// fakeAnalyzer: concavity = (first byte mod 7)/10 mm: 'a' 97 → 0.6, 'c' 99 → 0.1, 'd' 100 → 0.2.
	if want := []float64{0.6, 0.1, 0.2}; !slices.Equal(got, want) {
		t.Errorf("concavity series %v, want %v (night 1: a, b; night 2: a)", got, want)
	}
	if charts[0].Points[0].RunID == charts[0].Points[2].RunID {
		t.Error("night 2's point carries night 1's run id")
	}
	files, err := trend.Write(t.TempDir(), charts, "concavity_mm")
	if err != nil || len(files) != 3 {
		t.Errorf("trend files %v (%v), want PNG, SVG, CSV", files, err)
	}
}

// A history that cannot be written costs the batch nothing but the history:
// summary and outputs are there, the exit code is the batch's, the error is
// reported and logged.
func TestHistoryFailureKeepsResults(t *testing.T) {
	dir := makeScanDir(t, map[string]string{"a.xyz": "a1"})
	out := t.TempDir()
	res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 1,
		Analyze: (&fakeAnalyzer{}).analyze, History: filepath.Join(t.TempDir(), "no-such-folder", "h.sqlite")})
	if err != nil {
		t.Fatal(err)
	}
	if res.HistoryErr == nil {
		t.Fatal("no history error for a database in a missing folder")
	}
	if res.ExitCode() != 0 || res.Summary.Counts[StatusOK] != 1 {
		t.Errorf("exit code %d, ok rows %d; want 0 and 1", res.ExitCode(), res.Summary.Counts[StatusOK])
	}
	for _, f := range []string{"summary.csv", "summary.json", "scans/a.xyz/report.json", "index.html"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("%s: %v", f, err)
		}
	}
	// The index's trend section is one line saying why there is no chart.
	page, _ := os.ReadFile(filepath.Join(out, "index.html"))
	if !strings.Contains(string(page), "No trend chart: this batch&#39;s rows could not be added to the history database") ||
		strings.Contains(string(page), `class="chart"`) {
		t.Error("index.html does not say in its trend section that the history could not be written")
	}
	log, _ := os.ReadFile(filepath.Join(out, "run.log"))
	if !strings.Contains(string(log), "history database") {
		t.Errorf("run.log does not mention the history failure:\n%s", log)
	}
}

// Every figure the history stores has a value in a full summary row, under
// the same name.
func TestRowFiguresCoverHistoryColumns(t *testing.T) {
	f := 1.5
	r := SummaryRow{DiameterMM: &f, FlatnessMZMM: &f, FlatnessLSMM: &f, ConcavityMM: &f, ConcavityPctOfDiameter: &f,
		NoiseUM: &f, CoveragePct: &f, TiltDeg: &f, RockMM: &f, ContactAreaPct: &f, MeanGapMM: &f, MaxGapMM: &f,
		PowerW: &f, FlatPowerW: &f, LossPct: &f, GlassMaxC: &f, TimeS: &f, FlatTimeS: &f, ExtraTimePct: &f, ExtraEnergyKJ: &f}
	m := rowFigures(r)
	for _, name := range history.Figures {
		if m[name] != 1.5 {
			t.Errorf("figure %s missing from rowFigures", name)
		}
	}
	if len(m) != len(history.Figures) {
		t.Errorf("rowFigures has %d figures, history %d", len(m), len(history.Figures))
	}
}

// --history off records nothing, and the index says so in one line.
func TestHistoryOff(t *testing.T) {
	dir := makeScanDir(t, map[string]string{"manifest.csv": "path,part_number\na.xyz,P\n", "a.xyz": "a1"})
	out := t.TempDir()
	res, err := RunBatch(context.Background(), BatchOptions{Dir: dir, Out: out, Job: DefaultJob(), Workers: 1,
		Analyze: (&fakeAnalyzer{}).analyze, History: HistoryOff})
	if err != nil || res.HistoryErr != nil {
		t.Fatalf("batch: %v; history: %v", err, res.HistoryErr)
	}
	for _, f := range []string{HistoryFile, HistoryOff} {
		if _, err := os.Stat(filepath.Join(out, f)); err == nil {
			t.Errorf("--history off wrote %s", f)
		}
	}
	if _, err := os.Stat(HistoryOff); err == nil {
		t.Errorf("--history off wrote ./%s", HistoryOff)
	}
	page, _ := os.ReadFile(filepath.Join(out, "index.html"))
	if !strings.Contains(string(page), "No trend chart: the batch ran with --history off") || strings.Contains(string(page), `class="chart"`) {
		t.Error("index.html does not say that the batch recorded no history")
	}
}
