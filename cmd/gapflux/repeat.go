package main

import (
	"context"
	"fmt"
	"io"

	"gapflux/pipeline"
	"gapflux/pipeline/repeat"
)

const repeatAbout = `Repeatability study of re-scans of one base (or of several, grouped by the manifest's
base_id column): per headline figure the mean, the repeatability standard deviation s_r
(ISO 5725-2; pooled over bases), the repeatability limit r = 2.8 s_r (ISO 5725-6), the
95 % chi-square interval of sigma_r, and whether the standard uncertainties the reports
carry cover the spread: "covered" when their root mean square is at least the interval's
lower end, "understated" when below; and how many results' own 95 % interval holds the
mean of their base. Without uncertainty in the reports (uncertainty.mode off) it gives
s_r only. DIR is a batch's output folder (the scans its summary.json lists) or any folder
of report folders. Writes OUT/repeat.csv, OUT/repeat.json and the plot OUT/repeat.svg and .png.

`

const repeatExitCodes = `exit codes: 0 the study was written and no figure's uncertainty is understated; 1 a
figure's reported uncertainty understates the spread, or the outputs could not be written;
2 usage or input error: flags, a missing folder, fewer than two reports of one base, a
damaged report (a number that is not finite), an unreadable manifest, or reports of one
base from different jobs (without --allow-mixed-jobs).
`

// cmdRepeat runs a repeatability study over the reports under DIR.
func cmdRepeat(ctx context.Context, args []string, stdout, stderr io.Writer) (int, error) {
	const usage = "repeat DIR --out OUT [--manifest MANIFEST.csv] [--allow-mixed-jobs]"
	fs := newFlags("repeat", usage, stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, "usage: gapflux %s\n\n%sflags:\n%s\n%s", usage, repeatAbout, fs.FlagUsages(), repeatExitCodes)
	}
	out := fs.String("out", "", "folder for repeat.csv, repeat.json, repeat.svg and repeat.png (required)")
	manifest := fs.String("manifest", "", "manifest CSV whose base_id column groups the scans by base (default: every report is of one base)")
	mixed := fs.Bool("allow-mixed-jobs", false, "accept reports of one base analysed with different jobs (a warning instead of an error)")
	quiet := fs.Bool("quiet", false, "print nothing but errors")
	if err := parse(fs, args); err != nil {
		return exitUsage, err
	}
	switch {
	case fs.NArg() != 1:
		return exitUsage, usagef("want one folder of reports, got %s (usage: gapflux %s)", plural(fs.NArg(), "argument", "arguments"), usage)
	case *out == "":
		return exitUsage, usagef("--out OUT is missing: the folder for the study (usage: gapflux %s)", usage)
	}
	st, err := pipeline.RepeatStudy(ctx, pipeline.RepeatOptions{Dir: fs.Arg(0), Manifest: *manifest, AllowMixedJobs: *mixed})
	if err != nil {
		return exitUsage, usageError{err}
	}
	files, err := pipeline.WriteRepeat(*out, st)
	if err != nil {
		return exitFail, err
	}
	code := exitOK
	for _, f := range st.Figures {
		if f.Stats != nil && f.Stats.Coverage == repeat.Understated {
			code = exitFail
		}
	}
	if !*quiet {
		for _, w := range st.Warnings {
			fmt.Fprintf(stderr, "gapflux repeat: warning: %s\n", w)
		}
		for _, f := range st.Figures {
			fmt.Fprintln(stdout, repeatLine(f))
		}
		fmt.Fprintf(stdout, "wrote %d files into %s\n", len(files), *out)
	}
	return code, nil
}

// repeatLine is one figure's result in a line.
func repeatLine(f repeat.Figure) string {
	s := f.Stats
	if s == nil {
		return fmt.Sprintf("%s: %s", f.Name, f.Note)
	}
	line := fmt.Sprintf("%s: %d results", f.Name, s.N)
	if s.Bases > 1 {
		line += fmt.Sprintf(" of %d bases", s.Bases)
	}
	if s.Mean != nil {
		line += fmt.Sprintf(", mean %.6g %s", *s.Mean, f.Unit)
	}
	line += fmt.Sprintf(", s_r %.3g %s (%d dof), r %.3g %s", s.SR, f.Unit, s.DOF, s.R, f.Unit)
	switch s.Coverage {
	case repeat.Covered, repeat.Understated:
		line += fmt.Sprintf("; reported u %.3g %s: %s; %d of %d intervals hold the mean", *s.URMS, f.Unit, s.Coverage, s.Within, s.WithInterval)
		if s.ValueOutside > 0 {
			line += fmt.Sprintf("; %d of %d values lie outside their own interval", s.ValueOutside, s.WithInterval)
		}
	case repeat.NoUncertainty:
		line += "; no uncertainty in the reports"
	case repeat.Partial:
		line += "; only some reports carry an uncertainty: not assessed"
	}
	return line
}
