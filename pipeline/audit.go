package pipeline

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"runtime/debug"
	"slices"
	"strconv"
	"strings"

	"gapflux/contact"
)

// AuditReport is the audit trail of a report (issue 12 part 1): what
// produced it, enough to run it again (RerunReport). The report's schema is
// the report's top-level "schema" key.
type AuditReport struct {
	Tool ToolVersion `json:"tool"`
	// Scan, Hob and Profiles are the input files. Path is as given: relative
	// to the batch folder in a batch, as typed on the command line for
	// analyze; FromReport is the same file relative to the folder report.json
	// was written to (absent when no report folder was known).
	Scan     AuditFile   `json:"scan"`
	Hob      AuditHob    `json:"hob"`
	Profiles []AuditFile `json:"profiles,omitempty"` // files the job's keys name (hob.profile, hob.power_profile, ...)
	// PartNumber and Lot come from the batch manifest's row.
	PartNumber string `json:"part_number,omitempty"`
	Lot        string `json:"lot,omitempty"`
	// Job is the whole effective job (job file, manifest row and flags
	// applied), laid out as the job file: every key carries its unit in its
	// name (cell_mm, mass_kg, h_w_m2k); keys without a unit are
	// dimensionless. A 0 that a key documents as "automatic" or "from the
	// material" is recorded as 0: the value used is in the report's
	// sections (geometry.cell_mm) and in Materials.
	Job AuditJob `json:"job"`
	// Materials are the materials the job used (base layers, hob plate),
	// with their values and where each comes from.
	Materials []AuditMaterial `json:"materials"`
}

// ToolVersion identifies the gapflux build that wrote a report: the module
// version and the VCS revision Go stamps into the binary
// (runtime/debug.ReadBuildInfo), or "devel" when the build carries none (go
// test, a build outside a module checkout). It is the same for every run of
// one binary.
type ToolVersion struct {
	Name     string `json:"name"`
	Version  string `json:"version"`
	Revision string `json:"vcs_revision,omitempty"`
	Modified *bool  `json:"vcs_modified,omitempty"` // the working tree had uncommitted changes
}

// AuditFile is one input file of a report.
type AuditFile struct {
	Key        string `json:"key,omitempty"` // the job key naming the file (profiles only)
	Path       string `json:"path"`
	FromReport string `json:"from_report,omitempty"`
	SHA256     string `json:"sha256"`
}

// AuditHob says where the hob top came from. Source is "flat" (no hob file:
// an ideally flat hob), "scan" (a hob scan), "profile" (a radial profile
// CSV given as the hob) or "job-profile" (the job key hob.profile, also
// listed under profiles); the file fields are empty for "flat".
type AuditHob struct {
	Source     string `json:"source"`
	Path       string `json:"path,omitempty"`
	FromReport string `json:"from_report,omitempty"`
	SHA256     string `json:"sha256,omitempty"`
}

func (h AuditHob) file() AuditFile {
	return AuditFile{Path: h.Path, FromReport: h.FromReport, SHA256: h.SHA256}
}

func (h *AuditHob) setFile(f AuditFile) {
	h.Path, h.FromReport, h.SHA256 = f.Path, f.FromReport, f.SHA256
}

// AuditMaterial is one material the analysis used: its values in the units
// of the job's [[material]] keys, and per value where it comes from.
type AuditMaterial struct {
	Name        string         `json:"name"`
	UsedAs      []string       `json:"used_as"`     // the job keys that name it
	Description string         `json:"description"` // grade and temper, or "job file"
	Values      MaterialValues `json:"values"`
	Sources     MaterialCites  `json:"sources"`
}

// MaterialValues are a material's values in the job file's units.
type MaterialValues struct {
	ConductivityWMK float64 `json:"conductivity_w_mk"`
	DensityKgM3     float64 `json:"density_kg_m3"`
	CpJKgK          float64 `json:"cp_j_kgk"`
	YoungGPa        float64 `json:"young_gpa"`
	Poisson         float64 `json:"poisson"`
	ExpansionUMMK   float64 `json:"expansion_um_mk"`
	HardnessMPa     float64 `json:"hardness_mpa"`
	Emissivity      float64 `json:"emissivity"`
}

