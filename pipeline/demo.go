package pipeline

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"gapflux/scan/synth"
)

// demoPan is one invented base of the demo product line.
type demoPan struct {
	file  string // path under the scan folder, without extension
	part  string // invented part number
	lot   string
	spec  synth.Spec
	enc   synth.Encoding
	hob   string // hob scan of the manifest row, "" for the job's hob
	face  string // the manifest's face column, "" to detect
	mass  float64
	water float64
}

// demoLine is our invented product line: a few shapes, scanners and file
// formats, chosen to show each outcome. Every number is invented.
func demoLine() []demoPan {
	mm := func(v float64) float64 { return v / 1e3 }
	um := func(v float64) float64 { return v / 1e6 }
	return []demoPan{
		{file: "line-a/saucepan-180-flat", part: "SP-180", lot: "A1",
			spec: synth.Spec{Shape: synth.Flat, DiameterM: mm(180), NoiseM: um(8), Mesh: true, SpacingM: mm(1),
				CornerRadiusM: mm(8), WallHeightM: mm(20), Seed: 11},
			enc: synth.Encoding{Format: "stl", Binary: true, Header: "solid scanner export SP-180"}, mass: 0.9, water: 1.2},
		{file: "line-a/saucepan-180-dish", part: "SP-180", lot: "A2",
			spec: synth.Spec{Shape: synth.Dish, DiameterM: mm(180), SagM: mm(0.36), NoiseM: um(8), Mesh: true, Normals: true,
				SpacingM: mm(1), Seed: 12},
			enc: synth.Encoding{Format: "ply", Binary: true}, mass: 0.9, water: 1.2},
		{file: "line-a/frypan-200-deep-dish", part: "FP-200", lot: "A2",
			spec: synth.Spec{Shape: synth.Dish, DiameterM: mm(200), SagM: mm(1.6), NoiseM: um(10), SpacingM: mm(1),
				Face: "down", RotationDeg: [3]float64{2, -1, 30}, OffsetM: [3]float64{0.05, -0.02, 0.3}, Seed: 13},
			enc: synth.Encoding{Format: "xyz"}, face: "down", mass: 1.1, water: 1.0},
		{file: "line-a/frypan-200-dome", part: "FP-200", lot: "A3",
			spec: synth.Spec{Shape: synth.Dome, DiameterM: mm(200), SagM: mm(0.3), NoiseM: um(8), Mesh: true, SpacingM: mm(1), Seed: 14},
			enc:  synth.Encoding{Format: "stl", Binary: true}, mass: 1.1, water: 1.0},
		{file: "line-b/saute-220-saddle", part: "SA-220", lot: "B1",
			spec: synth.Spec{Shape: synth.Saddle, DiameterM: mm(220), SagM: mm(0.25), NoiseM: um(8), Mesh: true, SpacingM: mm(1), Seed: 15},
			enc:  synth.Encoding{Format: "ply", Binary: true, BigEndian: true}, mass: 1.4, water: 1.5},
		{file: "line-b/griddle-220-bend", part: "GR-220", lot: "B1",
			spec: synth.Spec{Shape: synth.Bend, DiameterM: mm(220), SagM: mm(0.5), NoiseM: um(12), SpacingM: mm(1), Normals: true, Seed: 16},
			enc:  synth.Encoding{Format: "csv"}, mass: 1.6, water: 1.5},
		{file: "line-b/stockpot-220-dish", part: "ST-220", lot: "B2",
			spec: synth.Spec{Shape: synth.Dish, DiameterM: mm(220), SagM: mm(0.45), NoiseM: um(8), SpacingM: mm(1),
				CornerRadiusM: mm(10), WallHeightM: mm(25), Seed: 17},
			enc: synth.Encoding{Format: "xyz", Gzip: true}, mass: 1.8, water: 2.0},
		{file: "line-b/stockpot-220-handheld", part: "ST-220", lot: "B2",
			spec: synth.Spec{Shape: synth.Dish, DiameterM: mm(220), SagM: mm(0.45), NoiseM: um(60), SpikeFraction: 0.002,
				Holes: 4, SpacingM: mm(0.5), Seed: 18},
			enc: synth.Encoding{Format: "xyz"}, mass: 1.8, water: 2.0},
		{file: "line-c/milkpan-160-on-domed-hob", part: "MP-160", lot: "C1",
			spec: synth.Spec{Shape: synth.Dish, DiameterM: mm(160), SagM: mm(0.2), NoiseM: um(8), Mesh: true, SpacingM: mm(1), Seed: 19},
			enc:  synth.Encoding{Format: "stl", Binary: true}, hob: "hobs/zone-domed.xyz", mass: 0.7, water: 0.8},
	}
}

