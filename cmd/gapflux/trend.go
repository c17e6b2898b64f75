package main

import (
	"context"
	"fmt"
	"io"
	"strings"

	"gapflux/pipeline/history"
	"gapflux/pipeline/trend"
)

const trendExitCodes = `exit codes: 0 charts written, no point out of control; 1 a point broke a run rule
(Western Electric rules 1-4 on the individuals, or a moving range above its limit), or
the charts could not be written; 2 usage or configuration error: flags, a missing
history database, one of another schema version or program, an empty or unknown part
number, an unknown figure.
`

// cmdTrend draws the control charts of a history database.
func cmdTrend(ctx context.Context, args []string, stdout, stderr io.Writer) (int, error) {
	fs := newFlags("trend", "trend --history DB [--part P]... [--figure loss_pct] [--baseline 20] --out DIR", stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, "usage: gapflux trend --history DB [--part P]... [--figure loss_pct] [--baseline 20] --out DIR\n\nflags:\n%s\n%s%s",
			fs.FlagUsages(), trendExitCodes, oomNote)
	}
	db := fs.String("history", "", "history database a batch wrote (OUT/history.sqlite, or batch's --history) (required)")
	parts := fs.StringArray("part", nil, "part number to chart (repeatable; default: every part number in the history)")
	figure := fs.String("figure", trend.DefaultFigure, "figure to chart: "+strings.Join(history.Figures, ", "))
	baseline := fs.Int("baseline", trend.DefaultBaseline, "the first N points of each part set the centre line and limits")
	out := fs.String("out", "", "folder for the charts (PNG, SVG) and the CSV (required)")
	if err := parse(fs, args); err != nil {
		return exitUsage, err
	}
	if fs.NArg() != 0 || *db == "" || *out == "" {
		fs.Usage()
		return exitUsage, usagef("want --history and --out, and no other arguments")
	}
	charts, err := trend.Load(ctx, trend.Options{History: *db, Parts: *parts, Figure: *figure, Baseline: *baseline})
	if err != nil {
		return exitUsage, usageError{err}
	}
	files, err := trend.Write(*out, charts, *figure)
	if err != nil {
		return exitFail, err
	}
	code := exitOK
	for i := range charts {
		pc := &charts[i]
		switch {
		case pc.Chart == nil:
			fmt.Fprintf(stdout, "%s: %d point(s) of %s, too few for a chart\n", pc.Part, len(pc.Points), pc.Figure)
		default:
			note := ""
			if pc.Chart.Provisional {
				note = " (provisional)"
			}
			fmt.Fprintf(stdout, "%s: %d points of %s, limits from the first %d%s, %d out of control\n",
				pc.Part, len(pc.Points), pc.Figure, pc.Chart.Baseline, note, pc.Signals())
			if pc.Signals() > 0 {
				code = exitFail
			}
		}
	}
	if len(charts) == 0 {
		fmt.Fprintf(stdout, "the history holds no part numbers: give them in the batch's manifest.csv\n")
	}
	fmt.Fprintf(stdout, "wrote %d files into %s\n", len(files), *out)
	return code, nil
}
