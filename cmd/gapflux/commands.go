package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strings"

	"golang.org/x/term"

	"gapflux/contact"
	"gapflux/pipeline"
	"gapflux/scan/synth"
)

func cmdAnalyze(ctx context.Context, args []string, stdout, stderr io.Writer) (int, error) {
	fs := newFlags("analyze", "analyze PAN [--hob HOB] [--job JOB.toml] [--out DIR] [--json]  |  analyze --from-report REPORT.json [--out DIR] [--json]", stderr)
	jf := addJobFlags(fs, "job file (TOML); \"gapflux job\" prints every key with its default")
	hob := fs.String("hob", "", "hob top: a scan (STL, PLY, XYZ/CSV) or a radial profile CSV (r_mm,z_mm); default an ideal flat hob")
	out := fs.String("out", "", "write report.json, rings.csv, maps and fields.vti into this folder")
	asJSON := fs.Bool("json", false, "also print report.json to stdout")
	quiet := fs.Bool("quiet", false, "print nothing but errors (and --json)")
	fromReport := fs.String("from-report", "", "run again the analysis a report.json records (its scan, hob and whole job) and check that it reproduces the report byte for byte")
	if err := parse(fs, args); err != nil {
		return exitUsage, err
	}
	if *fromReport != "" {
		return analyzeFromReport(ctx, fs, *fromReport, *out, *asJSON, *quiet, stdout, stderr)
	}
	if fs.NArg() != 1 {
		return exitUsage, usagef("want exactly one scan file, got %s (usage: gapflux analyze PAN [flags]; \"gapflux analyze --help\" lists the flags)",
			plural(fs.NArg(), "argument", "arguments"))
	}
	job, err := jf.job("")
	if err != nil {
		return exitUsage, err
	}
	pan := fs.Arg(0)
	for _, p := range []string{pan, *hob} {
		if p == "" {
			continue
		}
		if st, err := os.Stat(p); err != nil || st.IsDir() {
			return exitUsage, usagef("%s: not a readable scan file; check the path", p)
		}
	}
	if err := pipeline.CheckJob(job, jf.name()); err != nil {
		return exitUsage, usageError{err}
	}
	setMemoryLimit(1)
	res, err := pipeline.Analyze(ctx, pipeline.ScanInput{PanPath: pan, Name: filepath.Base(pan), HobPath: *hob, Job: job, ReportDir: *out})
	if err != nil {
		return exitFail, err
	}
	if *out != "" {
		if err := pipeline.WriteOutputs(res, *out); err != nil {
			return exitFail, err
		}
	}
	if !*quiet {
		w := stdout
		if *asJSON {
			w = stderr
		}
		fmt.Fprint(w, pipeline.HumanSummary(res))
		if *out != "" {
			fmt.Fprintf(w, "  outputs in %s\n", *out)
		}
	}
	if *asJSON {
		b, err := pipeline.MarshalReport(res.Report)
		if err != nil {
			return exitFail, err
		}
		stdout.Write(b)
	}
	if v := res.Report.Verdict; res.Report.Rejected() || v != nil && !v.Pass {
		return exitFail, nil
	}
	return exitOK, nil
}

