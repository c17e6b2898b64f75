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
	"syscall"
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
  merge OUT1 OUT2 ... --out OUT
                 combine the outputs of batch shards into one summary
  synth [--shape dish] [--sag-mm 0.4] ... --out FILE
                 write a synthetic scan of an invented pan (or --hob-top)
  demo [--out DIR]
                 synthesise a small product line and run the batch on it
  materials      list the built-in material library
  job            print the default job file (every key, its unit, its default)
  version        print the version
  help           this text; "gapflux <command> --help" for a command's flags

Lengths are in mm and temperatures in °C on the command line and in reports.
Exit codes: 0 all passed, 1 a scan failed or is out of tolerance, 2 usage or
configuration error.
`

// version is set at build time with -ldflags "-X main.version=...".
var version = "0.1.0-dev"

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
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
	case "merge":
		code, err = cmdMerge(args[1:], stdout, stderr)
	case "synth":
		err = cmdSynth(args[1:], stdout, stderr)
	case "demo":
		code, err = cmdDemo(ctx, args[1:], stdout, stderr)
	case "materials":
		err = cmdMaterials(args[1:], stdout, stderr)
	case "job":
		err = cmdJob(args[1:], stdout, stderr)
	case "version", "--version":
		fmt.Fprintf(stdout, "gapflux %s\n", version)
	case "help", "-h", "--help":
		fmt.Fprint(stdout, helpText)
	default:
		err = usagef("unknown command %q; run \"gapflux help\"", args[0])
	}
	if err != nil {
		if errors.Is(err, errHelp) {
			return exitOK
		}
		fmt.Fprintf(stderr, "gapflux %s: %v\n", args[0], err)
		var ue usageError
		if errors.As(err, &ue) {
			return exitUsage
		}
		return exitFail
	}
	return code
}
