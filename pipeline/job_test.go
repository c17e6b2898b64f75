package pipeline

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

func TestDefaultJobTOMLDecodesToDefaultJob(t *testing.T) {
	got, err := ReadJob(strings.NewReader(DefaultJobTOML), "default.toml")
	if err != nil {
		t.Fatal(err)
	}
	if want := DefaultJob(); !reflect.DeepEqual(got, want) {
		t.Errorf("DefaultJobTOML decodes to\n%+v\nwant DefaultJob()\n%+v", got, want)
	}
}

func TestReadJob(t *testing.T) {
	tests := []struct {
		name    string
		in      string
		check   func(Job) bool
		wantErr string // substring; "" = no error
		line    int    // expected error line when > 0
	}{
		{name: "empty keeps defaults", in: "", check: func(j Job) bool { return reflect.DeepEqual(j, DefaultJob()) }},
		{name: "override one key", in: "[water]\nmass_kg = 2.5\n",
			check: func(j Job) bool { return j.Water.MassKg == 2.5 && j.Pan.MassKg == 1.0 }},
		{name: "layers replace the default", in: "[[pan.layers]]\nmaterial = \"ss-430\"\nthickness_mm = 0.6\n[[pan.layers]]\nmaterial = \"alu-1050\"\nthickness_mm = 3\n",
			check: func(j Job) bool {
				return len(j.Pan.Layers) == 2 && j.Pan.Layers[0].Material == "ss-430" && j.Pan.Layers[1].ThicknessMM == 3
			}},
		{name: "temperature mode", in: "[hob]\nmode = \"temperature\"\ntemperature_c = 200\n",
			check: func(j Job) bool { return j.Hob.Mode == "temperature" && j.Hob.TemperatureC == 200 }},
		{name: "unknown key named", in: "[water]\nmass_kgs = 2\n", wantErr: `unknown key "water.mass_kgs"`, line: 2},
		{name: "unknown section", in: "[oven]\nx = 1\n", wantErr: `unknown key "oven"`, line: 1},
		{name: "syntax error has a position", in: "[water\nmass_kg = 1\n", wantErr: "job.toml:1:"},
		{name: "wrong type", in: "[water]\nmass_kg = \"heavy\"\n", wantErr: "job.toml:2"},
		{name: "negative mass", in: "[pan]\nmass_kg = -1\n", wantErr: "pan.mass_kg must be in [0.01, 50] kg (got -1"},
		{name: "bad mode", in: "[hob]\nmode = \"gas\"\n", wantErr: `hob.mode must be one of "heater", "temperature" (got "gas")`},
		{name: "reversed heat-up", in: "[water]\nfrom_c = 90\nto_c = 15\n", wantErr: "from_c < to_c"},
		{name: "emissivity above 1", in: "[pan]\nemissivity = 1.2\n", wantErr: "pan.emissivity must be in (0, 1]"},
		{name: "no layers", in: "[pan]\nlayers = []\n", wantErr: "at least one layer"},
		{name: "named boiling surface", in: "[water]\nside = \"boiling\"\nrohsenow_surface = \"stainless-mech-polished\"\n",
			check: func(j Job) bool { return j.Water.RohsenowSurface == "stainless-mech-polished" }},
		{name: "unknown boiling surface", in: "[water]\nrohsenow_surface = \"teflon\"\n", wantErr: `water.rohsenow_surface must be one of "", "copper-scored"`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			j, err := ReadJob(strings.NewReader(tc.in), "job.toml")
			if tc.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tc.wantErr) {
					t.Fatalf("error %v, want it to contain %q", err, tc.wantErr)
				}
				var je *JobError
				if !errors.As(err, &je) {
					t.Fatalf("error %T is not a *JobError", err)
				}
				if tc.line > 0 && je.Line != tc.line {
					t.Errorf("error line %d, want %d (%v)", je.Line, tc.line, err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if !tc.check(j) {
				t.Errorf("decoded job %+v fails the check", j)
			}
		})
	}
}

func TestMaterialLibraryOverride(t *testing.T) {
	j := DefaultJob()
	j.Materials = []MaterialJob{
		{Name: "alu-1050", ConductivityWMK: 200},
		{Name: "alu-3004", ConductivityWMK: 162, DensityKgM3: 2720, CpJKgK: 893, Emissivity: 0.2},
	}
	lib, err := j.MaterialLibrary()
	if err != nil {
		t.Fatal(err)
	}
	var got1050, got3004 bool
	for _, m := range lib {
		switch m.Name {
		case "alu-1050":
			got1050 = m.ConductivityWMK == 200 && m.DensityKgM3 > 2000 // only k overridden
		case "alu-3004":
			got3004 = m.ConductivityWMK == 162 && m.CpJKgK == 893
		}
	}
	if !got1050 || !got3004 {
		t.Errorf("override/addition not applied: 1050 %v, 3004 %v", got1050, got3004)
	}
}

// TestJobProfilesRelativeAndHashed: profile paths in a job file are taken
// relative to the job's folder, and the job hash follows their content.
func TestJobProfilesRelativeAndHashed(t *testing.T) {
	dir := t.TempDir()
	prof := filepath.Join(dir, "hot.csv")
	os.WriteFile(prof, []byte("r_mm,t_c\n0,260\n100,240\n"), 0o644)
	jobPath := filepath.Join(dir, "job.toml")
	os.WriteFile(jobPath, []byte("[hob]\nmode = \"temperature\"\ntemperature_profile = \"hot.csv\"\n"), 0o644)
	j, err := ReadJobFile(jobPath)
	if err != nil {
		t.Fatal(err)
	}
	if j.Hob.TemperatureProfile != prof {
		t.Fatalf("profile path %q, want %q", j.Hob.TemperatureProfile, prof)
	}
	p, err := readProfile(j.Hob.TemperatureProfile, "t_c")
	if err != nil || p.at(0.05) != 250 {
		t.Fatalf("profile at 50 mm: %v (err %v), want 250", p, err)
	}
	h1, err := JobHash(j, "")
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(prof, []byte("r_mm,t_c\n0,270\n100,240\n"), 0o644)
	if h2, err := JobHash(j, ""); err != nil || h2 == h1 {
		t.Error("the job hash did not change with the profile's content")
	}
	for _, bad := range []string{"r_mm,z\n0,1\n", "r_mm,t_c\n5,1\n2,1\n", "r_mm,t_c\n", "r_mm,t_c\n1,x\n"} {
		os.WriteFile(prof, []byte(bad), 0o644)
		if _, err := readProfile(prof, "t_c"); err == nil || !strings.Contains(err.Error(), "hot.csv") {
			t.Errorf("profile %q: error %v", bad, err)
		}
	}
}