// MaterialCites says, per value, where the number comes from.
type MaterialCites struct {
	ConductivityWMK string `json:"conductivity_w_mk"`
	DensityKgM3     string `json:"density_kg_m3"`
	CpJKgK          string `json:"cp_j_kgk"`
	YoungGPa        string `json:"young_gpa"`
	Poisson         string `json:"poisson"`
	ExpansionUMMK   string `json:"expansion_um_mk"`
	HardnessMPa     string `json:"hardness_mpa"`
	Emissivity      string `json:"emissivity"`
}

// Values of AuditHob.Source.
const (
	HobFlat       = "flat"
	HobScan       = "scan"
	HobProfile    = "profile"
	HobJobProfile = "job-profile"
)

// toolVersion reads the build's version (see ToolVersion).
func toolVersion() ToolVersion { return toolVersionOf(debug.ReadBuildInfo()) }

// toolVersionOf is the ToolVersion of the build information bi (ok false:
// none).
func toolVersionOf(bi *debug.BuildInfo, ok bool) ToolVersion {
	v := ToolVersion{Name: "gapflux", Version: "devel"}
	if !ok || bi == nil {
		return v
	}
	if mv := bi.Main.Version; mv != "" && mv != "(devel)" {
		v.Version = mv
	}
	for _, s := range bi.Settings {
		switch s.Key {
		case "vcs.revision":
			v.Revision = s.Value
		case "vcs.modified":
			m := s.Value == "true"
			v.Modified = &m
		}
	}
	return v
}

// buildAudit records what in, its job and the job's material library
// produce. scanSHA is the scan's SHA-256 (already computed).
func buildAudit(in ScanInput, job Job, lib []contact.Material, scanSHA string) (*AuditReport, error) {
	a := &AuditReport{Tool: toolVersion()}
	var err error
	if a.Scan, err = auditFile(in, "", in.PanPath, scanSHA); err != nil {
		return nil, err
	}
	switch {
	case in.HobPath != "":
		a.Hob.Source = HobScan
		if strings.EqualFold(filepath.Ext(in.HobPath), ".csv") && isProfileCSV(in.HobPath) {
			a.Hob.Source = HobProfile
		}
		f, err := auditFile(in, "", in.HobPath, "")
		if err != nil {
			return nil, fmt.Errorf("hob: %w", err)
		}
		a.Hob.setFile(f)
	case job.Hob.Profile != "":
		a.Hob.Source = HobJobProfile
		f, err := auditFile(in, "", job.Hob.Profile, "")
		if err != nil {
			return nil, fmt.Errorf("hob.profile: %w", err)
		}
		a.Hob.setFile(f)
	default:
		a.Hob.Source = HobFlat
	}
	for _, fk := range job.fileKeys() {
		if *fk.p == "" {
			continue
		}
		f, err := auditFile(in, fk.key, *fk.p, "")
		if err != nil {
			return nil, fmt.Errorf("%s: %w", fk.key, err)
		}
		a.Profiles = append(a.Profiles, f)
		*fk.p = f.Path // the job records the path as given, like the files
	}
	a.Job = AuditJob{Job: job}
	a.Materials, err = usedMaterials(job, lib)
	return a, err
}

// auditFile describes the file at path (on disk) for the audit; sha is
// computed when empty.
func auditFile(in ScanInput, key, path, sha string) (AuditFile, error) {
	if sha == "" {
		var err error
		if sha, err = FileSHA256(path); err != nil {
			return AuditFile{}, err
		}
	}
	f := AuditFile{Key: key, Path: in.givenPath(path), SHA256: sha}
	if in.ReportDir != "" {
		if r, err := relPath(in.ReportDir, path); err == nil {
			f.FromReport = r
		}
	}
	return f, nil
}