// demoJob is the demo's job file: the default scenario on a 1 mm grid so
// the whole demo runs in well under a minute.
const demoJob = `# gapflux demo job: the default scenario (invented) on a 1 mm grid.
[grid]
cell_mm = 1.0
`

// DemoBrokenScan is the demo's scan that is broken on purpose (a binary STL
// cut off in the middle of a facet), to show a failed row.
const DemoBrokenScan = "line-c/frypan-200-truncated.stl"

// WriteDemoScans synthesises the demo product line into dir: scans in
// several formats, a hob top scan, a job file, a manifest with invented part
// numbers and lots, and one broken file.
func WriteDemoScans(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	var manifest strings.Builder
	manifest.WriteString("path,part_number,lot,hob,face,pan_mass_kg,water_mass_kg\n")
	for _, p := range demoLine() {
		p.spec.Name = filepath.Base(p.file)
		sc, err := synth.Generate(p.spec)
		if err != nil {
			return fmt.Errorf("demo %s: %w", p.file, err)
		}
		sub := filepath.Join(dir, filepath.Dir(p.file))
		if err := os.MkdirAll(sub, 0o755); err != nil {
			return err
		}
		path, _, err := synth.WriteFiles(sub, filepath.Base(p.file), sc, p.enc)
		if err != nil {
			return fmt.Errorf("demo %s: %w", p.file, err)
		}
		rel, _ := filepath.Rel(dir, path)
		fmt.Fprintf(&manifest, "%s,%s,%s,%s,%s,%g,%g\n", filepath.ToSlash(rel), p.part, p.lot, p.hob, p.face, p.mass, p.water)
	}
	hob, err := synth.GenerateHob(synth.HobSpec{Name: "zone-domed", Shape: synth.Dome, SagM: 0.15e-3, NoiseM: 6e-6,
		SpacingM: 1e-3, Seed: 21})
	if err != nil {
		return err
	}
	if err := os.MkdirAll(filepath.Join(dir, "hobs"), 0o755); err != nil {
		return err
	}
	if _, _, err := synth.WriteFiles(filepath.Join(dir, "hobs"), "zone-domed", hob, synth.Encoding{Format: "xyz"}); err != nil {
		return err
	}
	// A broken scan: a binary STL cut off in the middle of a facet.
	broken, err := synth.Generate(synth.Spec{Name: "frypan-200-truncated", Shape: synth.Dish, DiameterM: 0.2,
		SagM: 0.3e-3, Mesh: true, SpacingM: 2e-3, Seed: 22})
	if err != nil {
		return err
	}
	var buf strings.Builder
	if err := synth.Encode(&buf, broken, synth.Encoding{Format: "stl", Binary: true}); err != nil {
		return err
	}
	cut := buf.String()[:84+50*200+17]
	if err := WriteBytesAtomic(filepath.Join(dir, filepath.FromSlash(DemoBrokenScan)), []byte(cut)); err != nil {
		return err
	}
	manifest.WriteString(DemoBrokenScan + ",FP-200,C2,,,1.1,1.0\n")
	if err := WriteBytesAtomic(filepath.Join(dir, ManifestName), []byte(manifest.String())); err != nil {
		return err
	}
	return WriteFileAtomic(filepath.Join(dir, JobName), func(w io.Writer) error {
		_, err := io.WriteString(w, demoJob)
		return err
	})
}
