package pipeline

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"gapflux/scan/synth"
)

// floatLeaf is one float value of the Job found by reflection: its TOML
// key as error messages name it, and a job file that sets it to a given
// literal with the line the key is on.
type floatLeaf struct {
	key  string                  // e.g. "pan.offset_mm[1]", "pan.layers[0].thickness_mm"
	toml func(lit string) string // a job file setting the value to lit
	line int                     // line of the key in that file
	set  func(j *Job, v float64) // sets the value on a Job
}

// floatLeaves walks the Job type by reflection (not through the package's
// own key table, so that a key missing there cannot hide here) and returns
// every float64 value: scalars, elements of fixed arrays, and the float
// keys of one element of each slice of tables.
func floatLeaves(t *testing.T) []floatLeaf {
	t.Helper()
	var out []floatLeaf
	jt := reflect.TypeFor[Job]()
	tag := func(f reflect.StructField) string { name, _, _ := strings.Cut(f.Tag.Get("toml"), ","); return name }
	for i := range jt.NumField() {
		sec := jt.Field(i)
		secName := tag(sec)
		switch sec.Type.Kind() {
		case reflect.Struct:
			for k := range sec.Type.NumField() {
				f := sec.Type.Field(k)
				name := tag(f)
				si, fi := i, k
				switch {
				case f.Type.Kind() == reflect.Float64:
					out = append(out, floatLeaf{
						key:  secName + "." + name,
						toml: func(lit string) string { return fmt.Sprintf("[%s]\n%s = %s\n", secName, name, lit) },
						line: 2,
						set: func(j *Job, v float64) {
							reflect.ValueOf(j).Elem().Field(si).Field(fi).SetFloat(v)
						},
					})
				case f.Type.Kind() == reflect.Array && f.Type.Elem().Kind() == reflect.Float64:
					for e := range f.Type.Len() {
						n := f.Type.Len()
						out = append(out, floatLeaf{
							key: fmt.Sprintf("%s.%s[%d]", secName, name, e),
							toml: func(lit string) string {
								el := make([]string, n)
								for x := range el {
									el[x] = "0.0"
								}
								el[e] = lit
								return fmt.Sprintf("[%s]\n%s = [%s]\n", secName, name, strings.Join(el, ", "))
							},
							line: 2,
							set: func(j *Job, v float64) {
								reflect.ValueOf(j).Elem().Field(si).Field(fi).Index(e).SetFloat(v)
							},
						})
					}
				case f.Type.Kind() == reflect.Slice && f.Type.Elem().Kind() == reflect.Struct:
					out = append(out, tableLeaves(secName+"."+name, f.Type.Elem(), func(j *Job) reflect.Value {
						return reflect.ValueOf(j).Elem().Field(si).Field(fi)
					})...)
				}
			}
		case reflect.Slice:
			si := i
			out = append(out, tableLeaves(secName, sec.Type.Elem(), func(j *Job) reflect.Value {
				return reflect.ValueOf(j).Elem().Field(si)
			})...)
		}
	}
	return out
}

// tableLeaves returns the float keys of an array of tables (pan.layers,
// material): the file holds one table whose string keys are set to a
// valid name.
func tableLeaves(path string, et reflect.Type, slice func(*Job) reflect.Value) []floatLeaf {
	var out []floatLeaf
	var strs []string
	for k := range et.NumField() {
		f := et.Field(k)
		if f.Type.Kind() == reflect.String {
			name, _, _ := strings.Cut(f.Tag.Get("toml"), ",")
			v := "alu-1050"
			if name == "source" {
				v = "test"
			}
			strs = append(strs, fmt.Sprintf("%s = %q\n", name, v))
		}
	}
	for k := range et.NumField() {
		f := et.Field(k)
		if f.Type.Kind() != reflect.Float64 {
			continue
		}
		name, _, _ := strings.Cut(f.Tag.Get("toml"), ",")
		fi := k
		out = append(out, floatLeaf{
			key: path + "[0]." + name,
			toml: func(lit string) string {
				return fmt.Sprintf("[[%s]]\n%s%s = %s\n", path, strings.Join(strs, ""), name, lit)
			},
			line: 2 + len(strs),
			set: func(j *Job, v float64) {
				s := slice(j)
				if s.Len() == 0 {
					s.Set(reflect.Append(s, reflect.New(et).Elem()))
					s.Index(0).Field(0).SetString("alu-1050")
				}
				s.Index(0).Field(fi).SetFloat(v)
			},
		})
	}
	return out
}

