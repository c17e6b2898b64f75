package main

import (
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"gapflux/pipeline"
)

// errHelp is returned when a command printed its help on request.
var errHelp = errors.New("help requested")

// newFlags returns a flag set that reports errors instead of exiting.
func newFlags(name, usage string, stderr io.Writer) *pflag.FlagSet {
	fs := pflag.NewFlagSet(name, pflag.ContinueOnError)
	fs.SortFlags = false
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, "usage: gapflux %s\n\nflags:\n%s\n%s", usage, fs.FlagUsages(), exitCodesHelp(name))
	}
	return fs
}

// exitCodesHelp is the exit-code paragraph of a command's --help.
func exitCodesHelp(command string) string {
	codes := map[string]string{
		"analyze": `exit codes: 0 the scan passed; 1 the scan failed (unreadable, rejected) or is out of
tolerance; 2 usage or configuration error (flags, job file, missing scan or hob file).
`,
		"batch": `exit codes: 0 every scan passed; 1 a scan failed, is out of tolerance, was rejected or
was not run (interrupted: run the same command again); 2 usage or configuration error:
flags, a missing scan folder, an unreadable or invalid job file (also one a manifest row
names: the other scans are still analysed), a manifest that cannot be read, an output
folder that is the scan folder, contains it, or is in use by another batch.
`,
		"merge": `exit codes: 0 every merged scan passed; 1 a scan failed, is out of tolerance or was not
run, or the merge failed; 2 usage error.
`,
		"demo": `exit codes: 0 the demo ran (its one failed row is on purpose); 1 it could not run;
2 usage error.
`,
	}
	s, ok := codes[command]
	if !ok {
		s = "exit codes: 0 done; 1 it failed; 2 usage or configuration error.\n"
	}
	return s + oomNote
}

// oomNote says what no exit code can promise.
const oomNote = `Go ends a process that runs out of memory at once ("fatal error: runtime: out of memory",
exit code 2); no program can catch that. The job's limits and grid bounds keep a scan far
below it; on a small machine give batch fewer --workers.
`

// parse parses args, mapping -h to errHelp and flag errors to usage errors.
func parse(fs *pflag.FlagSet, args []string) error {
	err := fs.Parse(args)
	if errors.Is(err, pflag.ErrHelp) {
		return errHelp
	}
	if err != nil {
		return usageError{err}
	}
	return nil
}

// jobFlags are the flags that override job keys.
type jobFlags struct {
	fs         *pflag.FlagSet
	jobPath    string
	units      string
	face       string
	cellMM     float64
	cutoffMM   float64
	ringMM     float64
	rockMM     float64
	diameterMM float64
	offsetMM   string
	mode       string
	waterC     float64
	maxPoints  int
	uncert     string
}

func addJobFlags(fs *pflag.FlagSet) *jobFlags {
	d := pipeline.DefaultJob()
	j := &jobFlags{fs: fs}
	fs.StringVar(&j.jobPath, "job", "", "job file (TOML); \"gapflux job\" prints every key with its default")
	fs.StringVar(&j.units, "units", "", "unit of the scan's numbers: mm, m, um or in (default: header hint, else mm)")
	fs.StringVar(&j.face, "face", "", "which way the base's outer face looks in the scan: up (toward scanner +z) or down (default: detect)")
	fs.Float64Var(&j.cellMM, "cell-mm", d.Grid.CellMM, "grid cell size, mm (0 = automatic from the point spacing)")
	fs.Float64Var(&j.cutoffMM, "cutoff-mm", d.Grid.CutoffMM, "ISO 16610-61 Gaussian form-filter cut-off, mm (0 = off)")
	fs.Float64Var(&j.ringMM, "ring-mm", d.Grid.RingMM, "ring width of the ring table, mm")
	fs.Float64Var(&j.rockMM, "rock-mm", d.Grid.RockMM, "the pan rocks when the pressed rim drops more than this, mm")
	fs.Float64Var(&j.diameterMM, "diameter-mm", 0, "base diameter, mm (default: circle fit to the base boundary)")
	fs.StringVar(&j.offsetMM, "offset-mm", "", "pan centre relative to the hob centre, X,Y in mm (default 0,0)")
	fs.StringVar(&j.mode, "mode", "", "hob model: heater or temperature (default from the job: heater)")
	fs.Float64Var(&j.waterC, "water-c", d.Water.SteadyC, "water temperature of the steady heat figures, °C")
	fs.IntVar(&j.maxPoints, "max-points", d.Limits.MaxPoints, "refuse scans with more points than this")
	fs.StringVar(&j.uncert, "uncertainty", d.Uncertainty.Mode, "Monte Carlo uncertainty of the figures: off, fast or full (uncertainty.mode)")
	return j
}

// name is how errors name the job: its file, else the defaults.
func (j *jobFlags) name() string {
	if j.jobPath != "" {
		return j.jobPath
	}
	return "job (defaults and flags)"
}

// job reads the job file (or the defaults) and applies the flags that were
// given on the command line.
func (j *jobFlags) job() (pipeline.Job, error) {
	job := pipeline.DefaultJob()
	if j.jobPath != "" {
		var err error
		if job, err = pipeline.ReadJobFile(j.jobPath); err != nil {
			return job, usageError{err}
		}
	}
	// Each flag given on the command line overrides its job key.
	overrides := []struct {
		flag  string
		apply func()
	}{
		{"units", func() { job.Grid.Units = j.units }},
		{"face", func() { job.Grid.Face = j.face }},
		{"cell-mm", func() { job.Grid.CellMM = j.cellMM }},
		{"cutoff-mm", func() { job.Grid.CutoffMM = j.cutoffMM }},
		{"ring-mm", func() { job.Grid.RingMM = j.ringMM }},
		{"rock-mm", func() { job.Grid.RockMM = j.rockMM }},
		{"diameter-mm", func() { job.Grid.DiameterMM = j.diameterMM }},
		{"mode", func() { job.Hob.Mode = j.mode }},
		{"water-c", func() { job.Water.SteadyC = j.waterC }},
		{"max-points", func() { job.Limits.MaxPoints = j.maxPoints }},
		{"uncertainty", func() { job.Uncertainty.Mode = j.uncert }},
	}
	for _, o := range overrides {
		if j.fs.Changed(o.flag) {
			o.apply()
		}
	}
	if j.fs.Changed("offset-mm") {
		xy, err := parseFloats(j.offsetMM, 2)
		if err != nil {
			return job, usagef("--offset-mm: %v", err)
		}
		job.Pan.OffsetMM = [2]float64{xy[0], xy[1]}
	}
	if err := job.Validate(); err != nil {
		return job, usageError{err}
	}
	return job, nil
}

// parseFloats parses n comma-separated numbers.
func parseFloats(s string, n int) ([]float64, error) {
	parts := strings.Split(s, ",")
	if len(parts) != n {
		return nil, fmt.Errorf("%q: want %d comma-separated numbers", s, n)
	}
	out := make([]float64, n)
	for i, p := range parts {
		v, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
		if err != nil {
			return nil, fmt.Errorf("%q: %q is not a number", s, p)
		}
		out[i] = v
	}
	return out, nil
}
