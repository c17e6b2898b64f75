package pipeline

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io/fs"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"

	"gapflux/scan/synth"
)

// crashScans writes the crash test's batch: five small synthetic pans
// (40–52 mm, 1 mm spacing, so each analysis takes a small fraction of a
// second on a 2 mm grid), one truncated STL that fails on purpose, and a
// job for the small grid. It returns the broken scan's relative path.
func crashScans(t *testing.T, dir string) string {
	t.Helper()
	shapes := []synth.Shape{synth.Flat, synth.Dish, synth.Dome, synth.Saddle, synth.Bend}
	for i, sh := range shapes {
		sc, err := synth.Generate(synth.Spec{Name: fmt.Sprintf("pan%d", i), Shape: sh, DiameterM: float64(40+2*i) / 1e3,
			SagM: 0.1e-3, NoiseM: 5e-6, SpacingM: 1e-3, Seed: uint64(100 + i)})
		if err != nil {
			t.Fatal(err)
		}
		sub := filepath.Join(dir, fmt.Sprintf("line%d", i%2))
		if err := os.MkdirAll(sub, 0o755); err != nil {
			t.Fatal(err)
		}
		if _, _, err := synth.WriteFiles(sub, fmt.Sprintf("pan%d", i), sc, synth.Encoding{Format: "xyz"}); err != nil {
			t.Fatal(err)
		}
	}
	// A binary STL whose header promises 5 facets and holds one.
	broken := make([]byte, 84+50)
	copy(broken, "broken on purpose")
	binary.LittleEndian.PutUint32(broken[80:], 5)
	if err := os.WriteFile(filepath.Join(dir, "line1", "broken.stl"), broken, 0o644); err != nil {
		t.Fatal(err)
	}
	job := "[grid]\ncell_mm = 2.0\ncutoff_mm = 0\n[hob]\nmode = \"temperature\"\n"
	if err := os.WriteFile(filepath.Join(dir, JobName), []byte(job), 0o644); err != nil {
		t.Fatal(err)
	}
	return "line1/broken.stl"
}

// buildGapflux builds the command into a temporary folder.
func buildGapflux(t *testing.T) string {
	t.Helper()
	goBin := filepath.Join(runtime.GOROOT(), "bin", "go")
	if _, err := os.Stat(goBin); err != nil {
		if goBin, err = exec.LookPath("go"); err != nil {
			t.Skip("no go command to build gapflux with")
		}
	}
	bin := filepath.Join(t.TempDir(), "gapflux")
	if b, err := exec.Command(goBin, "build", "-o", bin, "gapflux/cmd/gapflux").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, b)
	}
	return bin
}

