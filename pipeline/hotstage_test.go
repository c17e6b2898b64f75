package pipeline

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"gapflux/scan/synth"
)

// stainlessJob is the default job with a single 3 mm stainless 304 base.
func stainlessJob() Job {
	job := DefaultJob()
	job.Pan.Layers = []LayerJob{{Material: "ss-304", ThicknessMM: 3}}
	job.Hot.Enabled = true
	return job
}

func TestAnalyzeHotState(t *testing.T) {
	if testing.Short() {
		t.Skip("the coupled hot state repeats the plate solve")
	}
	dir := t.TempDir()
	path := writeSynth(t, dir, "flat", synth.Spec{Shape: synth.Flat, DiameterM: 0.2, NoiseM: 5e-6, Seed: 3},
		synth.Encoding{Format: "ply", Binary: true})
	job := stainlessJob()
	job.Grid.CellMM = 2
	start := time.Now()
	res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: "flat.ply", Job: job})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("analysis with the hot state: %v", time.Since(start))
	rep := res.Report
	h := rep.Hot
	if h == nil {
		t.Fatal("no hot section")
	}
	t.Logf("hot: %d rounds, converged %v, concavity %.4f mm (cold %.4f), bow centre %.4f mm, loss %.2f %% (cold %.2f %%), rocks %v, heat-up %+.1f %%",
		h.Iterations, h.Converged, h.ConcavityMM, rep.Geometry.ConcavityMM, h.CentreBowMM, h.LossPct, rep.Heat.LossPct, h.Pose.Rocks, h.ExtraTimePct)
	// A flat stainless base domes hot: the centre drops toward the hob.
	if !h.Converged || !(h.ConcavityChangeMM < -0.02) || !(h.CentreBowMM < -0.02) {
		t.Errorf("hot: converged %v, concavity change %.4f mm, centre bow %.4f mm; want converged and domed by more than 0.02 mm",
			h.Converged, h.ConcavityChangeMM, h.CentreBowMM)
	}
	// Energy balance of the hot solve: the flux over the base cells is the
	// power into the pan (to the solver's tolerance, 0.1 %).
	sum, cellA := 0.0, res.Form.CellM*res.Form.CellM
	for k := range res.Hot.Scan.FluxWM2 {
		if res.Form.InBase(k) {
			sum += res.Hot.Scan.FluxWM2[k] * cellA
		}
	}
	if math.Abs(sum-res.Hot.Scan.PowerW) > 1e-3*res.Hot.Scan.PowerW {
		t.Errorf("hot flux over the base %.2f W, power %.2f W: want equal within 0.1 %%", sum, res.Hot.Scan.PowerW)
	}
	// The verdict names the hot state's failures.
	hotFail := false
	for _, r := range rep.Verdict.Reasons {
		hotFail = hotFail || strings.HasPrefix(r, "hot: ")
	}
	if h.Pose.Rocks && !hotFail {
		t.Errorf("the hot base rocks but the verdict has no hot reason: %q", rep.Verdict.Reasons)
	}
	if want := rep.Geometry.ConcavityMM - h.ConcavityMM; math.Abs(h.FlatHotColdMM-want) > 1e-3 {
		t.Errorf("flat-hot cold concavity %.4f mm, want cold − hot = %.4f mm", h.FlatHotColdMM, want)
	}
	t.Logf("summary:\n%s", HumanSummary(res))
	if !strings.Contains(HumanSummary(res), "hot, the base domes by") {
		t.Errorf("summary has no hot line:\n%s", HumanSummary(res))
	}
	out := t.TempDir()
	if err := WriteOutputs(res, out); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"hot_gap.png", "hot_gap.svg", "bow.png", "bow.svg"} {
		if st, err := os.Stat(filepath.Join(out, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s: %v", f, err)
		}
	}
	vti, err := os.ReadFile(filepath.Join(out, "fields.vti"))
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"hot_height_um", "bow_um", "hot_gap_mm", "hot_contact", "hot_base_c", "hot_flux_kw_m2"} {
		if !bytes.Contains(vti, []byte(`Name="`+name+`"`)) {
			t.Errorf("fields.vti has no %s array", name)
		}
	}
	// Deterministic: the same inputs give the same report bytes.
	res2, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: "flat.ply", Job: job})
	if err != nil {
		t.Fatal(err)
	}
	a, _ := MarshalReport(rep)
	b, _ := MarshalReport(res2.Report)
	if !bytes.Equal(a, b) {
		t.Error("two runs gave different reports")
	}
}