func cmdBatch(ctx context.Context, args []string, stdout, stderr io.Writer) (int, error) {
	fs := newFlags("batch", "batch DIR --out OUT [--job JOB.toml] [--workers N] [--shard K/N] [--force]", stderr)
	out := fs.String("out", "", "output folder (required)")
	workers := fs.Int("workers", runtime.NumCPU(), "scans analysed at once")
	shard := fs.String("shard", "", "run only slice K of N of the sorted scan list (default: from the scheduler's array-job variables when set)")
	force := fs.Bool("force", false, "re-run scans whose outputs are already current")
	quiet := fs.Bool("quiet", false, "print nothing but errors (for cron)")
	progress := fs.String("progress", "auto", "auto (bar on a terminal, lines otherwise), bar, lines or none")
	jf := addJobFlags(fs, "job file (default: DIR/job.toml when present, else the built-in defaults)")
	hist := fs.String("history", "", "history database the batch's rows are added to (default OUT/history.sqlite; off: record none)")
	if err := parse(fs, args); err != nil {
		return exitUsage, err
	}
	switch {
	case fs.NArg() != 1:
		return exitUsage, usagef("want one scan folder, got %s (usage: gapflux batch DIR --out OUT [flags]; \"gapflux batch --help\" lists the flags)",
			plural(fs.NArg(), "argument", "arguments"))
	case *out == "":
		return exitUsage, usagef("--out OUT is missing: the folder for the results (usage: gapflux batch DIR --out OUT [flags])")
	}
	dir := fs.Arg(0)
	job, err := jf.job(filepath.Join(dir, pipeline.JobName))
	if err != nil {
		return exitUsage, err
	}
	setMemoryLimit(*workers)
	opt := pipeline.BatchOptions{Dir: dir, Out: *out, Job: job, Workers: *workers, Force: *force, Override: jf.apply, History: *hist}
	if *shard != "" {
		if opt.Shard, err = pipeline.ParseShard(*shard); err != nil {
			return exitUsage, usageError{err}
		}
	} else if s, src, ok, err := pipeline.ShardFromEnv(os.Getenv); err != nil {
		return exitUsage, usageError{err}
	} else if ok {
		opt.Shard = s
		if !*quiet {
			fmt.Fprintf(stderr, "shard %s from the %s array-job variables\n", s, src)
		}
	}
	if !*quiet {
		switch *progress {
		case "auto":
			if f, ok := stderr.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
				opt.Progress = &pipeline.BarProgress{W: stderr}
			} else {
				opt.Progress = &pipeline.LineProgress{W: stderr}
			}
		case "bar":
			opt.Progress = &pipeline.BarProgress{W: stderr}
		case "lines":
			opt.Progress = &pipeline.LineProgress{W: stderr}
		case "none":
		default:
			return exitUsage, usagef("--progress %q: want auto, bar, lines or none", *progress)
		}
	}
	res, err := pipeline.RunBatch(ctx, opt)
	if err != nil {
		// run maps configuration errors to exitUsage and the rest (a summary
		// that could not be written) to exitFail.
		return exitFail, err
	}
	if res.HistoryErr != nil {
		fmt.Fprintf(stderr, "gapflux batch: warning: %v\n", res.HistoryErr)
	}
	if !*quiet {
		c := res.Summary.Counts
		fmt.Fprintf(stdout, "%s: %d ok, %d out of tolerance, %d rejected, %d failed, %d not run (analysed %d, outputs current %d)\n",
			plural(res.Total, "scan", "scans"), c[pipeline.StatusOK], c[pipeline.StatusOut], c[pipeline.StatusRejected], c[pipeline.StatusFailed], c[pipeline.StatusNotRun], res.Ran, res.Skipped)
		fmt.Fprintf(stdout, "summary: %s; per scan: %s\n", filepath.Join(*out, "summary.csv"), filepath.Join(*out, pipeline.ScansDir, "<scan>"))
		if res.ConfigFailures > 0 {
			fmt.Fprintf(stdout, "%s failed because of a job file (see the reason column): fix it and run the same command again\n", plural(res.ConfigFailures, "scan", "scans"))
		}
		if res.Interrupted {
			fmt.Fprintf(stdout, "interrupted: run the same command again to finish the remaining scans\n")
		}
	}
	return res.ExitCode(), nil
}

// batchJob picks the batch's job: --job, else DIR/job.toml, else defaults.
func batchJob(dir, path string) (pipeline.Job, error) {
	if path == "" {
		p := filepath.Join(dir, pipeline.JobName)
		if _, err := os.Stat(p); err == nil {
			path = p
		}
	}
	if path == "" {
		return pipeline.DefaultJob(), nil
	}
	job, err := pipeline.ReadJobFile(path)
	if err != nil {
		return job, usageError{err}
	}
	return job, nil
}