// givenPath is how the audit names the file at path: relative to in.Root
// (the batch folder) when set, else as given; always with "/".
func (in ScanInput) givenPath(path string) string {
	if in.Root != "" {
		if r, err := relPath(in.Root, path); err == nil {
			return r
		}
	}
	return filepath.ToSlash(path)
}

// relPath is target relative to the folder base, with "/".
func relPath(base, target string) (string, error) {
	b, err := filepath.Abs(base)
	if err != nil {
		return "", err
	}
	t, err := filepath.Abs(target)
	if err != nil {
		return "", err
	}
	r, err := filepath.Rel(b, t)
	if err != nil {
		return "", err
	}
	return filepath.ToSlash(r), nil
}

// taskRoot is the batch folder of a task (its Path is the folder joined
// with its Rel), or "" when that does not hold.
func taskRoot(t ScanTask) string {
	rel := filepath.FromSlash(t.Rel)
	if t.Rel == "" || !strings.HasSuffix(t.Path, string(filepath.Separator)+rel) {
		return ""
	}
	return strings.TrimSuffix(t.Path, string(filepath.Separator)+rel)
}

// usedMaterials lists the materials the job's keys name, in the order of
// the keys: base layers from the hob side up, then the hob's plate.
func usedMaterials(job Job, lib []contact.Material) ([]AuditMaterial, error) {
	type use struct{ key, name string }
	var uses []use
	for i, l := range job.Pan.Layers {
		uses = append(uses, use{fmt.Sprintf("pan.layers[%d].material", i), l.Material})
	}
	key, name, _ := hobPlate(job)
	uses = append(uses, use{key, name})
	var out []AuditMaterial
	for _, u := range uses {
		if i := slices.IndexFunc(out, func(m AuditMaterial) bool { return m.Name == u.name }); i >= 0 {
			out[i].UsedAs = append(out[i].UsedAs, u.key)
			continue
		}
		m, err := contact.LookupMaterial(lib, u.name)
		if err != nil {
			return nil, fmt.Errorf("job: %s: %w", u.key, err)
		}
		out = append(out, auditMaterial(m, u.key))
	}
	return out, nil
}

// auditMaterial converts m to the job file's units; a value without its
// own citation cites the material's description.
func auditMaterial(m contact.Material, key string) AuditMaterial {
	cite := func(s string) string {
		if s == "" {
			return m.Source
		}
		return s
	}
	s := m.Sources
	return AuditMaterial{
		Name: m.Name, UsedAs: []string{key}, Description: m.Source,
		Values: MaterialValues{
			ConductivityWMK: sig12(m.ConductivityWMK), DensityKgM3: sig12(m.DensityKgM3), CpJKgK: sig12(m.CpJKgK),
			YoungGPa: sig12(m.YoungPa / 1e9), Poisson: sig12(m.Poisson), ExpansionUMMK: sig12(m.ExpansionPerK * 1e6),
			HardnessMPa: sig12(m.HardnessPa / 1e6), Emissivity: sig12(m.Emissivity),
		},
		Sources: MaterialCites{
			ConductivityWMK: cite(s.ConductivityWMK), DensityKgM3: cite(s.DensityKgM3), CpJKgK: cite(s.CpJKgK),
			YoungGPa: cite(s.YoungPa), Poisson: cite(s.Poisson), ExpansionUMMK: cite(s.ExpansionPerK),
			HardnessMPa: cite(s.HardnessPa), Emissivity: cite(s.Emissivity),
		},
	}
}

// sig12 rounds v to 12 significant digits, so a unit conversion shows
// 23.9, not 23.899999999999999.
func sig12(v float64) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 12, 64), 64)
	if err != nil {
		return v
	}
	return r
}

// AuditJob is a Job written as JSON in the job file's layout: tables as
// objects, keys named and ordered as in the job file. Reading it back
// refuses an unknown or a missing key, so a job written by another version
// of gapflux is never taken for this one's.
type AuditJob struct{ Job Job }

