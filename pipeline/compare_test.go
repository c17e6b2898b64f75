package pipeline

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gapflux/scan/synth"
)

// compareSynth writes two synthetic scans and compares them with smallJob.
func compareSynth(t *testing.T, a, b synth.Spec) (*CompareResult, error) {
	t.Helper()
	dir := t.TempDir()
	enc := synth.Encoding{Format: "ply", Binary: true}
	pa := writeSynth(t, dir, "a", a, enc)
	pb := writeSynth(t, dir, "b", b, enc)
	return Compare(context.Background(), CompareInput{A: pa, B: pb, Job: smallJob()})
}

// TestCompare checks the cases (issue 12 part 5) against the
// generator's exact forms.
func TestCompare(t *testing.T) {
	if testing.Short() {
		t.Skip("four whole analyses per case")
	}
	const d, noise = 0.16, 5e-6
	spec := func(shape synth.Shape, sagM, turnDeg float64, seed uint64) synth.Spec {
		return synth.Spec{Shape: shape, DiameterM: d, SagM: sagM, NoiseM: noise, SpacingM: 1e-3, FormTurnDeg: turnDeg, Seed: seed}
	}
	tests := []struct {
		name        string
		a, b        synth.Spec
		wantDefined bool
		wantAngle   float64 // degrees, modulo 180 (a saddle looks the same turned half a turn)
		wantSetMM   float64
		// wantRMSUM is the RMS of the height change about its mean, µm,
		// ± tolRMSUM.
		wantRMSUM, tolRMSUM float64
	}{
		// The same saddle turned 37° and scanned with new noise: the
		// change is the filtered noise of two scans, well under the 5 µm
		// noise of one.
		{"saddle turned 37°", spec(synth.Saddle, 0.3e-3, 0, 1), spec(synth.Saddle, 0.3e-3, 37, 2), true, 37, 0, 0, noise * 1e6},
		// 0.1 mm more dish: B − A = 0.1 mm·(1 − r²/R²), whose RMS about
		// its mean over the disc is 0.1 mm/√12 = 28.9 µm (r²/R² is
		// uniform on [0, 1] over a disc).
		{"dish 0.1 mm deeper", spec(synth.Dish, 0.3e-3, 0, 1), spec(synth.Dish, 0.4e-3, 0, 2), false, 0, 0.1, 100 / math.Sqrt(12), 2},
		// A symmetric dish turned 37°: no angle, and no change.
		{"dish turned 37°", spec(synth.Dish, 0.3e-3, 0, 1), spec(synth.Dish, 0.3e-3, 37, 3), false, 0, 0, 0, noise * 1e6},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r, err := compareSynth(t, tc.a, tc.b)
			if err != nil {
				t.Fatal(err)
			}
			c := r.Comparison
			al := c.Alignment
			t.Logf("angle %v° (defined %v, swing %.2f µm), shift %v mm, height change RMS %.2f µm, permanent set %.4f mm",
				fmtOpt(al.AngleDeg), al.AngleDefined, al.SwingUM, al.ShiftMM, c.HeightDiff.RMSUM, c.PermanentSetMM)
			if al.AngleDefined != tc.wantDefined || (al.AngleDeg != nil) != tc.wantDefined {
				t.Fatalf("angle defined = %v (swing %.2f µm, note %q), want %v", al.AngleDefined, al.SwingUM, al.AngleNote, tc.wantDefined)
			}
			if tc.wantDefined {
				if al.AnglePeriodDeg == nil || *al.AnglePeriodDeg != 180 {
					t.Errorf("angle period %v, want 180° (a saddle)", fmtOpt(al.AnglePeriodDeg))
				}
				e := math.Mod(*al.AngleDeg-tc.wantAngle+720, 180)
				if e = math.Min(e, 180-e); e > 0.5 {
					t.Errorf("angle %.3f°, want %.1f° (mod 180°) ± 0.5°", *al.AngleDeg, tc.wantAngle)
				}
			} else if !strings.Contains(al.AngleNote, "undefined") || len(c.Warnings) == 0 {
				t.Errorf("an undefined angle must be said in the note and the warnings: %q, %q", al.AngleNote, c.Warnings)
			}
			if math.Abs(c.PermanentSetMM-tc.wantSetMM) > 0.01 {
				t.Errorf("permanent_set_mm = %.4f, want %.2f ± 0.01", c.PermanentSetMM, tc.wantSetMM)
			}
			if got := c.HeightDiff.RMSUM; math.Abs(got-tc.wantRMSUM) > tc.tolRMSUM {
				t.Errorf("height change RMS %.2f µm, want %.1f ± %.1f µm", got, tc.wantRMSUM, tc.tolRMSUM)
			}
			if len(c.Rings) == 0 || len(c.Figures) != len(headlineFigures) {
				t.Fatalf("%d rings, %d figures; want rings and %d figures", len(c.Rings), len(c.Figures), len(headlineFigures))
			}
			// Gap is zero where both stand on the hob, so the change
			// of a ring's mean gap is bounded by the height change.
			for _, rc := range c.Rings {
				if lim := 2*tc.wantSetMM + 0.02; math.Abs(rc.MeanGapChangeMM) > lim {
					t.Errorf("ring %.0f–%.0f mm: mean gap change %.4f mm beyond ±%.2f mm", rc.RInMM, rc.ROutMM, rc.MeanGapChangeMM, lim)
				}
			}
		})
	}
}

