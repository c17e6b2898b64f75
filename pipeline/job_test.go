package pipeline

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"gapflux/contact"
)

func TestDefaultJobTOMLDecodesToDefaultJob(t *testing.T) {
	got, err := ReadJob(strings.NewReader(JobDoc()), "default.toml")
	if err != nil {
		t.Fatal(err)
	}
	if want := DefaultJob(); !reflect.DeepEqual(got, want) {
		t.Errorf("JobDoc() decodes to\n%+v\nwant DefaultJob()\n%+v", got, want)
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
		{name: "bad mode", in: "[hob]\nmode = \"gas\"\n", wantErr: `hob.mode must be one of "heater", "temperature" or "solid-plate" (got "gas")`},
		{name: "reversed heat-up", in: "[water]\nfrom_c = 90\nto_c = 15\n", wantErr: "from_c < to_c"},
		{name: "emissivity above 1", in: "[pan]\nemissivity = 1.2\n", wantErr: "or in (0, 1] (got 1.2"},
		{name: "no layers", in: "[pan]\nlayers = []\n", wantErr: "at least one layer"},
		{name: "named boiling surface", in: "[water]\nside = \"boiling\"\nrohsenow_surface = \"stainless-mech-polished\"\n",
			check: func(j Job) bool { return j.Water.RohsenowSurface == "stainless-mech-polished" }},
		{name: "unknown boiling surface", in: "[water]\nrohsenow_surface = \"teflon\"\n", wantErr: `water.rohsenow_surface must be one of "copper-scored"`},
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

// specKeysOf lists the keySpec keys of every leaf of a struct type by
// reflection ("pan.layers.thickness_mm" for an array of tables).
func specKeysOf(t reflect.Type, prefix string) []string {
	var out []string
	for i := range t.NumField() {
		f := t.Field(i)
		name, _, _ := strings.Cut(f.Tag.Get("toml"), ",")
		key := name
		if prefix != "" {
			key = prefix + "." + name
		}
		switch {
		case f.Type.Kind() == reflect.Struct:
			out = append(out, specKeysOf(f.Type, key)...)
		case f.Type.Kind() == reflect.Slice && f.Type.Elem().Kind() == reflect.Struct:
			out = append(out, specKeysOf(f.Type.Elem(), key)...)
		default:
			out = append(out, key)
		}
	}
	return out
}

// TestEveryJobKeyBoundedAndDocumented: every key of the Job struct has an
// entry in the key table (so Validate bounds it) and no entry is stale;
// every numeric key's line in "gapflux job" states its unit, default and
// allowed range, and why.
func TestEveryJobKeyBoundedAndDocumented(t *testing.T) {
	specs := map[string]keySpec{}
	for _, s := range jobKeys() {
		if _, dup := specs[s.key]; dup {
			t.Errorf("key %s listed twice", s.key)
		}
		specs[s.key] = s
	}
	leaves := specKeysOf(reflect.TypeFor[Job](), "")
	for _, k := range leaves {
		if _, ok := specs[k]; !ok {
			t.Errorf("job key %s has no entry in jobKeys: give it a range and a reason", k)
		}
		delete(specs, k)
	}
	for k := range specs {
		t.Errorf("jobKeys lists %s, which the Job does not have", k)
	}
	doc := JobDoc()
	for _, s := range jobKeys() {
		if !strings.Contains(doc, s.key[strings.LastIndex(s.key, ".")+1:]+" = ") {
			t.Errorf("%s is not in the job text", s.key)
		}
		if s.oneOf != nil || s.path || s.why == "" && s.unit == "" && s.hi == 0 {
			continue // strings and booleans
		}
		if s.why == "" {
			t.Errorf("%s: the range has no reason", s.key)
		}
		flat := strings.NewReplacer("\n# #   ", " ", "\n#   ", " ").Replace(doc)
		found := false
		for line := range strings.Lines(flat) {
			if strings.Contains(line, s.doc+";") && (strings.Contains(line, "; default ") || strings.Contains(line, "; example ")) &&
				strings.Contains(line, "; allowed "+s.rangeText()) && strings.Contains(line, s.why) &&
				(s.unit == "" || strings.Contains(line, "unit "+s.unit)) {
				found = true
			}
		}
		if !found {
			t.Errorf("%s: no comment line with its unit, default, allowed range %s and reason", s.key, s.rangeText())
		}
	}
}

// TestGridPlanFits: the default job fits a 1000×1000 grid (DESIGN 8) and a
// 280 mm base at 0.25 mm cells; the bound scales with limits.max_cells.
func TestGridPlanFits(t *testing.T) {
	tests := []struct {
		name    string
		job     func(*Job)
		radiusM float64
		ok      bool
	}{
		{"default, 200 mm base", func(*Job) {}, 0.1, true},
		{"1000×1000 base grid in temperature mode", func(j *Job) { j.Hob.Mode = "temperature"; j.Grid.CellMM = 0.2 }, 0.0999, true},
		{"280 mm base at 0.25 mm under the glass", func(j *Job) { j.Grid.CellMM = 0.25 }, 0.14, true},
		{"0.1 mm cells under the glass", func(j *Job) { j.Grid.CellMM = 0.1 }, 0.1, false},
		{"0.1 mm cells with max_cells raised", func(j *Job) { j.Grid.CellMM = 0.1; j.Limits.MaxCells = 8_000_000 }, 0.1, true},
		{"offset moves the glass", func(j *Job) { j.Grid.CellMM = 0.25; j.Pan.OffsetMM = [2]float64{150, 0} }, 0.14, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			j := DefaultJob()
			tc.job(&j)
			err := j.planGrids(tc.radiusM).check(&j)
			if (err == nil) != tc.ok {
				t.Errorf("check: %v, want ok = %v", err, tc.ok)
			}
		})
	}
}

// TestHobModelDefaults checks the sourced defaults of issue 9 part 4: the
// Rohsenow constants for water (Incropera, 6th ed., Table 10.1 and eq.
// 10.5: polished copper C_sf = 0.0128 with n = 1.0), the emissivities
// taken from the material library unless the job sets them, and the old
// interface model name mapping to the CMY plastic model.
func TestHobModelDefaults(t *testing.T) {
	lib := contact.Materials()
	tests := []struct {
		name           string
		edit           func(*Job)
		csf, n         float64
		panEps, hobEps float64
		model          string
	}{
		{"defaults", func(*Job) {}, 0.0128, 1.0, 0.09, 0.90, contact.ModelPlastic},
		{"named surface", func(j *Job) { j.Water.RohsenowSurface = "stainless-mech-polished" }, 0.0132, 1.0, 0.09, 0.90, contact.ModelPlastic},
		{"csf override keeps n", func(j *Job) { j.Water.RohsenowCsf = 0.011 }, 0.011, 1.0, 0.09, 0.90, contact.ModelPlastic},
		{"job emissivities", func(j *Job) { j.Pan.Emissivity, j.Hob.Emissivity = 0.3, 0.85 }, 0.0128, 1.0, 0.3, 0.85, contact.ModelPlastic},
		{"steel base", func(j *Job) { j.Pan.Layers = []LayerJob{{Material: "ss-304", ThicknessMM: 1}} }, 0.0128, 1.0, 0.16, 0.90, contact.ModelPlastic},
		{"old model name", func(j *Job) { j.Interface.Model = contact.ModelPlasticOld }, 0.0128, 1.0, 0.09, 0.90, contact.ModelPlastic},
		{"elastic", func(j *Job) { j.Interface.Model = contact.ModelElastic }, 0.0128, 1.0, 0.09, 0.90, contact.ModelElastic},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			j := DefaultJob()
			tc.edit(&j)
			if err := j.Validate(); err != nil {
				t.Fatal(err)
			}
			csf, n := rohsenow(j.Water)
			if csf != tc.csf || n != tc.n {
				t.Errorf("Rohsenow C_sf, n = %g, %g, want %g, %g", csf, n, tc.csf, tc.n)
			}
			ip, err := interfaceParams(j, lib)
			if err != nil {
				t.Fatal(err)
			}
			if ip.Emissivity2 != tc.panEps || ip.Emissivity1 != tc.hobEps || ip.Model != tc.model {
				t.Errorf("emissivities pan %g hob %g model %q, want %g %g %q", ip.Emissivity2, ip.Emissivity1, ip.Model, tc.panEps, tc.hobEps, tc.model)
			}
		})
	}
}

// TestJobDocSourcesModellingDefaults checks that every modelling-choice
// key of [hob], [interface] and [water] says where its default comes from.
func TestJobDocSourcesModellingDefaults(t *testing.T) {
	// Keys that are not modelling choices: file names, ranges of the
	// correlation inputs with 0 = computed, and numbers a lab measures.
	skip := map[string]bool{"hob.temperature_profile": true, "hob.power_profile": true, "hob.profile": true,
		"interface.pan_slope": true, "interface.hob_slope": true, "water.rohsenow_csf": true, "water.rohsenow_n": true,
		"hob.rated_power_density_kw_m2": true}
	for _, s := range jobKeys() {
		sec, _, _ := strings.Cut(s.key, ".")
		if (sec == "hob" || sec == "interface" || sec == "water") && !skip[s.key] && s.src == "" {
			t.Errorf("%s: its default has no stated source (a source, or \"ours\")", s.key)
		}
	}
	if !strings.Contains(JobDoc(), "default from: Incropera, 6th ed., Table 10.1") {
		t.Error("gapflux job does not print the Rohsenow default's source")
	}
}
