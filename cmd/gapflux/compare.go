package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"

	"gapflux/pipeline"
)

const compareExitCodes = `exit codes: 0 the comparison was written; 1 a scan could not be analysed, was rejected,
or the two are not scans of one base (diameters too far apart); 2 usage or configuration
error (flags, job file, a missing scan).
`

const compareAbout = `A is the reference (before), B the later one: each a scan, or the folder of an earlier
"gapflux analyze --out" (report.json and fields.vti). Scans are analysed with the same
job; B is turned about the base axis (fitted) onto A, and the changes B − A are written.
`

// cmdCompare compares two scans of one base (issue 12 part 5).
func cmdCompare(ctx context.Context, args []string, stdout, stderr io.Writer) (int, error) {
	const usage = "compare A B --out DIR [--hob HOB] [--job JOB.toml] [--diameter-tol-mm 2]"
	fs := newFlags("compare", usage, stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, "usage: gapflux %s\n\n%s\nflags:\n%s\n%s%s", usage, compareAbout, fs.FlagUsages(), compareExitCodes, oomNote)
	}
	jf := addJobFlags(fs, "job file for both analyses (TOML); \"gapflux job\" prints every key with its default")
	hob := fs.String("hob", "", "hob top for both analyses: a scan or a radial profile CSV (r_mm,z_mm); default an ideal flat hob")
	out := fs.String("out", "", "write compare.json, compare.csv, compare_rings.csv, the change maps and compare.html (one page of it all) into this folder (required)")
	tol := fs.Float64("diameter-tol-mm", pipeline.DefaultDiameterTolMM, "largest difference of the two diameters, mm, for one base")
	quiet := fs.Bool("quiet", false, "print nothing but errors")
	if err := parse(fs, args); err != nil {
		return exitUsage, err
	}
	if fs.NArg() != 2 || *out == "" {
		fs.Usage()
		return exitUsage, usagef("want two scan files and --out, got %d arguments", fs.NArg())
	}
	if !(*tol > 0 && *tol <= 50) {
		return exitUsage, usagef("--diameter-tol-mm %g: want a length in (0, 50] mm", *tol)
	}
	job, err := jf.job("")
	if err != nil {
		return exitUsage, err
	}
	if err := pipeline.CheckJob(job, jf.name()); err != nil {
		return exitUsage, usageError{err}
	}
	a, b := fs.Arg(0), fs.Arg(1)
	for _, p := range []string{a, b} {
		if _, err := os.Stat(p); err != nil {
			return exitUsage, usagef("%s: not a readable scan file or report folder; check the path", p)
		}
	}
	if st, err := os.Stat(*hob); *hob != "" && (err != nil || st.IsDir()) {
		return exitUsage, usagef("%s: not a readable hob file; check the path", *hob)
	}
	r, err := pipeline.Compare(ctx, pipeline.CompareInput{A: a, B: b, HobPath: *hob, Job: job, DiameterTolMM: *tol})
	if err != nil {
		return exitFail, err
	}
	if err := pipeline.WriteCompareOutputs(r, *out); err != nil {
		return exitFail, err
	}
	if !*quiet {
		printComparison(stdout, r.Comparison, *out)
	}
	return exitOK, nil
}

func printComparison(w io.Writer, c *pipeline.Comparison, out string) {
	al := c.Alignment
	if al.AngleDeg != nil {
		fmt.Fprintf(w, "B is turned %.2f° about the base axis from A (shift %.2f, %.2f mm)\n", *al.AngleDeg, al.ShiftMM[0], al.ShiftMM[1])
	} else {
		fmt.Fprintf(w, "turn between the scans: %s\n", al.AngleNote)
	}
	fmt.Fprintf(w, "permanent set (change of concavity, B − A): %+.3f mm", c.PermanentSetMM)
	if c.PermanentSetUMM != nil {
		fmt.Fprintf(w, " ± %.3f mm (standard uncertainty)", *c.PermanentSetUMM)
	}
	fmt.Fprintf(w, "\nheight change: RMS %.1f µm, from %.1f to %.1f µm (mean %.1f µm removed)\n",
		c.HeightDiff.RMSUM, c.HeightDiff.MinUM, c.HeightDiff.MaxUM, c.HeightDiff.MeanUM)
	for _, f := range c.Figures {
		if f.Change != nil && *f.Change != 0 && !math.IsNaN(*f.Change) {
			fmt.Fprintf(w, "  %-18s %12.6g -> %-12.6g (%+.6g)\n", f.Figure, *f.A, *f.B, *f.Change)
		}
	}
	fmt.Fprintf(w, "  outputs in %s\n", out)
}