func TestCompareOutputs(t *testing.T) {
	if testing.Short() {
		t.Skip("two whole analyses")
	}
	s := synth.Spec{Shape: synth.Bend, DiameterM: 0.14, SagM: 0.3e-3, NoiseM: 5e-6, SpacingM: 1e-3, Seed: 1}
	b := s
	b.FormTurnDeg, b.Seed = 20, 2
	r, err := compareSynth(t, s, b)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if err := WriteCompareOutputs(r, dir); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"compare.json", "compare.csv", "compare_rings.csv", "height_change.png", "height_change.svg", "gap_change.png", "gap_change.svg", "compare.html"} {
		if st, err := os.Stat(filepath.Join(dir, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s: missing or empty (%v)", f, err)
		}
	}
	raw, err := os.ReadFile(filepath.Join(dir, "compare.json"))
	if err != nil {
		t.Fatal(err)
	}
	var back Comparison
	if err := json.Unmarshal(raw, &back); err != nil || back.Schema != SchemaCompare {
		t.Fatalf("compare.json: %v, schema %q", err, back.Schema)
	}
	csvb, _ := os.ReadFile(filepath.Join(dir, "compare.csv"))
	for _, want := range []string{"figure,a,b,change,u_change\n", "\nconcavity_mm,", "\npermanent_set_mm,", "\nloss_pct,", "\nextra_time_pct,"} {
		if !strings.Contains(string(csvb), want) {
			t.Errorf("compare.csv lacks %q:\n%s", want, csvb)
		}
	}
	// Same inputs, same bytes.
	dir2 := t.TempDir()
	if err := WriteCompareOutputs(r, dir2); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"compare.json", "compare.html"} {
		b1, _ := os.ReadFile(filepath.Join(dir, f))
		b2, _ := os.ReadFile(filepath.Join(dir2, f))
		if len(b1) == 0 || string(b1) != string(b2) {
			t.Errorf("%s differs between two writes", f)
		}
	}
	page, _ := os.ReadFile(filepath.Join(dir, "compare.html"))
	angle := num(*r.Comparison.Alignment.AngleDeg, 2)
	for _, want := range []string{`<span class="v">` + angle + `</span> <span class="u">°</span>`, "permanent set (change of concavity)",
		"<td><code>loss_pct</code></td>", `id="rings"`} {
		if !strings.Contains(string(page), want) {
			t.Errorf("compare.html lacks %q", want)
		}
	}
	if n := strings.Count(string(page), `<img src="data:image/svg&#43;xml;base64,`); n != 2 {
		t.Errorf("compare.html has %d inline maps, want 2", n)
	}
}

func TestCompareBadInput(t *testing.T) {
	dir := t.TempDir()
	enc := synth.Encoding{Format: "ply", Binary: true}
	small := writeSynth(t, dir, "small", synth.Spec{Shape: synth.Flat, DiameterM: 0.12, NoiseM: 5e-6, SpacingM: 1e-3, Seed: 1}, enc)
	big := writeSynth(t, dir, "big", synth.Spec{Shape: synth.Flat, DiameterM: 0.13, NoiseM: 5e-6, SpacingM: 1e-3, Seed: 2}, enc)
	notScan := filepath.Join(dir, "notes.ply")
	if err := os.WriteFile(notScan, []byte("these are my notes, not a scan\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name, a, b string
		tolMM      float64
		want       []string
	}{
		{"diameters 10 mm apart", small, big, 0, []string{"small", "big", "not two scans of one base"}},
		{"not a scan", small, notScan, 0, []string{"notes.ply"}},
		{"missing file", filepath.Join(dir, "gone.ply"), small, 0, []string{"gone.ply"}},
		{"bad tolerance", small, small, -1, []string{"tolerance"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if testing.Short() && tc.name == "diameters 10 mm apart" {
				t.Skip("two whole analyses")
			}
			_, err := Compare(context.Background(), CompareInput{A: tc.a, B: tc.b, Job: smallJob(), DiameterTolMM: tc.tolMM})
			if err == nil {
				t.Fatal("want an error")
			}
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q does not say %q", err, w)
				}
			}
		})
	}
}