func TestStateVerdict(t *testing.T) {
	job := DefaultJob()
	rep := &Report{
		Geometry: &GeometryReport{ConcavityMM: 0.2, ConcavityPctOfDiameter: 0.1, FlatnessMZMM: 0.2},
		Pose:     &PoseReport{},
		Heat:     &HeatReport{LossPct: 2},
		Hot: &HotReport{ConcavityMM: -0.3, ConcavityPctOfDiameter: -0.15, FlatnessMZMM: 0.3,
			Pose: &PoseReport{Rocks: true, Support: "point"}, LossPct: 12},
	}
	for _, tc := range []struct {
		state   string
		pass    bool
		reasons int
	}{{"cold", true, 0}, {"hot", false, 3}, {"both", false, 3}} {
		job.Hot.Verdict = tc.state
		v := verdict(job, rep)
		if v.Pass != tc.pass || len(v.Reasons) != tc.reasons {
			t.Errorf("hot.verdict = %q: pass %v with %q; want pass %v with %d reasons", tc.state, v.Pass, v.Reasons, tc.pass, tc.reasons)
		}
		for _, r := range v.Reasons {
			if !strings.HasPrefix(r, "hot: ") {
				t.Errorf("hot.verdict = %q: reason %q does not name its state", tc.state, r)
			}
		}
	}
}

