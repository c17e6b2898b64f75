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
