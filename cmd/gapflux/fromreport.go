package main

import (
	"context"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/pflag"

	"gapflux/pipeline"
)

// analyzeFromReport is "analyze --from-report": it runs again the analysis
// a report.json records (pipeline.RerunReport), writes its outputs into out
// when given, and says whether the new report.json is byte-identical to the
// recorded one. Exit 1 when it differs in more than the tool's version, or
// when the scan fails, is rejected or is out of tolerance.
func analyzeFromReport(ctx context.Context, fs *pflag.FlagSet, report, out string, asJSON, quiet bool, stdout, stderr io.Writer) (int, error) {
	if fs.NArg() != 0 {
		return exitUsage, usagef("--from-report takes no scan argument: the report names its scan")
	}
	var set []string
	fs.Visit(func(f *pflag.Flag) {
		switch f.Name {
		case "from-report", "out", "json", "quiet":
		default:
			set = append(set, "--"+f.Name)
		}
	})
	if len(set) > 0 {
		return exitUsage, usagef("%s cannot be combined with --from-report: the report records its whole job and hob", strings.Join(set, ", "))
	}
	rr, err := pipeline.RerunReport(ctx, report)
	if err != nil {
		return exitFail, err // a *ConfigError (the report, its inputs) exits with 2
	}
	if out != "" {
		if err := pipeline.WriteOutputs(rr.Result, out); err != nil {
			return exitFail, err
		}
	}
	w := stdout
	if asJSON {
		w = stderr
	}
	code := exitOK
	if !quiet {
		fmt.Fprint(w, pipeline.HumanSummary(rr.Result))
		if out != "" {
			fmt.Fprintf(w, "  outputs in %s\n", out)
		}
	}
	switch {
	case rr.Identical():
		if !quiet {
			fmt.Fprintf(w, "re-run reproduces %s byte for byte\n", report)
		}
	case rr.OnlyToolDiffers():
		fmt.Fprintf(stderr, "re-run reproduces %s except the tool's version (%s): this binary is another build than the one that wrote it\n",
			report, strings.Join(rr.Differences, ", "))
	default:
		fmt.Fprintf(stderr, "re-run differs from %s in: %s\n", report, strings.Join(rr.Differences, ", "))
		code = exitFail
	}
	if asJSON {
		stdout.Write(rr.Rerun)
	}
	if v := rr.Result.Report.Verdict; rr.Result.Report.Rejected() || v != nil && !v.Pass {
		code = exitFail
	}
	return code, nil
}