// TestCompareReportFolders compares the folders of two earlier analyses,
// and a folder against a scan: the same alignment as from the scans.
func TestCompareReportFolders(t *testing.T) {
	if testing.Short() {
		t.Skip("three whole analyses")
	}
	dir := t.TempDir()
	enc := synth.Encoding{Format: "ply", Binary: true}
	spec := synth.Spec{Shape: synth.Saddle, DiameterM: 0.14, SagM: 0.3e-3, NoiseM: 5e-6, SpacingM: 1e-3, Seed: 1}
	pa := writeSynth(t, dir, "a", spec, enc)
	spec.FormTurnDeg, spec.Seed = 37, 2
	pb := writeSynth(t, dir, "b", spec, enc)
	folders := map[string]string{}
	for name, p := range map[string]string{"a": pa, "b": pb} {
		res, err := Analyze(context.Background(), ScanInput{PanPath: p, Name: name, Job: smallJob()})
		if err != nil {
			t.Fatal(err)
		}
		folders[name] = filepath.Join(dir, "out-"+name)
		if err := WriteOutputs(res, folders[name]); err != nil {
			t.Fatal(err)
		}
	}
	noFields := filepath.Join(dir, "no-fields")
	os.MkdirAll(noFields, 0o755)
	raw, _ := os.ReadFile(filepath.Join(folders["a"], "report.json"))
	os.WriteFile(filepath.Join(noFields, "report.json"), raw, 0o644)
	tests := []struct {
		name, a, b string
		wantErr    string
	}{
		{"folder against folder", folders["a"], folders["b"], ""},
		{"folder against scan", folders["a"], pb, ""},
		{"folder without fields.vti", noFields, folders["b"], "fields.vti"},
		{"empty folder", t.TempDir(), folders["b"], "report.json"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r, err := Compare(context.Background(), CompareInput{A: tc.a, B: tc.b, Job: smallJob()})
			if tc.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tc.wantErr) {
					t.Fatalf("error %v, want one about %s", err, tc.wantErr)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			c := r.Comparison
			al := c.Alignment
			if al.AngleDeg == nil {
				t.Fatalf("angle undefined: %s", al.AngleNote)
			}
			e := math.Mod(*al.AngleDeg-37+720, 180)
			if e = math.Min(e, 180-e); e > 0.5 {
				t.Errorf("angle %.3f°, want 37° (mod 180°) ± 0.5°", *al.AngleDeg)
			}
			if c.HeightDiff.RMSUM > 5 || math.Abs(c.PermanentSetMM) > 0.01 {
				t.Errorf("height change RMS %.2f µm (want ≤ 5), permanent set %.4f mm (want 0 ± 0.01)", c.HeightDiff.RMSUM, c.PermanentSetMM)
			}
		})
	}
}

// TestCompareReportsUncertainty feeds compareReports reports with and
// without an uncertainty section (its layout is not settled: a number or
// an object with u, or expanded and k, are read).
func TestCompareReportsUncertainty(t *testing.T) {
	rep := func(conc float64, unc any) map[string]any {
		m := map[string]any{"geometry": map[string]any{"concavity_mm": conc, "flatness_mz_mm": 0.2}}
		if unc != nil {
			m["uncertainty"] = unc
		}
		return m
	}
	tests := []struct {
		name   string
		ua, ub any
		wantU  float64 // of the concavity change; 0 = none
	}{
		{"none", nil, nil, 0},
		{"only A", map[string]any{"concavity_mm": 0.003}, nil, 0},
		{"numbers", map[string]any{"concavity_mm": 0.003}, map[string]any{"concavity_mm": 0.004}, 0.005},
		{"objects", map[string]any{"concavity_mm": map[string]any{"u": 0.006}},
			map[string]any{"concavity_mm": map[string]any{"expanded": 0.016, "k": 2.0}}, 0.01},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var c Comparison
			compareReports(&c, [2]map[string]any{rep(0.30, tc.ua), rep(0.42, tc.ub)}, &Report{}, &Report{})
			if math.Abs(c.PermanentSetMM-0.12) > 1e-9 {
				t.Errorf("permanent set %g mm, want 0.12", c.PermanentSetMM)
			}
			got := c.PermanentSetUMM
			if (got != nil) != (tc.wantU != 0) || got != nil && math.Abs(*got-tc.wantU) > 1e-9 {
				t.Errorf("u = %v, want %g (√(u_A² + u_B²), JCGM 100:2008 eq. 10)", fmtOpt(got), tc.wantU)
			}
			for _, f := range c.Figures {
				if f.Figure == "flatness_mz_mm" && (f.Change == nil || *f.Change != 0 || f.UChange != nil) {
					t.Errorf("flatness change %v ± %v, want 0 without u", fmtOpt(f.Change), fmtOpt(f.UChange))
				}
				if f.Figure == "loss_pct" && (f.A != nil || f.Change != nil) {
					t.Error("a figure missing from both reports must stay null")
				}
			}
		})
	}
}
