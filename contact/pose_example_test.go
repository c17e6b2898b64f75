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

// A base domed by 0.3 mm (centre lowest) stands on a small patch round its
// centre and tips under a light press on the rim; the same base dished by
// 0.3 mm stands on its rim ring and cannot be tipped by pressing the rim;
// one flat over its inner half with the rim lifted 2 mm needs the whole
// weight, W·a/(R − a) = W for a = R/2. The load is the default 24.5 N.
func ExampleRest() {
	const r = 0.1
	for _, b := range []struct {
		name string
		z    func(x, y float64) float64
	}{
		{"domed", func(x, y float64) float64 { return 0.3e-3 * (x*x + y*y) / (r * r) }},
		{"dished", func(x, y float64) float64 { return 0.3e-3 * (1 - (x*x+y*y)/(r*r)) }},
		{"flat centre", func(x, y float64) float64 { return 2e-3 * max(0, math.Hypot(x, y)-r/2) / (r / 2) }},
	} {
		pan := disc(b.z)
		pose, err := contact.Rest(pan, nil, contact.RestOptions{})
		if err != nil {
			log.Fatal(err)
		}
		force := "cannot be tipped at the rim"
		if !math.IsInf(pose.TipForceN, 1) {
			force = fmt.Sprintf("tips at %.1f N", pose.TipForceN)
		}
		fmt.Printf("%s: %s support %.0f mm wide, %s, rim drop %.3f mm, rocks %v\n",
			b.name, pose.Support, pose.SupportWidthM*1e3, force, pose.RockM*1e3, pose.Rocks)
	}
	// Output:
	// domed: polygon support 23 mm wide, tips at 3.2 N, rim drop 0.300 mm, rocks true
	// dished: polygon support 198 mm wide, cannot be tipped at the rim, rim drop 0.005 mm, rocks false
	// flat centre: polygon support 98 mm wide, tips at 24.1 N, rim drop 2.000 mm, rocks false
}

// A flat base on a glass top that bulges 0.1 mm in the middle, as a cone,
// read from a radial profile, with the pan set 20 mm off the zone's centre.
// The pan tilts over the cone's apex and lies along one of its straight
// lines; the cone is so flat across that the 4.5 µm contact band is 68 mm
// wide at the rim, yet a 4.1 N press tips the pan: it rocks.
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
	fmt.Printf("hob under the pan centre %.4f mm; %s support %.0f mm wide; tilt %.4f°; tips at %.1f N; rocks %v\n",
		hob.ZM[pan.Index(50, 50)]*1e3, pose.Support, pose.SupportWidthM*1e3, pose.TiltDeg, pose.TipForceN, pose.Rocks)
	// Output:
	// hob under the pan centre 0.0833 mm; polygon support 68 mm wide; tilt 0.0477°; tips at 4.1 N; rocks true
}
