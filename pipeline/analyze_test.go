package pipeline

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gapflux/scan/synth"
)

// smallJob is the default scenario on a coarse grid, to keep tests quick.
func smallJob() Job {
	j := DefaultJob()
	j.Grid.CellMM = 1
	return j
}

func analyzeSynth(t *testing.T, spec synth.Spec, enc synth.Encoding, job Job) *Result {
	t.Helper()
	path := writeSynth(t, t.TempDir(), "pan", spec, enc)
	res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: "pan", Job: job})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// TestAnalyzeShapes runs the whole chain on the four basic forms and checks
// how each stands on a flat hob (DESIGN 5.1) and its concavity sign
// (DESIGN 3) against the generator's exact truth.
func TestAnalyzeShapes(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain")
	}
	const d, sag = 0.16, 0.3e-3
	tests := []struct {
		shape   synth.Shape
		word    string
		support string
		rocks   bool
		wantC   float64 // truth concavity, mm
	}{
		{synth.Dome, "domed", "", true, -0.3},
		{synth.Dish, "dished", "polygon", false, 0.3},
		{synth.Saddle, "saddle", "", true, 0},
		{synth.Bend, "bent", "", true, -0.15}, // paraboloid concavity of S·x²/R² is −S/2
		{synth.Flat, "flat", "polygon", false, 0},
	}
	for _, tc := range tests {
		t.Run(string(tc.shape), func(t *testing.T) {
			s := sag
			if tc.shape == synth.Flat {
				s = 0
			}
			// The support is classified from the three points the rest
			// pose's LP returns, which on a symmetric dish depends on the
			// filter's last micrometre at the rim (issue 8 part 5, another
			// branch, classifies from the contact band); until that lands
			// these checks run the linear filter.
			job := smallJob()
			job.Grid.Filter = "gaussian"
			res := analyzeSynth(t, synth.Spec{Shape: tc.shape, DiameterM: d, SagM: s, NoiseM: 5e-6, SpacingM: 1e-3, Seed: 3},
				synth.Encoding{Format: "ply", Binary: true}, job)
			g, p := res.Report.Geometry, res.Report.Pose
			// DESIGN 3 / issue: concavity within 2 % + 3× noise of the truth.
			if tol := 0.02*math.Abs(tc.wantC) + 3*0.005; math.Abs(g.ConcavityMM-tc.wantC) > tol {
				t.Errorf("concavity %.4f mm, want %.4f ± %.4f", g.ConcavityMM, tc.wantC, tol)
			}
			if g.Shape != tc.word {
				t.Errorf("shape word %q, want %q", g.Shape, tc.word)
			}
			if p.Rocks != tc.rocks {
				t.Errorf("rocks %v (rock %.3f mm, support %s), want %v", p.Rocks, p.RockMM, p.Support, tc.rocks)
			}
			// Where it stands: a dome on its centre (noise may turn the
			// apex into a tiny triangle), a dish on its rim, a saddle on
			// two opposite edge points (a line through the centre).
			r := d / 2 * 1e3
			for _, c := range p.ContactPointsMM {
				rc := math.Hypot(c[0], c[1])
				switch tc.shape {
				case synth.Dome:
					if rc > 0.15*r {
						t.Errorf("dome support point %v is %.1f mm from the centre", c, rc)
					}
				case synth.Dish, synth.Saddle:
					if rc < 0.9*r {
						t.Errorf("%s support point %v is %.1f mm from the centre, want on the rim", tc.shape, c, rc)
					}
				}
			}
			if tc.support != "" && p.Support != tc.support {
				t.Errorf("support %s, want %s", p.Support, tc.support)
			}
			h := res.Report.Heat
			if h.LossPct < -0.5 || h.PowerW <= 0 {
				t.Errorf("loss %.2f %%, power %.1f W", h.LossPct, h.PowerW)
			}
			// Energy balance of the solve (thermal tests check 1e-6 on
			// their own problems): heat in = heat to the water.
			if rel := math.Abs(res.Scan.PowerW-res.Scan.WaterW) / res.Scan.PowerW; rel > 1e-6 {
				t.Errorf("energy balance off by %.2g relative", rel)
			}
		})
	}
}