// TestDesignChecks runs the design sweep of issue 11's checks: a single
// 3 mm stainless base on the default zone, free edge, and a 4 mm
// aluminium one.
func TestDesignChecks(t *testing.T) {
	if testing.Short() {
		t.Skip("a design sweep runs the coupled hot state per row")
	}
	job := stainlessJob()
	start := time.Now()
	tab, err := Design(context.Background(), DesignOptions{Job: job, FromMM: -0.2, ToMM: 0.8, StepMM: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("stainless sweep of %d rows: %v", len(tab.Rows), time.Since(start))
	var buf bytes.Buffer
	if err := WriteDesignCSV(&buf, tab); err != nil {
		t.Fatal(err)
	}
	t.Logf("\n%s%s", buf.String(), tab.Statement)
	var flat DesignRow
	for _, r := range tab.Rows {
		if r.ColdConcavityMM == 0 {
			flat = r
		}
		if !r.Converged {
			t.Errorf("cold %g mm: not converged in %d rounds", r.ColdConcavityMM, r.Iterations)
		}
	}
	// The flat base domes hot by roughly α q̄ R²/(2k) for its mean flux q̄
	// (Timoshenko & Woinowsky-Krieger 1959, thermal bending of a free
	// plate; α = 17.3e-6 1/K, k = 16.2 W/(m·K): contact.Materials ss-304).
	// More, in fact: the domed base touches at its centre, where the flux
	// then gathers, and a free plate's centre height weights the moment
	// near the centre (see hot_chain_test.go): 0.9 to 1.6 times.
	q := tab.FlatPowerW * (1 - flat.HotLossPct/100) / (math.Pi * 0.1 * 0.1)
	est := 17.3e-6 * q * 0.1 * 0.1 / (2 * 16.2) * 1e3
	t.Logf("flat stainless: mean hot flux %.1f kW/m², hot dome %.4f mm, α q̄ R²/(2k) = %.4f mm (ratio %.3f)", q/1e3, -flat.HotConcavityMM, est, -flat.HotConcavityMM/est)
	if !(flat.HotConcavityMM < -0.9*est && flat.HotConcavityMM > -1.6*est) {
		t.Errorf("flat stainless: hot concavity %.3f mm, want a dome of 0.9 to 1.6 × α q̄ R²/(2k) = %.3f mm", flat.HotConcavityMM, est)
	}

	// The edge conditions: a clamped rim holds a uniform thermal moment
	// flat (Timoshenko & Woinowsky-Krieger 1959: a clamped plate under a
	// uniform thermal moment does not deflect), so only the moment's
	// variation over the base bows it; the wall lies between.
	domes := map[string]float64{}
	for _, edge := range []string{"clamped", "wall"} {
		j := stainlessJob()
		j.Hot.Edge = edge
		et, err := Design(context.Background(), DesignOptions{Job: j, FromMM: 0, ToMM: 0, StepMM: 0.1})
		if err != nil {
			t.Fatal(err)
		}
		domes[edge] = -et.Rows[0].HotConcavityMM
	}
	t.Logf("flat stainless hot dome: free %.4f mm, wall %.4f mm, clamped %.4f mm", -flat.HotConcavityMM, domes["wall"], domes["clamped"])
	if !(math.Abs(domes["clamped"]) < 0.25*-flat.HotConcavityMM && domes["wall"] < -flat.HotConcavityMM && domes["wall"] > domes["clamped"]) {
		t.Errorf("hot dome free %.4f, wall %.4f, clamped %.4f mm: want clamped under a quarter of free and wall between",
			-flat.HotConcavityMM, domes["wall"], domes["clamped"])
	}
	// With enough cold concavity it ends flatter hot than the flat base.
	flatter := false
	for _, r := range tab.Rows {
		flatter = flatter || r.ColdConcavityMM > 0 && math.Abs(r.HotConcavityMM) < 0.5*math.Abs(flat.HotConcavityMM)
	}
	if !flatter {
		t.Error("no cold concavity makes the stainless base flatter hot than the flat base")
	}
	// The hot loss is least at a positive cold concavity.
	if !(tab.LeastLossColdMM > 0) {
		t.Errorf("least hot loss at cold concavity %g mm, want positive", tab.LeastLossColdMM)
	}
	out := t.TempDir()
	if err := WriteDesign(out, tab); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"design.csv", "design.json", "design.png", "design.svg"} {
		if st, err := os.Stat(filepath.Join(out, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s: %v", f, err)
		}
	}

	// A 4 mm aluminium base bows far less: α/k is about 7× smaller
	// (24e-6/222 against 17.3e-6/16.2; contact.Materials).
	al := DefaultJob()
	alTab, err := Design(context.Background(), DesignOptions{Job: al, FromMM: 0, ToMM: 0, StepMM: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	a := alTab.Rows[0]
	t.Logf("flat aluminium: hot concavity %.4f mm, loss %.2f %%", a.HotConcavityMM, a.HotLossPct)
	if !(math.Abs(a.HotConcavityMM) < math.Abs(flat.HotConcavityMM)/4) {
		t.Errorf("flat aluminium: hot concavity %.4f mm, want under a quarter of the stainless %.4f mm", a.HotConcavityMM, flat.HotConcavityMM)
	}
}

func TestParseColdRange(t *testing.T) {
	for _, tc := range []struct {
		in             string
		from, to, step float64
		ok             bool
	}{
		{"-0.2:0.6:0.05", -0.2, 0.6, 0.05, true},
		{"0:0:1", 0, 0, 1, true},
		{"0.5:0.1:0.1", 0, 0, 0, false},
		{"0:1:0", 0, 0, 0, false},
		{"0:1", 0, 0, 0, false},
		{"0:NaN:0.1", 0, 0, 0, false},
		{"0:100:0.1", 0, 0, 0, false},
		{"0:30:0.1", 0, 0, 0, false}, // 301 rows
		{"a:1:0.1", 0, 0, 0, false},
	} {
		f, to, s, err := ParseColdRange(tc.in)
		if (err == nil) != tc.ok || tc.ok && (f != tc.from || to != tc.to || s != tc.step) {
			t.Errorf("ParseColdRange(%q) = %g, %g, %g, %v", tc.in, f, to, s, err)
		}
	}
}

// BenchmarkAnalyzeHot is the whole analysis of a 200 mm dished stainless
// base scanned at 0.5 mm spacing (as BenchmarkAnalyze), default heater
// job, without and with the hot state: the difference is the hot state's
// cost per scan.
func BenchmarkAnalyzeHot(b *testing.B) {
	dir := b.TempDir()
	path := writeSynth(b, dir, "dish", synth.Spec{Shape: synth.Dish, DiameterM: 0.2, SagM: 0.4e-3, NoiseM: 8e-6, Seed: 1},
		synth.Encoding{Format: "ply", Binary: true})
	for _, hot := range []bool{false, true} {
		b.Run(map[bool]string{false: "cold", true: "hot"}[hot], func(b *testing.B) {
			job := stainlessJob()
			job.Hot.Enabled = hot
			for b.Loop() {
				res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: "dish.ply", Job: job})
				if err != nil {
					b.Fatal(err)
				}
				if h := res.Report.Hot; h != nil {
					b.ReportMetric(float64(h.Iterations), "rounds")
					b.ReportMetric(res.Report.Geometry.CellMM, "cell_mm")
				}
			}
		})
	}
}

// BenchmarkDesign25 is a design sweep over 25 cold concavities of a
// 200 mm single 3 mm stainless base on the default zone (2 mm cells).
func BenchmarkDesign25(b *testing.B) {
	for b.Loop() {
		t, err := Design(context.Background(), DesignOptions{Job: stainlessJob(), FromMM: -0.4, ToMM: 0.8, StepMM: 0.05})
		if err != nil {
			b.Fatal(err)
		}
		if len(t.Rows) != 25 {
			b.Fatalf("%d rows", len(t.Rows))
		}
		rounds := 0
		for _, r := range t.Rows {
			rounds += r.Iterations
		}
		b.ReportMetric(float64(rounds)/25, "rounds/row")
	}
}
