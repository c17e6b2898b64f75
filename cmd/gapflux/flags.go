package main

import (
	"errors"
	"fmt"
	"io"
	"os"
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
		fmt.Fprintf(stderr, "usage: gapflux %s\n\n%sflags:\n%s\n%s", usage, commandAbout[name], fs.FlagUsages(), exitCodesHelp(name))
	}
	return fs
}

// commandAbout is the paragraph a command's --help prints above its flags.
var commandAbout = map[string]string{
	"analyze": `Analyses one scan of a pan base (STL, PLY, XYZ/CSV, optionally .gz): form, rest pose on
the hob, gap, heat flow, heat-up, verdict. Prints a short summary; --out writes every output.
The job flags below override the keys of the job file (or of the defaults).

`,
	"batch": `Analyses every scan under DIR (recursively) and writes OUT/summary.csv, OUT/summary.json,
OUT/run.log and one folder per scan under OUT/scans/. Only new or changed scans are
analysed again. Files the batch reads from DIR itself:
  job.toml      the job for every scan, when --job is not given ("gapflux job" prints one)
  manifest.csv  optional, one row per scan: path (required), part_number, lot, hob, job,
                pan_mass_kg, water_mass_kg, base_material, base_thickness_mm, face, units,
                diameter_mm, base_id (read by "gapflux repeat"; see README.md, "Inputs")
The job flags below override the keys of every job file, the batch's and those a
manifest row names; a manifest row's own columns win over both.

`,
	"synth": `Writes a synthetic scan of an invented pan base (or, with --hob-top, of a hob's
glass top) and a .truth.json file beside it with the exact form it was made from.

`,
	"merge": `Joins the output folders of batch shards (--shard K/N) into one summary, identical
to a single run.

`,
	"demo": `Synthesises a small invented product line into DIR/scans and runs the batch on it into
DIR/results.

`,
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

// parse parses args, mapping -h to errHelp and flag errors to usage errors
// that say what to try: the nearest flag for an unknown one, the kind of
// value a flag wants for a bad one.
func parse(fs *pflag.FlagSet, args []string) error {
	err := fs.Parse(args)
	if errors.Is(err, pflag.ErrHelp) {
		return errHelp
	}
	if err == nil {
		return nil
	}
	help := fmt.Sprintf("\"gapflux %s --help\" lists every flag", fs.Name())
	var notExist *pflag.NotExistError
	var invalid *pflag.InvalidValueError
	var needs *pflag.ValueRequiredError
	switch {
	case errors.As(err, &notExist) && notExist.GetSpecifiedName() != "":
		name := notExist.GetSpecifiedName()
		if near := nearestFlag(fs, name); near != "" {
			return usagef("unknown flag --%s: did you mean --%s? (%s)", name, near, help)
		}
		return usagef("unknown flag --%s (%s)", name, help)
	case errors.As(err, &invalid):
		f := invalid.GetFlag()
		return usagef("--%s %q: want %s (%s)", f.Name, invalid.GetValue(), valueKind(f), help)
	case errors.As(err, &needs) && needs.GetSpecifiedName() != "":
		return usagef("--%s needs a value (%s)", needs.GetSpecifiedName(), help)
	}
	return usageError{fmt.Errorf("%w (%s)", err, help)}
}

// valueKind says in words what a flag's value must be.
func valueKind(f *pflag.Flag) string {
	switch f.Value.Type() {
	case "float64":
		return "a number"
	case "int", "uint64":
		return "a whole number"
	case "bool":
		return "true or false"
	}
	return "a " + f.Value.Type()
}

// nearestFlag returns the visible flag of fs a typo of name most likely
// meant, "" when none is near.
func nearestFlag(fs *pflag.FlagSet, name string) string {
	var names []string
	fs.VisitAll(func(f *pflag.Flag) {
		if !f.Hidden && f.Deprecated == "" {
			names = append(names, f.Name)
		}
	})
	return pipeline.Nearest(name, names)
}

// jobFlags are the flags that override job keys: one definition shared by
// every command that runs analyses (analyze, batch, and any later one), so
// each flag has one spelling, one meaning and one help line everywhere.
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
	waterKg    float64
	zoneMM     float64
	maxPoints  int
	fields     string
	hot        bool
	uncert     string
}

// jobOverrideFlags names the flags addJobFlags defines besides --job, in
// their help order.
var jobOverrideFlags = []string{"units", "face", "cell-mm", "cutoff-mm", "ring-mm", "rock-mm", "diameter-mm",
	"offset-mm", "mode", "water-c", "water-kg", "zone-mm", "max-points", "fields", "hot", "uncertainty"}

