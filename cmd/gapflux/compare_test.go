package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gapflux/scan/synth"
)

func writeScan(t *testing.T, dir, name string, spec synth.Spec) string {
	t.Helper()
	spec.Name = name
	sc, err := synth.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	p, _, err := synth.WriteFiles(dir, name, sc, synth.Encoding{Format: "ply", Binary: true})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func TestCompareCommand(t *testing.T) {
	dir := t.TempDir()
	a := writeScan(t, dir, "a", synth.Spec{Shape: synth.Bend, DiameterM: 0.14, SagM: 0.3e-3, NoiseM: 5e-6, SpacingM: 1e-3, Seed: 1})
	out := filepath.Join(dir, "cmp")
	tests := []struct {
		name string
		args []string
		code int
		want string
	}{
		{"no --out", []string{"compare", a, a}, exitUsage, "--out"},
		{"one scan", []string{"compare", a, "--out", out}, exitUsage, "two scan files"},
		{"missing B", []string{"compare", a, filepath.Join(dir, "gone.ply"), "--out", out}, exitUsage, "gone.ply: not a readable scan file or report folder"},
		{"bad tolerance", []string{"compare", a, a, "--out", out, "--diameter-tol-mm", "-1"}, exitUsage, "diameter-tol-mm"},
		{"help", []string{"compare", "--help"}, exitOK, "exit codes: 0 "},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			code, o, e := gapflux(t, tc.args...)
			if code != tc.code || !strings.Contains(o+e, tc.want) {
				t.Errorf("exit %d, want %d with %q:\n%s%s", code, tc.code, tc.want, o, e)
			}
		})
	}
	if testing.Short() {
		return
	}
	b := writeScan(t, dir, "b", synth.Spec{Shape: synth.Bend, DiameterM: 0.14, SagM: 0.3e-3, NoiseM: 5e-6, SpacingM: 1e-3, FormTurnDeg: 25, Seed: 2})
	code, o, e := gapflux(t, "compare", a, b, "--out", out, "--cell-mm", "1")
	if code != exitOK || !strings.Contains(o, "turned") || !strings.Contains(o, "permanent set") {
		t.Fatalf("exit %d:\n%s%s", code, o, e)
	}
	for _, f := range []string{"compare.json", "compare.html"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Error(err)
		}
	}
}
