package pipeline

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
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
	got, err := DiscoverScans(dir, func(p string) bool { return p == out }, map[string]bool{"hobs/top.xyz": true})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"a/pan1.stl", "b/pan2.ply", "z.xyz.gz"}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("got %v, want %v", got, want)
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
	rows, err := ReadManifest(strings.NewReader(good), "manifest.csv")
	if err != nil {
		t.Fatal(err)
	}
	r := rows["a/pan1.stl"]
	if r.PartNumber != "SP-1" || r.Lot != "L7" || r.PanMassKg == nil || *r.PanMassKg != 1.2 || r.Hob != "hobs/top.xyz" {
		t.Errorf("row a: %+v", r)
	}
	if rows["b/pan2.ply"].PanMassKg != nil {
		t.Errorf("empty cell gave a value")
	}
	job, err := r.Apply(DefaultJob())
	if err != nil || job.Pan.MassKg != 1.2 {
		t.Errorf("Apply: %v, mass %v", err, job.Pan.MassKg)
	}
	for name, bad := range map[string]string{
		"unknown column": "path,colour\na.stl,red\n",
		"no path":        "part_number\nX\n",
		"bad number":     "path,pan_mass_kg\na.stl,heavy\n",
		"negative":       "path,water_mass_kg\na.stl,-1\n",
		"duplicate":      "path\na.stl\na.stl\n",
		"empty path":     "path,lot\n,L1\n",
	} {
		if _, err := ReadManifest(strings.NewReader(bad), "m.csv"); err == nil || !strings.Contains(err.Error(), "m.csv") {
			t.Errorf("%s: error %v, want one naming the file", name, err)
		}
	}
}
