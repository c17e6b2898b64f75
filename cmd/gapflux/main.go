// Command gapflux turns scans of a cookware base (and optionally of a hob
// top) into the base's form, how the pan rests on the hob, the gap and
// contact map, the heat flow into the pan, and what the warp costs against
// an ideally flat base. Run "gapflux help" for the commands.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"runtime/debug"
	"strings"
	"syscall"

	"gapflux/pipeline"
)

// Exit codes (DESIGN 6).
const (
	exitOK    = 0 // everything passed
	exitFail  = 1 // a scan failed, was out of tolerance, or was not run
	exitUsage = 2 // usage or configuration error
)

// usageError marks errors that exit with exitUsage.
type usageError struct{ error }

func usagef(format string, a ...any) error { return usageError{fmt.Errorf(format, a...)} }

const helpText = `gapflux: what a warped cookware base costs in heat

usage: gapflux <command> [arguments]

commands:
  analyze PAN [--hob HOB] [--job JOB.toml] [--out DIR] [--json]
                 one scan: form, rest pose, gap, heat, heat-up, verdict
  batch DIR --out OUT [--job JOB.toml] [--workers N] [--shard K/N] [--force]
                 every scan under DIR; resumable; summary.csv and summary.json
  compare A B --out DIR [--job JOB.toml]
                 two scans (or report folders) of one base: what changed
  repeat DIR --out OUT [--manifest MANIFEST.csv]
                 repeatability of re-scans of one base: s_r, r, uncertainty coverage
  merge OUT1 OUT2 ... --out OUT
                 combine the outputs of batch shards into one summary
  trend --history DB [--part P] [--figure loss_pct] --out DIR
                 control charts (individuals, moving range) per part number
  synth [--shape dish] [--sag-mm 0.4] ... --out FILE
                 write a synthetic scan of an invented pan (or --hob-top)
  demo [--out DIR]
                 synthesise a small product line and run the batch on it
  materials      list the built-in material library
  job            print the default job file (every key, its unit, its default)
  version        print the version
  help           this text; "gapflux <command> --help" for a command's flags

Lengths are in mm and temperatures in °C on the command line and in reports.

Exit codes: 0 all good; 1 a scan failed, is out of tolerance, was rejected or
was not run (batch interrupted); 2 usage or configuration error (bad flags, an
unreadable or invalid job file, a manifest that cannot be read, a missing
input, an output folder in use by another batch). Go ends a process that runs
out of memory at once ("fatal error: runtime: out of memory", exit code 2);
no program can catch that, and the job's limits and grid bounds keep a scan
far below it.

Ctrl-C or SIGTERM stops a batch cleanly: no new scan starts, running scans
stop, and the summary lists them as not-run; a second Ctrl-C ends at once.
`

// commands lists the commands, for suggestions on a typo.
var commands = []string{"analyze", "batch", "repeat", "merge", "synth", "demo", "materials", "job", "version", "help"}

// version is set at build time with -ldflags "-X main.version=...".
var version = "0.1.0-dev"

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	go func() {
		// After the first signal the default action returns, so a second
		// Ctrl-C ends the process at once (the next batch cleans up).
		<-ctx.Done()
		stop()
	}()
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// run executes one command line and returns the exit code. A panic (a bug)
// is reported as an internal error, not as a Go stack trace.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) (code int) {
	defer func() {
		if p := recover(); p != nil {
			fmt.Fprintf(stderr, "gapflux: internal error (please report it with the input that caused it): %v\n", p)
			if os.Getenv("GAPFLUX_TRACE") != "" {
				fmt.Fprintf(stderr, "%s\n", debug.Stack())
			}
			code = exitFail
		}
	}()
	if len(args) == 0 {
		fmt.Fprint(stderr, helpText)
		return exitUsage
	}
	var err error
	code = exitOK
	switch args[0] {
	case "analyze":
		code, err = cmdAnalyze(ctx, args[1:], stdout, stderr)
	case "batch":
		code, err = cmdBatch(ctx, args[1:], stdout, stderr)
	case "compare":
		code, err = cmdCompare(ctx, args[1:], stdout, stderr)
	case "repeat":
		code, err = cmdRepeat(ctx, args[1:], stdout, stderr)
	case "merge":
		code, err = cmdMerge(args[1:], stdout, stderr)
	case "trend":
		code, err = cmdTrend(ctx, args[1:], stdout, stderr)
	case "synth":
		err = cmdSynth(args[1:], stdout, stderr)
	case "demo":
		code, err = cmdDemo(ctx, args[1:], stdout, stderr)
	case "design":
		code, err = cmdDesign(ctx, args[1:], stdout, stderr)
	case "materials":
		err = cmdMaterials(args[1:], stdout, stderr)
	case "job":
		err = cmdJob(args[1:], stdout, stderr)
	case "version", "--version":
		fmt.Fprintf(stdout, "gapflux %s\n", version)
	case "help", "-h", "--help":
		fmt.Fprint(stdout, helpText)
	default:
		if near := pipeline.Nearest(args[0], commands); near != "" {
			err = usagef("unknown command %q: did you mean %q? (\"gapflux help\" lists the commands)", args[0], near)
		} else {
			err = usagef("unknown command %q (\"gapflux help\" lists the commands)", args[0])
		}
	}
	if err != nil {
		if errors.Is(err, errHelp) {
			return exitOK
		}
		// A lower layer may name the command again ("merge: ..."): once is enough.
		fmt.Fprintf(stderr, "gapflux %s: %s\n", args[0], strings.TrimPrefix(err.Error(), args[0]+": "))
		var ue usageError
		if errors.As(err, &ue) || pipeline.IsConfigError(err) {
			return exitUsage
		}
		return exitFail
	}
	return code
}