// TestJobRejectsNonFiniteEveryKey: ±Inf and NaN in any float key of a job
// file is an error naming the key, the file and the line (issue 14 item 1).
func TestJobRejectsNonFiniteEveryKey(t *testing.T) {
	leaves := floatLeaves(t)
	if len(leaves) < 50 {
		t.Fatalf("found %d float keys by reflection; the walk is broken", len(leaves))
	}
	for _, lf := range leaves {
		for _, lit := range []string{"inf", "+inf", "-inf", "nan"} {
			t.Run(lf.key+"="+lit, func(t *testing.T) {
				_, err := ReadJob(strings.NewReader(lf.toml(lit)), "job.toml")
				if err == nil {
					t.Fatalf("accepted %s = %s", lf.key, lit)
				}
				var je *JobError
				if !errors.As(err, &je) {
					t.Fatalf("error %T is not a *JobError: %v", err, err)
				}
				if !strings.Contains(err.Error(), lf.key) || je.Name != "job.toml" || je.Line != lf.line {
					t.Errorf("error %q: want the key %s, the file and line %d", err, lf.key, lf.line)
				}
			})
		}
	}
}

// TestJobBoundsIssueCases: the values the attack on the job file used.
func TestJobBoundsIssueCases(t *testing.T) {
	tests := []struct {
		name, in string
		want     []string // substrings of the error
		line     int
	}{
		{"rough beyond cookware", "[interface]\npan_sq_um = 1e9\n", []string{"interface.pan_sq_um", "1e+09"}, 2},
		{"three-element offset", "[pan]\noffset_mm = [1.0, 2.0, 3.0]\n", []string{"pan.offset_mm", "2 numbers", "3"}, 2},
		{"one-element offset", "[pan]\noffset_mm = [1.0]\n", []string{"pan.offset_mm", "2 numbers"}, 2},
		{"huge margin", "[hob]\nmargin_mm = 3000\n", []string{"hob.margin_mm", "3000"}, 2},
		{"huge cut-off", "[grid]\ncutoff_mm = 1e9\n", []string{"grid.cutoff_mm"}, 2},
		{"huge zone", "[hob]\nzone_diameter_mm = 1e6\n", []string{"hob.zone_diameter_mm"}, 2},
		{"far offset", "[pan]\noffset_mm = [1e5, 0.0]\n", []string{"pan.offset_mm[0]"}, 2},
		{"fine cells over the glass", "[grid]\ncell_mm = 0.05\n[hob]\nzone_diameter_mm = 180.0\n", []string{"grid.cell_mm = 0.05", "limits.max_cells", "cell_mm ≥ 0.1"}, 2},
		{"second key on its line", "[water]\nmass_kg = 1.0\n\n[hob]\nroom_c = 20.0\nmargin_mm = -1.0\n", []string{"hob.margin_mm"}, 6},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ReadJob(strings.NewReader(tc.in), "job.toml")
			if err == nil {
				t.Fatal("accepted")
			}
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q lacks %q", err, w)
				}
			}
			var je *JobError
			if !errors.As(err, &je) || je.Line != tc.line {
				t.Errorf("error %v: want line %d", err, tc.line)
			}
		})
	}
}

// TestJobFileOverCap: a job file over the size cap is an error naming the
// file and the cap, not silently truncated.
func TestJobFileOverCap(t *testing.T) {
	big := "[water]\nmass_kg = 2.0\n" + strings.Repeat("# padding padding padding padding\n", (5<<20)/34)
	_, err := ReadJob(strings.NewReader(big), "big.toml")
	if err == nil || !strings.Contains(err.Error(), "big.toml") || !strings.Contains(err.Error(), "4 MiB") {
		t.Fatalf("error %v, want one naming big.toml and the 4 MiB cap", err)
	}
}

