package pipeline

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

// TestRepeatStudySymlinks checks the project rule that gapflux repeat reads
// nothing outside the folder it is given: a report.json, summary.json or
// scans folder that is a symbolic link resolving outside it is refused by
// name, with ErrPathOutside's reason and remedy; links that stay inside
// are followed as before.
func TestRepeatStudySymlinks(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("symbolic links need privileges on Windows")
	}
	link := func(t *testing.T, target, name string) {
		t.Helper()
		if err := os.MkdirAll(filepath.Dir(name), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.Symlink(target, name); err != nil {
			t.Fatal(err)
		}
	}
	summary := []byte(`{"schema":"gapflux.summary/1","rows":[{"path":"a.ply","status":"ok"},{"path":"b.ply","status":"ok"}]}`)
	for _, tc := range []struct {
		name string
		// make fills dir (the folder given) and outside (a folder next
		// to it) and returns the file the error must name ("" : no error).
		make func(t *testing.T, dir, outside string) string
		warn string
	}{
		{"report.json linked outside", func(t *testing.T, dir, outside string) string {
			fakeReport(t, dir, "a", 0.1, "j", "p1", 0)
			fakeReport(t, outside, "b", 0.2, "j", "p2", 0)
			link(t, filepath.Join(outside, "b", "report.json"), filepath.Join(dir, "b", "report.json"))
			return filepath.Join(dir, "b", "report.json")
		}, ""},
		{"relative link climbing out", func(t *testing.T, dir, outside string) string {
			fakeReport(t, dir, "a", 0.1, "j", "p1", 0)
			fakeReport(t, outside, "b", 0.2, "j", "p2", 0)
			link(t, filepath.Join("..", "..", filepath.Base(outside), "b", "report.json"), filepath.Join(dir, "b", "report.json"))
			return filepath.Join(dir, "b", "report.json")
		}, ""},
		{"summary.json linked outside", func(t *testing.T, dir, outside string) string {
			writeRepeatFile(t, filepath.Join(outside, "summary.json"), summary)
			link(t, filepath.Join(outside, "summary.json"), filepath.Join(dir, "summary.json"))
			return filepath.Join(dir, "summary.json")
		}, ""},
		{"batch report.json linked outside", func(t *testing.T, dir, outside string) string {
			writeRepeatFile(t, filepath.Join(dir, "summary.json"), summary)
			fakeReport(t, filepath.Join(dir, ScansDir), "a.ply", 0.1, "j", "p1", 0)
			fakeReport(t, outside, "b", 0.2, "j", "p2", 0)
			link(t, filepath.Join(outside, "b", "report.json"), filepath.Join(dir, ScansDir, "b.ply", "report.json"))
			return filepath.Join(dir, ScansDir, "b.ply", "report.json")
		}, ""},
		{"scans folder linked outside", func(t *testing.T, dir, outside string) string {
			writeRepeatFile(t, filepath.Join(dir, "summary.json"), summary)
			fakeReport(t, filepath.Join(outside, ScansDir), "a.ply", 0.1, "j", "p1", 0)
			fakeReport(t, filepath.Join(outside, ScansDir), "b.ply", 0.2, "j", "p2", 0)
			link(t, filepath.Join(outside, ScansDir), filepath.Join(dir, ScansDir))
			return filepath.Join(dir, ScansDir, "a.ply", "report.json")
		}, ""},
		{"link inside the folder is read", func(t *testing.T, dir, outside string) string {
			fakeReport(t, dir, "a", 0.1, "j", "p1", 0)
			link(t, filepath.Join("..", "a", "report.json"), filepath.Join(dir, "b", "report.json"))
			return ""
		}, "same scan file analysed more than once (a = b)"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			root := t.TempDir()
			dir, outside := filepath.Join(root, "given"), filepath.Join(root, "outside")
			for _, d := range []string{dir, outside} {
				if err := os.Mkdir(d, 0o755); err != nil {
					t.Fatal(err)
				}
			}
			file := tc.make(t, dir, outside)
			st, err := RepeatStudy(context.Background(), RepeatOptions{Dir: dir})
			if file == "" {
				if err != nil {
					t.Fatal(err)
				}
				if !strings.Contains(strings.Join(st.Warnings, "\n"), tc.warn) {
					t.Errorf("warnings %q, want one containing %q", st.Warnings, tc.warn)
				}
				return
			}
			if err == nil {
				t.Fatalf("no error: the study read %s through a link out of %s", file, dir)
			}
			msg := err.Error()
			for _, want := range []string{file + ": not read", "outside the folder", "copy the file into the folder"} {
				if !strings.Contains(msg, want) {
					t.Errorf("error %q lacks %q", msg, want)
				}
			}
			if !errors.Is(err, ErrPathOutside) || !IsConfigError(err) {
				t.Errorf("error %v: want a configuration error matching ErrPathOutside", err)
			}
		})
	}
}
