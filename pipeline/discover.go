package pipeline

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
)

// scanExtensions are the file name endings batch treats as scans.
var scanExtensions = []string{".stl", ".ply", ".xyz", ".csv", ".txt", ".asc"}

// IsScanName reports whether a file name looks like a supported scan,
// optionally gzip-compressed.
func IsScanName(name string) bool {
	lower := strings.ToLower(name)
	lower = strings.TrimSuffix(lower, ".gz")
	if strings.HasPrefix(filepath.Base(lower), ".") {
		return false
	}
	for _, ext := range scanExtensions {
		if strings.HasSuffix(lower, ext) {
			return true
		}
	}
	return false
}

// ManifestName is the per-folder manifest a batch reads for per-scan
// settings; JobName is the job file a batch picks up from the scan folder.
const (
	ManifestName = "manifest.csv"
	JobName      = "job.toml"
)

// reservedNames are never scans even when their extension matches.
var reservedNames = map[string]bool{ManifestName: true}

// DiscoverScans lists every scan under dir (recursively), as slash-separated
// paths relative to dir, sorted. Hob scans named in the manifest and files
// under skip (e.g. the output folder) are left out.
func DiscoverScans(dir string, skip func(path string) bool, exclude map[string]bool) ([]string, error) {
	var rels []string
	err := filepath.WalkDir(dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if skip != nil && skip(path) {
			if d.IsDir() {
				return filepath.SkipDir
			}
			return nil
		}
		if d.IsDir() {
			if path != dir && strings.HasPrefix(d.Name(), ".") {
				return filepath.SkipDir
			}
			return nil
		}
		if !d.Type().IsRegular() || !IsScanName(d.Name()) {
			return nil
		}
		rel, err := filepath.Rel(dir, path)
		if err != nil {
			return err
		}
		rel = filepath.ToSlash(rel)
		if reservedNames[rel] || exclude[rel] {
			return nil
		}
		rels = append(rels, rel)
		return nil
	})
	if err != nil {
		return nil, err
	}
	sort.Strings(rels)
	return rels, nil
}

// Shard selects a deterministic slice of a sorted list: item i belongs to
// shard K of N when i mod N == K−1. The zero Shard selects everything.
type Shard struct{ K, N int }

// Enabled reports whether s selects a proper slice.
func (s Shard) Enabled() bool { return s.N > 1 }

// Has reports whether item i of the sorted list belongs to the shard.
func (s Shard) Has(i int) bool { return !s.Enabled() || i%s.N == s.K-1 }

func (s Shard) String() string {
	if s.N == 0 {
		return "all"
	}
	return fmt.Sprintf("%d/%d", s.K, s.N)
}

// ParseShard parses "K/N" with 1 <= K <= N.
func ParseShard(v string) (Shard, error) {
	k, n, ok := strings.Cut(v, "/")
	if !ok {
		return Shard{}, fmt.Errorf("shard %q: want K/N, e.g. 2/8", v)
	}
	ki, err1 := strconv.Atoi(strings.TrimSpace(k))
	ni, err2 := strconv.Atoi(strings.TrimSpace(n))
	if err1 != nil || err2 != nil || ni < 1 || ki < 1 || ki > ni {
		return Shard{}, fmt.Errorf("shard %q: want K/N with 1 <= K <= N", v)
	}
	return Shard{K: ki, N: ni}, nil
}

// ShardFromEnv derives a shard from the job-array variables of common cluster
// schedulers (Slurm, Grid Engine, LSF, PBS Pro with a count). It returns
// ok = false when none is set. getenv is os.Getenv in production.
func ShardFromEnv(getenv func(string) string) (s Shard, source string, ok bool, err error) {
	num := func(name string) (int, bool, error) {
		v := strings.TrimSpace(getenv(name))
		if v == "" {
			return 0, false, nil
		}
		n, err := strconv.Atoi(v)
		if err != nil {
			return 0, false, fmt.Errorf("%s=%q is not an integer", name, v)
		}
		return n, true, nil
	}
	type scheme struct {
		name, id, first, last, count, step string
	}
	schemes := []scheme{
		{name: "Slurm", id: "SLURM_ARRAY_TASK_ID", first: "SLURM_ARRAY_TASK_MIN", last: "SLURM_ARRAY_TASK_MAX", step: "SLURM_ARRAY_TASK_STEP"},
		{name: "Grid Engine", id: "SGE_TASK_ID", first: "SGE_TASK_FIRST", last: "SGE_TASK_LAST", step: "SGE_TASK_STEPSIZE"},
		{name: "LSF", id: "LSB_JOBINDEX", last: "LSB_JOBINDEX_END", step: "LSB_JOBINDEX_STEP"},
		{name: "PBS", id: "PBS_ARRAY_INDEX", count: "GAPFLUX_ARRAY_COUNT"},
	}
	for _, sc := range schemes {
		id, has, err := num(sc.id)
		if err != nil {
			return Shard{}, sc.name, false, err
		}
		if !has {
			continue
		}
		first, hasFirst, err := num(sc.first)
		if err != nil {
			return Shard{}, sc.name, false, err
		}
		if !hasFirst {
			first = 1
			if sc.name == "PBS" {
				first = 0
			}
		}
		step, hasStep, err := num(sc.step)
		if err != nil {
			return Shard{}, sc.name, false, err
		}
		if !hasStep || step < 1 {
			step = 1
		}
		var n int
		if sc.count != "" {
			c, hasCount, err := num(sc.count)
			if err != nil {
				return Shard{}, sc.name, false, err
			}
			if !hasCount {
				return Shard{}, sc.name, false, fmt.Errorf("%s is set but %s (the number of array tasks) is not: set it or pass --shard K/N", sc.id, sc.count)
			}
			n = c
		} else {
			last, hasLast, err := num(sc.last)
			if err != nil {
				return Shard{}, sc.name, false, err
			}
			if !hasLast {
				return Shard{}, sc.name, false, fmt.Errorf("%s is set but %s is not: pass --shard K/N", sc.id, sc.last)
			}
			n = (last-first)/step + 1
		}
		k := (id-first)/step + 1
		if n < 1 || k < 1 || k > n || (id-first)%step != 0 {
			return Shard{}, sc.name, false, fmt.Errorf("%s array index %d does not fit the range (first %d, step %d, %d tasks)", sc.name, id, first, step, n)
		}
		return Shard{K: k, N: n}, sc.name, true, nil
	}
	return Shard{}, "", false, nil
}