func cmdMerge(args []string, stdout, stderr io.Writer) (int, error) {
	fs := newFlags("merge", "merge OUT1 OUT2 ... --out OUT", stderr)
	out := fs.String("out", "", "folder for the merged summary (required)")
	if err := parse(fs, args); err != nil {
		return exitUsage, err
	}
	if fs.NArg() < 1 || *out == "" {
		return exitUsage, usagef("want shard output folders and --out (usage: gapflux merge OUT1 OUT2 ... --out OUT)")
	}
	s, err := pipeline.Merge(fs.Args(), *out)
	if err != nil {
		return exitUsage, err
	}
	fmt.Fprintf(stdout, "merged %s into %s and %s\n", plural(len(s.Rows), "scan", "scans"), filepath.Join(*out, "summary.csv"), filepath.Join(*out, "index.html"))
	for _, r := range s.Rows {
		if r.Status != pipeline.StatusOK {
			return exitFail, nil
		}
	}
	return exitOK, nil
}

func cmdSynth(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("synth", "synth [flags] --out FILE", stderr)
	shape := fs.String("shape", "dish", "base form: flat, dish, dome, saddle, tilt, bend or cone (hob top: flat, dome or dish)")
	diam := fs.Float64("diameter-mm", 200, "base diameter, mm")
	sag := fs.Float64("sag-mm", 0.4, "form amplitude, mm (dish/dome: centre height against the rim; 0 for --shape flat unless given)")
	turn := fs.Float64("turn-deg", 0, "turn the form about z, degrees (a bend's rim rises along this direction, its axis is 90° from it)")
	coneStart := fs.Float64("cone-start-mm", 0, "cone: radius of the flat centre, mm, beyond which the ring lifts to --sag-mm at the rim (0 = half the radius)")
	noise := fs.Float64("noise-um", 8, "scanner noise σ, µm")
	spikes := fs.Float64("spikes", 0, "fraction of points turned into spikes (0 … 0.5)")
	spikeMM := fs.String("spike-mm", "", "spike and streak heights MIN,MAX, mm (default 0.2,2)")
	streaks := fs.Int("streaks", 0, "number of streaks (a line of points lifted together, as glare makes)")
	streakMM := fs.Float64("streak-mm", 0, "streak length, mm (0 = 3 mm)")
	holes := fs.Int("holes", 0, "number of unmeasured holes at random places (2 … 4 mm radius)")
	holeAt := fs.StringArray("hole", nil, "an unmeasured hole X,Y,D in mm (centre and diameter, base frame); repeatable")
	sector := fs.StringArray("missing-sector", nil, "leave out the points between FROM,TO degrees (from +x, counter-clockwise) beyond radius INNER mm: FROM,TO[,INNER]; repeatable")
	jitter := fs.Float64("jitter", 0, "move each cloud point by up to ± this fraction of half the spacing (0 … 1)")
	corner := fs.Float64("corner-mm", 0, "corner radius, mm (0 = base only)")
	wall := fs.Float64("wall-mm", 0, "wall height above the base, mm")
	spacing := fs.Float64("spacing-mm", 0.5, "point spacing, mm")
	mesh := fs.Bool("mesh", false, "triangulated surface instead of a point cloud (STL always meshes)")
	normals := fs.Bool("normals", false, "write normals (PLY, CSV)")
	face := fs.String("face", "up", "outer face toward scanner +z (up) or -z (down)")
	rot := fs.String("rotate-deg", "0,0,0", "scanner-frame rotation about x,y,z, degrees")
	off := fs.String("shift-mm", "0,0,0", "scanner-frame offset x,y,z, mm")
	seed := fs.Uint64("seed", 1, "random seed")
	format := fs.String("format", "", "stl, ply, xyz or csv (default from --out's extension)")
	binary := fs.Bool("binary", true, "binary STL/PLY")
	bigEndian := fs.Bool("big-endian", false, "binary_big_endian PLY")
	units := fs.String("units", "mm", "unit of the numbers written: mm, m, um or in")
	fs.StringVar(units, "unit", "mm", "old spelling of --units")
	fs.MarkDeprecated("unit", "use --units")
	hobTop := fs.Bool("hob-top", false, "write a hob top (300 mm glass plate, top up) instead of a pan base")
	out := fs.String("out", "", "scan file to write; a .truth.json sidecar is written beside it (required)")
	if err := parse(fs, args); err != nil {
		return err
	}
	if *out == "" {
		return usagef("--out is required: the scan file to write, e.g. --out pan.stl (\"gapflux synth --help\" lists the shapes and faults)")
	}
	if synth.Shape(*shape) == synth.Flat && !fs.Changed("sag-mm") {
		*sag = 0 // flat means flat; --sag-mm given with it crowns a hob top
	}
	r, err := parseFloats(*rot, 3)
	if err != nil {
		return usagef("--rotate-deg %v", err)
	}
	o, err := parseFloats(*off, 3)
	if err != nil {
		return usagef("--shift-mm %v", err)
	}
	base, enc := synthEncoding(*out, synth.Encoding{Format: *format, Binary: *binary, BigEndian: *bigEndian, Unit: *units})
	rotDeg, offM := [3]float64{r[0], r[1], r[2]}, [3]float64{o[0] / 1e3, o[1] / 1e3, o[2] / 1e3}
	var sc *synth.Scan
	if *hobTop {
		sc, err = synth.GenerateHob(synth.HobSpec{Name: base, Shape: synth.Shape(*shape), SagM: *sag / 1e3,
			NoiseM: *noise / 1e6, SpikeFraction: *spikes, Mesh: *mesh || enc.Format == "stl", Normals: *normals,
			RotationDeg: rotDeg, OffsetM: offM, Seed: *seed})
	} else {
		spec := synth.Spec{Name: base, Shape: synth.Shape(*shape), DiameterM: *diam / 1e3,
			SagM: *sag / 1e3, NoiseM: *noise / 1e6, SpikeFraction: *spikes, Holes: *holes,
			CornerRadiusM: *corner / 1e3, WallHeightM: *wall / 1e3, SpacingM: *spacing / 1e3,
			Mesh: *mesh || enc.Format == "stl", Normals: *normals, Face: *face,
			RotationDeg: rotDeg, OffsetM: offM, Seed: *seed,
			ConeStartM: *coneStart / 1e3, FormTurnDeg: *turn, Streaks: *streaks, StreakLengthM: *streakMM / 1e3,
			JitterFraction: *jitter}
		if err := synthArtefacts(&spec, *spikeMM, *holeAt, *sector); err != nil {
			return err
		}
		sc, err = synth.Generate(spec)
	}
	if err != nil {
		// "synth: invalid spec: " says nothing the command name does not.
		return usagef("%s", strings.TrimPrefix(err.Error(), synth.ErrSpec.Error()+": "))
	}
	return writeSynthScan(stdout, filepath.Dir(*out), base, sc, enc)
}

