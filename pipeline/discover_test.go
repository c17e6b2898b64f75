package pipeline

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"syscall"
	"testing"
)

func TestIsScanName(t *testing.T) {
	for name, want := range map[string]bool{
		"pan.stl": true, "PAN.STL": true, "a.ply.gz": true, "b.xyz": true, "c.csv": true, "d.txt": true,
		"e.asc": true, "f.json": false, "g.truth.json": false, "h.png": false, ".hidden.stl": false, "i.gz": false,
	} {
		if got := IsScanName(name); got != want {
			t.Errorf("IsScanName(%q) = %v, want %v", name, got, want)
		}
	}
}

func TestDiscoverScans(t *testing.T) {
	dir := t.TempDir()
	for _, p := range []string{"b/pan2.ply", "a/pan1.stl", "z.xyz.gz", "manifest.csv", "hobs/top.xyz",
		"notes.txt.bak", ".cache/x.stl", "out/a/pan1.stl/report.json", "a/pan1.truth.json"} {
		full := filepath.Join(dir, p)
		if err := os.MkdirAll(filepath.Dir(full), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(full, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	out := filepath.Join(dir, "out")
	got, notes, err := DiscoverScans(dir, func(p string) bool { return p == out }, map[string]bool{"hobs/top.xyz": true})
	if err != nil {
		t.Fatal(err)
	}
	want := []DiscoveryEntry{{Path: "a/pan1.stl"}, {Path: "b/pan2.ply"}, {Path: "z.xyz.gz"}}
	if !reflect.DeepEqual(got, want) || len(notes) != 0 {
		t.Errorf("got %v, notes %v; want %v", got, notes, want)
	}
}

func TestShards(t *testing.T) {
	// Every index falls in exactly one shard of N.
	for n := 1; n <= 5; n++ {
		for i := 0; i < 23; i++ {
			hits := 0
			for k := 1; k <= n; k++ {
				if (Shard{K: k, N: n}).Has(i) {
					hits++
				}
			}
			if hits != 1 {
				t.Fatalf("index %d is in %d shards of %d", i, hits, n)
			}
		}
	}
	for _, bad := range []string{"0/3", "4/3", "3", "a/b", "1/0", ""} {
		if _, err := ParseShard(bad); err == nil {
			t.Errorf("ParseShard(%q) accepted", bad)
		}
	}
	if s, err := ParseShard("2/8"); err != nil || s != (Shard{2, 8}) {
		t.Errorf("ParseShard(2/8) = %v, %v", s, err)
	}
}

func TestShardFromEnv(t *testing.T) {
	tests := []struct {
		name   string
		env    map[string]string
		want   Shard
		ok     bool
		errHas string
	}{
		{name: "none", env: nil},
		{name: "slurm 0-based", env: map[string]string{"SLURM_ARRAY_TASK_ID": "0", "SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "3"},
			want: Shard{1, 4}, ok: true},
		{name: "slurm 1-based last", env: map[string]string{"SLURM_ARRAY_TASK_ID": "10", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "10"},
			want: Shard{10, 10}, ok: true},
		{name: "grid engine with step", env: map[string]string{"SGE_TASK_ID": "5", "SGE_TASK_FIRST": "1", "SGE_TASK_LAST": "9", "SGE_TASK_STEPSIZE": "2"},
			want: Shard{3, 5}, ok: true},
		{name: "lsf", env: map[string]string{"LSB_JOBINDEX": "2", "LSB_JOBINDEX_END": "3"}, want: Shard{2, 3}, ok: true},
		{name: "pbs needs a count", env: map[string]string{"PBS_ARRAY_INDEX": "1"}, errHas: "GAPFLUX_ARRAY_COUNT"},
		{name: "pbs with count", env: map[string]string{"PBS_ARRAY_INDEX": "1", "GAPFLUX_ARRAY_COUNT": "2"}, want: Shard{2, 2}, ok: true},
		{name: "slurm without max", env: map[string]string{"SLURM_ARRAY_TASK_ID": "1"}, errHas: "SLURM_ARRAY_TASK_MAX"},
		{name: "garbage", env: map[string]string{"SGE_TASK_ID": "x"}, errHas: "not an integer"},
		{name: "out of range", env: map[string]string{"LSB_JOBINDEX": "7", "LSB_JOBINDEX_END": "3"}, errHas: "does not fit"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s, _, ok, err := ShardFromEnv(func(k string) string { return tc.env[k] })
			if tc.errHas != "" {
				if err == nil || !strings.Contains(err.Error(), tc.errHas) {
					t.Fatalf("err %v, want %q", err, tc.errHas)
				}
				return
			}
			if err != nil || ok != tc.ok || s != tc.want {
				t.Errorf("got %v ok=%v err=%v, want %v ok=%v", s, ok, err, tc.want, tc.ok)
			}
		})
	}
}

func TestReadManifest(t *testing.T) {
	good := "# our line\npath,part_number,lot,pan_mass_kg,hob\na/pan1.stl,SP-1,L7,1.2,hobs/top.xyz\nb/pan2.ply,SP-2,,,\n"
	m, err := ReadManifest(strings.NewReader(good), "manifest.csv")
	if err != nil {
		t.Fatal(err)
	}
	r := m.Rows["a/pan1.stl"]
	if r.PartNumber != "SP-1" || r.Lot != "L7" || r.PanMassKg == nil || *r.PanMassKg != 1.2 || r.Hob != "hobs/top.xyz" || r.Line != 3 {
		t.Errorf("row a: %+v", r)
	}
	if m.Rows["b/pan2.ply"].PanMassKg != nil || len(m.Problems) != 0 {
		t.Errorf("empty cell gave a value, or problems %v", m.Problems)
	}
	job, err := r.Apply(DefaultJob())
	if err != nil || job.Pan.MassKg != 1.2 {
		t.Errorf("Apply: %v, mass %v", err, job.Pan.MassKg)
	}
}

// TestReadManifestConfigErrors: a manifest that cannot be used at all is an
// error naming the file (and the line when there is one), never its content.
func TestReadManifestConfigErrors(t *testing.T) {
	for name, tc := range map[string]struct{ in, want string }{
		"unknown column": {"path,colour\na.stl,red\n", "m.csv:1:6: header field 2 is not a known column"},
		"no path":        {"part_number\nX\n", "m.csv:1: no path column"},
		"twice":          {"path,lot,LOT\na,b,c\n", "m.csv:1:10: column lot given twice"},
		"empty":          {"", "m.csv: empty"},
		"binary":         {"\x00\x01SECRET\xff\n", "m.csv:1:1: header field 1 is not a known column"},
		"bad header csv": {"path,\"lot\nSECRET", "m.csv:2:7: header is not valid CSV"},
	} {
		_, err := ReadManifest(strings.NewReader(tc.in), "m.csv")
		var me *ManifestError
		if !errors.As(err, &me) || !strings.HasPrefix(err.Error(), tc.want) || strings.Contains(err.Error(), "SECRET") {
			t.Errorf("%s: error %v, want a *ManifestError starting %q", name, err, tc.want)
		}
	}
}

// TestReadManifestBadRows: a bad row fails that row only, with file, line
// and column, and the message never echoes the cell.
func TestReadManifestBadRows(t *testing.T) {
	tests := []struct {
		name, row string
		path      string // the problem's path ("" when the path cell is bad)
		want      string
	}{
		{"bad number", "a.stl,SECRET", "a.stl", "m.csv:2:7: pan_mass_kg is not a number in (0, 100]"},
		{"negative", "a.stl,-1", "a.stl", "m.csv:2:7: pan_mass_kg is not a number"},
		{"inf", "a.stl,inf", "a.stl", "m.csv:2:7: pan_mass_kg is not a number"},
		{"-inf", "a.stl,-Inf", "a.stl", "m.csv:2:7: pan_mass_kg is not a number"},
		{"nan", "a.stl,NaN", "a.stl", "m.csv:2:7: pan_mass_kg is not a number"},
		{"huge", "a.stl,1e308", "a.stl", "m.csv:2:7: pan_mass_kg is not a number"},
		{"overflow", "a.stl,1e999", "a.stl", "m.csv:2:7: pan_mass_kg is not a number"},
		{"empty path", ",1", "", "m.csv:2:1: path: path is empty"},
		{"dotdot path", "../SECRET.stl,1", "", "m.csv:2:1: path: path is absolute or climbs out"},
		{"absolute path", "/etc/SECRET,1", "", "m.csv:2:1: path: path is absolute or climbs out"},
		{"backslash path", `..\SECRET.stl,1`, "", `m.csv:2:1: path: path uses \ as a separator`},
		{"nul path", "a\x00SECRET.stl,1", "", "m.csv:2:1: path: path holds a NUL byte"},
		{"non-utf8 path", "a\xffSECRET.stl,1", "", "m.csv:2:1: path: path is not valid UTF-8"},
		{"hob escapes", "a.stl,1,../../../../etc/SECRET", "a.stl", "m.csv:2:9: hob: path is absolute or climbs out"},
		{"hob absolute", "a.stl,1,/etc/SECRET", "a.stl", "m.csv:2:9: hob: path is absolute or climbs out"},
		{"hob is the scan", "a.stl,1,./a.stl", "a.stl", "m.csv:2:9: hob names the scan itself"},
		{"job escapes", "a.stl,1,,../SECRET.toml", "a.stl", "m.csv:2:10: job: path is absolute or climbs out"},
		{"too many fields", "a.stl,1,,,SECRET", "a.stl", "m.csv:2:1: 5 fields, but the header names 4 columns"},
		{"bare quote", `a.stl,1"SECRET`, "", `m.csv:2:8: not valid CSV (bare " in non-quoted-field)`},
		{"job not utf8", "a.stl,1,,j\xffSECRET.toml", "a.stl", "m.csv:2:10: job is not valid UTF-8"},
		{"good row", "a.stl,1,h.xyz,j.toml", "a.stl", ""}, // for contrast
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			in := "path,pan_mass_kg,hob,job\n" + tc.row + "\nother.stl,2\n"
			m, err := ReadManifest(strings.NewReader(in), "m.csv")
			if err != nil {
				t.Fatalf("whole manifest refused: %v", err)
			}
			if _, ok := m.Rows["other.stl"]; !ok {
				t.Errorf("the good row was lost")
			}
			if tc.want == "" {
				if len(m.Problems) != 0 {
					t.Errorf("problems %v", m.Problems)
				}
				return
			}
			if len(m.Problems) != 1 {
				t.Fatalf("problems %v, want one", m.Problems)
			}
			p := m.Problems[0]
			msg := p.Err.Error()
			if p.Path != tc.path || p.Line != 2 || !strings.HasPrefix(msg, tc.want) || strings.Contains(msg, "SECRET") {
				t.Errorf("problem {%q line %d %q}, want {%q line 2 %q...} without the cell", p.Path, p.Line, msg, tc.path, tc.want)
			}
			if _, ok := m.Rows[tc.path]; ok {
				t.Errorf("the bad row is still usable")
			}
		})
	}
}

// TestReadManifestBOMAndDuplicates: a spreadsheet's byte order mark is
// accepted; a path on two rows fails that path, naming both lines, and the
// other rows stand.
func TestReadManifestBOMAndDuplicates(t *testing.T) {
	in := "\xEF\xBB\xBFpath,lot\na.stl,L1\nb.stl,L2\nc.stl\n./a.stl,L3\n"
	m, err := ReadManifest(strings.NewReader(in), "m.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Rows) != 2 || m.Rows["b.stl"].Lot != "L2" || m.Rows["c.stl"].Line != 4 {
		t.Errorf("rows %+v, want b.stl and c.stl", m.Rows)
	}
	want := []string{"a.stl", "m.csv:2: lines 2, 5 all name the same scan: keep one row per scan"}
	if len(m.Problems) != 1 || m.Problems[0].Path != want[0] || m.Problems[0].Err.Error() != want[1] {
		t.Errorf("problems %v, want %v", m.Problems, want)
	}
}

// writeTree writes files (content "x" unless given) and symbolic links
// (targets starting with "->") under dir.
func writeTree(t *testing.T, dir string, files map[string]string) {
	t.Helper()
	for p, c := range files {
		full := filepath.Join(dir, filepath.FromSlash(p))
		if err := os.MkdirAll(filepath.Dir(full), 0o755); err != nil {
			t.Fatal(err)
		}
		var err error
		if target, ok := strings.CutPrefix(c, "->"); ok {
			err = os.Symlink(filepath.FromSlash(target), full)
		} else {
			err = os.WriteFile(full, []byte(c), 0o644)
		}
		if err != nil {
			t.Fatal(err)
		}
	}
}

// TestDiscover covers what a batch folder can hold besides plain scans:
// every case lists what becomes an entry (scan or problem) and what goes to
// the run log; nothing is skipped silently.
func TestDiscover(t *testing.T) {
	tests := []struct {
		name  string
		files map[string]string // under base/in; "->target" makes a link, relative to its folder
		want  []DiscoveryEntry  // problems checked by prefix
		notes []string          // checked by prefix
	}{
		{name: "plain", files: map[string]string{"a.stl": "x", "b/c.ply": "x"},
			want: []DiscoveryEntry{{Path: "a.stl"}, {Path: "b/c.ply"}}},
		{name: "link to a scan inside is a scan", files: map[string]string{"raw/a.stl": "x", "latest.stl": "->raw/a.stl"},
			want: []DiscoveryEntry{{Path: "latest.stl"}, {Path: "raw/a.stl"}}},
		{name: "link to a scan outside", files: map[string]string{"a.stl": "x", "b.stl": "->../outside/canary.stl"},
			want: []DiscoveryEntry{{Path: "a.stl"}, {Path: "b.stl", Problem: "skipped: symlink points outside the batch folder"}}},
		{name: "link to a folder outside", files: map[string]string{"a.stl": "x", "ext": "->../outside"},
			want: []DiscoveryEntry{{Path: "a.stl"}, {Path: "ext/", Problem: "skipped: symlink points outside the batch folder"}}},
		{name: "link to a folder inside", files: map[string]string{"day1/a.stl": "x", "today": "->day1"},
			want:  []DiscoveryEntry{{Path: "day1/a.stl"}},
			notes: []string{"today/: symbolic link not followed: its folder is listed as day1/"}},
		{name: "link loop", files: map[string]string{"a.stl": "x", "l1.stl": "->l2.stl", "l2.stl": "->l1.stl", "loop": "->loop"},
			want: []DiscoveryEntry{{Path: "a.stl"},
				{Path: "l1.stl", Problem: "skipped: symbolic link cannot be resolved (a loop or a missing target)"},
				{Path: "l2.stl", Problem: "skipped: symbolic link cannot be resolved"}},
			notes: []string{"loop: skipped: symbolic link cannot be resolved"}},
		{name: "folder link loop to an ancestor", files: map[string]string{"d/a.stl": "x", "d/up": "->.."},
			want:  []DiscoveryEntry{{Path: "d/a.stl"}},
			notes: []string{"d/up/: symbolic link not followed: its folder is listed as /"}},
		{name: "dangling link", files: map[string]string{"gone.stl": "->nowhere.stl"},
			want: []DiscoveryEntry{{Path: "gone.stl", Problem: "skipped: symbolic link cannot be resolved"}}},
		{name: "non-UTF-8 names", files: map[string]string{"ok.stl": "x", "b\xff\\.stl": "x", "d\xfe/a.stl": "x", "n\xff.txt.bak": "x"},
			want: []DiscoveryEntry{{Path: `b\xFF\\.stl`, Problem: "name is not valid UTF-8: rename it"},
				{Path: `d\xFE/`, Problem: "name is not valid UTF-8"}, {Path: "ok.stl"}}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			base := t.TempDir()
			writeTree(t, base, map[string]string{"outside/canary.stl": "CANARY"})
			in := filepath.Join(base, "in")
			writeTree(t, in, tc.files)
			d, err := Discover(in, nil, nil)
			if err != nil {
				t.Fatal(err)
			}
			if len(d.Entries) != len(tc.want) {
				t.Fatalf("entries %q, want %q", d.Entries, tc.want)
			}
			for i, e := range d.Entries {
				w := tc.want[i]
				if e.Path != w.Path || (w.Problem == "") != (e.Problem == "") || !strings.HasPrefix(e.Problem, w.Problem) {
					t.Errorf("entry %d = %q, want %q", i, e, w)
				}
			}
			if len(d.Notes) != len(tc.notes) {
				t.Fatalf("notes %q, want %q", d.Notes, tc.notes)
			}
			for i, n := range d.Notes {
				if !strings.HasPrefix(n, tc.notes[i]) {
					t.Errorf("note %q, want %q", n, tc.notes[i])
				}
			}
		})
	}
}