// addJobFlags defines --job (with jobHelp as its help line) and the flags
// that override job keys on fs.
func addJobFlags(fs *pflag.FlagSet, jobHelp string) *jobFlags {
	d := pipeline.DefaultJob()
	j := &jobFlags{fs: fs}
	fs.StringVar(&j.jobPath, "job", "", jobHelp)
	fs.StringVar(&j.units, "units", "", "unit of the scan's numbers: mm, m, um or in (default: the file's header hint, else mm)")
	fs.StringVar(&j.face, "face", "", "which way the base's outer face looks in the scan: up (toward scanner +z) or down (default: detect)")
	fs.Float64Var(&j.cellMM, "cell-mm", d.Grid.CellMM, "grid cell size, mm (0 = automatic from the point spacing)")
	fs.Float64Var(&j.cutoffMM, "cutoff-mm", d.Grid.CutoffMM, "form-filter cut-off, mm (0 = no filter)")
	fs.Float64Var(&j.ringMM, "ring-mm", d.Grid.RingMM, "ring width of the ring table, mm")
	fs.Float64Var(&j.rockMM, "rock-mm", d.Grid.RockMM, "the pan rocks when the pressed rim drops more than this, mm")
	fs.Float64Var(&j.diameterMM, "diameter-mm", 0, "base diameter, mm (default: circle fit to the base boundary)")
	fs.StringVar(&j.offsetMM, "offset-mm", "", "pan centre relative to the hob centre, X,Y in mm (default 0,0)")
	fs.StringVar(&j.mode, "mode", "", "hob model: heater, temperature or solid-plate (default from the job: heater)")
	fs.Float64Var(&j.waterC, "water-c", d.Water.SteadyC, "water temperature of the steady heat figures, °C")
	fs.Float64Var(&j.waterKg, "water-kg", d.Water.MassKg, "water load, kg (0 = fitted to the base diameter, see \"gapflux job\")")
	fs.Float64Var(&j.zoneMM, "zone-mm", d.Hob.ZoneDiameterMM, "heating zone diameter, mm (0 = fitted to the base diameter, see \"gapflux job\")")
	fs.IntVar(&j.maxPoints, "max-points", d.Limits.MaxPoints, "refuse scans with more points than this")
	fs.StringVar(&j.fields, "fields", d.Outputs.Fields, "fields.vti: compressed, plain or off")
	fs.BoolVar(&j.hot, "hot", d.Hot.Enabled, "also solve the hot state: the base bowed by its own heat ([hot] in the job; about +70 % time)")
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

// job reads the job file (--job, else defaultPath when it is not "" and
// exists, else the built-in defaults) and applies the flags that were given
// on the command line. It returns the job file used ("" for none).
func (j *jobFlags) job(defaultPath string) (pipeline.Job, error) {
	job := pipeline.DefaultJob()
	if j.jobPath == "" && defaultPath != "" {
		if st, err := os.Stat(defaultPath); err == nil && !st.IsDir() {
			j.jobPath = defaultPath
		}
	}
	if j.jobPath != "" {
		var err error
		if job, err = pipeline.ReadJobFile(j.jobPath); err != nil {
			return job, usageError{err}
		}
	}
	job, err := j.apply(job)
	if err != nil {
		return job, usageError{err}
	}
	return job, nil
}

// apply returns job with the keys of the flags given on the command line
// replaced, validated.
func (j *jobFlags) apply(job pipeline.Job) (pipeline.Job, error) {
	overrides := map[string]func(){
		"units":       func() { job.Grid.Units = j.units },
		"face":        func() { job.Grid.Face = j.face },
		"cell-mm":     func() { job.Grid.CellMM = j.cellMM },
		"cutoff-mm":   func() { job.Grid.CutoffMM = j.cutoffMM },
		"ring-mm":     func() { job.Grid.RingMM = j.ringMM },
		"rock-mm":     func() { job.Grid.RockMM = j.rockMM },
		"diameter-mm": func() { job.Grid.DiameterMM = j.diameterMM },
		"mode":        func() { job.Hob.Mode = j.mode },
		"water-c":     func() { job.Water.SteadyC = j.waterC },
		"water-kg":    func() { job.Water.MassKg = j.waterKg },
		"zone-mm":     func() { job.Hob.ZoneDiameterMM = j.zoneMM },
		"max-points":  func() { job.Limits.MaxPoints = j.maxPoints },
		"fields":      func() { job.Outputs.Fields = j.fields },
		"hot":         func() { job.Hot.Enabled = j.hot },
		"uncertainty": func() { job.Uncertainty.Mode = j.uncert },
	}
	for _, name := range jobOverrideFlags {
		if f := overrides[name]; f != nil && j.fs.Changed(name) {
			f()
		}
	}
	if j.fs.Changed("offset-mm") {
		xy, err := parseFloats(j.offsetMM, 2)
		if err != nil {
			return job, fmt.Errorf("--offset-mm %v", err)
		}
		job.Pan.OffsetMM = [2]float64{xy[0], xy[1]}
	}
	if err := job.Validate(); err != nil {
		return job, flagNamed(j.fs, err)
	}
	return job, nil
}

// flagKeys maps the job keys the override flags set to the flags.
var flagKeys = map[string]string{
	"grid.units": "units", "grid.face": "face", "grid.cell_mm": "cell-mm", "grid.cutoff_mm": "cutoff-mm",
	"grid.ring_mm": "ring-mm", "grid.rock_mm": "rock-mm", "grid.diameter_mm": "diameter-mm",
	"pan.offset_mm": "offset-mm", "hob.mode": "mode", "water.steady_c": "water-c", "water.mass_kg": "water-kg",
	"hob.zone_diameter_mm": "zone-mm", "limits.max_points": "max-points", "outputs.fields": "fields", "hot.enabled": "hot",
	"uncertainty.mode": "uncertainty",
}

// flagNamed prefixes each problem of a job-validation error whose key a
// flag on the command line set with that flag ("--units: grid.units must
// be ..."), so the message points at what the user typed.
func flagNamed(fs *pflag.FlagSet, err error) error {
	var inv *pipeline.InvalidJobError
	if !errors.As(err, &inv) {
		return err
	}
	msgs := make([]string, len(inv.Problems))
	for i, p := range inv.Problems {
		msgs[i] = p.Msg
		key := strings.SplitN(p.Key, "[", 2)[0]
		if f, ok := flagKeys[key]; ok && fs.Changed(f) {
			msgs[i] = "--" + f + ": " + p.Msg
		}
	}
	return fmt.Errorf("%s", strings.Join(msgs, "; "))
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
