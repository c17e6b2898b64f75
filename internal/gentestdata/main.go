// Command gentestdata writes the small synthetic sample scans kept in the
// repository's testdata folder, each with its .truth.json sidecar (exact
// form, noise, spikes, holes, frame). It is run by "go generate" in
// scan/synth; the same source always gives the same bytes.
//
// The samples (synth.Samples; 40 mm bases unless noted, all invented):
//
//	dish.stl            binary STL mesh, 80-byte header starting with "solid";
//	                    0.1 mm dish, 5 µm noise, face up, rotated and offset
//	dome_ascii.stl      ASCII STL mesh; 0.08 mm dome, no noise, face down
//	saddle.ply          binary_little_endian PLY mesh with vertex normals;
//	                    ±0.05 mm saddle, 8 µm noise
//	tilt_be.ply         binary_big_endian PLY cloud, double; 0.2 mm rim tilt,
//	                    10 µm noise, 0.5 % spikes
//	flat_noisy.xyz      space-separated XYZ with header; flat, 30 µm noise,
//	                    1 % spikes, 2 holes
//	dish_wall.csv       CSV x_mm,y_mm,z_mm,nx,ny,nz; 0.12 mm dish with a 3 mm
//	                    corner radius and an 8 mm wall
//	bend.ply.gz         gzip-compressed ASCII PLY mesh; one-way bend, rim at
//	                    x = ±R raised 0.1 mm
//	hob_top.xyz         300 mm square glass-ceramic top, 0.05 mm crown, 10 µm
//	                    noise, 7.5 mm spacing
//
// Usage:
//
//	gentestdata -out DIR
package main

import (
	"flag"
	"fmt"
	"os"

	"gapflux/scan/synth"
)

func main() {
	out := flag.String("out", "testdata", "directory to write the samples into (created if missing)")
	flag.Parse()
	if flag.NArg() != 0 {
		fmt.Fprintln(os.Stderr, "usage: gentestdata [-out DIR]")
		os.Exit(2)
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		fmt.Fprintln(os.Stderr, "gentestdata:", err)
		os.Exit(1)
	}
	paths, err := synth.WriteSamples(*out)
	if err != nil {
		fmt.Fprintln(os.Stderr, "gentestdata:", err)
		os.Exit(1)
	}
	for _, p := range paths {
		fmt.Println(p)
	}
}