// MarshalJSON writes the job, keys in the job file's order.
func (a AuditJob) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	if err := encodeJobValue(&b, reflect.ValueOf(a.Job)); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

func encodeJobValue(b *bytes.Buffer, v reflect.Value) error {
	switch v.Kind() {
	case reflect.Struct:
		b.WriteByte('{')
		for i := range v.NumField() {
			if i > 0 {
				b.WriteByte(',')
			}
			k, _ := json.Marshal(tomlName(v.Type().Field(i)))
			b.Write(k)
			b.WriteByte(':')
			if err := encodeJobValue(b, v.Field(i)); err != nil {
				return err
			}
		}
		b.WriteByte('}')
	case reflect.Slice:
		b.WriteByte('[')
		for i := range v.Len() {
			if i > 0 {
				b.WriteByte(',')
			}
			if err := encodeJobValue(b, v.Index(i)); err != nil {
				return err
			}
		}
		b.WriteByte(']')
	default:
		j, err := json.Marshal(v.Interface())
		if err != nil {
			return err
		}
		b.Write(j)
	}
	return nil
}

// UnmarshalJSON reads a job written by MarshalJSON. Every key of the job
// must be present and no other.
func (a *AuditJob) UnmarshalJSON(data []byte) error {
	v := reflect.New(reflect.TypeOf(Job{})).Elem()
	if err := decodeJobValue(data, v, "job"); err != nil {
		return err
	}
	a.Job = v.Interface().(Job)
	return nil
}

func decodeJobValue(data []byte, v reflect.Value, key string) error {
	switch v.Kind() {
	case reflect.Struct:
		var m map[string]json.RawMessage
		if err := json.Unmarshal(data, &m); err != nil || m == nil {
			return fmt.Errorf("%s: want an object", key)
		}
		for i := range v.NumField() {
			name := tomlName(v.Type().Field(i))
			raw, ok := m[name]
			if !ok {
				return fmt.Errorf("%s.%s is missing", key, name)
			}
			if err := decodeJobValue(raw, v.Field(i), key+"."+name); err != nil {
				return err
			}
			delete(m, name)
		}
		for name := range m {
			return fmt.Errorf("%s.%s is not a job key of this gapflux", key, name)
		}
	case reflect.Slice:
		var list []json.RawMessage
		if err := json.Unmarshal(data, &list); err != nil {
			return fmt.Errorf("%s: want a list", key)
		}
		if len(list) == 0 {
			return nil // nil, as a job file without the table decodes (JobHash tells nil from empty)
		}
		s := reflect.MakeSlice(v.Type(), len(list), len(list))
		for i, raw := range list {
			if err := decodeJobValue(raw, s.Index(i), fmt.Sprintf("%s[%d]", key, i)); err != nil {
				return err
			}
		}
		v.Set(s)
	default:
		if err := json.Unmarshal(data, v.Addr().Interface()); err != nil {
			return fmt.Errorf("%s: want a %s", key, v.Type())
		}
	}
	return nil
}

// maxReportBytes caps the report.json RerunReport reads (our bound: a
// report of a 400 mm base is under 100 kB).
const maxReportBytes = 16 << 20

// Rerun is the outcome of RerunReport.
type Rerun struct {
	Result   *Result
	Recorded []byte // the report file's bytes
	Rerun    []byte // the re-run's report.json
	// Differences lists the keys whose values differ ("heat.power_w",
	// "audit.tool.version"); empty when the bytes are identical.
	Differences []string
}

// Identical reports whether the re-run reproduced the report byte for byte.
func (r *Rerun) Identical() bool { return bytes.Equal(r.Recorded, r.Rerun) }