// TestBatchCrashSafety (issue 14): the batch runs as a child process and is
// killed with SIGKILL, SIGTERM or SIGINT at a seeded random moment, then run
// again to the end. Every trial must end with summary.csv and summary.json
// byte-identical to an uninterrupted run's, no temporary file under OUT, no
// failed row but the broken scan's, and the lock released; an interrupt by
// signal must itself leave no failed row and release the lock.
func TestBatchCrashSafety(t *testing.T) {
	if testing.Short() {
		t.Skip("builds gapflux and runs it about 40 times")
	}
	bin := buildGapflux(t)
	dir := t.TempDir()
	broken := crashScans(t, dir)
	batch := func(out string) *exec.Cmd {
		return exec.Command(bin, "batch", dir, "--out", out, "--workers", "2", "--quiet")
	}
	// Two uninterrupted runs: the shorter sets the range of the kill
	// times (the first run may be slowed by a cold page cache or a busy
	// host, and kill times scaled to it would often fall after the end),
	// and the two must agree byte for byte.
	var refDur time.Duration
	var refCSV, refJSON []byte
	for run := range 2 {
		ref := filepath.Join(t.TempDir(), "ref")
		t0 := time.Now()
		if b, err := batch(ref).CombinedOutput(); exitCode(err) != 1 {
			t.Fatalf("reference run %d: %v (want exit 1 for the broken scan)\n%s", run, err, b)
		}
		d := time.Since(t0)
		csv, js := readSummaries(t, ref)
		checkRows(t, "reference", js, broken, false)
		if run == 0 {
			refDur, refCSV, refJSON = d, csv, js
			continue
		}
		refDur = min(refDur, d)
		if !bytes.Equal(csv, refCSV) || !bytes.Equal(js, refJSON) {
			t.Fatalf("two uninterrupted runs differ:\n%s\n---\n%s", csv, refCSV)
		}
	}

	const trials = 20
	midRun := 0 // trials whose signal came before the batch ended
	rng := rand.New(rand.NewPCG(14, 2026))
	signals := []syscall.Signal{syscall.SIGKILL, syscall.SIGTERM, syscall.SIGINT}
	for i := 0; i < trials; i++ {
		sig := signals[i%len(signals)]
		// Kill anywhere from process start to 70 % of a whole run (a run's
		// length varies with the machine's load; the last 30 % would often
		// fall after the end and test nothing).
		delay := time.Duration(rng.Float64() * 0.7 * float64(refDur))
		out := filepath.Join(t.TempDir(), "out")
		name := fmt.Sprintf("trial %d (%v after %v)", i, sig, delay.Round(time.Millisecond))
		cmd := batch(out)
		var stderr bytes.Buffer
		cmd.Stderr = &stderr
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(delay)
		_ = cmd.Process.Signal(sig)
		err := cmd.Wait()
		if code := exitCode(err); code == -1 || strings.Contains(string(mustRead(filepath.Join(out, "run.log"))), "interrupted true") {
			midRun++
		}
		if code := exitCode(err); code != -1 && code != 1 {
			t.Errorf("%s: the interrupted batch exited %d, want 1 or death by signal\n%s", name, code, stderr.Bytes())
		}
		if sig != syscall.SIGKILL && exitCode(err) == 1 {
			// A clean stop: no failed row but the broken scan, lock gone.
			if js, err := os.ReadFile(filepath.Join(out, "summary.json")); err == nil {
				checkRows(t, name+" after the signal", js, broken, true)
			}
			if _, err := os.Stat(filepath.Join(out, LockName)); !errors.Is(err, fs.ErrNotExist) {
				t.Errorf("%s: a clean stop left the lock: %v", name, err)
			}
		}
		if b, err := batch(out).CombinedOutput(); exitCode(err) != 1 {
			t.Fatalf("%s: resume: %v\n%s", name, err, b)
		}
		gotCSV, gotJSON := readSummaries(t, out)
		if !bytes.Equal(gotCSV, refCSV) || !bytes.Equal(gotJSON, refJSON) {
			t.Errorf("%s: resumed summary differs from an uninterrupted run:\n%s\n---\n%s", name, gotCSV, refCSV)
		}
		checkRows(t, name+" after resuming", gotJSON, broken, false)
		if tmp := findFiles(out, func(n string) bool { return strings.HasPrefix(n, TempPrefix) }); len(tmp) > 0 {
			t.Errorf("%s: temporary files left: %v", name, tmp)
		}
		if _, err := os.Stat(filepath.Join(out, LockName)); !errors.Is(err, fs.ErrNotExist) {
			t.Errorf("%s: lock not released: %v", name, err)
		}
		if log, err := os.ReadFile(filepath.Join(out, "run.log")); err != nil || !bytes.HasSuffix(log, []byte("\n")) {
			t.Errorf("%s: run.log does not end with a newline (%v)", name, err)
		}
	}
	t.Logf("%d trials, %d stopped mid-run; an uninterrupted run took %v", trials, midRun, refDur.Round(time.Millisecond))
	if midRun < trials/2 {
		t.Errorf("only %d of %d signals came before the batch ended: the trials test little", midRun, trials)
	}
}

// checkRows fails the test when a summary has a failed row other than the
// broken scan's, or (unless partial) lacks that one or has a not-run row.
func checkRows(t *testing.T, name string, summaryJSON []byte, broken string, partial bool) {
	t.Helper()
	s, err := ReadSummaryJSON(bytes.NewReader(summaryJSON), name)
	if err != nil {
		t.Errorf("%s: %v", name, err)
		return
	}
	for _, r := range s.Rows {
		switch {
		case r.Status == StatusFailed && r.Path != broken:
			t.Errorf("%s: %s failed: %s", name, r.Path, r.Error)
		case r.Path == broken && r.Status != StatusFailed && !(partial && r.Status == StatusNotRun):
			t.Errorf("%s: the broken scan is %s, want failed", name, r.Status)
		case r.Status == StatusNotRun && !partial:
			t.Errorf("%s: %s not run", name, r.Path)
		}
	}
}

// mustRead returns a file's bytes, or nothing when it cannot be read.
func mustRead(path string) []byte {
	b, _ := os.ReadFile(path)
	return b
}

// exitCode is the exit code of a finished child, 0 for no error, -1 when
// a signal ended it.
func exitCode(err error) int {
	var ee *exec.ExitError
	if errors.As(err, &ee) {
		return ee.ExitCode()
	}
	if err != nil {
		return -2
	}
	return 0
}
