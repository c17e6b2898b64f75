package synth

import (
	"fmt"
	"os"
)

// Sample is one of the small sample scans kept under the repository's
// testdata folder: a pan base (Spec) or a hob top (Hob), and how it is
// written.
type Sample struct {
	// Base is the file name without extension; the scan goes to
	// Base+Encoding.Ext() and the truth to Base+".truth.json".
	Base     string
	Spec     *Spec
	Hob      *HobSpec
	Encoding Encoding
	// About says in a line what the sample exercises.
	About string
}

// Generate builds the sample's scan.
func (s Sample) Generate() (*Scan, error) {
	if s.Hob != nil {
		return GenerateHob(*s.Hob)
	}
	return Generate(*s.Spec)
}

// Samples returns the sample set: 40 mm bases (each file under 100 KB) in
// every supported encoding, and one hob top. All invented.
func Samples() []Sample {
	const d = 0.040 // base diameter, m
	return []Sample{
		{Base: "dish", About: "binary STL mesh whose 80-byte header starts with \"solid\"; 0.1 mm dish, 5 µm noise, face up",
			Spec: &Spec{Name: "dish", Shape: Dish, DiameterM: d, SagM: 0.1e-3, NoiseM: 5e-6, SpacingM: 1.25e-3,
				Mesh: true, RotationDeg: [3]float64{1.5, -2, 30}, OffsetM: [3]float64{0.012, -0.004, 0.25}, Seed: 101},
			Encoding: Encoding{Format: "stl", Binary: true, Header: "solid dish (gapflux sample: a binary STL, not ASCII)"}},
		{Base: "dome_ascii", About: "ASCII STL mesh; 0.08 mm dome, no noise, face down, coordinates to 0.1 µm",
			Spec: &Spec{Name: "dome_ascii", Shape: Dome, DiameterM: d, SagM: 0.08e-3, SpacingM: 2.5e-3,
				Mesh: true, Face: "down", Seed: 102},
			Encoding: Encoding{Format: "stl", Precision: 4}},
		{Base: "saddle", About: "binary_little_endian PLY mesh with vertex normals; ±0.05 mm saddle, 8 µm noise",
			Spec: &Spec{Name: "saddle", Shape: Saddle, DiameterM: d, SagM: 0.05e-3, NoiseM: 8e-6, SpacingM: 1e-3,
				Mesh: true, Normals: true, RotationDeg: [3]float64{0, 0, -15}, Seed: 103},
			Encoding: Encoding{Format: "ply", Binary: true}},
		{Base: "tilt_be", About: "binary_big_endian PLY point cloud, double; 0.2 mm rim tilt, 10 µm noise, 0.5 % spikes",
			Spec: &Spec{Name: "tilt_be", Shape: Tilt, DiameterM: d, SagM: 0.2e-3, NoiseM: 10e-6, SpikeFraction: 0.005,
				SpacingM: 1e-3, RotationDeg: [3]float64{4, 3, 0}, OffsetM: [3]float64{0, 0, 0.1}, Seed: 104},
			Encoding: Encoding{Format: "ply", Binary: true, BigEndian: true, Double: true}},
		{Base: "flat_noisy", About: "space-separated XYZ cloud with header; flat, 30 µm noise, 1 % spikes, 2 holes",
			Spec: &Spec{Name: "flat_noisy", Shape: Flat, DiameterM: d, NoiseM: 30e-6, SpikeFraction: 0.01, Holes: 2,
				SpacingM: 1e-3, Seed: 105},
			Encoding: Encoding{Format: "xyz", Precision: 4}},
		{Base: "dish_wall", About: "CSV cloud x_mm,y_mm,z_mm,nx,ny,nz; 0.12 mm dish with 3 mm corner and 8 mm wall",
			Spec: &Spec{Name: "dish_wall", Shape: Dish, DiameterM: d, SagM: 0.12e-3, NoiseM: 5e-6,
				CornerRadiusM: 3e-3, WallHeightM: 8e-3, SpacingM: 1.5e-3, Normals: true, Seed: 106},
			Encoding: Encoding{Format: "csv", Precision: 4}},
		{Base: "bend", About: "gzip-compressed ASCII PLY mesh; one-way bend, rim at x = ±R raised 0.1 mm",
			Spec: &Spec{Name: "bend", Shape: Bend, DiameterM: d, SagM: 0.1e-3, NoiseM: 5e-6, SpacingM: 1e-3,
				Mesh: true, RotationDeg: [3]float64{0, 0, 45}, Seed: 107},
			Encoding: Encoding{Format: "ply", Precision: 4, Gzip: true}},
		{Base: "hob_top", About: "XYZ cloud of a 300 mm glass-ceramic top, 0.05 mm crown (dome), 10 µm noise, 7.5 mm spacing",
			Hob: &HobSpec{Name: "hob_top", Shape: Dome, SideM: 0.30, SagM: 0.05e-3, NoiseM: 10e-6, SpacingM: 7.5e-3,
				OffsetM: [3]float64{0, 0, 0.05}, Seed: 108},
			Encoding: Encoding{Format: "xyz", Precision: 4}},
	}
}

// WriteSamples writes every sample and its truth into dir, which must
// exist, and returns the paths written.
func WriteSamples(dir string) ([]string, error) {
	if st, err := os.Stat(dir); err != nil {
		return nil, fmt.Errorf("synth: %w", err)
	} else if !st.IsDir() {
		return nil, fmt.Errorf("synth: %s is not a directory", dir)
	}
	var paths []string
	for _, s := range Samples() {
		sc, err := s.Generate()
		if err != nil {
			return paths, fmt.Errorf("synth: sample %s: %w", s.Base, err)
		}
		p, q, err := WriteFiles(dir, s.Base, sc, s.Encoding)
		if err != nil {
			return paths, fmt.Errorf("synth: sample %s: %w", s.Base, err)
		}
		paths = append(paths, p, q)
	}
	return paths, nil
}
