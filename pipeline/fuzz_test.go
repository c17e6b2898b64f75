package pipeline

import (
	"bytes"
	"testing"
)

// FuzzReadJob: no job file makes ReadJob panic, and an accepted job
// validates and hashes. The seed corpus in testdata/fuzz/FuzzReadJob holds
// ±Inf, NaN, huge and wrong-length values.
func FuzzReadJob(f *testing.F) {
	f.Add([]byte(DefaultJobTOML))
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
		rows, err := ReadManifest(bytes.NewReader(b), "fuzz.csv")
		if err == nil {
			for p, r := range rows {
				if p == "" || r.Path != p {
					t.Fatalf("row keyed %q has path %q", p, r.Path)
				}
			}
		}
	})
}
