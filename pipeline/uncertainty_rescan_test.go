package pipeline

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"testing"

	"gapflux/scan/synth"
)

// rescanJob is a cheap job for the re-scan tests: temperature mode (no
// glass grid), 1 mm cells, noise, radius and grid placement draws only
// (every property, hob setting and the pan's placement exact).
func rescanJob() Job {
	job := DefaultJob()
	job.Hob.Mode = "temperature"
	job.Grid.CellMM = 1
	u := &job.Uncertainty
	u.Mode, u.MaxTrials = "fast", 20
	u.PanSqPct, u.HobSqPct, u.SlopePct, u.MicrohardnessPct, u.Accommodation = 0, 0, 0, 0, 0
	u.ConductivityPct, u.ThicknessMM, u.PanEmissivity, u.HobEmissivity = 0, 0, 0, 0
	u.LimiterK, u.GlassTau, u.PowerPct, u.PlacementMM = 0, 0, 0, 0
	return job
}

// rescan writes re-scan i of one dished base: new noise and a new frame.
func rescan(t *testing.T, dir string, i int) string {
	return writeSynth(t, dir, fmt.Sprintf("dish%d", i), synth.Spec{Shape: synth.Dish, DiameterM: 0.16, SagM: 0.3e-3,
		NoiseM: 8e-6, SpacingM: 1e-3, Seed: uint64(100 + i), RotationDeg: [3]float64{0.3 * float64(i), -0.2 * float64(i), 17 * float64(i)}},
		synth.Encoding{Format: "ply", Binary: true})
}

// TestUncertaintyRescans: with the property uncertainties off (noise and
// the base radius drawn), the reported standard uncertainty of
// concavity_mm and loss_pct agrees with the spread of 8 re-scans of one
// base (new noise, a new frame) within a factor of 1.5 either way (issue
// 10). The spread of 8 values has a relative standard error of about
// 27 %, so the factor is about 1.5 of those. Without the radius draw,
// concavity's u was 0.55 of the spread: its re-scans move the rim circle
// fit (±0.04 mm here) and concavity goes as R². The same scan analysed
// twice gives the same bytes.
func TestUncertaintyRescans(t *testing.T) {
	if testing.Short() {
		t.Skip("9 analyses with Monte Carlo trials: about a minute")
	}
	dir := t.TempDir()
	job := rescanJob()
	var conc, loss, uc, ul []float64
	var first []byte
	for i := range 8 {
		path := rescan(t, dir, i)
		res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: filepath.Base(path), Job: job})
		if err != nil {
			t.Fatal(err)
		}
		u := res.Report.Uncertainty
		if u == nil || u.ConcavityMM == nil || u.LossPct == nil {
			t.Fatalf("scan %d: no uncertainty section", i)
		}
		conc, loss = append(conc, u.ConcavityMM.Value), append(loss, u.LossPct.Value)
		uc, ul = append(uc, u.ConcavityMM.U), append(ul, u.LossPct.U)
		if i == 0 {
			if first, err = MarshalReport(res.Report); err != nil {
				t.Fatal(err)
			}
			again, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: filepath.Base(path), Job: job})
			if err != nil {
				t.Fatal(err)
			}
			b, _ := MarshalReport(again.Report)
			if !bytes.Equal(first, b) {
				t.Errorf("the same scan gave different report bytes with uncertainty on")
			}
			t.Logf("trials %d, converged %v", u.Trials, u.Converged)
		}
	}
	for _, f := range []struct {
		name   string
		value  []float64
		u      []float64
		factor float64
	}{{"concavity_mm", conc, uc, 1.5}, {"loss_pct", loss, ul, 1.5}} {
		_, spread := meanStd(f.value)
		rms := 0.0
		for _, x := range f.u {
			rms += x * x
		}
		rms = math.Sqrt(rms / float64(len(f.u)))
		t.Logf("%s: re-scan spread %.4g, reported u (RMS of 8) %.4g, ratio %.2f", f.name, spread, rms, rms/spread)
		if !(rms <= f.factor*spread && spread <= f.factor*rms) {
			t.Errorf("%s: reported u %.4g against the re-scan spread %.4g: not within a factor %g", f.name, rms, spread, f.factor)
		}
	}
}