// ManifestRow holds per-scan overrides from a batch manifest.
type ManifestRow struct {
	Path         string   // scan path relative to the batch folder
	PartNumber   string   // free text, carried into the summary
	Lot          string   // free text, carried into the summary
	Hob          string   // hob scan or profile, relative to the batch folder
	Job          string   // a job file for this scan, relative to the batch folder
	PanMassKg    *float64 // overrides pan.mass_kg
	WaterMassKg  *float64 // overrides water.mass_kg
	BaseMaterial string   // overrides the material of a single-layer base
	BaseMM       *float64 // overrides the thickness of a single-layer base
	Face         string   // overrides grid.face
	Units        string   // overrides grid.units
	DiameterMM   *float64 // overrides grid.diameter_mm
}

// ManifestColumns documents the manifest's columns; only path is required.
var ManifestColumns = []string{"path", "part_number", "lot", "hob", "job", "pan_mass_kg",
	"water_mass_kg", "base_material", "base_thickness_mm", "face", "units", "diameter_mm"}

// ReadManifest decodes a manifest CSV: a header row naming columns from
// ManifestColumns (any order, path required), then one row per scan.
func ReadManifest(r io.Reader, name string) (map[string]ManifestRow, error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	header, err := cr.Read()
	if err != nil {
		return nil, fmt.Errorf("%s: reading header: %w", name, err)
	}
	col := map[string]int{}
	known := map[string]bool{}
	for _, c := range ManifestColumns {
		known[c] = true
	}
	for i, h := range header {
		h = strings.ToLower(strings.TrimSpace(h))
		if !known[h] {
			return nil, fmt.Errorf("%s: line 1: unknown column %q (known: %s)", name, h, strings.Join(ManifestColumns, ", "))
		}
		if _, dup := col[h]; dup {
			return nil, fmt.Errorf("%s: line 1: column %q given twice", name, h)
		}
		col[h] = i
	}
	if _, ok := col["path"]; !ok {
		return nil, fmt.Errorf("%s: line 1: no path column", name)
	}
	rows := map[string]ManifestRow{}
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		line, _ := cr.FieldPos(0)
		get := func(c string) string {
			if i, ok := col[c]; ok && i < len(rec) {
				return strings.TrimSpace(rec[i])
			}
			return ""
		}
		var perr error
		num := func(c string) *float64 {
			v := get(c)
			if v == "" {
				return nil
			}
			f, err := strconv.ParseFloat(v, 64)
			if err != nil || f <= 0 {
				perr = fmt.Errorf("%s: line %d: %s = %q is not a positive number", name, line, c, v)
				return nil
			}
			return &f
		}
		row := ManifestRow{
			Path: filepath.ToSlash(get("path")), PartNumber: get("part_number"), Lot: get("lot"),
			Hob: filepath.ToSlash(get("hob")), Job: filepath.ToSlash(get("job")),
			PanMassKg: num("pan_mass_kg"), WaterMassKg: num("water_mass_kg"),
			BaseMaterial: get("base_material"), BaseMM: num("base_thickness_mm"),
			Face: get("face"), Units: get("units"), DiameterMM: num("diameter_mm"),
		}
		if perr != nil {
			return nil, perr
		}
		if row.Path == "" {
			return nil, fmt.Errorf("%s: line %d: empty path", name, line)
		}
		if _, dup := rows[row.Path]; dup {
			return nil, fmt.Errorf("%s: line %d: %s listed twice", name, line, row.Path)
		}
		rows[row.Path] = row
	}
	return rows, nil
}

// Apply returns job with the row's overrides.
func (m ManifestRow) Apply(job Job) (Job, error) {
	if m.PanMassKg != nil {
		job.Pan.MassKg = *m.PanMassKg
	}
	if m.WaterMassKg != nil {
		job.Water.MassKg = *m.WaterMassKg
	}
	if m.BaseMaterial != "" || m.BaseMM != nil {
		if len(job.Pan.Layers) != 1 {
			return job, fmt.Errorf("manifest row %s: base_material/base_thickness_mm need a single-layer base; use a per-scan job file", m.Path)
		}
		l := job.Pan.Layers[0]
		if m.BaseMaterial != "" {
			l.Material = m.BaseMaterial
		}
		if m.BaseMM != nil {
			l.ThicknessMM = *m.BaseMM
		}
		job.Pan.Layers = []LayerJob{l}
	}
	if m.Face != "" {
		job.Grid.Face = m.Face
	}
	if m.Units != "" {
		job.Grid.Units = m.Units
	}
	if m.DiameterMM != nil {
		job.Grid.DiameterMM = *m.DiameterMM
	}
	return job, job.Validate()
}

// readManifestFile reads dir/manifest.csv if present.
func readManifestFile(dir string) (map[string]ManifestRow, error) {
	path := filepath.Join(dir, ManifestName)
	f, err := os.Open(path)
	if errors.Is(err, fs.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return ReadManifest(f, path)
}