// TestJobProfilePathsStayInside: profile keys cannot leave the job file's
// folder, and the error never shows the content of the file named.
func TestJobProfilePathsStayInside(t *testing.T) {
	root := t.TempDir()
	dir := filepath.Join(root, "jobs")
	os.MkdirAll(dir, 0o755)
	secret := filepath.Join(root, "secret.csv")
	os.WriteFile(secret, []byte("r_mm,t_c\nTOPSECRET,1\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "ok.csv"), []byte("r_mm,t_c\n0,260\n"), 0o644)
	if err := os.Symlink(secret, filepath.Join(dir, "link.csv")); err != nil {
		t.Skip("no symlinks here:", err)
	}
	tests := []struct {
		name, path string
		ok         bool
	}{
		{"inside", "ok.csv", true},
		{"parent", "../secret.csv", false},
		{"absolute", secret, false},
		{"symlink out", "link.csv", false},
		{"dot-dot inside name", "sub/../../secret.csv", false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			job := filepath.Join(dir, "job.toml")
			os.WriteFile(job, []byte(fmt.Sprintf("[hob]\nmode = \"temperature\"\ntemperature_profile = %q\n", tc.path)), 0o644)
			_, err := ReadJobFile(job)
			if tc.ok {
				if err != nil {
					t.Fatal(err)
				}
				return
			}
			if err == nil {
				t.Fatalf("accepted %s", tc.path)
			}
			if strings.Contains(err.Error(), "TOPSECRET") || !strings.Contains(err.Error(), "hob.temperature_profile") {
				t.Errorf("error %q: want the key named and no file content", err)
			}
		})
	}
}

// countdownCtx is a context whose Err turns to context.Canceled after n
// calls: a deterministic stand-in for a Ctrl-C in the middle of a stage.
// It is safe for the concurrent scan and flat-twin solves.
type countdownCtx struct {
	context.Context
	n atomic.Int64
}

func (c *countdownCtx) Err() error {
	if c.n.Add(-1) < 0 {
		return context.Canceled
	}
	return nil
}

// TestNonFiniteJobValues: a Job built in code (flags, a manifest row) with
// ±Inf or NaN in any float is refused by Validate naming the key; JobHash
// returns an error instead of panicking; Analyze returns a job error (it
// said "internal error" for 24 such keys, issue 14 item 1).
func TestNonFiniteJobValues(t *testing.T) {
	for _, lf := range floatLeaves(t) {
		for _, v := range []float64{math.Inf(1), math.Inf(-1), math.NaN()} {
			t.Run(fmt.Sprintf("%s=%v", lf.key, v), func(t *testing.T) {
				j := DefaultJob()
				lf.set(&j, v)
				if err := j.Validate(); err == nil || !strings.Contains(err.Error(), lf.key) {
					t.Errorf("Validate: %v, want an error naming %s", err, lf.key)
				}
				var sha string
				var err error
				func() {
					defer func() {
						if p := recover(); p != nil {
							t.Fatalf("JobHash panicked: %v", p)
						}
					}()
					sha, err = JobHash(j, "")
				}()
				if err == nil || sha != "" {
					t.Errorf("JobHash: %q, %v; want an error", sha, err)
				}
				_, err = Analyze(context.Background(), ScanInput{PanPath: "none.xyz", Job: j})
				if err == nil || !strings.Contains(err.Error(), lf.key) {
					t.Errorf("Analyze: %v, want an error naming %s", err, lf.key)
				}
			})
		}
	}
}

// TestAnalyzeGridBounds: grids over limits.max_cells are refused after the
// scan is levelled and before any grid is allocated, naming the keys.
func TestAnalyzeGridBounds(t *testing.T) {
	dir := t.TempDir()
	pan100 := writeSynth(t, dir, "pan100", synth.Spec{Shape: synth.Dish, DiameterM: 0.1, SagM: 0.2e-3, NoiseM: 5e-6, SpacingM: 1e-3, Seed: 1},
		synth.Encoding{Format: "xyz"})
	pan200 := writeSynth(t, dir, "pan200", synth.Spec{Shape: synth.Dish, DiameterM: 0.2, SagM: 0.2e-3, NoiseM: 5e-6, SpacingM: 2e-3, Seed: 1},
		synth.Encoding{Format: "xyz"})
	tests := []struct {
		name string
		pan  string
		job  func(*Job)
		want []string
	}{
		{"fine cells on the base", pan100, func(j *Job) { j.Hob.Mode = "temperature"; j.Grid.CellMM = 0.05 },
			[]string{"base grid would be 2001×2001 cells (4.0 M)", "limits.max_cells = 4000000", "grid.cell_mm = 0.05", "cell_mm ≥ 0.0501"}},
		{"glass grid of a large base", pan200, func(j *Job) { j.Limits.MaxCells = 240_000 },
			[]string{"glass grid", "would be 521×521 cells", "hob.margin_mm = 30"}},
		{"filter kernel", pan100, func(j *Job) {
			j.Hob.Mode = "temperature"
			j.Limits.MaxCells = 100_000
			j.Grid.CutoffMM = 80
			j.Grid.CellMM = 0.5
		},
			[]string{"form filter", "grid.cutoff_mm = 80", "kernel of 321 cells"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			job := DefaultJob()
			tc.job(&job)
			if err := job.Validate(); err != nil {
				t.Fatalf("the job alone is valid: %v", err)
			}
			start := time.Now()
			_, err := Analyze(context.Background(), ScanInput{PanPath: tc.pan, Name: "pan", Job: job})
			t.Logf("refused after %v: %v", time.Since(start), err)
			if err == nil {
				t.Fatal("accepted")
			}
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error lacks %q", w)
				}
			}
		})
	}
}