// BenchmarkUncertainty measures the cost per scan of uncertainty.mode
// off, fast and full on the re-scan test's base (160 mm dish, 1 mm cells,
// temperature mode, every default input distribution), and reports the
// trials used.
func BenchmarkUncertainty(b *testing.B) {
	dir := b.TempDir()
	path := writeSynth(b, dir, "dish", synth.Spec{Shape: synth.Dish, DiameterM: 0.16, SagM: 0.3e-3,
		NoiseM: 8e-6, SpacingM: 1e-3, Seed: 100}, synth.Encoding{Format: "ply", Binary: true})
	for _, mode := range []string{"off", "fast", "full"} {
		b.Run(mode, func(b *testing.B) {
			job := DefaultJob()
			job.Hob.Mode = "temperature"
			job.Grid.CellMM = 1
			job.Uncertainty.Mode = mode
			trials := 0
			for i := 0; i < b.N; i++ {
				res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: "dish", Job: job})
				if err != nil {
					b.Fatal(err)
				}
				if u := res.Report.Uncertainty; u != nil {
					trials += u.Trials
				}
			}
			b.ReportMetric(float64(trials)/float64(b.N), "trials/scan")
		})
	}
}

// TestUncertaintyRescansCover: with the property uncertainties on (the
// interface, material and emissivity inputs at their default widths), each
// of 8 re-scans' 95 % interval of loss_pct contains the median of the
// other seven (issue 10). Heater mode (the default job), 1 mm cells, 20
// trials on the coarse grid: about 27 s of CPU, skipped with -short.
//
// Left out, with the reason: concavity_mm, which no property moves (its
// interval is the noise-only one, whose width TestUncertaintyRescans
// checks; a calibrated 95 % interval misses the median of seven others
// about 8 % of the time, so "all 8" would hold about half the time); the
// re-drawn scanner noise, the placements and the hob settings. With those
// drawn, the nominal loss sits at or just below the low end of its own
// interval (measured: 6 of 8 re-scans miss, by up to 0.13 points): noise
// added to a scan that already carries it gives trials of √2 times the
// noise, whose loss is higher (fewer contact cells); a centred pan loses
// least, so every placement draw raises the loss; and the default heater
// sits just below its limiter, so only a lower limiter draw moves it.
func TestUncertaintyRescansCover(t *testing.T) {
	if testing.Short() {
		t.Skip("8 analyses with Monte Carlo trials: about 40 s")
	}
	dir := t.TempDir()
	job := DefaultJob()
	job.Grid.CellMM = 1
	u := &job.Uncertainty
	u.Mode, u.MaxTrials = "fast", 20
	// The default draws: scanner noise (a parametric bootstrap on the form),
	// the rim radius and the material and surface properties; the hob
	// settings and the placement are the reference condition (0).
	figs := []string{"loss_pct", "flatness_mz_mm"}
	var reps [8]*UncertaintyReport
	for i := range reps {
		path := rescan(t, dir, i)
		res, err := Analyze(context.Background(), ScanInput{PanPath: path, Name: filepath.Base(path), Job: job})
		if err != nil {
			t.Fatal(err)
		}
		if reps[i] = res.Report.Uncertainty; reps[i] == nil || reps[i].ConcavityMM == nil || reps[i].LossPct == nil {
			t.Fatalf("scan %d: no uncertainty section", i)
		}
	}
	for _, name := range figs {
		fig := func(u *UncertaintyReport) *FigureUncertainty {
			if name == "loss_pct" {
				return u.LossPct
			}
			return u.FlatnessMZMM
		}
		for i, u := range reps {
			var others []float64
			for j, v := range reps {
				if j != i {
					others = append(others, fig(v).Value)
				}
			}
			slices.Sort(others)
			med := others[len(others)/2] // 7 values: the 4th
			f := fig(u)
			t.Logf("%s re-scan %d: %.5g [%.5g, %.5g] (midpoint %+.3g from the value), median of the others %.5g", name, i, f.Value, f.Low, f.High, (f.Low+f.High)/2-f.Value, med)
			if med < f.Low || med > f.High {
				t.Errorf("%s re-scan %d: 95 %% interval [%.5g, %.5g] misses the median of the others %.5g", name, i, f.Low, f.High, med)
			}
		}
	}
}