// TestFlatBaseWaterSideLimited: a flat base in broad contact transfers heat
// through the gas film far better than the water side takes it away, so the
// base temperature sits close to the hob's. Plausibility from common
// practice (no source): a flat base on a hob is limited by the water side.
func TestFlatBaseWaterSideLimited(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain")
	}
	job := smallJob()
	job.Hob.Mode = "temperature"
	res := analyzeSynth(t, synth.Spec{Shape: synth.Flat, DiameterM: 0.16, NoiseM: 3e-6, SpacingM: 1e-3, Seed: 4},
		synth.Encoding{Format: "ply", Binary: true}, job)
	h := res.Report.Heat
	if math.Abs(h.LossPct) > 2 {
		t.Errorf("a flat base loses %.2f %% against its flat twin", h.LossPct)
	}
	// Interface resistance 1/h_int against the water side's 1/1000:
	// the interface conductance must exceed the water side's several times.
	g := res.Report.Gap
	if g.MeanHGasWM2K < 3000 {
		t.Errorf("mean gas conductance %.0f W/m²K, want well above the water side's 1000", g.MeanHGasWM2K)
	}
	// Gas conduction dominates solid-spot conduction by orders of magnitude
	// at cooking loads (DESIGN 5.2; PHYSICS-REFERENCES 1.6).
	if g.MeanHSolidWM2K*100 > g.MeanHGasWM2K {
		t.Errorf("solid %.3g vs gas %.3g W/m²K: gas should dominate by > 100×", g.MeanHSolidWM2K, g.MeanHGasWM2K)
	}
	if g.GasOverSolid < 100 {
		t.Errorf("gas_over_solid = %.0f, want > 100", g.GasOverSolid)
	}
}

// TestLiftedBaseLosesTensOfPercent: a base whose centre is dished by 1 % of
// its diameter stands on its rim with most of its area lifted off and loses
// a large share of the heat transfer, tens of percent. Plausibility from
// common practice (no source).
func TestLiftedBaseLosesTensOfPercent(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain")
	}
	res := analyzeSynth(t, synth.Spec{Shape: synth.Dish, DiameterM: 0.16, SagM: 1.6e-3, NoiseM: 5e-6, SpacingM: 1e-3, Seed: 5},
		synth.Encoding{Format: "xyz"}, smallJob())
	h := res.Report.Heat
	if h.LossPct < 10 || h.LossPct > 90 {
		t.Errorf("loss %.1f %%, want tens of percent", h.LossPct)
	}
	if *h.GlassMaxC <= *h.FlatGlassMaxC {
		t.Errorf("glass %.0f °C not hotter than the flat twin's %.0f °C", *h.GlassMaxC, *h.FlatGlassMaxC)
	}
	if hu := res.Report.Heatup; hu.TimeS <= hu.FlatTimeS || hu.ExtraTimePct <= 0 {
		t.Errorf("heat-up %.0f s vs flat %.0f s", hu.TimeS, hu.FlatTimeS)
	}
	if res.Report.Verdict.Pass {
		t.Errorf("a 1 %% dish passed the default tolerances")
	}
}

// TestAnalyzeDeterministicOutputs: the same input gives the same bytes.
func TestAnalyzeDeterministicOutputs(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain")
	}
	dir := t.TempDir()
	path := writeSynth(t, dir, "pan", synth.Spec{Shape: synth.Dish, DiameterM: 0.12, SagM: 0.2e-3, NoiseM: 8e-6,
		SpacingM: 1e-3, Seed: 6}, synth.Encoding{Format: "xyz"})
	var outs [2][]byte
	for i := range outs {
		res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: "pan.xyz", Job: smallJob()})
		if err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, "out", string(rune('a'+i)))
		if err := WriteOutputs(res, out); err != nil {
			t.Fatal(err)
		}
		var all bytes.Buffer
		for _, f := range []string{"report.json", "rings.csv", "fields.vti", "gap.png", "flux.png", "rings.svg"} {
			b, err := os.ReadFile(filepath.Join(out, f))
			if err != nil {
				t.Fatal(err)
			}
			all.Write(b)
		}
		outs[i] = all.Bytes()
	}
	if !bytes.Equal(outs[0], outs[1]) {
		t.Errorf("two runs wrote different bytes")
	}
	var rep Report
	b, _ := os.ReadFile(filepath.Join(dir, "out", "a", "report.json"))
	if err := json.Unmarshal(b, &rep); err != nil || rep.Schema != SchemaReport {
		t.Fatalf("report.json: %v, schema %q", err, rep.Schema)
	}
	for _, sec := range []any{rep.Geometry, rep.Pose, rep.Gap, rep.Heat, rep.Heatup, rep.Verdict} {
		if reflectNil(sec) {
			t.Errorf("report lacks a section: %+v", rep)
		}
	}
	if len(rep.Rings) == 0 {
		t.Error("no rings")
	}
}

