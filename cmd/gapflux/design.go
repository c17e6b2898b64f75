package main

import (
	"context"
	"fmt"
	"io"

	"gapflux/pipeline"
)

// cmdDesign runs the design aid (issue 11): synthetic dished and domed
// bases of the job's construction through the coupled hot state, and the
// band of cold concavity that meets the job's tolerances hot.
func cmdDesign(ctx context.Context, args []string, stdout, stderr io.Writer) (int, error) {
	fs := newFlags("design", "design --cold-mm FROM:TO:STEP [--job JOB.toml] [--diameter-mm D] [--out DIR]", stderr)
	jobPath := fs.String("job", "", "job file (TOML): the base's layers, the hob, the [hot] edge and the tolerances; default the built-in job")
	diameter := fs.Float64("diameter-mm", 0, "base diameter, mm (default grid.diameter_mm, else 200)")
	cold := fs.String("cold-mm", "", "cold concavities to run, FROM:TO:STEP in mm, + dished (required), e.g. -0.2:0.6:0.05")
	out := fs.String("out", "gapflux-design", "write design.csv, design.json, design.png and design.svg into this folder")
	quiet := fs.Bool("quiet", false, "print nothing but errors")
	if err := parse(fs, args); err != nil {
		return exitUsage, err
	}
	if fs.NArg() != 0 || *cold == "" {
		fs.Usage()
		return exitUsage, usagef("want --cold-mm FROM:TO:STEP and no other arguments")
	}
	from, to, step, err := pipeline.ParseColdRange(*cold)
	if err != nil {
		return exitUsage, usagef("--cold-mm: %v", err)
	}
	if !(*diameter == 0 || *diameter >= 10 && *diameter <= 1000) {
		return exitUsage, usagef("--diameter-mm %g: want 10 to 1000 mm (or 0 for the job's)", *diameter)
	}
	job := pipeline.DefaultJob()
	if *jobPath != "" {
		if job, err = pipeline.ReadJobFile(*jobPath); err != nil {
			return exitUsage, usageError{err}
		}
	}
	t, err := pipeline.Design(ctx, pipeline.DesignOptions{Job: job, DiameterMM: *diameter, FromMM: from, ToMM: to, StepMM: step})
	if err != nil {
		return exitFail, err
	}
	if err := pipeline.WriteDesign(*out, t); err != nil {
		return exitFail, err
	}
	if !*quiet {
		fmt.Fprintf(stdout, "%s\n", t.Statement)
		fmt.Fprintf(stdout, "%10s %10s %8s %8s %9s %9s %6s\n", "cold_mm", "hot_mm", "rock_mm", "loss_%", "heatup_s", "rounds", "pass")
		for _, r := range t.Rows {
			fmt.Fprintf(stdout, "%10.3f %10.3f %8.3f %8.2f %9.0f %9d %6v\n",
				r.ColdConcavityMM, r.HotConcavityMM, r.HotRockMM, r.HotLossPct, r.HeatupTimeS, r.Iterations, r.PassHot)
		}
		fmt.Fprintf(stdout, "outputs in %s\n", *out)
	}
	return exitOK, nil
}
