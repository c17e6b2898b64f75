package scan_test

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/spatial/r3"

	"gapflux/scan"
)

// An invented pan base, 160 mm across and dished by 0.40 mm, with a 3 mm
// corner radius and a 20 mm wall, scanned upside down (outer face to
// scanner +z) with 10 µm of noise, goes from points to form.
func Example() {
	const (
		radius = 0.08   // m
		sag    = 0.4e-3 // m, centre raised into the pan
		corner = 3e-3   // m
		wall   = 20e-3  // m
	)
	rng := rand.New(rand.NewPCG(1, 2))
	c := &scan.Cloud{}
	add := func(r, th, zBase float64) {
		// Upside down: base +z (into the pan) is scanner −z.
		c.Points = append(c.Points, r3.Vec{
			X: r * math.Cos(th), Y: r * math.Sin(th), Z: -zBase + 10e-6*rng.NormFloat64()})
	}
	for range 80000 {
		r := radius * math.Sqrt(rng.Float64())
		add(r, 2*math.Pi*rng.Float64(), sag*(1-r*r/(radius*radius)))
	}
	for range 20000 {
		th := 2 * math.Pi * rng.Float64()
		s := (corner*math.Pi/2 + wall) * rng.Float64()
		if phi := s / corner; phi < math.Pi/2 {
			add(radius+corner*math.Sin(phi), th, corner*(1-math.Cos(phi)))
		} else {
			add(radius+corner, th, corner+s-corner*math.Pi/2)
		}
	}

	l, err := scan.Level(c, scan.LevelOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	g, err := scan.Grid(l, scan.GridOptions{CellM: 1e-3})
	if err != nil {
		fmt.Println(err)
		return
	}
	fr, err := scan.FormFilter(g.Raw, 8e-3)
	if err != nil {
		fmt.Println(err)
		return
	}
	f, err := scan.MeasureForm(fr.Form, l.RadiusM)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("outer face from the %s; diameter %.0f mm\n", l.FaceSource, 2e3*l.RadiusM)
	fmt.Printf("concavity %.2f mm (%.2f %% of the diameter)\n", f.ConcavityM*1e3, f.ConcavityPctOfDiameter)
	fmt.Printf("%s %.0f µm\n", f.Zernike[4].Name, f.Zernike[4].CoefM*1e6)
	// Output:
	// outer face from the wall; diameter 160 mm
	// concavity 0.40 mm (0.25 % of the diameter)
	// defocus -115 µm
}

// The minimum zone of z = x³ on a 5×5 grid (PHYSICS-REFERENCES.md 12.3):
// narrower than the peak-to-valley about the least-squares plane (0.60).
func ExampleMinimumZone() {
	var x, y, z []float64
	for _, xv := range []float64{-1, -0.5, 0, 0.5, 1} {
		for _, yv := range []float64{-1, -0.5, 0, 0.5, 1} {
			x, y, z = append(x, xv), append(y, yv), append(z, xv*xv*xv)
		}
	}
	w, p, err := scan.MinimumZone(x, y, z)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("zone %.2f about z = %.2f x + %.2f y + %.2f\n", w, p[0], p[1]+0, p[2]+0)
	// Output:
	// zone 0.50 about z = 0.75 x + 0.00 y + 0.00
}

// Defocus, OSA/ANSI index 4, is √3 (2ρ² − 1): a bowl.
func ExampleZernike() {
	n, m := scan.ZernikeNM(4)
	fmt.Println(n, m, scan.ZernikeName(n, m))
	for _, rho := range []float64{0, 0.5, 1} {
		fmt.Printf("%.4f\n", scan.Zernike(n, m, rho, 0))
	}
	// Output:
	// 2 0 defocus
	// -1.7321
	// -0.8660
	// 1.7321
}