func reflectNil(v any) bool {
	switch x := v.(type) {
	case *GeometryReport:
		return x == nil
	case *PoseReport:
		return x == nil
	case *GapReport:
		return x == nil
	case *HeatReport:
		return x == nil
	case *HeatupReport:
		return x == nil
	case *VerdictReport:
		return x == nil
	}
	return true
}

func TestAnalyzeBadInputs(t *testing.T) {
	dir := t.TempDir()
	trunc := filepath.Join(dir, "cut.stl")
	b := make([]byte, 84+50*3)
	b[80] = 10 // claims 10 facets, holds 3
	if err := os.WriteFile(trunc, b, 0o644); err != nil {
		t.Fatal(err)
	}
	nan := filepath.Join(dir, "nan.xyz")
	os.WriteFile(nan, []byte("0 0 0\n1 0 NaN\n"), 0o644)
	few := filepath.Join(dir, "few.xyz")
	os.WriteFile(few, []byte("0 0 0\n1 0 0\n0 1 0\n"), 0o644)
	big := filepath.Join(dir, "big.xyz")
	os.WriteFile(big, []byte(strings.Repeat("1 2 3\n", 1100)), 0o644)
	tests := []struct {
		path, want string
		job        func(*Job)
	}{
		{trunc, "cut.stl", nil},
		{nan, "nan.xyz: line 2", nil},
		{few, "few.xyz", nil},
		{filepath.Join(dir, "missing.ply"), "missing.ply", nil},
		{big, "max_points", func(j *Job) { j.Limits.MaxPoints = 1000 }},
	}
	for _, tc := range tests {
		job := smallJob()
		if tc.job != nil {
			tc.job(&job)
		}
		_, err := Analyze(context.Background(), ScanInput{PanPath: tc.path, Name: filepath.Base(tc.path), Job: job})
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want one containing %q", filepath.Base(tc.path), err, tc.want)
		}
	}
}

// TestFlatPanOnDomedHobScan: a flat pan on a hob top scan that is domed
// (crown 0.15 mm over the 300 mm plate) rests on the hob's crown: its
// support points lie near the centre and the gap grows toward the rim as
// the dome falls away: at r = 60 mm the dome is 0.15·(60/150)² = 0.024 mm
// below its crown (the generator's exact form, HobSpec).
func TestFlatPanOnDomedHobScan(t *testing.T) {
	if testing.Short() {
		t.Skip("whole chain")
	}
	dir := t.TempDir()
	pan := writeSynth(t, dir, "pan", synth.Spec{Shape: synth.Flat, DiameterM: 0.12, NoiseM: 2e-6, SpacingM: 1e-3, Seed: 8},
		synth.Encoding{Format: "ply", Binary: true})
	hob, err := synth.GenerateHob(synth.HobSpec{Shape: synth.Dome, SagM: 0.15e-3, NoiseM: 2e-6, SpacingM: 2e-3, Seed: 9})
	if err != nil {
		t.Fatal(err)
	}
	hobPath, _, err := synth.WriteFiles(dir, "hob", hob, synth.Encoding{Format: "xyz"})
	if err != nil {
		t.Fatal(err)
	}
	job := smallJob()
	job.Hob.Mode = "temperature"
	res, err := Analyze(context.Background(), ScanInput{PanPath: pan, Name: "pan", HobPath: hobPath, Job: job})
	if err != nil {
		t.Fatal(err)
	}
	// The support is the contact band (3σ = 4.5 µm) round the crown: the
	// dome falls 4.5 µm at r = 150 mm·√(0.0045/0.15) = 26 mm; 30 mm
	// leaves room for the noise.
	for _, c := range res.Report.Pose.ContactPointsMM {
		if r := math.Hypot(c[0], c[1]); r > 30 {
			t.Errorf("support point %v is %.1f mm from the centre; the pan should sit on the hob's crown", c, r)
		}
	}
	if g := res.Report.Gap.MaxGapMM; math.Abs(g-0.024) > 0.008 {
		t.Errorf("largest gap %.4f mm, want about 0.024 mm (the dome's fall at the pan's rim)", g)
	}
	if res.Report.Input.Hob == nil || res.Report.Input.Hob.Points == 0 {
		t.Errorf("the report does not name the hob scan: %+v", res.Report.Input.Hob)
	}
}
