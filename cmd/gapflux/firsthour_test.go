package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"unicode/utf16"
)

// helpLine returns the line of help that defines --name, "" when none.
func helpLine(help, name string) string {
	for _, l := range strings.Split(help, "\n") {
		f := strings.Fields(l)
		for i := range f {
			f[i], _, _ = strings.Cut(f[i], "[") // a bool flag prints as --hot[=true|false]
		}
		if len(f) > 0 && (f[0] == "--"+name || len(f) > 1 && f[1] == "--"+name) {
			return strings.TrimSpace(l)
		}
	}
	return ""
}

// TestEveryHelpListsEveryFlag (issue 15, item 2): each command accepts
// every flag its --help lists and rejects one it does not; the
// job-override flags are listed, identically, by every command that runs
// analyses (one definition); one spelling per flag (--units); batch --help
// names the files it reads from the folder.
func TestEveryHelpListsEveryFlag(t *testing.T) {
	flagRe := regexp.MustCompile(`(?m)^\s+(?:-\w, )?--([a-z][a-z0-9-]*)`)
	for _, cmd := range []string{"analyze", "batch", "merge", "synth", "demo", "materials", "job"} {
		_, _, help := gapflux(t, cmd, "--help")
		for _, m := range flagRe.FindAllStringSubmatch(help, -1) {
			// A flag the command defines is never "unknown" (it may fail
			// later for want of a value or an argument).
			_, _, errOut := gapflux(t, cmd, "--"+m[1]+"=1", "--help")
			if strings.Contains(errOut, "unknown flag") {
				t.Errorf("%s --help lists --%s, which it does not accept: %s", cmd, m[1], errOut)
			}
		}
	}
	_, _, an := gapflux(t, "analyze", "--help")
	_, _, ba := gapflux(t, "batch", "--help")
	for _, name := range jobOverrideFlags {
		la, lb := helpLine(an, name), helpLine(ba, name)
		if la == "" || la != lb {
			t.Errorf("--%s: analyze lists %q, batch %q", name, la, lb)
		}
	}
	for _, cmd := range []string{"analyze", "batch", "synth"} {
		_, _, help := gapflux(t, cmd, "--help")
		if helpLine(help, "units") == "" || helpLine(help, "unit") != "" {
			t.Errorf("%s: --units %q, --unit %q (want --units only)", cmd, helpLine(help, "units"), helpLine(help, "unit"))
		}
	}
	for _, w := range []string{"manifest.csv", "job.toml"} {
		if !strings.Contains(ba, w) {
			t.Errorf("batch --help does not mention %s", w)
		}
	}
	// synth's old --unit still works, with a note.
	out := filepath.Join(t.TempDir(), "a.xyz")
	code, _, errOut := gapflux(t, "synth", "--unit", "in", "--spacing-mm", "5", "--out", out)
	if code != exitOK || !strings.Contains(errOut, "use --units") {
		t.Errorf("synth --unit: exit %d: %s", code, errOut)
	}
}

// TestBatchTakesJobFlags: batch --cell-mm and friends are accepted and
// validated like analyze's.
func TestBatchTakesJobFlags(t *testing.T) {
	dir := t.TempDir()
	code, _, errOut := gapflux(t, "batch", dir, "--out", filepath.Join(t.TempDir(), "o"), "--cell-mm", "-1")
	if code != exitUsage || !strings.Contains(errOut, "--cell-mm: grid.cell_mm must be 0 (automatic)") {
		t.Errorf("exit %d: %s", code, errOut)
	}
	code, stdout, errOut := gapflux(t, "batch", dir, "--out", filepath.Join(t.TempDir(), "o"), "--cell-mm", "1", "--units", "mm", "--quiet")
	if code != exitOK {
		t.Errorf("empty folder with job flags: exit %d: %s%s", code, stdout, errOut)
	}
}