// TestAnalyzeCancelledInsideSolve: Analyze stops inside the plate solve
// when the context is cancelled there; before, it only looked between
// stages and ran every solve to its end.
func TestAnalyzeCancelledInsideSolve(t *testing.T) {
	path := writeSynth(t, t.TempDir(), "pan", synth.Spec{Shape: synth.Dish, DiameterM: 0.16, SagM: 0.3e-3, NoiseM: 5e-6, SpacingM: 1e-3, Seed: 3},
		synth.Encoding{Format: "xyz"})
	job := smallJob()
	// Analyze checks the context a handful of times between its stages
	// before the first solve; 12 checks end inside that solve.
	ctx := &countdownCtx{Context: context.Background()}
	ctx.n.Store(12)
	res, err := Analyze(ctx, ScanInput{PanPath: path, Name: "pan", Job: job})
	if !errors.Is(err, context.Canceled) || res != nil {
		t.Fatalf("result %v, error %v; want context.Canceled", res != nil, err)
	}
	if !strings.Contains(err.Error(), "plate solve") {
		t.Errorf("error %q: want it to come from the plate solve", err)
	}
}

// TestAnalyzeCancelledLargeJob: a real cancel during a large analysis
// (0.2 mm cells: a 1.7 M-cell glass grid) returns context.Canceled; the
// time it took is logged, not asserted.
func TestAnalyzeCancelledLargeJob(t *testing.T) {
	if testing.Short() {
		t.Skip("large grid")
	}
	path := writeSynth(t, t.TempDir(), "pan", synth.Spec{Shape: synth.Dish, DiameterM: 0.2, SagM: 0.3e-3, NoiseM: 5e-6, SpacingM: 1e-3, Seed: 3},
		synth.Encoding{Format: "xyz"})
	job := DefaultJob()
	job.Grid.CellMM = 0.2
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	start := time.Now()
	var cancelledAt time.Duration
	timer := time.AfterFunc(1500*time.Millisecond, func() { cancelledAt = time.Since(start); cancel() })
	defer timer.Stop()
	_, err := Analyze(ctx, ScanInput{PanPath: path, Name: "pan", Job: job})
	end := time.Since(start)
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("error %v, want context.Canceled", err)
	}
	t.Logf("cancelled at %v, Analyze returned %v later: %v", cancelledAt, end-cancelledAt, err)
}

// TestProfileOverCap: a profile CSV over the 4 MiB cap is an error naming
// the file and the cap, never read in part.
func TestProfileOverCap(t *testing.T) {
	dir := t.TempDir()
	prof := filepath.Join(dir, "hot.csv")
	var b strings.Builder
	b.WriteString("r_mm,t_c\n")
	for i := 0; b.Len() <= maxProfileBytes; i++ {
		fmt.Fprintf(&b, "%d.%06d,250\n", i/1000000, i%1000000)
	}
	os.WriteFile(prof, []byte(b.String()), 0o644)
	_, err := readProfile(prof, "t_c")
	if err == nil || !strings.Contains(err.Error(), "hot.csv") || !strings.Contains(err.Error(), "4 MiB") {
		t.Fatalf("error %v, want one naming hot.csv and the 4 MiB cap", err)
	}
}

// TestProfileErrorHidesContent: a file named as a profile that is not one
// is refused without showing its first line (issue 14 item 3).
func TestProfileErrorHidesContent(t *testing.T) {
	p := filepath.Join(t.TempDir(), "notes.csv")
	os.WriteFile(p, []byte("user,SECRET-HASH\n1,2\n"), 0o644)
	_, err := readProfile(p, "t_c")
	if err == nil || strings.Contains(err.Error(), "SECRET") || !strings.Contains(err.Error(), "notes.csv:1") {
		t.Fatalf("error %v: want the file and line without its content", err)
	}
}
