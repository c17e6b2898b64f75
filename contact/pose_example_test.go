package contact_test

import (
	"fmt"
	"log"
	"math"
	"strings"

	"gapflux/contact"
	"gapflux/scan"
)

// disc returns a 101×101 grid of 2 mm cells (a 200 mm base) with the cells
// within 100 mm of the centre measured at height f(x, y), m.
func disc(f func(x, y float64) float64) *scan.Surface {
	s := scan.NewSurface(101, 101, 2e-3, -0.1, -0.1)
	for j := 0; j < s.Ny; j++ {
		for i := 0; i < s.Nx; i++ {
			if x, y := s.X(i), s.Y(j); math.Hypot(x, y) <= 0.1+1e-12 {
				k := s.Index(i, j)
				s.ZM[k], s.State[k] = f(x, y), scan.Measured
			}
		}
	}
	return s
}

// A base domed by 0.3 mm (centre lowest) balances on its centre and rocks;
// the same base dished by 0.3 mm stands on its rim.
func ExampleRest() {
	const r = 0.1
	for _, b := range []struct {
		name string
		z    func(x, y float64) float64
	}{
		{"domed", func(x, y float64) float64 { return 0.3e-3 * (x*x + y*y) / (r * r) }},
		{"dished", func(x, y float64) float64 { return 0.3e-3 * (1 - (x*x+y*y)/(r*r)) }},
	} {
		pan := disc(b.z)
		pose, err := contact.Rest(pan, nil, contact.RestOptions{})
		if err != nil {
			log.Fatal(err)
		}
		gap := contact.Gap(pan, nil, pose)
		fmt.Printf("%s: %s support, %d contacts, tilt %.2f°, rock %.3f mm, rocks %v, centre gap %.3f mm\n",
			b.name, pose.Support, len(pose.ContactPointsM), pose.TiltDeg, pose.RockM*1e3, pose.Rocks, gap[pan.Index(50, 50)]*1e3)
	}
	// Output:
	// domed: point support, 1 contacts, tilt 0.00°, rock 0.300 mm, rocks true, centre gap 0.000 mm
	// dished: polygon support, 20 contacts, tilt 0.00°, rock 0.005 mm, rocks false, centre gap 0.300 mm
}

// A flat base on a glass top that bulges 0.1 mm in the middle, as a cone,
// read from a radial profile, with the pan set 20 mm off the zone's centre.
// The pan tilts over the cone's apex and lies along one of its straight
// lines: a line support from the apex outwards, which rocks.
func ExampleRadialHob() {
	profile := "r_mm,z_mm\n0,0.1\n60,0.05\n120,0\n"
	rM, zM, err := contact.ReadRadialProfile(strings.NewReader(profile), "glass.csv")
	if err != nil {
		log.Fatal(err)
	}
	pan := disc(func(x, y float64) float64 { return 0 })
	hob, err := contact.RadialHob(pan, rM, zM, [2]float64{20e-3, 0})
	if err != nil {
		log.Fatal(err)
	}
	pose, err := contact.Rest(pan, hob, contact.RestOptions{})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("hob under the pan centre %.4f mm; %s support at %.0f mm; tilt %.4f°; rocks %v\n",
		hob.ZM[pan.Index(50, 50)]*1e3, pose.Support, pose.ContactPointsM[0][0]*1e3, pose.TiltDeg, pose.Rocks)
	// Output:
	// hob under the pan centre 0.0833 mm; line support at -20 mm; tilt 0.0477°; rocks true
}