// RerunReport analyses again the scan a report.json records, with the job,
// hob and profiles its audit section records (the job file, manifest and
// flags that made it need not exist any more), and compares the new
// report with the recorded one. Each input file is looked for relative to
// the report's folder (from_report, then path) and then at its path as
// recorded (relative to the working folder), and must have the recorded
// SHA-256. The audit's paths are those recorded, so a faithful re-run
// gives the same bytes; the tool's version is this binary's. Errors in the
// report or its inputs are *ConfigError.
func RerunReport(ctx context.Context, reportPath string) (*Rerun, error) {
	recorded, rep, err := readReportFile(reportPath)
	if err != nil {
		return nil, err
	}
	a := rep.Audit
	dir := filepath.Dir(reportPath)
	panPath, err := findInput(dir, a.Scan, "scan", reportPath)
	if err != nil {
		return nil, err
	}
	job := a.Job.Job
	hobPath := ""
	switch a.Hob.Source {
	case HobScan, HobProfile:
		if hobPath, err = findInput(dir, a.Hob.file(), "hob", reportPath); err != nil {
			return nil, err
		}
	case HobFlat, HobJobProfile:
	default:
		return nil, configf("%s: audit.hob.source %q is none of %q, %q, %q, %q", reportPath, a.Hob.Source,
			HobFlat, HobScan, HobProfile, HobJobProfile)
	}
	for _, fk := range job.fileKeys() {
		if *fk.p == "" {
			continue
		}
		i := slices.IndexFunc(a.Profiles, func(f AuditFile) bool { return f.Key == fk.key })
		if i < 0 {
			return nil, configf("%s: the job's %s names %q but the audit lists no such file", reportPath, fk.key, *fk.p)
		}
		if *fk.p, err = findInput(dir, a.Profiles[i], fk.key, reportPath); err != nil {
			return nil, err
		}
	}
	if err := CheckJob(job, reportPath+" (the recorded job)"); err != nil {
		return nil, &ConfigError{Err: err}
	}
	// The scan is hashed again as it is read: a file changed since
	// findInput checked it shows as a difference.
	res, err := Analyze(ctx, ScanInput{PanPath: panPath, Name: rep.Input.Pan.Path, HobPath: hobPath, Job: job})
	if err != nil {
		return nil, err
	}
	if fresh := res.Report.Audit; fresh != nil {
		restoreAudit(fresh, a)
	}
	res.PartNumber, res.Lot = a.PartNumber, a.Lot
	b, err := MarshalReport(res.Report)
	if err != nil {
		return nil, err
	}
	return &Rerun{Result: res, Recorded: recorded, Rerun: b, Differences: ReportDifferences(recorded, b)}, nil
}

// readReportFile reads and decodes a report.json that carries an audit.
func readReportFile(path string) ([]byte, *Report, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, configf("%s: %v", path, errors.Unwrap(err))
	}
	defer f.Close()
	b, err := readAtMost(f, maxReportBytes)
	if errors.Is(err, errTooLarge) {
		return nil, nil, configf("%s: larger than %d MiB, not a gapflux report.json", path, maxReportBytes>>20)
	}
	if err != nil {
		return nil, nil, configf("%s: %v", path, err)
	}
	var rep Report
	if err := json.Unmarshal(b, &rep); err != nil {
		return nil, nil, configf("%s: not a gapflux report.json: %v", path, err)
	}
	if rep.Schema != SchemaReport {
		return nil, nil, configf("%s: report schema %q, this gapflux reads %q", path, rep.Schema, SchemaReport)
	}
	if rep.Audit == nil {
		return nil, nil, configf("%s: the report has no audit section (written by a gapflux before the audit trail); analyse the scan again with its job instead", path)
	}
	return b, &rep, nil
}