// synthEncoding returns the base name of the scan file out (without its
// extension and a .gz) and enc completed from out: gzip from a .gz name,
// the format from the extension when enc has none, text formats never
// binary.
func synthEncoding(out string, enc synth.Encoding) (base string, _ synth.Encoding) {
	name := filepath.Base(out)
	enc.Gzip = strings.HasSuffix(strings.ToLower(name), ".gz")
	base = strings.TrimSuffix(name, filepath.Ext(name))
	if enc.Gzip {
		base = strings.TrimSuffix(base, filepath.Ext(base))
	}
	if enc.Format == "" {
		ext := strings.ToLower(filepath.Ext(strings.TrimSuffix(name, ".gz")))
		enc.Format = strings.TrimPrefix(ext, ".")
	}
	if enc.Format == "xyz" || enc.Format == "csv" {
		enc.Binary = false
	}
	return base, enc
}

// writeSynthScan writes sc and its truth sidecar into dir and says what
// it wrote.
func writeSynthScan(stdout io.Writer, dir, base string, sc *synth.Scan, enc synth.Encoding) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	scanPath, truthPath, err := synth.WriteFiles(dir, base, sc, enc)
	if err != nil {
		return err
	}
	if t := sc.Truth.Triangles; t > 0 {
		fmt.Fprintf(stdout, "wrote %s (%d vertices, %d triangles) and %s\n", scanPath, sc.Truth.Points, t, truthPath)
	} else {
		fmt.Fprintf(stdout, "wrote %s (%d points) and %s\n", scanPath, sc.Truth.Points, truthPath)
	}
	return nil
}

