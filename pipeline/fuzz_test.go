package pipeline

import (
	"bytes"
	"testing"
)

// FuzzReadJob: no job file makes ReadJob panic, and an accepted job
// validates and hashes. The seed corpus in testdata/fuzz/FuzzReadJob holds
// ±Inf, NaN, huge and wrong-length values.
func FuzzReadJob(f *testing.F) {
	f.Add([]byte(JobDoc()))
	f.Add([]byte("[water]\nmass_kg = 2\n"))
	f.Add([]byte("[[pan.layers]]\nmaterial = \"ss-430\"\nthickness_mm = 0.6\n"))
	f.Add([]byte("[oven]\nx=1\n"))
	f.Add([]byte("[pan\n"))
	f.Fuzz(func(t *testing.T, b []byte) {
		j, err := ReadJob(bytes.NewReader(b), "fuzz.toml")
		if err == nil {
			if verr := j.Validate(); verr != nil {
				t.Fatalf("accepted an invalid job: %v", verr)
			}
			if _, herr := JobHash(j, ""); herr != nil {
				t.Fatalf("accepted a job that does not hash: %v", herr)
			}
		}
	})
}

// FuzzReadManifest: no manifest makes ReadManifest panic.
func FuzzReadManifest(f *testing.F) {
	f.Add([]byte("path,part_number,lot,pan_mass_kg\na.stl,X,1,1.2\n"))
	f.Add([]byte("path\n\"a\nb\",\n"))
	f.Add([]byte("colour\nred\n"))
	f.Fuzz(func(t *testing.T, b []byte) {
		m, err := ReadManifest(bytes.NewReader(b), "fuzz.csv")
		if err != nil {
			return
		}
		for p, r := range m.Rows {
			if p == "" || r.Path != p {
				t.Fatalf("row keyed %q has path %q", p, r.Path)
			}
			for _, f := range []string{r.Hob, r.Job} {
				if _, err := ManifestPath(f); f != "" && err != nil {
					t.Fatalf("row %q: hob or job %q is not a local path", p, f)
				}
			}
			for _, v := range []*float64{r.PanMassKg, r.WaterMassKg, r.BaseMM, r.DiameterMM} {
				if v != nil && !(*v > 0 && *v <= 2000) {
					t.Fatalf("row %q: accepted %v", p, *v)
				}
			}
		}
	})
}