// TestMessagesSayWhatToDo (issue 15, item 4): golden messages. Each names
// the file or flag, says what is wrong and what to try.
func TestMessagesSayWhatToDo(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, b []byte) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	pan := filepath.Join(dir, "pan.xyz")
	if code, _, e := gapflux(t, "synth", "--shape", "dish", "--spacing-mm", "4", "--diameter-mm", "120", "--out", pan); code != exitOK {
		t.Fatal(e)
	}
	panText, _ := os.ReadFile(pan)
	var u16 []byte
	for _, r := range utf16.Encode([]rune("\ufeffx,y,z\n1,2,3\n")) {
		u16 = append(u16, byte(r), byte(r>>8))
	}
	tests := []struct {
		name string
		args []string
		code int
		want string // the whole message after "gapflux <command>: "
	}{
		{"empty choice", []string{"analyze", pan, "--units", "cm"}, exitUsage,
			`--units: grid.units must be one of "mm", "m", "um" or "in", or left empty for the default (got "cm")`},
		{"flag typo", []string{"analyze", pan, "--cel-mm", "1"}, exitUsage,
			`unknown flag --cel-mm: did you mean --cell-mm? ("gapflux analyze --help" lists every flag)`},
		{"old spelling on analyze", []string{"analyze", pan, "--unit", "mm"}, exitUsage,
			`unknown flag --unit: did you mean --units? ("gapflux analyze --help" lists every flag)`},
		{"not a number", []string{"batch", dir, "--out", "o", "--cutoff-mm", "eight"}, exitUsage,
			`--cutoff-mm "eight": want a number ("gapflux batch --help" lists every flag)`},
		{"command typo", []string{"analyse", pan}, exitUsage,
			`unknown command "analyse": did you mean "analyze"? ("gapflux help" lists the commands)`},
		{"job key typo", []string{"analyze", pan, "--job", write("typo.toml", []byte("[grid]\ncel_mm = 1.0\n"))}, exitUsage,
			`typo.toml:2:1: unknown key "grid.cel_mm": did you mean "grid.cell_mm"? ("gapflux job" prints every key)`},
		{"synth shape", []string{"synth", "--shape", "blob", "--out", filepath.Join(dir, "x.xyz")}, exitUsage,
			`unknown shape "blob", want flat, dome, dish, saddle, tilt, bend or cone`},
		{"missing out", []string{"batch", dir}, exitUsage,
			`--out OUT is missing: the folder for the results (usage: gapflux batch DIR --out OUT [flags])`},
		{"header-less profile", []string{"analyze", pan, "--hob", write("prof.csv", []byte("0,0\n50,0.1\n100,0.2\n"))}, exitFail,
			`hob: prof.csv: two numbers a line and no header, read as a scan (which needs x, y, z): if it is a radial hob profile, add the header line r_mm,z_mm (radius and height in mm) as its first line`},
		{"UTF-16", []string{"analyze", write("u16.csv", u16)}, exitFail,
			`u16.csv: the file is UTF-16 (little-endian) text, which no scan reader reads; save it as UTF-8 (or plain ASCII) text and try again`},
		{"1e308", []string{"analyze", write("far.xyz", append(append([]byte(nil), panText...), "1e308 0 0\n"...))}, exitFail,
			`far.xyz: point ` + strconv.Itoa(strings.Count(string(panText), "\n")) + ` (in the file's order) has x = 1e+308 mm, beyond any scan's reach (1000 km); correct or remove that value, and check the file's unit (--units)`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			code, _, errOut := gapflux(t, tc.args...)
			// The file may be named by its full path: the message ends with
			// the golden text.
			want := tc.want + "\n"
			if code != tc.code || !strings.HasPrefix(errOut, "gapflux "+tc.args[0]+": ") || !strings.HasSuffix(errOut, want) {
				t.Errorf("exit %d (want %d)\n got: %s\nwant: %s", code, tc.code, errOut, want)
			}
			for _, stutter := range []string{"scan: level:", "form: scan: form", "(s)"} {
				if strings.Contains(errOut, stutter) {
					t.Errorf("message holds %q: %s", stutter, errOut)
				}
			}
		})
	}
}