// synthArtefacts parses synth's --spike-mm, --hole and --missing-sector into
// spec (mm and degrees on the command line, metres in the spec).
func synthArtefacts(spec *synth.Spec, spikeMM string, holes, sectors []string) error {
	if spikeMM != "" {
		v, err := parseFloats(spikeMM, 2)
		if err != nil {
			return usagef("--spike-mm %v", err)
		}
		spec.SpikeMinM, spec.SpikeMaxM = v[0]/1e3, v[1]/1e3
	}
	for _, h := range holes {
		v, err := parseFloats(h, 3)
		if err != nil {
			return usagef("--hole %v (X,Y,D in mm)", err)
		}
		spec.HoleList = append(spec.HoleList, synth.Hole{XM: v[0] / 1e3, YM: v[1] / 1e3, DiameterM: v[2] / 1e3})
	}
	for _, s := range sectors {
		n := 3
		if strings.Count(s, ",") == 1 {
			n = 2
		}
		v, err := parseFloats(s, n)
		if err != nil {
			return usagef("--missing-sector %v (FROM,TO degrees, optionally ,INNER mm)", err)
		}
		sec := synth.Sector{FromDeg: v[0], ToDeg: v[1]}
		if n == 3 {
			sec.InnerM = v[2] / 1e3
		}
		spec.Sectors = append(spec.Sectors, sec)
	}
	return nil
}

func cmdMaterials(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("materials", "materials [--job JOB.toml]", stderr)
	jobPath := fs.String("job", "", "include the materials a job file adds or overrides")
	if err := parse(fs, args); err != nil {
		return err
	}
	job := pipeline.DefaultJob()
	if *jobPath != "" {
		var err error
		if job, err = pipeline.ReadJobFile(*jobPath); err != nil {
			return usageError{err}
		}
	}
	lib, err := job.MaterialLibrary()
	if err != nil {
		return usageError{err}
	}
	return contact.WriteMaterialTable(stdout, lib)
}

func cmdJob(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("job", "job", stderr)
	if err := parse(fs, args); err != nil {
		return err
	}
	_, err := io.WriteString(stdout, pipeline.JobDoc())
	return err
}

func cmdDemo(ctx context.Context, args []string, stdout, stderr io.Writer) (int, error) {
	fs := newFlags("demo", "demo [--out DIR]", stderr)
	out := fs.String("out", "gapflux-demo", "folder for the demo's scans and results")
	workers := fs.Int("workers", runtime.NumCPU(), "scans analysed at once")
	if err := parse(fs, args); err != nil {
		return exitUsage, err
	}
	scans := filepath.Join(*out, "scans")
	results := filepath.Join(*out, "results")
	fmt.Fprintf(stdout, "gapflux demo: synthesising an invented product line into %s\n", scans)
	if err := pipeline.WriteDemoScans(scans); err != nil {
		return exitFail, err
	}
	job, err := batchJob(scans, "")
	if err != nil {
		return exitUsage, err
	}
	fmt.Fprintf(stdout, "running the batch into %s\n", results)
	setMemoryLimit(*workers)
	res, err := pipeline.RunBatch(ctx, pipeline.BatchOptions{Dir: scans, Out: results, Job: job, Workers: *workers,
		Progress: &pipeline.LineProgress{W: stderr}})
	if err != nil {
		return exitFail, err
	}
	if res.Interrupted {
		fmt.Fprintf(stdout, "interrupted: run the demo again to finish it\n")
		return res.ExitCode(), nil
	}
	fmt.Fprintln(stdout)
	fmt.Fprint(stdout, res.Summary.Table())
	fmt.Fprintf(stdout, "\nopen in a browser: %s\n", filepath.Join(results, "index.html"))
	fmt.Fprintf(stdout, "summary table: %s (run log: %s)\n", filepath.Join(results, "summary.csv"), filepath.Join(results, "run.log"))
	fmt.Fprintf(stdout, "per scan (report.html, maps gap.png and flux.png, ring chart rings.png, rings.csv, report.json, fields.vti): %s\n",
		filepath.Join(results, pipeline.ScansDir, "<scan>"))
	fmt.Fprintf(stdout, "the demo's pans, hob and numbers are invented. The failed row (%s) is on purpose: that file is cut short to show what a broken scan gives.\n",
		pipeline.DemoBrokenScan)
	return exitOK, nil
}

// plural writes n with the singular or plural noun: "1 scan", "3 scans".
func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}