// TestDiscoverUnlistableFolder: a folder the batch may not read is an entry
// with a problem; the other scans are still listed.
func TestDiscoverUnlistableFolder(t *testing.T) {
	in := t.TempDir()
	writeTree(t, in, map[string]string{"a.stl": "x", "locked/b.stl": "x", "z/c.stl": "x"})
	locked := filepath.Join(in, "locked")
	readDir := os.ReadDir
	if os.Getuid() == 0 { // root reads every folder: fake the refusal
		readDir = func(p string) ([]os.DirEntry, error) {
			if p == locked {
				return nil, &fs.PathError{Op: "open", Path: p, Err: syscall.EACCES}
			}
			return os.ReadDir(p)
		}
	} else {
		if err := os.Chmod(locked, 0o000); err != nil {
			t.Fatal(err)
		}
		defer os.Chmod(locked, 0o755)
	}
	got, _, err := discoverScans(in, nil, nil, readDir)
	if err != nil {
		t.Fatal(err)
	}
	want := []DiscoveryEntry{{Path: "a.stl"},
		{Path: "locked/", Problem: "cannot list this folder (permission denied): fix its permissions and run again"}, {Path: "z/c.stl"}}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("entries %q, want %q", got, want)
	}
}

// TestDiscoverManifest: manifest problems fail the scans they name and the
// rest of the batch goes on; hob and job files must exist inside the folder.
func TestDiscoverManifest(t *testing.T) {
	base := t.TempDir()
	writeTree(t, base, map[string]string{"outside/hob.xyz": "CANARY"})
	in := filepath.Join(base, "in")
	writeTree(t, in, map[string]string{
		"a.stl": "x", "b.stl": "x", "c.stl": "x", "d.stl": "x", "e.stl": "x", "f.stl": "x",
		"hobs/top.xyz": "x", "hobs/out.xyz": "->../../outside/hob.xyz", // from in/hobs
		ManifestName: "path,hob,pan_mass_kg\n" +
			"a.stl,hobs/top.xyz,1\n" + // good: top.xyz is a hob, not a scan
			"b.stl,hobs/out.xyz,1\n" + // hob through a link out of the folder
			"c.stl,hobs/missing.xyz,\n" + // hob missing
			"d.stl,,inf\n" + // bad value
			"missing.stl,,\n" + // names no scan
			"../x.stl,,\n" + // path escapes
			"e.stl,,1\ne.stl,,2\n", // duplicate
	})
	d, err := Discover(in, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := []DiscoveryEntry{
		{Path: "a.stl"},
		{Path: "b.stl", Problem: "manifest.csv:3: hob: path leads through a symbolic link to outside the folder"},
		{Path: "c.stl", Problem: "manifest.csv:4: hob: no such file in the batch folder: fix the path"},
		{Path: "d.stl", Problem: "manifest.csv:5:8: pan_mass_kg is not a number in (0, 100]"},
		{Path: "e.stl", Problem: "manifest.csv:8: lines 8, 9 all name the same scan: keep one row per scan"},
		{Path: "f.stl"},
		{Path: "hobs/out.xyz", Problem: "skipped: symlink points outside the batch folder"},
		{Path: "manifest.csv line 7", Problem: "manifest.csv:7:1: path: path is absolute or climbs out of the folder with .."},
		{Path: "missing.stl", Problem: "manifest.csv:6: names no scan under the batch folder: fix the path or remove the row"},
	}
	if len(d.Entries) != len(want) {
		t.Fatalf("entries\n%q\nwant\n%q", d.Entries, want)
	}
	for i, e := range d.Entries {
		if e.Path != want[i].Path || !strings.HasPrefix(e.Problem, want[i].Problem) || (e.Problem == "") != (want[i].Problem == "") {
			t.Errorf("entry %q, want %q", e, want[i])
		}
	}
	if r, ok := d.Manifest["a.stl"]; !ok || r.Hob != "hobs/top.xyz" || len(d.Manifest) != 1 {
		t.Errorf("usable rows %+v, want a.stl's", d.Manifest)
	}
}

// TestDiscoverManifestConfig: a manifest that is unusable as a whole, or
// is a link out of the folder, is a configuration error.
func TestDiscoverManifestConfig(t *testing.T) {
	base := t.TempDir()
	writeTree(t, base, map[string]string{"outside/m.csv": "path\nSECRET.stl\n"})
	for name, m := range map[string]string{"link out": "->../outside/m.csv", "no path column": "lot\nL1\n"} {
		in := filepath.Join(base, strings.ReplaceAll(name, " ", "-"))
		writeTree(t, in, map[string]string{"a.stl": "x", ManifestName: m})
		_, err := Discover(in, nil, nil)
		var me *ManifestError
		if !errors.As(err, &me) || strings.Contains(err.Error(), "SECRET") {
			t.Errorf("%s: error %v, want a *ManifestError", name, err)
		}
	}
}

// TestDiscoverLeavesOutJobProfiles checks that the hob profiles named by
// the batch's job and by a manifest row's job are not listed as scans: a
// radial profile is a CSV like a point cloud, and listing it gave a failed
// row ("header does not name x, y and z columns").
func TestDiscoverLeavesOutJobProfiles(t *testing.T) {
	in := t.TempDir()
	writeTree(t, in, map[string]string{
		"a.stl": "x", "b.stl": "x",
		"glass.csv":          "r_mm,z_mm\n0,0.05\n100,0\n",
		"hobs/other.csv":     "r_mm,z_mm\n0,0\n100,0.01\n",
		"hobs/power.csv":     "r_mm,relative\n0,1\n100,1\n",
		"jobs/b.toml":        "[hob]\nprofile = \"../hobs/other.csv\"\n",
		"stray.csv":          "x,y,z\n0,0,0\n",
		ManifestName:         "path,job\nb.stl,jobs/b.toml\n",
		"jobs/unreadable.md": "x",
	})
	// jobs/b.toml names ../hobs/other.csv, outside the job's folder: that
	// job is refused when read, so its profile stays listed; the profile of
	// the batch's own job (power.csv, given as an absolute path) is left out.
	// (Profiles must sit beside or under their job file.)
	d, err := Discover(in, nil, []string{filepath.Join(in, "glass.csv"), filepath.Join(in, "hobs", "power.csv"), "/elsewhere/x.csv"})
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, e := range d.Entries {
		got = append(got, e.Path)
	}
	want := []string{"a.stl", "b.stl", "hobs/other.csv", "stray.csv"}
	if !slices.Equal(got, want) {
		t.Errorf("entries %q, want %q", got, want)
	}

	// A manifest row's job beside its profile: the profile is left out.
	writeTree(t, in, map[string]string{"hobs/b.toml": "[hob]\nprofile = \"other.csv\"\n",
		ManifestName: "path,job\nb.stl,hobs/b.toml\n"})
	d, err = Discover(in, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	got = got[:0]
	for _, e := range d.Entries {
		got = append(got, e.Path)
	}
	want = []string{"a.stl", "b.stl", "glass.csv", "hobs/power.csv", "stray.csv"}
	if !slices.Equal(got, want) {
		t.Errorf("with hobs/b.toml: entries %q, want %q", got, want)
	}
}
