package reftable

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// TestTablesReproduce reruns testdata/reference/gen.py into a temporary
// folder and requires the same bytes as the committed tables, so a table
// edited by hand, or a generator change not followed by a regeneration,
// fails here. It needs Debian's /usr/bin/python3 with python3-iapws and
// python3-scipy; where the installed versions differ from those named in a
// table's "# Packages:" line, that table is skipped (other versions may
// differ in the last digits).
func TestTablesReproduce(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the generator")
	}
	const py = "/usr/bin/python3"
	if exec.Command(py, "-c", "import iapws, scipy").Run() != nil {
		t.Skip("/usr/bin/python3 lacks iapws or scipy (apt-get install python3-iapws python3-scipy); tables not regenerated")
	}
	out := t.TempDir()
	if msg, err := exec.Command(py, filepath.Join(Dir(), "gen.py"), "tables", out).CombinedOutput(); err != nil {
		t.Fatalf("gen.py: %v\n%s", err, msg)
	}
	for _, name := range []string{"water_iapws.csv", "air_lemmon.csv", BlackbodyTable, "erfcinv_scipy.csv"} {
		got, err := os.ReadFile(filepath.Join(out, name))
		if err != nil {
			t.Fatal(err)
		}
		want, err := os.ReadFile(filepath.Join(Dir(), name))
		if err != nil {
			t.Fatal(err)
		}
		gotTab, err := parse(name, bytes.NewReader(got))
		if err != nil {
			t.Fatal(err)
		}
		wantTab, err := parse(name, bytes.NewReader(want))
		if err != nil {
			t.Fatal(err)
		}
		if gotTab.Source() != wantTab.Source() {
			t.Logf("%s: installed %q, committed %q: not compared", name, gotTab.Source(), wantTab.Source())
			continue
		}
		if !bytes.Equal(got, want) {
			t.Errorf("%s differs from what gen.py writes with the same packages: regenerate it (see DEVELOPERS.md)", name)
		}
	}
}