// findInput finds the input file f of the report in folder dir (see
// RerunReport) and checks its SHA-256.
func findInput(dir string, f AuditFile, what, reportPath string) (string, error) {
	var cands []string
	add := func(p string) {
		if p != "" && !slices.Contains(cands, p) {
			cands = append(cands, p)
		}
	}
	if f.FromReport != "" {
		add(filepath.Join(dir, filepath.FromSlash(f.FromReport)))
	}
	p := filepath.FromSlash(f.Path)
	if !filepath.IsAbs(p) {
		add(filepath.Join(dir, p))
	}
	add(p)
	var changed []string
	for _, c := range cands {
		st, err := os.Stat(c)
		if err != nil || !st.Mode().IsRegular() {
			continue
		}
		sha, err := FileSHA256(c)
		if err != nil {
			continue
		}
		if sha == f.SHA256 {
			return c, nil
		}
		changed = append(changed, fmt.Sprintf("%s has SHA-256 %s", c, sha))
	}
	if len(changed) > 0 {
		return "", configf("%s: the %s %s changed since the report was written (%s; the report records %s): the re-run would not be the same analysis; restore the file the report names",
			reportPath, what, f.Path, strings.Join(changed, ", "), f.SHA256)
	}
	return "", configf("%s: the %s %s is not found (looked at %s); run from the folder the report's paths are relative to (the batch folder for a batch report)",
		reportPath, what, f.Path, strings.Join(cands, ", "))
}

// restoreAudit gives the re-run's audit the recorded paths of its input
// files (whose contents RerunReport checked), so that it names them as
// the original run did.
func restoreAudit(fresh, rec *AuditReport) {
	fresh.Scan = rec.Scan
	fresh.Hob = rec.Hob
	fresh.Profiles = rec.Profiles
	fresh.PartNumber, fresh.Lot = rec.PartNumber, rec.Lot
	got, want := fresh.Job.Job.fileKeys(), rec.Job.Job.fileKeys()
	for i := range got {
		*got[i].p = *want[i].p
	}
}

// ReportDifferences lists the keys (dotted, with list indices) whose
// values differ between two report.json files; at most 20, then a count.
func ReportDifferences(a, b []byte) []string {
	var x, y any
	if json.Unmarshal(a, &x) != nil || json.Unmarshal(b, &y) != nil {
		return []string{"(not both JSON)"}
	}
	var out []string
	diffJSON("", x, y, &out)
	if len(out) == 0 && !bytes.Equal(a, b) {
		out = append(out, "(same values, different bytes: formatting)")
	}
	if n := len(out); n > 20 {
		out = append(out[:20], fmt.Sprintf("and %d more", n-20))
	}
	return out
}

func diffJSON(key string, x, y any, out *[]string) {
	join := func(k string) string {
		if key == "" {
			return k
		}
		return key + "." + k
	}
	switch xv := x.(type) {
	case map[string]any:
		yv, ok := y.(map[string]any)
		if !ok {
			*out = append(*out, key)
			return
		}
		var keys []string
		for k := range xv {
			keys = append(keys, k)
		}
		for k := range yv {
			if _, ok := xv[k]; !ok {
				keys = append(keys, k)
			}
		}
		slices.Sort(keys)
		for _, k := range keys {
			diffJSON(join(k), xv[k], yv[k], out)
		}
	case []any:
		yv, ok := y.([]any)
		if !ok || len(xv) != len(yv) {
			*out = append(*out, key)
			return
		}
		for i := range xv {
			diffJSON(fmt.Sprintf("%s[%d]", key, i), xv[i], yv[i], out)
		}
	default:
		if !reflect.DeepEqual(x, y) {
			*out = append(*out, key)
		}
	}
}

// setAuditManifest records the manifest row's part number and lot.
func setAuditManifest(res *Result, meta ManifestRow) {
	res.PartNumber, res.Lot = meta.PartNumber, meta.Lot
	if a := res.Report.Audit; a != nil {
		a.PartNumber, a.Lot = meta.PartNumber, meta.Lot
	}
}

// OnlyToolDiffers reports whether the re-run differs from the recorded
// report in the tool's version alone (another build of gapflux).
func (r *Rerun) OnlyToolDiffers() bool {
	if len(r.Differences) == 0 {
		return false
	}
	for _, d := range r.Differences {
		if !strings.HasPrefix(d, "audit.tool.") {
			return false
		}
	}
	return true
}
