package contact

import (
	"bytes"
	"testing"
)

// FuzzReadRadialProfile: no input makes the profile reader panic, and an
// accepted profile has strictly increasing, finite radii.
func FuzzReadRadialProfile(f *testing.F) {
	f.Add([]byte("r_mm,z_mm\n0,0\n50,-0.1\n100,-0.3\n"))
	f.Add([]byte("r_mm,z_mm\n0,0\n0,1\n"))
	f.Add([]byte("# c\nR_MM , Z_MM\n1,NaN\n"))
	f.Fuzz(func(t *testing.T, b []byte) {
		r, z, err := ReadRadialProfile(bytes.NewReader(b), "fuzz.csv")
		if err != nil {
			return
		}
		if len(r) != len(z) || len(r) == 0 {
			t.Fatalf("%d radii, %d heights", len(r), len(z))
		}
		for i := 1; i < len(r); i++ {
			if !(r[i] > r[i-1]) {
				t.Fatalf("radii not increasing: %v", r)
			}
		}
	})
}
