package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"gapflux/pipeline"
)

// writeReports writes one report folder per concavity value under dir, all
// from one job, each with standard uncertainty u of concavity (0: none).
func writeReports(t *testing.T, dir string, u float64, conc ...float64) {
	t.Helper()
	for i, c := range conc {
		rep := pipeline.Report{Schema: pipeline.SchemaReport, Warnings: []string{},
			Input:    pipeline.ReportInput{Pan: pipeline.FileReport{SHA256: fmt.Sprint("pan", i)}, JobSHA256: "job"},
			Geometry: &pipeline.GeometryReport{ConcavityMM: c}}
		if u > 0 {
			rep.Uncertainty = &pipeline.UncertaintyReport{ConcavityMM: &pipeline.FigureUncertainty{Value: c, U: u, Low: c - 2*u, High: c + 2*u}}
		}
		b, _ := json.Marshal(rep)
		d := filepath.Join(dir, fmt.Sprintf("scan%d", i))
		if err := os.MkdirAll(d, 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(d, "report.json"), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func TestRepeatCommand(t *testing.T) {
	root := t.TempDir()
	covered, understated, single := filepath.Join(root, "covered"), filepath.Join(root, "understated"), filepath.Join(root, "single")
	// 0.150 … 0.153: s = 0.00129 mm, lower 95 % bound of σ 0.000731 mm
	// (scipy 1.10.1, 3 dof): u = 0.001 covers it, u = 0.0005 does not.
	writeReports(t, covered, 0.001, 0.150, 0.151, 0.152, 0.153)
	writeReports(t, understated, 0.0005, 0.150, 0.151, 0.152, 0.153)
	writeReports(t, single, 0, 0.150)
	out := filepath.Join(root, "study")
	for _, tc := range []struct {
		name string
		args []string
		code int
		want string // in stdout+stderr
	}{
		{"help", []string{"repeat", "--help"}, exitOK, "exit codes: 0 the study was written"},
		{"no folder", []string{"repeat", "--out", out}, exitUsage, "want one folder of reports"},
		{"no out", []string{"repeat", covered}, exitUsage, "--out OUT is missing"},
		{"missing folder", []string{"repeat", filepath.Join(root, "nope"), "--out", out}, exitUsage, "not a folder"},
		{"one report", []string{"repeat", single, "--out", out}, exitUsage, "at least two reports of one base"},
		{"covered", []string{"repeat", covered, "--out", out}, exitOK, "concavity_mm: 4 results, mean 0.1515 mm, s_r 0.00129 mm (3 dof), r 0.00361 mm; reported u 0.001 mm: covered; 4 of 4 intervals hold the mean"},
		{"understated", []string{"repeat", understated, "--out", out}, exitFail, "reported u 0.0005 mm: understated; 2 of 4 intervals hold the mean"},
		{"bad manifest", []string{"repeat", covered, "--out", out, "--manifest", filepath.Join(root, "none.csv")}, exitUsage, "manifest"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var stdout, stderr bytes.Buffer
			code := run(context.Background(), tc.args, &stdout, &stderr)
			all := stdout.String() + stderr.String()
			if code != tc.code || !strings.Contains(all, tc.want) {
				t.Errorf("exit %d, want %d; output:\n%s\nwant it to contain %q", code, tc.code, all, tc.want)
			}
		})
	}
	for _, f := range pipeline.RepeatFiles {
		if st, err := os.Stat(filepath.Join(out, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s not written: %v", f, err)
		}
	}
}

// TestUncertaintyFlag: --uncertainty sets uncertainty.mode (it was defined
// but not applied, so "batch --uncertainty fast" gave reports without
// uncertainty and a repeat study had nothing to test coverage with), and a
// bad value is an error naming the flag.
func TestUncertaintyFlag(t *testing.T) {
	for _, tc := range []struct {
		args []string
		mode string
		err  string
	}{
		{nil, pipeline.DefaultJob().Uncertainty.Mode, ""},
		{[]string{"--uncertainty", "fast"}, "fast", ""},
		{[]string{"--uncertainty=full"}, "full", ""},
		{[]string{"--uncertainty", "bogus"}, "", "--uncertainty: uncertainty.mode"},
	} {
		fs := newFlags("analyze", "analyze", io.Discard)
		jf := addJobFlags(fs, "job file")
		if err := parse(fs, tc.args); err != nil {
			t.Fatal(err)
		}
		job, err := jf.job("")
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("%v: err %v, want one containing %q", tc.args, err, tc.err)
			}
			continue
		}
		if err != nil || job.Uncertainty.Mode != tc.mode {
			t.Errorf("%v: mode %q (err %v), want %q", tc.args, job.Uncertainty.Mode, err, tc.mode)
		}
	}
}

// TestRepeatCommandLinkOut: a report.json linked to outside the folder
// given stops the study with exit 2 and a message naming the file, why and
// what to do (the project rule: nothing is read outside the folders given).
func TestRepeatCommandLinkOut(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("symbolic links need privileges on Windows")
	}
	root := t.TempDir()
	dir, outside := filepath.Join(root, "given"), filepath.Join(root, "outside")
	writeReports(t, dir, 0, 0.150)
	writeReports(t, outside, 0, 0.151)
	linked := filepath.Join(dir, "scan9", "report.json")
	if err := os.MkdirAll(filepath.Dir(linked), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(outside, "scan0", "report.json"), linked); err != nil {
		t.Fatal(err)
	}
	var stdout, stderr bytes.Buffer
	code := run(context.Background(), []string{"repeat", dir, "--out", filepath.Join(root, "study")}, &stdout, &stderr)
	want := linked + ": not read: path leads through a symbolic link to outside the folder: copy the file into the folder or link to a file inside it"
	if code != exitUsage || !strings.Contains(stderr.String(), want) {
		t.Errorf("exit %d, want %d; stderr:\n%s\nwant it to contain %q", code, exitUsage, stderr.String(), want)
	}
}
